"""Issue 20, item 3: messages that name the real cause (or no error where there is none)."""

from __future__ import annotations

import flint
import pytest

from symfilt import catalogue


# --- (a) spread on a ladder: the coefficients are evaluated from flint, never compiled --------------


def test_spread_on_the_built_in_ladder_runs(run_cli):
    """Third order: the numeric cutoff per sample (was an internal error on a shape-(1,) array)."""
    code, out, err = run_cli("spread", "@rc-ladder", "--tol", "R=1%", "--tol", "C=5%", "--runs", "500",
                             "--seed", "1")
    assert (code, err) == (0, "")
    assert "cutoff" in out and "DC gain" in out


def test_spread_ladder_cutoff_nominal_matches_the_exact_route():
    """The Monte Carlo nominal (flint polynomials in floats) equals the cutoff found from exact coefficients."""
    import math

    from symfilt.analysis.numeric import numeric_cutoff
    from symfilt.analysis.stage import analyse
    from symfilt.design.spread import spread

    circuit = catalogue.build("rc-ladder", n=4)
    r = spread(circuit, {"R": 0.01, "C": 0.05}, runs=200, seed=1)
    exact = numeric_cutoff(analyse(circuit, sensitivity=False).loaded.transfer, circuit.values())
    q = r.quantities["cutoff_hz"]
    assert q.nominal == pytest.approx(exact / (2 * math.pi), rel=1e-9)
    assert q.worst_low < q.p1 < q.nominal < q.p99 < q.worst_high


def test_poly_values_of_a_polynomial_too_long_to_compile():
    """16 384 terms: a printed sum this long is past Python's compiler depth (lambdify's RecursionError)."""
    import numpy as np

    from symfilt.analysis.numeric import poly_values

    names = tuple(f"x{k}" for k in range(14))
    ctx = flint.fmpz_mpoly_ctx.get(names, "lex")
    p = ctx.from_dict({(0,) * 14: 1})
    for g in ctx.gens():
        p *= 1 + 2 * g
    assert len(p) == 2 ** 14
    point = {n: np.array([0.5, 0.25, -0.5]) for n in names}
    got = poly_values(p, point)
    # computed regression value: prod (1 + 2 x) = 2^14, 1.5^14, 0
    assert got.tolist() == pytest.approx([2.0 ** 14, 1.5 ** 14, 0.0], abs=1e-9)
    assert float(poly_values(p, {n: 0.5 for n in names})) == pytest.approx(2.0 ** 14)


# --- (b) a LaTeX product with no exponent is not a power over the limit ------------------------------


def test_latex_product_of_many_equal_factors_is_checked_not_refused(run_cli):
    """s written 91 times: sympy would collect it into s**91, an exponent the user never wrote."""
    claim = r"\frac{1}{" + " ".join(["s"] * 91) + "}"
    code, out, err = run_cli("check", "@rc-lowpass", claim)
    assert code == 1 and err == ""
    assert out.startswith("different: the claim does not match the derived result (decided exactly)")


def test_latex_repeated_written_powers_are_not_added_up(run_cli):
    """(1 + s R1 C1)^{5} fourteen times: each written exponent is 5, the product's 70 is no user's exponent."""
    claim = r"\frac{1}{" + " ".join([r"(1 + s R_1 C_1)^{5}"] * 14) + "}"
    code, out, err = run_cli("check", "--ideal", "@rc-lowpass", claim)
    assert (code, err) == (1, "")
    same = r"\frac{1}{(1 + s R_1 C_1)(1 + s R_1 C_1)^{-1}(1 + s R_1 C_1)}"
    assert run_cli("check", "--ideal", "@rc-lowpass", same)[:2] == (0, "equal: the claim matches the derived "
                                                                     "result (decided exactly)\n")


def test_latex_written_exponent_over_the_limit_is_still_refused(run_cli):
    code, out, err = run_cli("check", "@rc-lowpass", r"s^{91}")
    assert (code, out) == (2, "")
    assert err == "error: claim: the exponent 91 is over the limit of 64, write the claim with smaller powers\n"


# --- (c) a duplicate part: the lines of the real definitions, not of keys inside strings --------------

_FAKE = 'R1 = { kind = "resistor", nodes = ["in", "out"], value = "1k" }'
_REAL = """
[ports]
input = "in"
output = "out"

[parts]
R1 = { kind = "resistor", nodes = ["in", "out"], value = "10k" }  # R1 = in a comment
C1 = { kind = "capacitor", nodes = ["out", "0"], value = "10n", note = "R1 = x" }
R1 = { kind = "resistor", nodes = ["in", "out"], value = "4k7" }
"""


def _message(text: str) -> str:
    from symfilt.errors import CircuitFileError
    from symfilt.model.circuit_file import parse_circuit_text

    with pytest.raises(CircuitFileError) as info:
        parse_circuit_text(text, "stage.toml")
    return str(info.value)


@pytest.mark.parametrize("quote", ['"""', "'''"])
def test_duplicate_part_lines_skip_a_fake_key_in_a_multi_line_title(quote):
    # lines: 1 title opens, 2 fake R1, 3 fake [parts], 4 closes, 5 blank; the real R1 on 11 and 13
    text = f"title = {quote}A stage\n{_FAKE}\n[parts]\n{quote}\n" + _REAL
    assert _message(text) == "stage.toml line 13: part R1 is defined twice (first on line 11), give each part its own name"


def test_duplicate_part_lines_with_escaped_quotes_in_a_multi_line_title():
    text = f'title = """A \\""" stage\n{_FAKE}\n"""\n' + _REAL
    assert _message(text) == "stage.toml line 12: part R1 is defined twice (first on line 10), give each part its own name"


def test_duplicate_part_in_a_circuit_file_on_the_command_line(run_cli, tmp_path):
    path = tmp_path / "stage.toml"
    path.write_text(f'title = """A stage\n{_FAKE}\n[parts]\n"""\n' + _REAL, encoding="utf-8")
    code, out, err = run_cli("derive", str(path))
    assert (code, out) == (2, "")
    assert err == ("error: stage.toml line 13: part R1 is defined twice (first on line 11), "
                   "give each part its own name\n")


def test_spread_compiles_no_closed_form(run_cli, monkeypatch):
    """spread evaluates the coefficient polynomials (analysis.vectorised): a closed form too long for
    Python's compiler cannot stop it, because nothing is compiled (lambdify made to fail here)."""
    import sympy

    def too_deep(*args, **kwargs):
        raise RecursionError("maximum recursion depth exceeded during compilation")

    monkeypatch.setattr(sympy, "lambdify", too_deep)
    code, out, err = run_cli("spread", "@rc-lowpass", "--tol", "R=1%", "--runs", "100", "--seed", "1")
    assert (code, err) == (0, "")
    # R1 = 4k7, C1 = 22n, R_s = 600, R_L = 10k: f = (R_s + R1 + R_L) / (2 pi C1 (R_s + R1) R_L) (Thevenin)
    assert "2.088 kHz" in out


