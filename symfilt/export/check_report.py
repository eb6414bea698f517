"""Reports of a claim check (:class:`symfilt.claims.judge.Equivalence`): its words, short text and JSON.

The diagnosis of a differing claim is data (:class:`~symfilt.claims.diagnosis.ClaimFinding`);
:func:`finding_text` is the one place that words it, for the text report, the
``check`` JSON and :func:`assert_equivalent`.

Examples
--------
>>> from symfilt.claims.judge import Equivalence
>>> print(check_text(Equivalence(True, "exact", 0, (), None)), end="")
equal: the claim matches the derived result (decided exactly)
"""

from __future__ import annotations

import json
import math
from typing import Any

import sympy

from symfilt.claims.judge import Equivalence, equivalent

#: What leaving out a fixture or op-amp limit means (``left-out`` findings).
LEFT_OUT_WORDS = {"load": "the load", "load-capacitance": "the load capacitance",
                  "source-resistance": "the source resistance", "opamp-gain": "the op-amp's finite gain",
                  "opamp-bandwidth": "the op-amp's finite bandwidth"}
#: How the claim and the derived result are 2*pi apart (``two-pi`` findings).
TWO_PI_WORDS = {"divided": "the claim is the derived result divided by 2*pi",
                "times": "the claim is the derived result times 2*pi",
                "s-for-2pi-s": "the claim has s where 2*pi*s belongs",
                "2pi-s-for-s": "the claim has 2*pi*s where s belongs"}
#: Findings worded without data.
FIXED_WORDS = {"sign": "agrees up to sign: a sign was lost",
               "missing-j": "agrees when w is read as j*w: a j was left out (s = j*w)",
               "no-simple-cause": "no simple cause found (tried source, load and op-amp limits, shorted and open "
                                  "parts, sign, 2*pi, a missing j, exchanged and renamed parts, alone and in pairs)"}


def _show(expr) -> str:
    if expr is None or expr.has(sympy.zoo):
        return "unbounded"
    text = str(expr)
    return text if len(text) <= 100 else text[:97] + "..."


def _arrow(at_zero: bool) -> str:
    return "0" if at_zero else "oo"


def _left_out(data) -> str:
    limits = data["limits"]
    when = " and ".join(f"{name} -> {_arrow(at_zero)}" for name, at_zero, _ in limits)
    what = " and ".join(LEFT_OUT_WORDS[w] for _, _, w in limits)
    return f"agrees when {when}: {what} {'was' if len(limits) == 1 else 'were'} left out"


def _part_limit(data) -> str:
    name, effect = data["symbol"], data["effect"]
    text = f"agrees when {name} -> {_arrow(data['at_zero'])}"
    if effect:
        text += f": {name} was {'shorted' if effect == 'short' else 'left open'}"
    return text


def _counterexample(data) -> str:
    where = ", ".join(f"{k} = {v:.4g}" for k, v in data["values"].items())
    if not data.get("gain", True):
        apart = data["relative"]
        shown = lambda v: f"{v:.6g}" if isinstance(v, float) else f"{v.real:.4g}{v.imag:+.4g}j"
        text = (f"at {where}: the claim gives {shown(data['claim_value'])}, "
                f"the derived result {shown(data['derived_value'])}")
        return text + (", apart by an unbounded amount" if math.isinf(apart) else f", {apart * 100:.3g} % apart")
    mag = lambda v, db: f"{v:.4g}" + (f" ({db:+.2f} dB)" if db is not None else "")
    text = (f"at {where}: the claim gives {mag(data['claim'], data['claim_db'])}, "
            f"the derived result {mag(data['derived'], data['derived_db'])}")
    apart = data["db_apart"]
    text += ", apart by an unbounded amount" if math.isinf(apart) else f", {abs(apart):.3g} dB apart"
    if data["phase_apart"] >= 1.0:
        text += f", phase {data['phase_apart']:.1f} degrees apart"
    return text


_WORDING = {
    "left-out": _left_out,
    "part-limit": _part_limit,
    "two-pi": lambda d: f"differs by a factor 2*pi: Hz vs rad/s mixed up ({TWO_PI_WORDS[d['how']]})",
    "exchanged": lambda d: f"agrees when {d['a']} and {d['b']} are exchanged",
    "constant-factor": lambda d: f"differs by a constant factor {_show(d['factor'])}: the frequency dependence agrees",
    "missing-symbols": lambda d: "symbols in the derived result but not in the claim: " + ", ".join(d["symbols"]),
    "extra-symbols": lambda d: "symbols in the claim but not in the derived result: " + ", ".join(d["symbols"]),
    "order": lambda d: f"order differs: expected {d['expected']}, got {d['got']}",
    "limit-differs": lambda d: (f"{'DC gain (s -> 0)' if d['at_zero'] else 'high-frequency gain (s -> oo)'} "
                                f"differs: expected {_show(d['expected'])}, got {_show(d['got'])}"),
    "counterexample": _counterexample,
    "renamed": lambda d: f"agrees when {d['written']} is read as {d['meant']}: {d['written']} was written for {d['meant']}",
    "coefficient": lambda d: (f"first difference in the {d['part']}'s coefficient of s^{d['power']} (N(s)/D(s) with "
                              f"D's lowest coefficient 1): expected {_show(d['expected'])}, got {_show(d['got'])}"),
    "equal-at-values": lambda d: ("equal at your values of " + ", ".join(d["symbols"])
                                  + " but not in general: they differ at other values"),
    "not-diagnosed": lambda d: f"not diagnosed: the claim or the derived result has about {d['terms']} terms",
}


def _qualified(finding: Any, text: str) -> str:
    """A slip found on the squares, or as one of a pair, says so."""
    if finding.data.get("paired"):
        text += " (together with the next slip)" if finding.data.get("first") else " (together with the slip above)"
    if finding.data.get("squared"):
        text += " (compared as squares: the quantity has a root)"
    return text


def finding_text(finding: Any) -> str:
    """One finding of a claim's diagnosis in plain English.

    Parameters
    ----------
    finding : symfilt.claims.diagnosis.ClaimFinding
        A kind code and its data.

    Returns
    -------
    str
        The sentence, without a trailing full stop.

    Examples
    --------
    >>> from symfilt.claims.diagnosis import ClaimFinding
    >>> finding_text(ClaimFinding("left-out", {"limits": (("R_L", False, "load"),)}))
    'agrees when R_L -> oo: the load was left out'
    """
    if finding.kind in FIXED_WORDS:
        return _qualified(finding, FIXED_WORDS[finding.kind])
    return _qualified(finding, _WORDING[finding.kind](finding.data))


def diagnosis_text(result: Any) -> list[str]:
    """The diagnosis of a claim check, one sentence per finding.

    Parameters
    ----------
    result : symfilt.claims.judge.Equivalence
        The outcome of :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    list of str
        Empty when the claim is equal.

    Examples
    --------
    >>> from symfilt.claims.diagnosis import ClaimFinding
    >>> from symfilt.claims.judge import Equivalence
    >>> diagnosis_text(Equivalence(False, "exact", 0, (ClaimFinding("sign"),), None))
    ['agrees up to sign: a sign was lost']
    """
    return [finding_text(f) for f in result.diagnosis]


def _how(result: Any) -> str:
    if result.method == "exact":
        return "decided exactly"
    return f"sampled at {result.points} point{'s' * (result.points != 1)}"


def check_text(result: Any) -> str:
    """A short human report of a claim check: the verdict, then one line per finding.

    Parameters
    ----------
    result : symfilt.claims.judge.Equivalence
        The outcome of :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    str
        Lines ending in a newline.

    Examples
    --------
    >>> from symfilt.claims.diagnosis import ClaimFinding
    >>> from symfilt.claims.judge import Equivalence
    >>> r = Equivalence(False, "sampled", 24, (ClaimFinding("sign"),), {"R1": 1.0})
    >>> print(check_text(r), end="")
    different: the claim does not match the derived result (sampled at 24 points)
      - agrees up to sign: a sign was lost
    """
    if result.equivalent:
        return f"equal: the claim matches the derived result ({_how(result)})\n"
    lines = [f"different: the claim does not match the derived result ({_how(result)})"]
    lines += [f"  - {finding}" for finding in diagnosis_text(result)]
    return "\n".join(lines) + "\n"


def check_dict(result: Any) -> dict[str, Any]:
    """The ``check`` JSON shape of DESIGN.md, the diagnosis worded.

    Parameters
    ----------
    result : symfilt.claims.judge.Equivalence
        The outcome of :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    dict
        ``equivalent``, ``method``, ``points``, ``diagnosis`` (list of str) and
        ``counterexample`` (symbol name -> value, or None).

    Examples
    --------
    >>> from symfilt.claims.diagnosis import ClaimFinding
    >>> from symfilt.claims.judge import Equivalence
    >>> check_dict(Equivalence(False, "sampled", 24, (ClaimFinding("order", {"expected": 2, "got": 1}),), {"R1": 2.0}))
    {'equivalent': False, 'method': 'sampled', 'points': 24, 'diagnosis': ['order differs: expected 2, got 1'], 'counterexample': {'R1': 2.0}}
    """
    return {"equivalent": result.equivalent, "method": result.method, "points": result.points,
            "diagnosis": diagnosis_text(result),
            "counterexample": None if result.counterexample is None else dict(result.counterexample)}


def check_json(result: Any) -> str:
    """The ``check`` JSON of DESIGN.md for a claim check.

    Parameters
    ----------
    result : symfilt.claims.judge.Equivalence
        The outcome of :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    str
        ``json.dumps`` of :func:`check_dict`, indented by 2.

    Examples
    --------
    >>> from symfilt.claims.judge import Equivalence
    >>> import json
    >>> json.loads(check_json(Equivalence(True, "exact", 0, (), None)))
    {'equivalent': True, 'method': 'exact', 'points': 0, 'diagnosis': [], 'counterexample': None}
    """
    return json.dumps(check_dict(result), indent=2)


def assert_equivalent(claim: Any, derived: Any, **kwargs: Any) -> Equivalence:
    """Assert a hand derivation equals a derived quantity, for the user's own tests.

    Parameters
    ----------
    claim, derived
        As for :func:`symfilt.claims.judge.equivalent`.
    **kwargs
        ``symbols``, ``values`` and ``rng_seed`` as for :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    Equivalence
        The result, when equal.

    Raises
    ------
    AssertionError
        When they differ; the message carries the diagnosis.

    Examples
    --------
    >>> import sympy
    >>> R1, R2 = sympy.symbols("R1 R2", positive=True)
    >>> assert_equivalent("R1 || R2", R1 * R2 / (R1 + R2)).method
    'exact'
    >>> assert_equivalent("R2/R1", -R2 / R1, values={"R1": 1000, "R2": 10000})
    Traceback (most recent call last):
    ...
    AssertionError: the claim differs from the derived result (exact test):
      - agrees up to sign: a sign was lost
      - at R1 = 1000, R2 = 1e+04: the claim gives 10 (+20.00 dB), the derived result 10 (+20.00 dB), 0 dB apart, phase 180.0 degrees apart
    """
    result = equivalent(claim, derived, **kwargs)
    if not result.equivalent:
        plural = "s" if result.points != 1 else ""
        how = "exact test" if result.method == "exact" else f"sampled at {result.points} point{plural}"
        lines = "\n".join(f"  - {d}" for d in diagnosis_text(result))
        raise AssertionError(f"the claim differs from the derived result ({how}):\n{lines}")
    return result
