"""No text is ever evaluated: checked over the source and at every entry that takes text.

``sympy.sympify`` and ``parse_expr`` read a string with Python's ``eval`` (sympy's own
documentation of ``sympify`` warns against unsanitised input: SymPy documentation,
``sympy.core.sympify.sympify``, "Notes"). The library calls neither, except
``sympify(..., strict=True)`` on values that are not text in ``symfilt/model/safe.py``.
Each runtime case hands a payload that would create a file if it ran and checks that the
file does not appear and that the entry answers with a SymfiltError (or reads the text as
data, never as code).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest
import sympy

import symfilt
from symfilt.analysis.network import NetworkFunction
from symfilt.engine.rational import Ratio
from symfilt.errors import SymfiltError

PACKAGE = Path(__file__).resolve().parent.parent / "symfilt"
# lambdify is allowed: it writes code from an expression tree, never from text, and sympy
# replaces any symbol name that is not an identifier by a dummy (symfilt's names are identifiers)
FORBIDDEN = {"sympify", "parse_expr", "eval", "exec", "compile", "__import__", "S"}
ALLOWED = {("model/safe.py", "sympify")}


def _calls(tree: ast.AST):
    for node in ast.walk(tree):
        if isinstance(node, ast.Call):
            f = node.func
            name = f.attr if isinstance(f, ast.Attribute) else f.id if isinstance(f, ast.Name) else None
            if name is not None:
                yield name, node


def test_no_module_calls_an_evaluating_function():
    found = []
    for path in sorted(PACKAGE.rglob("*.py")):
        room = path.relative_to(PACKAGE).as_posix()
        for name, node in _calls(ast.parse(path.read_text(encoding="utf-8"))):
            if name == "compile" and isinstance(node.func, ast.Attribute):
                continue  # re.compile
            if name in FORBIDDEN and (room, name) not in ALLOWED:
                found.append(f"{room}:{node.lineno} {name}")
    assert found == []


def test_the_one_sympify_is_strict():
    tree = ast.parse((PACKAGE / "model" / "safe.py").read_text(encoding="utf-8"))
    calls = [n for name, n in _calls(tree) if name == "sympify"]
    assert calls and all(any(k.arg == "strict" and k.value.value is True for k in n.keywords) for n in calls)


@pytest.fixture
def payload(tmp_path):
    target = tmp_path / "ran"
    text = f"__import__('pathlib').Path({str(target)!r}).touch() or s"
    yield text
    assert not target.exists(), "the text was evaluated"


R1 = symfilt.Part.resistor("R1", "a", "b").symbol
S = sympy.Symbol("s")

ENTRIES = {
    "NetworkFunction.from_expr": lambda t: NetworkFunction.from_expr(t),
    "NetworkFunction(num, den)": lambda t: NetworkFunction(t, 1),
    "NetworkFunction.subs": lambda t: NetworkFunction.from_expr(1 / (1 + S * R1)).subs({"R1": t}),
    "Ratio.from_sympy": lambda t: Ratio.from_sympy(t, 1),
    "Ratio.subs": lambda t: Ratio.from_sympy(R1, 1).subs({R1: t}),
    "equivalent(claim)": lambda t: symfilt.equivalent(t, 1 / (1 + S * R1)),
    "equivalent(derived)": lambda t: symfilt.equivalent("1", t),
    "equivalent(ties)": lambda t: symfilt.equivalent("R3", R1, symbols=[sympy.Symbol("R3", positive=True)],
                                                      ties={"R3": t}),
    "parse_claim": lambda t: symfilt.parse_claim(t, {"s": S}),
    "parse_value": lambda t: symfilt.parse_value(t),
    "Part.resistor value": lambda t: symfilt.Part.resistor("R1", "a", "0", t),
    "with_values": lambda t: symfilt.catalogue.build("rc-lowpass").with_values({"R1": t}),
    "Circuit.build parameters": lambda t: symfilt.Circuit.build([symfilt.Part.resistor("R1", "in", "out", "R")],
                                                                parameters={"R": t}),
    "parse_circuit_text": lambda t: symfilt.parse_circuit_text(
        f'[parts]\nR1 = {{ kind = "resistor", nodes = ["in", "out"], value = "{t}" }}\n'.replace("'", "\\u0027")),
}


@pytest.mark.parametrize("entry", sorted(ENTRIES))
def test_text_at_every_entry_is_refused_or_read_safely(entry, payload):
    with pytest.raises(SymfiltError):
        ENTRIES[entry](payload)


def test_from_expr_points_to_the_safe_reader():
    with pytest.raises(symfilt.UsageError, match="parse_claim"):
        NetworkFunction.from_expr("1/(1+s)")
    h = NetworkFunction.from_expr(symfilt.parse_claim("1/(1+s)", {"s": S}))
    assert h.as_expr() == 1 / (S + 1)
