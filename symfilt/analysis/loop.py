"""The loop around each op-amp: feedback factor, loop gain, margins and polarity.

The loop is broken at the op-amp's controlled source (the return-ratio method):
the source ``A(s)·(V+ − V−)`` is replaced by a unit test voltage, the signal
source is zeroed (``R_s`` kept) and the load stays. The voltage that returns to
the op-amp's inputs gives the feedback factor ``β(s) = −(V+ − V−)`` and the loop
gain ``T(s) = A(s)·β(s)`` (:func:`symfilt.engine.solve.solve_unknown` with
``drive="loop"``). The op-amp's output resistance and the load are inside the
loop, which is how a capacitive load eats the phase margin.

At the values: the crossover frequency (|T| = 1), the phase margin
(180° + arg T there, the phase followed continuously from DC), the phase crossover
(arg T = −180°) and the gain margin there.

Polarity: with the op-amp's gain out of the picture, the sign of β at low
frequency (β(0), or the first coefficient when β(0) = 0) says whether the
feedback is negative. A negative β there is positive feedback: the stage latches
instead of settling (:func:`check_polarity`).
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass, field
from typing import Mapping

import sympy

from symfilt.analysis.network import NetworkFunction
from symfilt.analysis.numeric import magnitude_squared, positive_roots, trim
from symfilt.analysis.roots import exact_roots
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.engine.polybridge import to_fmpq
from symfilt.engine.rational import Ratio
from symfilt.engine.ratio_product import ratio_product
from symfilt.engine.solve import solve_unknown
from symfilt.errors import CircuitError
from symfilt.model.keep import fixture_values
from symfilt.model.circuit import Circuit, Part, S, part_symbol
from symfilt.model.safe import as_sympy

__all__ = ["Loop", "LoopView", "open_loop_gain", "loops", "margins", "feedback_sign", "check_polarity",
           "feedback_polarities", "refuse_positive_feedback", "substitute_loop", "MARGIN_WARNING_DEG"]

#: Phase margin below which a warning is given (common practice: 45° or more).
MARGIN_WARNING_DEG = 45.0


@dataclass(frozen=True)
class LoopView:
    """One view (loaded or ideal) of an op-amp's loop.

    Parameters
    ----------
    beta : NetworkFunction
        Feedback factor β(s): the fraction of the op-amp's own output that returns
        as V− − V+.
    loop_gain : NetworkFunction or None
        T(s) = A(s)·β(s); None for an ideal op-amp (A -> oo).
    numbers : dict
        At the circuit's values: ``dc_loop_gain``, ``crossover_hz``,
        ``phase_margin_deg``, ``phase_crossover_hz``, ``gain_margin_db`` (None when
        there is no such point); empty when a value is missing.
    missing : tuple of str
        The symbols of T(s) without a value (why ``numbers`` is empty).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> view = loops(catalogue.build("sallen-key-lowpass"))[0].ideal
    >>> view.beta.dc_gain(), view.loop_gain is None
    (1, True)
    """

    beta: NetworkFunction
    loop_gain: NetworkFunction | None
    numbers: dict = field(default_factory=dict)
    missing: tuple = ()

    @property
    def margin_low(self) -> bool:
        """True when the phase margin at the values is below :data:`MARGIN_WARNING_DEG`.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> loops(catalogue.build("sallen-key-lowpass"))[0].loaded.margin_low
        False
        """
        pm = self.numbers.get("phase_margin_deg")
        return pm is not None and pm < MARGIN_WARNING_DEG


@dataclass(frozen=True)
class Loop:
    """The loop around one op-amp, loaded and ideal.

    Parameters
    ----------
    opamp : str
        The op-amp's name.
    feedback : {"negative", "positive", "undecided", "none"}
        The polarity of the loaded loop at low frequency.
    loaded, ideal : LoopView
        With the source resistance and load, and with them at their ideal limits.
    model : str
        The op-amp's model.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> loops(catalogue.build("sallen-key-lowpass"))[0].feedback
    'negative'
    """

    opamp: str
    feedback: str
    loaded: LoopView
    ideal: LoopView
    model: str = "ideal"


def open_loop_gain(part: Part) -> sympy.Expr | None:
    """The op-amp's open-loop gain A(s) as its model says; None for the ideal model.

    Parameters
    ----------
    part : Part
        An op-amp.

    Examples
    --------
    >>> open_loop_gain(Part.opamp("U1", "a", "b", "c", model="single-pole"))
    2*pi*A_U1*GBW_U1/(A_U1*s + 2*pi*GBW_U1)
    """
    a0 = part_symbol(f"A_{part.name}")
    if part.model == "ideal":
        return None
    if part.model == "gain":
        return a0
    wt = 2 * sympy.pi * part_symbol(f"GBW_{part.name}")
    if part.model == "integrator":
        return wt / S
    a = a0 * wt / (a0 * S + wt)
    if part.model == "two-pole":
        w2 = 2 * sympy.pi * part_symbol(f"P2_{part.name}")
        a = a * w2 / (S + w2)
    return a


def loops(circuit: Circuit, *, max_terms: int = DEFAULT_MAX_TERMS, progress=None) -> tuple[Loop, ...]:
    """The loop of every op-amp of the circuit, loaded and ideal, with numbers at the values.

    Parameters
    ----------
    circuit : Circuit
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    tuple of Loop
        In the order of the parts.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.opamp("U1", "in", "out", "out", model="gain", rout="symbol"),
    ...                    Part.resistor("R1", "out", "0")])
    >>> loops(c)[0].loaded.loop_gain.as_expr()
    A_U1*R1/(R1 + Rout_U1)
    """
    values = circuit.values()
    out = []
    for part in circuit.parts:
        if part.kind != "opamp":
            continue
        beta = _beta(circuit, part, max_terms, progress)
        views = {}
        put = fixture_values(circuit)  # partly symbolic (model.keep): the loaded view gets those values
        for key, b in (("loaded", beta.subs(put) if put else beta), ("ideal", beta.ideal())):
            a = open_loop_gain(part)
            t = None if a is None else _loop_gain(a, b)
            missing = () if t is None else tuple(sorted(x.name for x in t.free_symbols() - {S} - set(values)))
            views[key] = LoopView(b, t, margins(t, values) if t is not None else {}, missing)
        out.append(Loop(part.name, feedback_sign(beta, values), views["loaded"], views["ideal"], part.model))
    return tuple(out)


def _loop_gain(a, beta: NetworkFunction) -> NetworkFunction:
    """T(s) = A(s) beta(s), multiplied on flint (through sympy only if the rings disagree)."""
    a_h = NetworkFunction.from_expr(a)
    if not a_h.infinite and not beta.infinite:
        product = ratio_product(a_h.ratio, beta.ratio)
        if product is not None:
            return NetworkFunction.from_ratio(product)
    return NetworkFunction.from_expr(a * beta.as_expr())


def _beta(circuit: Circuit, part: Part, max_terms: int, progress) -> NetworkFunction:
    """β(s) of one op-amp's loop, loaded."""
    num, den = solve_unknown(circuit, drive="loop", opamp=part.name, max_terms=max_terms,
                             progress=progress).to_sympy()
    return NetworkFunction(-num, den, quantity="transfer")


def feedback_polarities(circuit: Circuit, *, max_terms: int = DEFAULT_MAX_TERMS, progress=None) -> dict[str, str]:
    """Op-amp name -> the polarity of its loop (:func:`feedback_sign`), without loop gains or margins.

    What :func:`check_polarity` reads, for a command that shows no loops (``spread``, ``size``):
    the same β(s) as :func:`loops`, and the same refusal of a β that grows without bound
    without the fixtures (its ideal view).

    Parameters
    ----------
    circuit : Circuit
    max_terms : int
        Size budget of the elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    dict
        In the order of the parts.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> feedback_polarities(catalogue.build("sallen-key-lowpass"))
    {'U1': 'negative'}
    """
    values = circuit.values()
    out = {}
    for part in circuit.parts:
        if part.kind == "opamp":
            r = solve_unknown(circuit, drive="loop", opamp=part.name, max_terms=max_terms, progress=progress)
            beta = NetworkFunction.from_ratio(Ratio(-r.num, r.den, r.symbols))  # -num/den as in _beta, on flint
            beta.ideal()  # raises as loops() does when the ideal view is unbounded
            out[part.name] = feedback_sign(beta, values)
    return out


def substitute_loop(loop: Loop, values: Mapping) -> Loop:
    """The loop with values put into its formulas (numbers unchanged).

    Parameters
    ----------
    loop : Loop
    values : mapping
        Symbol -> exact value.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> c = catalogue.build("sallen-key-lowpass")
    >>> substitute_loop(loops(c)[0], c.values()).loaded.beta.free_symbols() <= {S}
    True
    """
    def view(v: LoopView) -> LoopView:
        return LoopView(v.beta.subs(values), None if v.loop_gain is None else v.loop_gain.subs(values), v.numbers,
                        v.missing)

    return Loop(loop.opamp, loop.feedback, view(loop.loaded), view(loop.ideal), loop.model)


def feedback_sign(beta: NetworkFunction, values: Mapping) -> str:
    """``negative``, ``positive``, ``undecided`` or ``none``: the polarity of the feedback at low frequency.

    β(s) ≈ c·s^k as s -> 0. For k = 0 (feedback at DC) and k = 1 (feedback through
    a capacitor, as in an integrator) the sign of c decides: c > 0 is negative
    feedback. Otherwise, or when the sign depends on values that are not given, it
    is ``undecided``; ``none`` when nothing returns (β = 0, an open loop).

    Parameters
    ----------
    beta : NetworkFunction
        The feedback factor.
    values : mapping
        Symbol -> value (may be partial).

    Examples
    --------
    >>> R1, R2 = sympy.symbols("R1 R2", positive=True)
    >>> feedback_sign(NetworkFunction.from_expr(R1 / (R1 + R2)), {}), \\
    ...     feedback_sign(NetworkFunction.from_expr(-R1 / (R1 + R2)), {})
    ('negative', 'positive')
    """
    if beta.infinite:
        return "undecided"
    if beta.ratio.num == 0:
        return "none"
    ncs, dcs = beta.ratio.coefficients(S)
    k_num = next((k for k, c in enumerate(ncs) if c != 0), None)
    k_den = next((k for k, c in enumerate(dcs) if c != 0), None)
    if k_num is None or k_den is None or not 0 <= k_num - k_den <= 1:
        return "undecided"
    exact = _exact_sign(beta.ratio, ncs[k_num], dcs[k_den], values)
    if exact is not None:
        return exact
    ncs, dcs = beta.coefficients()
    c = as_sympy(ncs[k_num] / dcs[k_den]).xreplace(dict(values))
    if c.is_negative:
        return "positive"
    if c.is_positive:
        return "negative"
    return "undecided"


def _exact_sign(ratio: Ratio, num, den, values: Mapping) -> str | None:
    """The polarity from num/den at the values in flint rationals, when every symbol they hold has a
    rational value (and pi is not among them); None otherwise (sympy's assumptions decide then)."""
    import flint

    given = {(k.name if hasattr(k, "name") else str(k)): v for k, v in values.items()}
    qctx = flint.fmpq_mpoly_ctx.get(tuple(ratio.num.context().names()), "degrevlex")
    point = []
    for name, dn, dd in zip(qctx.names(), num.degrees(), den.degrees()):
        sym = ratio.symbols[name]
        if max(dn, dd) == 0:
            point.append(flint.fmpq(0))
            continue
        v = given.get(sym.name) if isinstance(sym, sympy.Symbol) else None
        v = as_sympy(v) if v is not None else None
        if v is None or not v.is_Rational:
            return None
        point.append(flint.fmpq(int(v.p), int(v.q)))
    c = to_fmpq(num, qctx)(*point) / to_fmpq(den, qctx)(*point) if to_fmpq(den, qctx)(*point) != 0 else None
    if c is None or c == 0:
        return None
    return "positive" if c < 0 else "negative"


def check_polarity(circuit: Circuit, found: tuple[Loop, ...]) -> None:
    """Raise CircuitError for the first op-amp whose feedback is positive.

    Parameters
    ----------
    circuit : Circuit
    found : tuple of Loop
        As :func:`loops` gives.

    Raises
    ------
    CircuitError
        Naming the op-amp, both inputs and the fix.

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.opamp("U1", "fb", "in", "out"), Part.resistor("R1", "out", "fb"),
    ...                    Part.resistor("R2", "fb", "0")])
    >>> check_polarity(c, loops(c))
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: part U1: the feedback is positive: the output returns to the + input (node fb) more than to the - input (node in), so the stage latches instead of settling, swap plus and minus, or take the feedback to the - input
    """
    refuse_positive_feedback(circuit, {loop.opamp: loop.feedback for loop in found})


def refuse_positive_feedback(circuit: Circuit, polarities: Mapping[str, str]) -> None:
    """Raise CircuitError for the first op-amp whose feedback is positive.

    Parameters
    ----------
    circuit : Circuit
    polarities : mapping
        Op-amp name -> polarity, as :func:`feedback_polarities` gives it.

    Raises
    ------
    CircuitError
        Naming the op-amp, both inputs and the fix (the message of :func:`check_polarity`).

    Examples
    --------
    >>> from symfilt import catalogue
    >>> refuse_positive_feedback(catalogue.build("sallen-key-lowpass"), {"U1": "negative"})
    """
    for name, polarity in polarities.items():
        if polarity == "positive":
            plus, minus, _out = circuit.part(name).nodes
            raise CircuitError(
                f"part {name}",
                f"the feedback is positive: the output returns to the + input (node {plus}) more than to "
                f"the - input (node {minus}), so the stage latches instead of settling",
                "swap plus and minus, or take the feedback to the - input")


def margins(t: NetworkFunction, values: Mapping) -> dict:
    """Crossover, phase margin and gain margin of a loop gain at the values.

    Parameters
    ----------
    t : NetworkFunction
        The loop gain T(s).
    values : mapping
        Symbol -> value for every symbol but s; otherwise the result is empty.

    Returns
    -------
    dict
        ``dc_loop_gain`` (None when infinite), ``crossover_hz`` (the highest
        frequency where |T| falls through 1), ``phase_margin_deg``,
        ``phase_crossover_hz`` (the lowest frequency where arg T = −180°),
        ``gain_margin_db``; None where there is no such point.

    Examples
    --------
    >>> A, w = sympy.symbols("A w", positive=True)
    >>> m = margins(NetworkFunction.from_expr(A * w / (S + w)), {A: 100, w: 1})
    >>> round(m["crossover_hz"] * 2 * math.pi, 3), round(m["phase_margin_deg"], 2), m["gain_margin_db"]
    (99.995, 90.57, None)
    """
    cv = t.coefficient_values(values)
    if cv is None:
        return {}
    num, den = trim(cv[0]), trim(cv[1])
    out: dict = {"dc_loop_gain": num[0] / den[0] if den[0] != 0 else None}
    diff = [a - b for a, b in zip(*_padded(magnitude_squared(num), magnitude_squared(den)))]
    falls = [u for u in positive_roots(diff) if _abs_t(num, den, math.sqrt(u) * 1.001) < 1]
    wc = math.sqrt(falls[-1]) if falls else None
    out["crossover_hz"] = None if wc is None else wc / (2 * math.pi)
    out["phase_margin_deg"] = None if wc is None else 180.0 + phase_deg(num, den, wc)
    w180 = _phase_crossover(num, den)
    out["phase_crossover_hz"] = None if w180 is None else w180 / (2 * math.pi)
    g = None if w180 is None else _abs_t(num, den, w180)
    out["gain_margin_db"] = None if not g else -20 * math.log10(g)
    return out


def _padded(a: list, b: list) -> tuple[list, list]:
    n = max(len(a), len(b))
    return a + [0.0] * (n - len(a)), b + [0.0] * (n - len(b))


def _value_at(cs: list, w: float) -> complex:
    return sum(c * (1j * w) ** k for k, c in enumerate(cs))


def _abs_t(num: list, den: list, w: float) -> float:
    return abs(_value_at(num, w) / _value_at(den, w))


def phase_deg(num: list, den: list, w: float) -> float:
    """arg T(jw) in degrees, followed continuously from DC (0° for a positive DC value).

    Each root contributes its own continuous angle; the sum is then shifted by whole
    turns so that the phase just above DC lies in (−180°, 180°].

    Parameters
    ----------
    num, den : list of float
        Coefficients, lowest power first.
    w : float
        Angular frequency (rad/s).

    Examples
    --------
    >>> round(phase_deg([1.0], [1.0, 1.0, 0.25], 1e6), 1)  # two poles at s = -2
    -180.0
    """
    zeros, poles = _roots(num), _roots(den)
    lead = num[-1] / den[-1]

    def raw(x: float) -> float:
        total = math.degrees(cmath.phase(lead))
        total += sum(math.degrees(cmath.phase(1j * x - z)) for z in zeros)
        return total - sum(math.degrees(cmath.phase(1j * x - p)) for p in poles)

    scale = min([abs(r) for r in list(zeros) + list(poles) if abs(r) > 0] or [1.0])
    low = raw(scale * 1e-9)
    shift = -360.0 * round(low / 360.0)
    if low + shift <= -180.0:
        shift += 360.0
    return raw(w) + shift


def _roots(cs: list) -> list[complex]:
    """Every root of a polynomial with float coefficients (lowest power first, the last not 0), by
    :func:`~symfilt.analysis.roots.exact_roots`: certified, and no numpy to import."""
    return exact_roots(cs) if len(cs) > 1 else []


def _phase_crossover(num: list, den: list) -> float | None:
    """The lowest w > 0 where T(jw) is real and negative with the continuous phase at −180°."""
    # Im(N(jw)·conj(D(jw))) is odd in w: w·q(w^2); its positive roots are where T(jw) is real.
    a, b = _padded(list(num), list(den))
    im = [0.0] * (2 * len(a))
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            im[i + j] += x * y * (1j ** ((i - j) % 4)).imag
    q = trim(im[1::2]) if any(im[1::2]) else []
    for w in sorted(math.sqrt(u) for u in positive_roots(q)) if len(q) > 1 else []:
        if abs(phase_deg(num, den, w) + 180.0) < 1.0:
            return w
    return None
