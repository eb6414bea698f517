"""The symbolic engine against an independent numeric nodal solve, on random circuits.

hypothesis draws small connected circuits of resistors, capacitors, inductors,
controlled sources (vcvs, vccs, ccvs, cccs) and op-amps (ideal, gain, single-pole,
two-pole; some with Rout, Rin across the inputs and Cin from each input to ground),
with a source resistance and a load. symfilt derives H(s), Zin and Zout with every
part symbolic; the values are put in afterwards and the result is evaluated exactly at
s = jw. The reference is a plain complex modified nodal analysis written here in numpy,
from the textbook method (KCL at every node, one extra unknown and one constraint row
per voltage-defined branch; Ho, Ruehli and Brennan, "The modified nodal approach to
network analysis", IEEE Trans. Circuits and Systems, 1975 (from memory); common
practice). It shares no code with symfilt: it reads the same random description, not
symfilt's Circuit.

Conventions (README, the circuit file): a controlled current flows from out+ through the source to
out-; vcvs: V(out+) - V(out-) = gain (V(ctrl+) - V(ctrl-)); a controlling current flows
through its control part from the part's first node to its second (for a vcvs or ccvs:
from out+ through it to out-); op-amp A(s) = A0 2 pi GBW / (A0 s + 2 pi GBW), times
2 pi P2 / (s + 2 pi P2) for two-pole, at a node behind Rout (README "The op-amp model"); transfer is
V(output)/V(source) with the source behind R_s; Zin is seen by the source behind R_s
(load kept); Zout is seen by the load (source set to zero, R_s kept).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import sympy
from hypothesis import HealthCheck, assume, event, given, settings
from hypothesis import strategies as st

from symfilt.model.circuit import Circuit, Part
from symfilt.errors import SingularCircuitError
from symfilt.analysis.network import derive

s = sympy.Symbol("s")
PASSIVE = ("resistor", "capacitor", "inductor")
ACTIVE = ("vcvs", "vccs", "ccvs", "cccs", "opamp", "opamp")
EXTRA_KINDS = PASSIVE + ACTIVE
CONTROL_KINDS = PASSIVE + ("vcvs", "ccvs")
COND_LIMIT = 1e10
REL_TOL = 1e-9


# --- the random description ------------------------------------------------------------

def decimal_text(q: Fraction) -> str:
    """Exact decimal text of a fraction with denominator 100 (symfilt parses it exactly)."""
    sign = "-" if q < 0 else ""
    n = abs(q.numerator * (100 // q.denominator))
    return f"{sign}{n // 100}.{n % 100:02d}"


magnitudes = st.integers(10, 1000).map(lambda n: Fraction(n, 100))  # 0.1 .. 10
signed = st.tuples(magnitudes, st.sampled_from((1, -1))).map(lambda t: t[0] * t[1])


@st.composite
def circuits(draw):
    """A connected random circuit: a spanning tree of R, C, L over ground and the nodes, then extra parts.

    The tree joins the non-ground nodes among themselves first and only then one of them to
    ground, so that a path of parts joins input and output without passing through ground
    (otherwise a third of the draws have H = 0). Op-amps are drawn free, as followers, or with a feedback part from
    output to inverting input, since free ideal op-amps are mostly singular.
    """
    n_nodes = draw(st.integers(2, 5))
    nodes = ["0", "in"] + [f"n{i}" for i in range(2, n_nodes)] + ["out"]
    total = draw(st.integers(3, 8))
    parts: list[dict] = []

    def name(kind: str) -> str:
        prefix = {"resistor": "R", "capacitor": "C", "inductor": "L", "vcvs": "E", "vccs": "G",
                  "ccvs": "H", "cccs": "F", "opamp": "U"}[kind]
        return f"{prefix}{len(parts) + 1}"

    def passive(a: str, b: str) -> None:
        kind = draw(st.sampled_from(PASSIVE))
        parts.append({"name": name(kind), "kind": kind, "nodes": (a, b), "value": draw(magnitudes)})

    # spanning tree: the non-ground nodes among themselves, then one of them to ground
    for i in range(2, len(nodes)):
        passive(*draw(st.permutations([nodes[i], nodes[draw(st.integers(1, i - 1))]])))
    passive(*draw(st.permutations([draw(st.sampled_from(nodes[1:])), "0"])))
    two_nodes = st.lists(st.sampled_from(nodes), min_size=2, max_size=2, unique=True)
    first = True
    while len(parts) < max(total, len(nodes) - 1):
        # the first extra part is active (controlled source or op-amp), so that most draws have one
        kind = draw(st.sampled_from(ACTIVE if first else EXTRA_KINDS))
        first = False
        if kind in PASSIVE:
            passive(*draw(two_nodes))
        elif kind in ("vcvs", "vccs"):
            parts.append({"name": name(kind), "kind": kind, "nodes": tuple(draw(two_nodes) + draw(two_nodes)),
                          "value": draw(signed)})
        elif kind in ("ccvs", "cccs"):
            parts.append({"name": name(kind), "kind": kind, "nodes": tuple(draw(two_nodes)), "value": draw(signed),
                          "control": None})
        else:
            out = draw(st.sampled_from(nodes[1:]))
            style = draw(st.sampled_from(("free", "follower", "feedback")))
            plus, minus = draw(two_nodes)
            if style == "follower":
                minus = out
                plus = draw(st.sampled_from([n for n in nodes if n != out]))
            model = draw(st.sampled_from(("ideal", "gain", "single-pole", "two-pole")))
            optional = st.one_of(st.none(), st.none(), magnitudes)  # rout, rin, cin: mostly absent
            parts.append({"name": name(kind), "kind": kind, "nodes": (plus, minus, out), "model": model,
                          "gain": Fraction(draw(st.integers(10, 10_000))) if model != "ideal" else None,
                          "gbw": draw(magnitudes) if model in ("single-pole", "two-pole") else None,
                          "pole2": draw(magnitudes) if model == "two-pole" else None,
                          "rout": draw(optional), "rin": draw(optional), "cin": draw(optional)})
            if style == "feedback" and minus != out:
                passive(out, minus)
    for p in parts:
        if p["kind"] in ("ccvs", "cccs"):
            controls = [q["name"] for q in parts if q["kind"] in CONTROL_KINDS and q is not p]
            p["control"] = draw(st.sampled_from(controls))
    fixtures = {
        "source": draw(st.one_of(st.none(), magnitudes)),
        "load": draw(st.one_of(st.none(), magnitudes)),
        "load_capacitance": draw(st.one_of(st.none(), magnitudes)),
    }
    return parts, fixtures


def to_circuit(parts, fixtures) -> Circuit:
    built = []
    for p in parts:
        if p["kind"] == "opamp":
            text = {k: None if p.get(k) is None else decimal_text(p[k])
                    for k in ("gain", "gbw", "pole2", "rout", "rin", "cin")}
            built.append(Part.opamp(p["name"], *p["nodes"], model=p["model"], **text))
        else:
            built.append(Part.make(p["name"], p["kind"], p["nodes"], value=decimal_text(p["value"]),
                                   control=p.get("control")))
    fx = {k: None if v is None else decimal_text(v) for k, v in fixtures.items()}
    return Circuit.build(built, input="in", output="out", **fx)


# --- the independent numeric solve -------------------------------------------------------

def mna_matrix(parts, fixtures, quantity: str, sv: complex):
    """Complex MNA matrix A, right-hand side b and the index of the wanted unknown.

    Rows: KCL at every non-ground node (sum of currents leaving the node through the
    branches = current injected by a test source), then one constraint per
    voltage-defined branch (the voltage source, vcvs, ccvs, op-amp outputs). A branch
    current unknown is the current entering the branch at its first node.
    """
    node_names = sorted({n for p in parts for n in p["nodes"]} - {"0"})
    two = [(p["name"], p["kind"], p["nodes"][0], p["nodes"][1], float(p["value"]))
           for p in parts if p["kind"] in PASSIVE]
    internal = {}  # op-amp name -> the node of its controlled source (behind Rout)
    for p in parts:
        if p["kind"] != "opamp":
            continue
        plus, minus, out = p["nodes"]
        internal[p["name"]] = out
        if p.get("rout") is not None:
            internal[p["name"]] = f"e_{p['name']}"
            node_names.append(internal[p["name"]])
            two.append((f"Rout_{p['name']}", "resistor", internal[p["name"]], out, float(p["rout"])))
        if p.get("rin") is not None:
            two.append((f"Rin_{p['name']}", "resistor", plus, minus, float(p["rin"])))
        if p.get("cin") is not None:
            two += [(f"Cin+_{p['name']}", "capacitor", plus, "0", float(p["cin"])),
                    (f"Cin-_{p['name']}", "capacitor", minus, "0", float(p["cin"]))]
    source_present = fixtures["source"] is not None and quantity in ("transfer", "zout")
    if source_present:
        node_names.append("src")
        two.append(("R_s", "resistor", "src", "in", float(fixtures["source"])))
    if quantity in ("transfer", "zin"):
        if fixtures["load"] is not None:
            two.append(("R_L", "resistor", "out", "0", float(fixtures["load"])))
        if fixtures["load_capacitance"] is not None:
            two.append(("C_L", "capacitor", "out", "0", float(fixtures["load_capacitance"])))
    idx = {n: i for i, n in enumerate(node_names)}
    branches = [p["name"] for p in parts if p["kind"] in ("vcvs", "ccvs", "opamp")]
    if quantity in ("transfer", "zout"):
        branches.append("V_source")
    bidx = {b: len(node_names) + i for i, b in enumerate(branches)}
    size = len(node_names) + len(branches)
    A = np.zeros((size, size), dtype=complex)
    b = np.zeros(size, dtype=complex)

    def put(r, c, v):
        if r is not None and c is not None:
            A[r, c] += v

    def node(n):
        return None if n == "0" else idx[n]

    admittance = {}
    for nm, kind, na, nb, v in two:
        y = {"resistor": 1 / v, "capacitor": sv * v, "inductor": 1 / (sv * v)}[kind]
        admittance[nm] = (y, na, nb)
        ia, ib = node(na), node(nb)
        put(ia, ia, y)
        put(ib, ib, y)
        put(ia, ib, -y)
        put(ib, ia, -y)

    def control(nm):
        """The controlling current as (column, coefficient) terms."""
        if nm in bidx:
            return [(bidx[nm], 1.0)]
        y, na, nb = admittance[nm]
        return [(node(na), y), (node(nb), -y)]

    for p in parts:
        kind, g = p["kind"], float(p.get("value") or 0)
        if kind == "vccs":
            op, om, cp, cm = (node(n) for n in p["nodes"])
            for row, sign in ((op, 1), (om, -1)):
                put(row, cp, sign * g)
                put(row, cm, -sign * g)
        elif kind == "cccs":
            op, om = node(p["nodes"][0]), node(p["nodes"][1])
            for col, coef in control(p["control"]):
                put(op, col, g * coef)
                put(om, col, -g * coef)
        elif kind in ("vcvs", "ccvs"):
            k = bidx[p["name"]]
            op, om = node(p["nodes"][0]), node(p["nodes"][1])
            put(op, k, 1)
            put(om, k, -1)
            put(k, op, 1)
            put(k, om, -1)
            if kind == "vcvs":
                put(k, node(p["nodes"][2]), -g)
                put(k, node(p["nodes"][3]), g)
            else:
                for col, coef in control(p["control"]):
                    put(k, col, -g * coef)
        elif kind == "opamp":
            k = bidx[p["name"]]
            plus, minus = (node(n) for n in p["nodes"][:2])
            out = node(internal[p["name"]])  # the controlled source's node: behind Rout if any
            put(out, k, 1)
            if p["model"] == "ideal":  # nullor: V+ = V-, output current free
                put(k, plus, 1)
                put(k, minus, -1)
            else:
                a0 = float(p["gain"])
                if p["model"] == "gain":
                    a = a0
                else:
                    wb = 2 * np.pi * float(p["gbw"])
                    a = a0 * wb / (a0 * sv + wb)
                if p["model"] == "two-pole":
                    wp = 2 * np.pi * float(p["pole2"])
                    a = a * wp / (sv + wp)
                put(k, out, 1)
                put(k, plus, -a)
                put(k, minus, a)
    if quantity in ("transfer", "zout"):
        k = bidx["V_source"]
        drive = idx["src"] if source_present else idx["in"]
        put(drive, k, 1)
        put(k, drive, 1)
        b[k] = 1.0 if quantity == "transfer" else 0.0
    if quantity == "zin":
        b[idx["in"]] = 1.0
        target = idx["in"]
    else:
        target = idx["out"]
    if quantity == "zout":
        b[idx["out"]] = 1.0
    return A, b, target


def refined_solve(A, b):
    """numpy solve with two steps of iterative refinement, residual in extended precision."""
    x = np.linalg.solve(A, b)
    Al, bl = A.astype(np.clongdouble), b.astype(np.clongdouble)
    for _ in range(2):
        r = bl - Al @ x.astype(np.clongdouble)
        x = x + np.linalg.solve(A, r.astype(complex))
    return x


# --- the property ------------------------------------------------------------------------

def exact_value(h, values, w: Fraction) -> complex | None:
    """The derived function with values put in, evaluated exactly at s = jw (None at a pole)."""
    hv = h.subs(values)
    assert hv.free_symbols() <= {s}, hv.free_symbols()
    sv = sympy.I * sympy.Rational(w.numerator, w.denominator)
    den = sympy.expand(hv.den.subs(s, sv))
    if den == 0:
        return None
    return complex(sympy.N(sympy.expand(hv.num.subs(s, sv)) / den, 30))


frequencies = st.lists(st.integers(5, 2000).map(lambda n: Fraction(n, 100)), min_size=3, max_size=3)


@settings(max_examples=60, deadline=None, database=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
@given(circuits(), frequencies)
def test_symbolic_equals_numeric_nodal_solve(description, ws):
    parts, fixtures = description
    try:
        circuit = to_circuit(parts, fixtures)
    except SingularCircuitError:
        # Refused before any algebra as structurally singular (a loop of voltage-type
        # sources, ...): the numeric transfer system must be singular at every frequency.
        event("refused as structurally singular")
        for w in ws:
            A, _, _ = mna_matrix(parts, fixtures, "transfer", 1j * float(w))
            assert np.linalg.cond(A) > COND_LIMIT, w
        return
    values = circuit.values()
    for kind in sorted({p["kind"] if p["kind"] != "opamp" else f"opamp {p['model']}" for p in parts}):
        event(f"has {kind}")
    compared = 0
    for quantity in ("transfer", "zin", "zout"):
        try:
            h = derive(circuit, quantity)
        except SingularCircuitError:
            event(f"{quantity}: singular")
            # The symbolic determinant vanishes identically: the numeric matrix must be singular too.
            for w in ws:
                A, _, _ = mna_matrix(parts, fixtures, quantity, 1j * float(w))
                assert np.linalg.cond(A) > COND_LIMIT, (quantity, w)
            continue
        for w in ws:
            A, b, target = mna_matrix(parts, fixtures, quantity, 1j * float(w))
            if np.linalg.cond(A) > COND_LIMIT:
                continue
            x = refined_solve(A, b)
            ref = complex(x[target])
            got = exact_value(h, values, w)
            assert got is not None, (quantity, w, ref)
            scale = max(1.0, float(np.max(np.abs(x))))
            if got == 0:
                # An exactly zero network function: the numeric value is zero up to rounding.
                assert abs(ref) <= 1e-12 * scale, (quantity, w, ref)
            else:
                assert abs(got - ref) <= REL_TOL * abs(ref), (quantity, w, got, ref)
            compared += 1
            event(f"{quantity}: compared" + (" (exact zero)" if got == 0 else ""))
    assume(compared > 0)


def test_numeric_reference_on_a_known_circuit():
    # The numpy reference itself against a hand result (common practice, Thevenin's theorem):
    # RC low-pass R = 2, C = 0.5, R_s = 1, R_L = 3: H(jw) = k / (1 + jw C Rth), k = 3/6, Rth = 3 || 3.
    parts = [{"name": "R1", "kind": "resistor", "nodes": ("in", "out"), "value": Fraction(2)},
             {"name": "C2", "kind": "capacitor", "nodes": ("out", "0"), "value": Fraction(1, 2)}]
    fixtures = {"source": Fraction(1), "load": Fraction(3), "load_capacitance": None}
    w = 0.7
    A, b, t = mna_matrix(parts, fixtures, "transfer", 1j * w)
    assert abs(refined_solve(A, b)[t] - 0.5 / (1 + 1j * w * 0.5 * 1.5)) < 1e-14
    # Zin = R + (1/(sC) || R_L); Zout = (R_s + R) || 1/(sC).
    A, b, t = mna_matrix(parts, fixtures, "zin", 1j * w)
    zc = 1 / (1j * w * 0.5)
    assert abs(refined_solve(A, b)[t] - (2 + zc * 3 / (zc + 3))) < 1e-14
    A, b, t = mna_matrix(parts, fixtures, "zout", 1j * w)
    assert abs(refined_solve(A, b)[t] - 3 * zc / (3 + zc)) < 1e-14


def test_numeric_reference_controlled_sources():
    # Hand results for the source conventions (README directions; common practice):
    # a vccs of gain g from out to ground, controlled by in, into R: V(out) = -g R V(in)
    # (its current leaves out through the source); a cccs of gain f controlled by R1 (in -> 0):
    # current f V(in)/R1 leaves out, so V(out) = -f R2 V(in)/R1; an ideal follower: V(out) = V(in).
    one = Fraction(1)
    cases = [
        ([{"name": "R1", "kind": "resistor", "nodes": ("out", "0"), "value": Fraction(2)},
          {"name": "R2", "kind": "resistor", "nodes": ("in", "0"), "value": one},
          {"name": "G3", "kind": "vccs", "nodes": ("out", "0", "in", "0"), "value": Fraction(3)}], -6.0),
        ([{"name": "R1", "kind": "resistor", "nodes": ("in", "0"), "value": Fraction(4)},
          {"name": "R2", "kind": "resistor", "nodes": ("out", "0"), "value": Fraction(2)},
          {"name": "F3", "kind": "cccs", "nodes": ("out", "0"), "value": Fraction(5), "control": "R1"}], -2.5),
        ([{"name": "R1", "kind": "resistor", "nodes": ("in", "0"), "value": one},
          {"name": "R2", "kind": "resistor", "nodes": ("out", "0"), "value": one},
          {"name": "H3", "kind": "ccvs", "nodes": ("out", "0"), "value": Fraction(7), "control": "R1"}], 7.0),
        ([{"name": "R1", "kind": "resistor", "nodes": ("in", "0"), "value": one},
          {"name": "R2", "kind": "resistor", "nodes": ("out", "0"), "value": one},
          {"name": "U3", "kind": "opamp", "nodes": ("in", "out", "out"), "model": "ideal", "gain": None,
           "gbw": None}], 1.0),
    ]
    fixtures = {"source": None, "load": None, "load_capacitance": None}
    for parts, expected in cases:
        A, b, t = mna_matrix(parts, fixtures, "transfer", 1j)
        assert abs(refined_solve(A, b)[t] - expected) < 1e-14
