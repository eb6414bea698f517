"""The real op-amp model (gain, single-pole, two-pole; rout, rin, cin) against independent checks.

The reference is a small complex nodal solve written here in numpy (KCL at every node,
one extra unknown per voltage-defined branch; Ho, Ruehli and Brennan, IEEE Trans.
Circuits and Systems, 1975 (from memory); common practice; REFERENCES.md "Circuit
analysis method"). It shares no code with symfilt's engine: it reads its own small
description of each circuit. The op-amp there is a VCVS A(s)·(V+ − V−) at an internal
node e, Rout from e to the out pin, Rin across the inputs and Cin from each input to
ground, the model's A(s) as README "The op-amp model" gives it.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy

import symfilt
from symfilt import catalogue
from symfilt.analysis.loop import check_polarity, loops
from symfilt.analysis.network import NetworkFunction, derive
from symfilt.errors import CircuitError, SymfiltError
from symfilt.model.circuit import Circuit, Part
from symfilt.model.circuit_file import circuit_to_text, parse_circuit_text
from symfilt.model.values import parse_value

S = sympy.Symbol("s")
TWO_PI = 2 * math.pi


# --- the independent numeric solve ---------------------------------------------------------

def open_loop(amp: dict, sv: complex) -> complex | None:
    """A(s) of the description's op-amp (None: ideal, a nullor)."""
    model = amp["model"]
    if model == "ideal":
        return None
    a = amp["gain"]
    if model in ("single-pole", "two-pole"):
        wb = TWO_PI * amp["gbw"]
        a = a * wb / (a * sv + wb)
    if model == "two-pole":
        wp = TWO_PI * amp["pole2"]
        a = a * wp / (sv + wp)
    return a


def solve(desc: dict, quantity: str, sv: complex) -> complex:
    """transfer V(out)/V(source), zin (seen behind R_s), zout (seen by the load) or loop gain T.

    desc: {"parts": [(kind, a, b, value)], "opamps": [{plus, minus, out, model, gain, gbw,
    pole2, rout, rin, cin}], "rs", "rl", "cl"} (None = absent). ``loop``: the op-amp's source
    is replaced by 1 V at e, the signal source zeroed (R_s kept), the load kept; returns
    A(s)·β with β = V− − V+.
    """
    two = [(k, a, b, v) for k, a, b, v in desc["parts"]]
    amps = desc["opamps"]
    for i, amp in enumerate(amps):
        e = f"e{i}" if amp.get("rout") else amp["out"]
        amp["e"] = e
        if amp.get("rout"):
            two.append(("R", e, amp["out"], amp["rout"]))
        if amp.get("rin"):
            two.append(("R", amp["plus"], amp["minus"], amp["rin"]))
        if amp.get("cin"):
            two += [("C", amp["plus"], "0", amp["cin"]), ("C", amp["minus"], "0", amp["cin"])]
    driven = quantity in ("transfer", "zout", "loop")
    drive = "in"
    if driven and desc.get("rs"):
        two.append(("R", "src", "in", desc["rs"]))
        drive = "src"
    if quantity != "zout":
        if desc.get("rl"):
            two.append(("R", "out", "0", desc["rl"]))
        if desc.get("cl"):
            two.append(("C", "out", "0", desc["cl"]))
    nodes = sorted({n for _, a, b, _ in two for n in (a, b)} | {a[p] for a in amps for p in ("plus", "minus", "out", "e")}
                   | {"in", "out"} - {"0"})
    nodes = [n for n in nodes if n != "0"]
    idx = {n: i for i, n in enumerate(nodes)}
    size = len(nodes) + len(amps) + (1 if driven else 0)
    m = np.zeros((size, size), dtype=complex)
    rhs = np.zeros(size, dtype=complex)

    def put(r, c, v):
        if r != "0" and c != "0":
            m[idx[r] if isinstance(r, str) else r, idx[c] if isinstance(c, str) else c] += v

    for kind, a, b, v in two:
        y = 1 / v if kind == "R" else sv * v
        put(a, a, y), put(b, b, y), put(a, b, -y), put(b, a, -y)
    for i, amp in enumerate(amps):
        k = len(nodes) + i
        put(amp["e"], k, 1)
        a = open_loop(amp, sv)
        if quantity == "loop":
            put(k, amp["e"], 1)
            rhs[k] = 1
        elif a is None:
            put(k, amp["plus"], 1), put(k, amp["minus"], -1)
        else:
            put(k, amp["e"], 1), put(k, amp["plus"], -a), put(k, amp["minus"], a)
    if driven:
        k = size - 1
        put(drive, k, 1), put(k, drive, 1)
        rhs[k] = 1 if quantity == "transfer" else 0
    if quantity in ("zin", "zout"):
        rhs[idx["in" if quantity == "zin" else "out"]] = 1
    x = np.linalg.solve(m, rhs)
    v = lambda n: 0 if n == "0" else x[idx[n]]
    if quantity == "loop":
        amp = amps[0]
        return open_loop(amp, sv) * (v(amp["minus"]) - v(amp["plus"]))
    return complex(v("in" if quantity == "zin" else "out"))


def test_reference_solver_on_hand_results():
    # Hand results (common practice): a follower with gain A0 and Rout into R_L has
    # H = A0 R_L / (Rout + R_L (1 + A0)) and Zout = Rout / (1 + A0); an RC divider.
    amp = {"plus": "in", "minus": "out", "out": "out", "model": "gain", "gain": 100.0, "rout": 50.0}
    d = {"parts": [], "opamps": [amp], "rs": 10.0, "rl": 1000.0}
    assert abs(solve(d, "transfer", 1j) - 100 * 1000 / (50 + 1000 * 101)) < 1e-12
    assert abs(solve(d, "zout", 1j) - 50 / 101) < 1e-12
    assert abs(solve(d, "loop", 1j) - 100 * 1000 / 1050) < 1e-9
    rc = {"parts": [("R", "in", "out", 2.0), ("C", "out", "0", 0.5)], "opamps": [], "rs": 1.0, "rl": 3.0}
    assert abs(solve(rc, "transfer", 0.7j) - 0.5 / (1 + 0.7j * 0.5 * 1.5)) < 1e-14


# --- the four stages, in symfilt and in the description ---------------------------------------

def stage(name: str, model: str, sym: bool, rs="50", rl="2k", cl="none"):
    """(symfilt circuit, reference description, valued circuit) for one test stage."""
    opt = {"rout": "75", "rin": "1M", "cin": "5p"}
    keys = {"model": model, "gain": "2e4", "gbw": "1M" if model != "gain" else None,
            "pole2": "5M" if model == "two-pole" else None}
    keys = {k: v for k, v in keys.items() if v is not None}
    nodes = {"follower": ("in", "out", "out"), "noninverting": ("in", "n", "out"),
             "inverting-lowpass": ("0", "n", "out"), "sallen-key": ("b", "out", "out")}[name]
    passives = {"follower": [],
                "noninverting": [("R", "n", "0", "4k7"), ("R", "out", "n", "10k")],
                "inverting-lowpass": [("R", "in", "n", "10k"), ("R", "n", "out", "22k"), ("C", "n", "out", "4n7")],
                "sallen-key": [("R", "in", "a", "6k8"), ("R", "a", "b", "15k"), ("C", "a", "out", "10n"),
                               ("C", "b", "0", "3n3")]}[name]

    def build(values):
        parts = [(Part.resistor if k == "R" else Part.capacitor)(f"{k}{i + 1}", a, b, v)
                 for i, (k, a, b, v) in enumerate(passives)]
        parts.append(Part.opamp("U1", *nodes, **keys, **values))
        return Circuit.build(parts, source=rs, load=rl, load_capacitance=cl)

    valued = build(opt)
    circuit = build({k: "symbol" for k in opt}) if sym else valued
    num = lambda t: float(parse_value(t))
    amp = {"plus": nodes[0], "minus": nodes[1], "out": nodes[2], "model": model, "gain": 2e4, "gbw": 1e6,
           "pole2": 5e6, **{k: num(v) for k, v in opt.items()}}
    desc = {"parts": [(k, a, b, num(v)) for k, a, b, v in passives], "opamps": [amp], "rs": num(rs),
            "rl": num(rl), "cl": None if cl == "none" else num(cl)}
    return circuit, desc, valued


FREQS = (10.0, 3e3, 1e5, 2e6)


@pytest.mark.parametrize("sym", [False, True], ids=["values", "symbol"])
@pytest.mark.parametrize("model", ["gain", "single-pole", "two-pole"])
@pytest.mark.parametrize("name", ["follower", "noninverting", "inverting-lowpass", "sallen-key"])
def test_transfer_zin_zout_match_the_numeric_solve(name, model, sym):
    circuit, desc, valued = stage(name, model, sym)
    values = valued.values()
    loaded = symfilt.analyse(circuit).loaded
    for quantity in ("transfer", "zin", "zout"):
        h = derive(circuit, quantity)
        if quantity == "transfer":
            assert sympy.simplify(h.as_expr() - loaded.transfer.as_expr()) == 0
        if sym:
            assert {"Rout_U1", "Rin_U1", "Cin_U1"} <= {str(x) for x in h.as_expr().free_symbols}
        for f in FREQS:
            sv = 1j * TWO_PI * f
            got = complex(h.evaluate(values, [sv])[0])
            ref = solve(desc, quantity, sv)
            assert abs(got - ref) <= 1e-8 * abs(ref), (quantity, f, got, ref)


def test_analyse_gain_model_with_cin():
    # The poles of this follower span many decades (5 pF against 1 MΩ); the stability
    # check finds them on a scaled variable (it once stopped in sympy's root finder).
    circuit, _, _ = stage("follower", "gain", False)
    assert symfilt.analyse(circuit).numeric["loaded"]["stability"] == "stable"


# --- closed forms: closed-loop output resistance -----------------------------------------------

def test_follower_and_noninverting_zout_closed_forms():
    # Sedra & Smith, "Microelectronic Circuits", ch. "Feedback" (series-shunt feedback: the
    # output resistance is divided by 1 + A·β) (from memory); REFERENCES.md "Op-amp output
    # resistance". Exact with the feedback divider R1 + R2 also across the output.
    A, Ro, R1, R2 = (sympy.Symbol(n, positive=True) for n in ("A_U1", "Rout_U1", "R1", "R2"))
    follower = Circuit.build([Part.opamp("U1", "in", "out", "out", model="gain", gain=None, rout="symbol")],
                             source="symbol", load="symbol")
    assert sympy.simplify(derive(follower, "zout").as_expr() - Ro / (1 + A)) == 0
    amp = Circuit.build([Part.opamp("U1", "in", "n", "out", model="gain", gain=None, rout="symbol"),
                         Part.resistor("R1", "n", "0", None), Part.resistor("R2", "out", "n", None)],
                        source="symbol", load="symbol")
    beta = R1 / (R1 + R2)
    zout = derive(amp, "zout").as_expr()
    closed = Ro / (1 + A * beta)
    assert sympy.simplify(zout - closed * (R1 + R2) / (closed + R1 + R2)) == 0
    # the textbook form is the limit for a divider much larger than Rout
    k = sympy.Symbol("k", positive=True)
    assert sympy.simplify(sympy.limit(zout.subs({R1: k * R1, R2: k * R2}), k, sympy.oo) - closed) == 0


def test_single_pole_follower_zout_rises_to_rout():
    # As A(jw) falls above the open-loop pole the loop gain falls and Zout rises towards
    # Rout (common practice; Sedra & Smith, ch. "Feedback" (from memory)).
    c = Circuit.build([Part.opamp("U1", "in", "out", "out", model="single-pole", gain="1e5", gbw="1M",
                                  rout="symbol")], source="50", load="10k")
    z = derive(c, "zout")
    assert str(z.hf_gain()) == "Rout_U1"
    vals = c.with_values({"Rout_U1": "100"}).values()
    f = np.logspace(1, 8, 30)
    mags = np.abs(z.evaluate(vals, 1j * TWO_PI * f))
    assert np.all(np.diff(mags) > 0)
    assert abs(mags[-1] - 100) < 1.0 and mags[0] < 1e-2


# --- Sallen-Key high-frequency feedthrough -------------------------------------------------------

def test_sallen_key_high_frequency_feedthrough():
    # Hand derivation (common practice, REFERENCES.md "Op-amp output resistance"): as s -> oo
    # C1 (a-out) and C2 (b-0) are shorts and the single-pole A(s) -> 0, so the internal node
    # e is at 0 V and Rout goes from out to ground. Without C_L: node a = out, b = ground,
    # the input reaches out through R_s + R1 against R2 || Rout || R_L, a floor
    #   H(oo) = Rp / (R_s + R1 + Rp),  Rp = R2 || Rout || R_L.
    # With C_L (also a short at HF) out goes to ground too: H(oo) = 0, but only as 1/s,
    # the capacitive divider C1 : C_L fed through R_s + R1: s·H(s) -> 1/((R_s + R1) C_L).
    # The ideal op-amp gives no floor: its H falls as 1/s^2 (checked below).
    rs, r1, r2, ro, rl, cl = 50, 6800, 15000, 100, 10000, sympy.Rational(1, 10**9)

    base = catalogue.build("sallen-key-lowpass", load="10k", load_capacitance="none")
    parts = [p for p in base.parts if p.kind != "opamp"]
    amp = Part.opamp("U1", "b", "out", "out", model="single-pole", gain="1e5", gbw="1M", rout="100")
    desc_parts = [("R", "in", "a", 6800.0), ("R", "a", "b", 15000.0), ("C", "a", "out", 10e-9),
                  ("C", "b", "0", 3.3e-9)]
    desc_amp = {"plus": "b", "minus": "out", "out": "out", "model": "single-pole", "gain": 1e5, "gbw": 1e6,
                "rout": 100.0}
    rp = 1 / (sympy.Rational(1, r2) + sympy.Rational(1, ro) + sympy.Rational(1, rl))
    floor = rp / (rs + r1 + rp)
    # without C_L: the floor
    c0 = Circuit.build(parts + [amp], source="50", load="10k", load_capacitance="none")
    h0 = derive(c0).subs(c0.values())
    assert sympy.simplify(h0.hf_gain() - floor) == 0
    d0 = {"parts": desc_parts, "opamps": [dict(desc_amp)], "rs": 50.0, "rl": 1e4, "cl": None}
    for f in (1e6, 1e8):
        ref = solve(d0, "transfer", 1j * TWO_PI * f)
        assert abs(complex(h0.evaluate({}, [1j * TWO_PI * f])[0]) - ref) <= 1e-8 * abs(ref)
    assert abs(abs(solve(d0, "transfer", 1j * TWO_PI * 1e8)) - float(floor)) < 0.02 * float(floor)
    # with C_L = 1 nF: 1/s roll-off with the coefficient above
    c1 = Circuit.build(parts + [amp], source="50", load="10k", load_capacitance="1n")
    h1 = derive(c1).subs(c1.values())
    assert h1.hf_gain() == 0
    sh = NetworkFunction(S * h1.num, h1.den)
    assert sympy.simplify(sh.hf_gain() - 1 / ((rs + r1) * cl)) == 0
    d1 = dict(d0, opamps=[dict(desc_amp)], cl=1e-9)
    for f in (1e6, 1e8):
        ref = solve(d1, "transfer", 1j * TWO_PI * f)
        assert abs(complex(h1.evaluate({}, [1j * TWO_PI * f])[0]) - ref) <= 1e-8 * abs(ref)
    w = TWO_PI * 1e8
    assert abs(abs(solve(d1, "transfer", 1j * w)) * w - 1 / (6850 * 1e-9)) < 0.03 / (6850 * 1e-9)
    # ideal op-amp: no floor, H ~ 1/s^2
    ideal = Circuit.build(parts + [Part.opamp("U1", "b", "out", "out")], source="50", load="10k")
    hi = derive(ideal)
    assert hi.hf_gain() == 0 and NetworkFunction(S * hi.num, hi.den).hf_gain() == 0


# --- loop gain and margins ------------------------------------------------------------------------

def numeric_margins(desc: dict) -> dict:
    """Crossover, phase margin, phase crossover and gain margin from the own loop break."""
    f = np.logspace(0, 10, 20001)
    t = np.array([solve(desc, "loop", 1j * TWO_PI * x) for x in f])
    mag, ph = np.abs(t), np.degrees(np.unwrap(np.angle(t)))
    i = np.nonzero((mag[:-1] >= 1) & (mag[1:] < 1))[0][-1]
    out = {"crossover_hz": f[i], "phase_margin_deg": 180 + ph[i]}
    j = np.nonzero(ph <= -180)[0]
    out["phase_crossover_hz"] = f[j[0]] if len(j) else None
    out["gain_margin_db"] = -20 * math.log10(mag[j[0]]) if len(j) else None
    return out


def test_single_pole_follower_driving_capacitance_phase_margin():
    # One pole plus the load pole (Franco, "Design with Operational Amplifiers and Analog
    # Integrated Circuits", ch. "Stability" (from memory); common practice; REFERENCES.md
    # "Op-amp loop gain"): T ≈ ωt/s · 1/(1 + s·Rout·C_L) for A0 large, PM = 90° − atan(ωc·Rout·C_L).
    gbw, ro, cl = 1e6, 100.0, 10e-9
    c = Circuit.build([Part.opamp("U1", "in", "out", "out", model="single-pole", gain="1e6", gbw="1M",
                                  rout="100")], source="50", load="none", load_capacitance="10n")
    got = loops(c)[0].loaded.numbers
    desc = {"parts": [], "opamps": [{"plus": "in", "minus": "out", "out": "out", "model": "single-pole",
                                     "gain": 1e6, "gbw": gbw, "rout": ro}], "rs": 50.0, "cl": cl}
    own = numeric_margins(desc)
    assert abs(got["crossover_hz"] - own["crossover_hz"]) < 1e-3 * own["crossover_hz"]
    assert abs(got["phase_margin_deg"] - own["phase_margin_deg"]) < 0.05
    wt, tau = TWO_PI * gbw, ro * cl
    # |T| = 1: (ωt/ω)^2 = 1 + (ω τ)^2  ->  ω^2 = (−1 + sqrt(1 + 4 (ωt τ)^2)) / (2 τ^2)
    wc = math.sqrt((-1 + math.sqrt(1 + 4 * (wt * tau) ** 2)) / (2 * tau**2))
    assert abs(got["crossover_hz"] - wc / TWO_PI) < 1e-4 * wc / TWO_PI
    assert abs(got["phase_margin_deg"] - (90 - math.degrees(math.atan(wc * tau)))) < 0.01
    assert got["gain_margin_db"] is None  # two poles never reach −180°


def test_two_pole_follower_gain_margin():
    # A second open-loop pole and the load pole: three poles, the phase reaches −180° and
    # a gain margin exists (common practice). Against the own loop break.
    c = Circuit.build([Part.opamp("U1", "in", "out", "out", model="two-pole", gain="1e5", gbw="1M",
                                  pole2="3M", rout="100")], source="50", load="10k", load_capacitance="1n")
    got = loops(c)[0].loaded.numbers
    desc = {"parts": [], "opamps": [{"plus": "in", "minus": "out", "out": "out", "model": "two-pole",
                                     "gain": 1e5, "gbw": 1e6, "pole2": 3e6, "rout": 100.0}],
            "rs": 50.0, "rl": 1e4, "cl": 1e-9}
    own = numeric_margins(desc)
    for key in ("crossover_hz", "phase_crossover_hz"):
        assert abs(got[key] - own[key]) < 2e-3 * own[key], key
    assert abs(got["phase_margin_deg"] - own["phase_margin_deg"]) < 0.1
    assert got["gain_margin_db"] > 0 and abs(got["gain_margin_db"] - own["gain_margin_db"]) < 0.05


# --- polarity --------------------------------------------------------------------------------------

@pytest.mark.parametrize("swap", [False, True])
def test_polarity_of_sallen_key_and_inverting_amplifier(swap):
    # Feedback to the − input is negative, to the + input positive (common practice).
    sk = [Part.resistor("R1", "in", "a", "6k8"), Part.resistor("R2", "a", "b", "15k"),
          Part.capacitor("C1", "a", "out", "10n"), Part.capacitor("C2", "b", "0", "3n3"),
          Part.opamp("U1", *(("out", "b") if swap else ("b", "out")), "out", model="gain", gain="1e5")]
    inv = [Part.resistor("R1", "in", "n", "10k"), Part.resistor("R2", "n", "out", "22k"),
           Part.opamp("U1", *(("n", "0") if swap else ("0", "n")), "out", model="single-pole", gain="1e5",
                      gbw="1M", rout="50")]
    for parts in (sk, inv):
        c = Circuit.build(parts, source="50", load="2k")
        found = loops(c)
        assert found[0].feedback == ("positive" if swap else "negative")
        if not swap:
            check_polarity(c, found)
            continue
        plus, minus, _ = c.part("U1").nodes
        with pytest.raises(CircuitError) as err:
            check_polarity(c, found)
        text = str(err.value)
        assert "U1" in text and f"node {plus}" in text and f"node {minus}" in text and "\n" not in text


# --- circuit-file keys ------------------------------------------------------------------------------

HEAD = '[ports]\ninput = "in"\noutput = "out"\n[parts]\nR1 = { kind = "resistor", nodes = ["out", "0"], value = "1k" }\n'


def opamp_line(**keys) -> str:
    body = ", ".join(f'{k} = "{v}"' for k, v in keys.items())
    return HEAD + f'U1 = {{ kind = "opamp", plus = "in", minus = "out", out = "out", {body} }}\n'


def test_circuit_file_opamp_keys_round_trip():
    c = parse_circuit_text(opamp_line(model="two-pole", gain="1e5", gbw="1M", pole2="8M", rout="symbol",
                                      rin="2M", cin="none"))
    assert {"A_U1", "GBW_U1", "P2_U1", "Rin_U1"} <= {str(k) for k in c.values()}
    assert "Rout_U1" not in {str(k) for k in c.values()}
    back = parse_circuit_text(circuit_to_text(c))
    assert circuit_to_text(back) == circuit_to_text(c)
    for q in ("transfer", "zout"):
        assert sympy.simplify(derive(back, q).as_expr() - derive(c, q).as_expr()) == 0
    z = derive(c, "zout").as_expr()
    assert "Rout_U1" in {str(x) for x in z.free_symbols} and "Cin_U1" not in {str(x) for x in z.free_symbols}
    valued = c.with_values({"Rout_U1": "50"})
    assert any(str(k) == "Rout_U1" and v == 50 for k, v in valued.values().items())


@pytest.mark.parametrize("key,bad", [("rout", "0"), ("rout", "-5"), ("rin", "abc"), ("cin", "-1p"),
                                     ("pole2", "0")])
def test_circuit_file_bad_opamp_values(key, bad):
    keys = {"model": "two-pole", "gain": "1e5", "gbw": "1M", "pole2": "8M", key: bad}
    with pytest.raises(SymfiltError) as err:
        parse_circuit_text(opamp_line(**keys), "stage.toml")
    text = str(err.value)
    assert "U1" in text and key in text and "\n" not in text


def test_resistor_named_like_an_opamp_parameter_collides():
    text = opamp_line(model="gain", gain="1e5", rout="symbol") + \
        'Rout_U1 = { kind = "resistor", nodes = ["in", "0"], value = "1k" }\n'
    with pytest.raises(SymfiltError) as err:
        parse_circuit_text(text, "stage.toml")
    assert "Rout_U1" in str(err.value)


def test_adc_driver_matches_the_numeric_solve():
    # The catalogue's adc-driver (our own scenario) against the own solve: follower in->drv,
    # Rout 40 Ω, R_iso 22 Ω drv->out, C_res 1 nF and C_L 30 pF out->ground, R_s 50 Ω.
    c = catalogue.build("adc-driver")
    amp = {"plus": "in", "minus": "drv", "out": "drv", "model": "single-pole", "gain": 1e6, "gbw": 50e6,
           "rout": 40.0}
    desc = {"parts": [("R", "drv", "out", 22.0), ("C", "out", "0", 1e-9)], "opamps": [amp], "rs": 50.0,
            "cl": 30e-12}
    for quantity in ("transfer", "zout"):
        h = derive(c, quantity)
        for f in (1e3, 1e6, 2e7):
            sv = 1j * TWO_PI * f
            ref = solve(dict(desc, opamps=[dict(amp)]), quantity, sv)
            assert abs(complex(h.evaluate(c.values(), [sv])[0]) - ref) <= 1e-8 * abs(ref)
    assert loops(c)[0].feedback == "negative"
