"""Bearing accelerometer into a data logger: the logger's input moves the AC-coupling corner.

The coupling network (accelerometer_highpass.toml) is C1 = 4.7 µF in series and a
1 MΩ bias resistor R1 to ground: alone, a corner of 0.034 Hz. The logger's 1 MΩ input
sits in parallel with R1 and doubles the corner, so slow bearing vibration loses
amplitude. This script prints the exact loaded corner, the smallest logger input
that keeps the corner within 2 %, and the coupling capacitor that restores the
intended corner with the logger connected.

Run ``python examples/accelerometer_highpass.py``; the output is shown in examples/README.md.
"""

from __future__ import annotations

from pathlib import Path

import sympy

import symfilt
from symfilt import format_value

HERE = Path(__file__).resolve().parent


def main() -> None:
    stage = symfilt.load_circuit(HERE / "accelerometer_highpass.toml")
    a = symfilt.analyse(stage, sensitivity=False)
    lo, hi = a.numeric["loaded"], a.numeric["ideal"]
    print(stage.title)
    print(f"  corner   as connected {format_value(lo['cutoff_hz'], 'Hz')}, alone {format_value(hi['cutoff_hz'], 'Hz')}")
    print(f"  loaded corner (rad/s) = {a.loaded.cutoff.value}")
    print(f"  pass-band gain as connected {a.loaded.transfer.hf_gain().xreplace(stage.values())}")
    for lim in symfilt.load_limits(a, 0.02):
        if lim.fixture == "R_L" and lim.value is not None:
            print(f"  for a 2 % shift the logger input must be at least {format_value(lim.value, 'Ω')} "
                  f"(exactly {lim.exact})")
    # Size C1 so that the connected corner equals the corner the stage has alone.
    c1 = sympy.Symbol("C1", positive=True)
    others = {k: v for k, v in stage.values().items() if k != c1}
    target = a.ideal.cutoff.value.xreplace(stage.values())
    (needed,) = sympy.solve(sympy.Eq(a.loaded.cutoff.value.xreplace(others), target), c1)
    print(f"  C1 = {format_value(needed, 'F')} restores the corner with the logger connected")
    check = symfilt.analyse(stage.with_values({"C1": str(needed)}), sensitivity=False)
    print(f"  check: corner with that C1 {format_value(check.numeric['loaded']['cutoff_hz'], 'Hz')}")


if __name__ == "__main__":
    main()
