"""What the print path imports: the text report must not pay for modules it does not use.

Checked in a fresh process each, since one test's imports stay for the rest of the session.
"""

from __future__ import annotations

import subprocess
import sys


def fresh(code: str) -> str:
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()


def test_two_d_printing_gives_sympys_text_without_the_units_module():
    # sympy's pretty printer imports sympy.physics.units for every product, to move unit
    # quantities last; ours prints the same characters without that import
    code = """
import sys, sympy
from symfilt.export.text import pretty
x, y = sympy.symbols("x y")
e = 2 * x / (3 * y + 1) + x * y
ours = pretty(e)
imported = "sympy.physics.units" in sys.modules
assert ours == sympy.pretty(e, use_unicode=True, wrap_line=False), ours
print(imported)
"""
    assert fresh(code) == "False"


def test_the_units_module_still_imports_for_real_afterwards():
    code = """
import sympy
from symfilt.export.text import pretty
pretty(sympy.Symbol("x") * 2)
import sympy.physics.units as u
print(u.meter, hasattr(u, "kilogram"))
"""
    assert fresh(code) == "meter True"


def test_a_note_does_not_import_matplotlib():
    code = """
import sys, tempfile, pathlib
from symfilt.cli import main
out = pathlib.Path(tempfile.mkdtemp()) / "n.html"
try:
    main(["note", "@sallen-key-lowpass", "-o", str(out)])
except SystemExit:
    pass
print("matplotlib" in sys.modules, out.read_text().count("<svg"))
"""
    assert fresh(code) == "False 1"


def test_derive_of_a_real_op_amp_and_a_loaded_notch_does_not_import_numpy():
    # the loop margins (adc-driver: a single-pole op-amp) and the high-frequency floor's peak search
    # (twin-t-notch loaded: third order, m = n) take their roots from flint; numpy's import alone is 0.1 s
    code = """
import sys, io, contextlib
from symfilt.cli import main
with contextlib.redirect_stdout(io.StringIO()):
    for name in ("adc-driver", "twin-t-notch"):
        for fmt in ("text", "json"):
            main(["derive", "@" + name, "--format", fmt])
print("numpy" in sys.modules)
"""
    assert fresh(code) == "False"
