"""The design loop of issue 15: joint targets, named alignments, every part on a series value,
the chosen values written back, and the reachable range of a target no values meet."""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import pytest
import sympy
from scipy import optimize, signal

from symfilt import catalogue
from symfilt.analysis.stage import analyse
from symfilt.design.eseries import series_values
from symfilt.design.joint import size_joint
from symfilt.design.targets import ALIGNMENTS, parse_target
from symfilt.errors import UsageError
from symfilt.model.circuit_file import load_circuit

E24 = [float(m) for m in series_values("E24")]


def rel(a: float, b: float) -> float:
    return abs(a / b - 1)


def second_order_q(den) -> float:
    """Q of a0 s^2 + a1 s + a2 (highest power first, scipy's order): sqrt(a0 a2)/a1."""
    return math.sqrt(den[0] * den[2]) / den[1]


# --- named alignments ----------------------------------------------------------------------

def test_butterworth_and_bessel_q_against_published_tables():
    # Second-order coefficients a1, b1 of 1 + a1 s + b1 s^2, Q = sqrt(b1)/a1: Butterworth a1 = 1.4142,
    # b1 = 1 (Q = 0.71); Bessel a1 = 1.3617, b1 = 0.6180 (Q = 0.58). Mancini (ed.), Op Amps for
    # Everyone, Texas Instruments, ch. 16 (Active Filter Design Techniques), coefficient tables (from memory).
    assert abs(float(ALIGNMENTS["butterworth"]) - math.sqrt(1.0) / 1.4142) < 1e-4
    assert abs(float(ALIGNMENTS["bessel"]) - math.sqrt(0.6180) / 1.3617) < 1e-4
    # scipy's analog prototypes: butter(2) is s^2 + sqrt(2) s + 1; bessel(2, norm="phase") is the
    # Bessel polynomial s^2 + 3 s + 3 scaled to unit delay (Thomson, 1949; scipy.signal docs).
    assert abs(float(ALIGNMENTS["butterworth"]) - second_order_q(signal.butter(2, 1, analog=True)[1])) < 1e-12
    assert abs(float(ALIGNMENTS["bessel"]) - second_order_q(signal.bessel(2, 1, analog=True, norm="phase")[1])) < 1e-12
    assert parse_target("q=Butterworth") == ("q", 1 / sympy.sqrt(2))


def test_bessel_target_gives_the_tables_cutoff_to_w0_ratio():
    # In the same tables the Bessel section is normalised to its -3 dB frequency: w0/wc = 1/sqrt(b1)
    # = 1.272 (the "FSF"; TI Op Amps for Everyone ch. 16, from memory), and scipy's
    # bessel(2, norm="mag") has its -3 dB point at 1 and w0 = sqrt(1.618).
    c = catalogue.build("sallen-key-lowpass", source="600")
    r = size_joint(c, ["w0=1k", "q=bessel"], ["R1", "R2"])
    from symfilt.analysis.stage import numeric_values

    sized = c.with_values({k: sympy.Rational(repr(v)) for k, v in r.solution.items()})
    got = numeric_values(analyse(sized, sensitivity=False).loaded, sized.values())
    assert rel(got["f0_hz"], 1000) < 1e-9 and rel(got["q"], 1 / math.sqrt(3)) < 1e-9
    w0_mag = math.sqrt(signal.bessel(2, 1, analog=True, norm="mag")[1][2])
    assert rel(got["cutoff_hz"] / got["f0_hz"], 1 / w0_mag) < 1e-6
    assert abs(got["cutoff_hz"] / got["f0_hz"] - math.sqrt(0.6180)) < 1e-4


def test_alignment_words_are_checked():
    with pytest.raises(UsageError) as e:
        parse_target("q=chebyshev")
    assert str(e.value) == ("--target: unknown alignment 'chebyshev', "
                            "use q=butterworth, q=bessel or a number such as q=0.7071")
    with pytest.raises(UsageError) as e:
        parse_target("w0=butterworth")
    assert str(e.value) == "--target: butterworth names a Q, not a w0, write q=butterworth"


def test_decimal_targets_are_read_as_the_closed_form_they_round_from(run_cli):
    # Butterworth Q = 1/sqrt(2) = 0.70711 and Bessel Q = 1/sqrt(3) = 0.57735 (REFERENCES.md,
    # Mancini, coefficient tables; Thomson 1949): written to 4 and 3 digits they are the radicals.
    assert parse_target("q=0.7071") == ("q", 1 / sympy.sqrt(2))
    assert parse_target("q=0.577") == ("q", 1 / sympy.sqrt(3))
    assert parse_target("dc-gain=-0.333") == ("dc-gain", sympy.Rational(-1, 3))
    # not within half a unit of the last digit, or too few digits: kept exactly as written
    assert parse_target("q=0.7072") == ("q", sympy.Rational("0.7072"))
    assert parse_target("q=0.71") == ("q", sympy.Rational("0.71"))
    assert parse_target("cutoff=1.414k") == ("cutoff", 1414)
    # the sizing closed form then reads with the radical, not 49999041/100000000
    code, out, _err = run_cli("size", "@sallen-key-lowpass", "--target", "q=0.7071", "--vary", "C1")
    assert code == 0
    assert "for a loaded q of 0.7071 (sqrt(2)/2)" in out
    assert "C1 = C2·(R1 + R2 + R_s)^2/(2·R2·(R1 + R_s))" in out


# --- joint w0 and Q of a Sallen-Key with its source resistance ------------------------------

C1, C2 = 10e-9, 3.3e-9  # the catalogue's Sallen-Key capacitors


def sk_w0_q(r1: float, r2: float, rs: float) -> tuple[float, float]:
    """Unity-gain Sallen-Key low-pass, R_s in series with R1 (TI SLOA024, from memory; REFERENCES.md):
    w0 = 1/sqrt(R1' R2 C1 C2), Q = sqrt(R1' R2 C1 C2)/(C2 (R1' + R2)), R1' = R1 + R_s; f0 in Hz."""
    r1p = r1 + rs
    return 1 / math.sqrt(r1p * r2 * C1 * C2) / (2 * math.pi), math.sqrt(r1p * r2 * C1 * C2) / (C2 * (r1p + r2))


def e24_grid(lo: float, hi: float) -> list[float]:
    return [m * 10**k for k in range(1, 8) for m in E24 if lo <= m * 10**k <= hi]


@pytest.mark.parametrize("rs, f0, q", [(5000, 2000, 1 / math.sqrt(2)), (1000, 2000, 1 / math.sqrt(2)),
                                       (50, 1000, 1 / math.sqrt(3)), (600, 3300, 0.6)])
def test_joint_w0_q_with_source_against_an_independent_search(rs, f0, q):
    c = catalogue.build("sallen-key-lowpass", source=str(rs))
    r = size_joint(c, [("w0", f0), ("q", q)], ["R1", "R2"])
    # the continuous solution meets both targets by the closed form, and scipy's fsolve started
    # there lands on the same point (common practice: Newton-type root finding, scipy.optimize)
    got = sk_w0_q(r.solution["R1"], r.solution["R2"], rs)
    assert rel(got[0], f0) < 1e-8 and rel(got[1], q) < 1e-8
    log_res = lambda u: [math.log(sk_w0_q(math.exp(u[0]), math.exp(u[1]), rs)[0] / f0),
                         math.log(sk_w0_q(math.exp(u[0]), math.exp(u[1]), rs)[1] / q)]
    u = optimize.fsolve(log_res, [math.log(r.solution["R1"]) + 0.05, math.log(r.solution["R2"]) - 0.05], xtol=1e-13)
    assert rel(math.exp(u[0]), r.solution["R1"]) < 1e-6 and rel(math.exp(u[1]), r.solution["R2"]) < 1e-6
    # every candidate's loaded numbers are the closed form's at its E24 values
    for cand in r.candidates:
        w0, qq = sk_w0_q(float(cand.values["R1"]), float(cand.values["R2"]), rs)
        assert rel(cand.loaded["w0"], w0) < 1e-9 and rel(cand.loaded["q"], qq) < 1e-9
        assert abs(cand.error_pct["w0"] - (w0 / f0 - 1) * 100) < 1e-7
    # the chosen pair is the best of every E24 pair from 10 ohm to 10 Mohm (worst target error),
    # by an exhaustive search on the closed form
    def worst(a, b):
        w0, qq = sk_w0_q(a, b, rs)
        return max(abs(w0 / f0 - 1), abs(qq / q - 1))
    grid = e24_grid(10, 1e7)
    best = min(itertools.product(grid, grid), key=lambda ab: worst(*ab))
    chosen = (float(r.chosen.values["R1"]), float(r.chosen.values["R2"]))
    assert chosen == best
    assert abs(r.chosen.worst_pct - worst(*best) * 100) < 1e-7


def test_joint_cutoff_and_dc_gain_of_a_loaded_rc():
    # RC low-pass with R_s and R_L (Thevenin, common practice; REFERENCES.md): H(0) = R_L/(R_s + R1 + R_L),
    # w_c = 1/(C1 ((R_s + R1) || R_L)). Targets cutoff 1 kHz and DC gain 0.9 with R_s = 600, R_L = 100k.
    c = catalogue.build("rc-lowpass", source="600", load="100k")
    r = size_joint(c, ["cutoff=1k", "dc-gain=0.9"], ["R1", "C1"])
    r1 = 100e3 / 0.9 - 100e3 - 600
    thev = 1 / (1 / (600 + r1) + 1 / 100e3)
    assert rel(r.solution["R1"], r1) < 1e-8
    assert rel(r.solution["C1"], 1 / (2 * math.pi * 1000 * thev)) < 1e-8
    for cand in r.candidates:
        rv, cv = float(cand.values["R1"]), float(cand.values["C1"])
        assert rel(cand.loaded["dc-gain"], 100e3 / (600 + rv + 100e3)) < 1e-12
        assert rel(cand.loaded["cutoff"], 1 / (2 * math.pi * cv / (1 / (600 + rv) + 1 / 100e3))) < 1e-9


def test_a_group_held_in_ratio_counts_as_one_unknown():
    c = catalogue.build("sallen-key-lowpass", source="50")
    r = size_joint(c, ["w0=1k", "q=0.55"], ["R1", "C1,C2"])
    assert r.groups == (("R1",), ("C1", "C2"))
    assert rel(r.solution["C2"] / r.solution["C1"], 0.33) < 1e-12  # the exact solution keeps 3n3/10n
    w0, qq = (lambda r1, c1, c2: (1 / math.sqrt((r1 + 50) * 15e3 * c1 * c2) / (2 * math.pi),
                                  math.sqrt((r1 + 50) * 15e3 * c1 * c2) / (c2 * (r1 + 50 + 15e3))))(
        r.solution["R1"], r.solution["C1"], r.solution["C2"])
    assert rel(w0, 1000) < 1e-8 and rel(qq, 0.55) < 1e-8
    # R1, C1 and C2 each snapped on its own: 2 x 2 x 2 combinations around each solution found
    assert 8 <= len(r.candidates) <= 8 * r.solutions
    assert {float(c.values["C2"] / c.values["C1"]) for c in r.candidates} != {0.33}


# --- the command line ------------------------------------------------------------------------

SK = """title = "Sallen-Key from a 5k source"
[ports]
input = "in"
output = "out"
[source]
resistance = "5k"
[load]
resistance = "10k"
[parts]
R1 = { kind = "resistor", nodes = ["in", "a"], value = "6k8" }
R2 = { kind = "resistor", nodes = ["a", "b"], value = "15k" }
C1 = { kind = "capacitor", nodes = ["a", "out"], value = "10n" }
C2 = { kind = "capacitor", nodes = ["b", "0"], value = "3n3" }
U1 = { kind = "opamp", plus = "b", minus = "out", out = "out" }
"""


@pytest.fixture
def sk_file(tmp_path) -> Path:
    p = tmp_path / "sk.toml"
    p.write_text(SK)
    return p


def test_butterworth_at_2k_to_a_written_file_of_e24_parts(run_cli, sk_file, tmp_path):
    out_file = tmp_path / "sized.toml"
    code, out, err = run_cli("size", str(sk_file), "--target", "cutoff=2k", "--target", "q=butterworth",
                             "--vary", "R1", "--vary", "R2", "--write", str(out_file))
    assert code == 0, err
    assert err == f"wrote {out_file}\n"
    assert "chosen" in out and "q = 0.7071 (butterworth)" in out
    assert sk_file.read_text() == SK  # the input stays as it was
    sized = load_circuit(out_file)
    for name in ("R1", "R2"):
        v = sized.part(name).value
        mantissa = v / sympy.Integer(10) ** sympy.floor(sympy.log(v, 10))
        assert float(mantissa) in E24
    assert sized.part("C1").value == sympy.Rational(1, 10**8)
    assert sized.source.value == 5000 and sized.load_resistance.value == 10000
    # the written values, put back into the closed form, are within 1 % of both targets (the
    # Butterworth cutoff equals w0; common practice, REFERENCES.md)
    f0, q = sk_w0_q(float(sized.part("R1").value), float(sized.part("R2").value), 5000)
    assert rel(f0, 2000) < 0.01 and rel(q, 1 / math.sqrt(2)) < 0.01


def test_repeated_options_that_cannot_combine(run_cli, sk_file):
    cases = [
        (("--target", "w0=2k", "--target", "f0=3k", "--vary", "R1", "--vary", "R2"),
         "error: --target: w0 is given twice (w0=2k and f0=3k), give each quantity one target\n"),
        (("--target", "w0=2k", "--vary", "R1", "--vary", "R2"),
         "error: --vary: 1 target needs 1 independent part (one --vary each), got 2 --vary, give one --vary "
         "per --target (hold parts in a ratio with commas, e.g. --vary C1,C2)\n"),
        (("--target", "w0=2k", "--target", "q=0.7", "--vary", "R1", "--vary", "R1"),
         "error: --vary: R1 is varied twice, name each varied part once\n"),
    ]
    for args, message in cases:
        code, out, err = run_cli("size", str(sk_file), *args)
        assert (code, out, err) == (2, "", message)


def test_an_unreachable_target_gives_the_range_and_the_binding_limit(run_cli, sk_file):
    # with R_s = 5k and R2, C1, C2 fixed, the cutoff is highest as R1 -> 0 (R_s is left alone)
    code, out, err = run_cli("size", str(sk_file), "--target", "cutoff=15k", "--vary", "R1")
    assert code == 2 and out == ""
    assert err == ("error: size: no positive value of R1 gives cutoff = 15 kHz (reachable 48.23 µHz .. "
                   "3.396 kHz, the highest as R1 -> 0), choose a reachable target, or vary another part\n")
    # the top of the range is the R1 = 0 limit, R1' = R_s in the Sallen-Key denominator
    # C1 C2 R1' R2 s^2 + C2 (R1' + R2) s + 1 (TI SLOA024, from memory); its -3 dB point by scipy
    import numpy as np

    w, h = signal.freqs([1], [C1 * C2 * 5000 * 15e3, C2 * (5000 + 15e3), 1], worN=np.logspace(3, 5, 20001))
    f3 = w[np.argmin(abs(abs(h) - 1 / math.sqrt(2)))] / (2 * math.pi)
    assert rel(f3, 3396) < 2e-3


def test_write_refuses_the_input_file(run_cli, sk_file):
    code, out, err = run_cli("size", str(sk_file), "--target", "w0=2k", "--vary", "R1", "--write", str(sk_file))
    assert (code, out) == (2, "")
    assert err == f"error: {sk_file.name}: is the input circuit file, write the output to another file\n"
    assert sk_file.read_text() == SK


def test_one_target_with_write_takes_the_closest_neighbour(run_cli, tmp_path):
    out_file = tmp_path / "rc.toml"
    code, out, err = run_cli("size", "@rc-lowpass", "--target", "cutoff=2k", "--vary", "R1", "--write", str(out_file))
    assert code == 0, err
    # loaded cutoff 1/(2 pi C ((R_s + R) || R_L)) (Thevenin, common practice): 4k7 gives +4.4 %, 5k1 -2.9 %
    assert load_circuit(out_file).part("R1").value == 5100


# --- load limits against the actual fixtures ---------------------------------------------------

def sk_cutoff(r1p: float, r2: float) -> float:
    """-3 dB frequency (Hz) of the unity-gain Sallen-Key: w_c = w0 sqrt(x + sqrt(x^2 + 1)),
    x = 1 - 1/(2 Q^2) (second-order low-pass, common practice; REFERENCES.md)."""
    f0, q = sk_w0_q(r1p, r2, 0)
    x = 1 - 1 / (2 * q * q)
    return f0 * math.sqrt(x + math.sqrt(x * x + 1))


def test_load_limits_set_against_the_actual_fixtures():
    from symfilt.analysis.loading import combined_shift, load_limits

    # RC low-pass, R1 = 4k7, C1 = 22n, R_s = 600, R_L = 10k (Thevenin, common practice): R_s alone
    # moves the cutoff by R1/(R1 + R_s) - 1, R_L alone by (R1 + R_L)/R_L - 1; the limits are R1/49 and 50 R1.
    lims = {x.fixture: x for x in load_limits(analyse(catalogue.build("rc-lowpass"), sensitivity=False), 0.02)}
    assert lims["R_s"].actual == 600 and rel(lims["R_s"].factor, 600 / (4700 / 49)) < 1e-12
    assert rel(lims["R_s"].shift, 4700 / 5300 - 1) < 1e-9
    assert lims["R_L"].actual == 10000 and rel(lims["R_L"].factor, 50 * 4700 / 10000) < 1e-12
    assert rel(lims["R_L"].shift, (4700 + 10000) / 10000 - 1) < 1e-9
    thev = 1 / (1 / (600 + 4700) + 1 / 10000)
    a = analyse(catalogue.build("rc-lowpass"), sensitivity=False)
    assert rel(combined_shift(a), 4700 / thev - 1) < 1e-9
    # The Sallen-Key from a 5 kOhm source: far beyond its limit, and the combined shift is
    # the closed-form cutoff with R1' = R1 + R_s against R1 alone.
    c = catalogue.build("sallen-key-lowpass", source="5k")
    lims = {x.fixture: x for x in load_limits(analyse(c, sensitivity=False), 0.02)}
    rs = lims["R_s"]
    assert rs.actual == 5000 and rs.factor > 10 and rel(rs.factor, 5000 / rs.value) < 1e-12
    assert rel(sk_cutoff(6800 + rs.value, 15e3) / sk_cutoff(6800, 15e3), 0.98) < 1e-6
    assert rel(1 + combined_shift(analyse(c, sensitivity=False)), sk_cutoff(11800, 15e3) / sk_cutoff(6800, 15e3)) < 1e-9


def test_load_limit_text_says_actual_factor_and_combined(run_cli):
    code, out, _ = run_cli("derive", "@rc-lowpass", "--load-limit", "2%", "--quantity", "cutoff")
    assert code == 0
    assert ("  R_s ≤ 95.92 Ω keeps the cutoff within 2% of ideal  (R_s ≤ R1/49); actual 600 Ω, 6.26x above "
            "the limit, alone it moves the cutoff -11.3 %\n") in out
    assert ("  R_L ≥ 235 kΩ keeps the cutoff within 2% of ideal  (R_L ≥ 50·R1); actual 10 kΩ, 23.5x below "
            "the limit, alone it moves the cutoff +47 %\n") in out
    assert "  all fixtures at their values together: the cutoff moves +35.7 % from ideal\n" in out


def test_the_readme_size_example_is_what_the_command_prints(run_cli, sk_file, tmp_path):
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    block = readme.split("$ symfilt size sk.toml --target cutoff=2k", 1)[1].split("```", 1)[0]
    shown = [ln for ln in block.splitlines()[1:] if ln.strip()]
    out_file = tmp_path / "sk-e24.toml"
    code, out, err = run_cli("size", str(sk_file), "--target", "cutoff=2k", "--target", "q=butterworth",
                             "--vary", "R1", "--vary", "R2", "--write", str(out_file))
    assert code == 0
    printed = [ln for ln in out.splitlines() if ln.strip()]
    cut = shown.index("  ...")
    assert printed[:cut] == shown[:cut]
    assert printed[-1] == shown[cut + 1]
    assert shown[-1] == "wrote sk-e24.toml" and err == f"wrote {out_file}\n"


def test_load_limit_json_carries_actual_factor_shift_and_combined(run_cli):
    import json

    code, out, _ = run_cli("derive", "@rc-lowpass", "--load-limit", "2%", "--format", "json")
    assert code == 0
    data = json.loads(out)
    rs = next(x for x in data["load_limit"] if x["fixture"] == "R_s")
    # Thevenin (common practice): the limit is R1/49, R_s = 600 alone gives R1/(R1 + R_s) - 1
    assert rs["actual"] == 600 and rel(rs["factor"], 600 * 49 / 4700) < 1e-12
    assert rel(rs["shift"], 4700 / 5300 - 1) < 1e-9
    thev = 1 / (1 / (600 + 4700) + 1 / 10000)
    assert rel(data["load_limit_combined"]["shift"], 4700 / thev - 1) < 1e-9


def test_a_sized_resistor_reads_as_the_ideal_part_less_what_the_source_takes(run_cli):
    # Loaded RC low-pass: w_c = 1/(C ((R_s + R) || R_L)) (REFERENCES.md, first order; Thevenin,
    # common practice), so R = R_L/(w_c C R_L - 1) - R_s: the hand form, written as such.
    code, out, _err = run_cli("size", "@rc-lowpass", "--target", "cutoff=2k", "--vary", "R1")
    assert code == 0 and "  exact      R1 = R_L/(4000·pi·C1·R_L - 1) - R_s\n" in out
    # Non-inverting stage's input RC, open load behind the op-amp: R = 1/(w_c C) - R_s.
    code, out, _err = run_cli("size", "@noninverting-lowpass", "--target", "cutoff=2k", "--vary", "R1")
    assert code == 0 and "  exact      R1 = -R_s + 1/(4000·pi·C1)\n" in out
    # the split is checked equal to the solved form, which the JSON keeps
    from symfilt.export.design_report import solution_form
    c1, rl, rs, r1 = sympy.symbols("C1 R_L R_s R1", positive=True)
    w = 4000 * sympy.pi
    hand = rl / (w * c1 * rl - 1) - rs
    solved = sympy.solve(sympy.Eq(w, (r1 + rs + rl) / (c1 * rl * (r1 + rs))), r1)[0]
    assert sympy.simplify(solution_form(solved) - hand) == 0
