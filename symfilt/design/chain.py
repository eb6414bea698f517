"""What the interconnection of a chain of stages does: :func:`chain_report`.

For a :class:`~symfilt.model.chain.Chain` it derives, at the circuit's values:

* the connected chain, loaded (the chain's source and load) and ideal (R_s -> 0, R_L -> oo,
  C_L -> 0, the stages still loading each other), as an :class:`~symfilt.analysis.stage.Analysis`;
* each stage designed alone (its ideal transfer), and their product: the response the
  stages would give if nothing loaded anything;
* the chain with a unity-gain buffer at every interface (loaded): what the source and the
  load alone do;
* per interface k (between stage k and k + 1): the impedance looking back into stages
  1..k with the source (``zout``) and looking into stages k+1..n with the load (``zin``),
  the loading ratio |Zout/Zin| at DC, at the design cutoff and its largest value over the
  band up to it, and the chain's numbers with a buffer at that interface alone: what a
  buffer there restores, computed by deriving that circuit.

The voltage divider at an interface, Zin/(Zout + Zin), is why |Zout/Zin| measures the
loading (common practice: the 10:1 impedance rule keeps it below 0.1).

Examples
--------
>>> from symfilt import catalogue
>>> from symfilt.model.chain import Chain, ChainStage, Fixture
>>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
>>> r = chain_report(Chain((rc, rc), source=Fixture.parse("600", "source")))
>>> [round(x, 4) for x in (r.analysis.numeric["loaded"]["cutoff_hz"], r.product_numeric["cutoff_hz"])]
[528.2099, 990.6306]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import sympy

from symfilt.analysis.network import NetworkFunction, derive
from symfilt.analysis.probe import transfer_view
from symfilt.analysis.stage import Analysis, StageResult, analyse
from symfilt.engine.elimination import DEFAULT_MAX_TERMS
from symfilt.model.chain import Chain, connect, stage_nodes

#: Default tolerance: a buffer that moves the cutoff or the DC gain by less than this is not needed.
DEFAULT_TOLERANCE = 0.02
#: The band of the loading ratio: from this fraction of the design cutoff up to it.
BAND_DECADES = 3


@dataclass(frozen=True)
class StageAlone:
    """One stage as designed alone (ideal source, open output), in the chain's names.

    Parameters
    ----------
    name, origin : str
        The stage's name and where it came from.
    view : StageResult
        Its ideal transfer function with standard form and cutoff.
    numeric : dict
        Its numbers at the values.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> r = chain_report(Chain((ChainStage("RC", catalogue.build("rc-lowpass")),)))
    >>> round(r.stages[0].numeric["cutoff_hz"], 2)
    1539.22
    """

    name: str
    origin: str
    view: StageResult
    numeric: dict


@dataclass(frozen=True)
class Interface:
    """The connection between stage ``index`` and the next one.

    Parameters
    ----------
    index : int
        1-based: interface k is between stage k and stage k + 1.
    node : str
        Its node in the connected circuit (``x1``, ...).
    upstream, downstream : str
        The names of the stages on either side.
    zout : NetworkFunction
        Impedance looking back into stages 1..k, with the chain's source.
    zin : NetworkFunction
        Impedance looking into stages k+1..n, with the chain's load.
    loading : dict
        |Zout/Zin|: ``dc``, ``at_cutoff`` (at ``cutoff_hz``, the design cutoff), ``max`` and
        ``max_at_hz`` over the band (``BAND_DECADES`` decades up to the cutoff); a value is
        None when it cannot be had (no values, no cutoff), ``inf`` for an open-circuit ratio.
    buffered : dict
        The loaded chain's numbers with a unity-gain buffer at this interface alone.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> i = chain_report(Chain((rc, rc))).interfaces[0]
    >>> i.node, i.loading["dc"]
    ('x1', 0.0)
    """

    index: int
    node: str
    upstream: str
    downstream: str
    zout: NetworkFunction
    zin: NetworkFunction
    loading: dict
    buffered: dict


@dataclass(frozen=True)
class ChainResult:
    """Everything ``symfilt chain`` shows.

    Parameters
    ----------
    chain : Chain
    analysis : Analysis
        The connected chain, loaded and ideal (its circuit is ``analysis.circuit``).
    stages : tuple of StageAlone
    product : StageResult
        The product of the stages' transfers alone (what the design intends).
    product_numeric : dict
    buffered : StageResult
        The loaded chain with a unity-gain buffer at every interface.
    buffered_numeric : dict
    interfaces : tuple of Interface
    tolerance : float
        A buffer that moves the cutoff and the DC gain by less than this fraction is not needed.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> r = chain_report(Chain((rc, rc)))
    >>> r.worst().index, r.needs_buffer(r.worst())
    (1, True)
    """

    chain: Chain
    analysis: Analysis
    stages: tuple[StageAlone, ...]
    product: StageResult
    product_numeric: dict
    buffered: StageResult
    buffered_numeric: dict
    interfaces: tuple[Interface, ...]
    tolerance: float = DEFAULT_TOLERANCE

    def restored(self, i: Interface) -> dict:
        """What a buffer at interface ``i`` changes in the loaded chain.

        Returns ``cutoff_ratio`` (buffered over connected cutoff), ``cutoff_share`` (the part
        of the whole interface shift, connected -> buffered everywhere, that this buffer
        takes back) and ``dc_gain_db`` (dB gained); each None when it cannot be had.

        Parameters
        ----------
        i : Interface

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.model.chain import Chain, ChainStage
        >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
        >>> r = chain_report(Chain((rc, rc)))
        >>> round(r.restored(r.interfaces[0])["cutoff_share"], 6)
        1.0
        """
        conn = self.analysis.numeric["loaded"]
        fc, fb, fi = conn.get("cutoff_hz"), self.buffered_numeric.get("cutoff_hz"), i.buffered.get("cutoff_hz")
        out: dict = {"cutoff_ratio": None, "cutoff_share": None, "dc_gain_db": None}
        if fc and fi:
            out["cutoff_ratio"] = fi / fc
            if fb and abs(fb - fc) > 1e-12 * fb:
                out["cutoff_share"] = (fi - fc) / (fb - fc)
        g, gi = conn.get("dc_gain_db"), i.buffered.get("dc_gain_db")
        if g is not None and gi is not None:
            out["dc_gain_db"] = gi - g
        return out

    def needs_buffer(self, i: Interface) -> bool | None:
        """True when a buffer at ``i`` moves the cutoff or the DC gain by more than the tolerance.

        Parameters
        ----------
        i : Interface

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.model.chain import Chain, ChainStage
        >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
        >>> r = chain_report(Chain((rc, rc)))
        >>> r.needs_buffer(r.interfaces[0])
        True
        """
        if i.zout.as_expr() == 0:  # an ideal op-amp's output: nothing downstream can load it
            return False
        r = self.restored(i)
        gain = r["dc_gain_db"] is not None and abs(10 ** (r["dc_gain_db"] / 20) - 1) > self.tolerance
        if r["cutoff_ratio"] is None:
            has_cutoff = "cutoff_hz" in self.product_numeric or "cutoff_hz" in self.analysis.numeric["ideal"]
            if has_cutoff and not gain:  # a cutoff that cannot be had here (a value missing): no verdict
                return None
            return True if gain else (None if r["dc_gain_db"] is None else False)
        return abs(r["cutoff_ratio"] - 1) > self.tolerance or gain

    def worst(self) -> Interface | None:
        """The interface whose buffer alone moves the loaded chain most (cutoff and DC gain).

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.model.chain import Chain, ChainStage
        >>> chain_report(Chain((ChainStage("RC", catalogue.build("rc-lowpass")),))).worst() is None
        True
        """
        def score(i):
            r = self.restored(i)
            a = abs(math.log(r["cutoff_ratio"])) if r["cutoff_ratio"] else 0.0
            b = abs(r["dc_gain_db"] or 0.0) * math.log(10) / 20
            return a + b

        scored = [(score(i), i) for i in self.interfaces]
        scored = [(sc, i) for sc, i in scored if sc > 0]
        return max(scored, key=lambda t: t[0])[1] if scored else None


def _low_order(coeffs) -> tuple[float, int] | None:
    """(c, k): the lowest nonzero coefficient of a polynomial (lowest power first) and its power."""
    for k, c in enumerate(coeffs):
        if c != 0:
            return float(c), k
    return None


def _dc_ratio(a, b) -> float:
    """|Zout/Zin| as s -> 0 from the coefficient lists (lowest power first) of Zout (``a``) and Zin
    (``b``): from the lowest terms of each, 0 or inf when their powers of s differ."""
    terms = [_low_order(p) for p in (*a, *b)]
    if terms[0] is None:  # Zout = 0 (an ideal op-amp's output)
        return 0.0
    if terms[2] is None:  # Zin = 0: the interface is shorted
        return math.inf
    (n1, p1), (d1, q1), (n2, p2), (d2, q2) = terms
    power = (p1 - q1) - (p2 - q2)
    if power > 0:
        return 0.0
    if power < 0:
        return math.inf
    return abs(n1 * d2 / (d1 * n2))


def _loading(zout: NetworkFunction, zin: NetworkFunction, values, fc: float | None) -> dict:
    import numpy as np

    out = {"dc": None, "at_cutoff": None, "max": None, "max_at_hz": None, "cutoff_hz": fc}
    a, b = zout.coefficient_values(values), zin.coefficient_values(values)  # lowest power first; None: no values
    if a is None or b is None:
        return out
    out["dc"] = _dc_ratio(a, b)
    if fc is None:
        return out
    f = np.geomspace(fc / 10**BAND_DECADES, fc, 301)
    sv = 2j * np.pi * f
    at = lambda cs: np.polyval(cs[::-1], sv)
    with np.errstate(all="ignore"):
        ratio = np.abs(at(a[0]) * at(b[1]) / (at(a[1]) * at(b[0])))
    ratio = np.where(np.isfinite(ratio), ratio, np.inf)
    out["at_cutoff"] = float(ratio[-1])
    k = int(np.argmax(ratio))
    out["max"], out["max_at_hz"] = float(ratio[k]), float(f[k])
    return out


def _product(alone: list[StageResult]) -> NetworkFunction:
    return NetworkFunction.from_expr(sympy.Mul(*[st.transfer.as_expr() for st in alone]))


def chain_report(chain: Chain, *, tolerance: float = DEFAULT_TOLERANCE, max_terms: int = DEFAULT_MAX_TERMS,
                 progress: Callable[[str], None] | None = None) -> ChainResult:
    """Derive a chain connected, stage by stage, buffered, and at each interface.

    Parameters
    ----------
    chain : Chain
    tolerance : float
        A buffer moving the cutoff and the DC gain by less than this fraction is not needed.
    max_terms : int
        Size budget of each elimination.
    progress : callable, optional
        Receives stage names.

    Returns
    -------
    ChainResult

    Examples
    --------
    Two equal RC sections: connected, the second loads the first (the two-section ladder).

    >>> from symfilt import catalogue
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> r = chain_report(Chain((rc, rc)))
    >>> sympy.factor(r.analysis.ideal.transfer.as_expr())
    1/(C1*C1_2*R1*R1_2*s**2 + C1*R1*s + C1_2*R1*s + C1_2*R1_2*s + 1)
    """
    if not 0 < tolerance < 1:
        raise ValueError("tolerance must be a fraction between 0 and 1")
    n = len(chain.stages)
    circuit = connect(chain)
    values = circuit.values()
    if progress:
        progress("the connected chain")
    a = analyse(circuit, sensitivity=False, max_terms=max_terms, progress=progress)
    alone, stages = [], []
    for k, st in enumerate(chain.stages):
        view, numbers = transfer_view(derive(connect(chain, k, k + 1, source=False, load=False), max_terms=max_terms),
                                      values)
        alone.append(view)
        stages.append(StageAlone(st.name, st.origin, view, numbers))
    product, product_numeric = transfer_view(_product(alone), values)
    if progress:
        progress("buffers at the interfaces")
    buffered, buffered_numeric = transfer_view(derive(connect(chain, buffers=range(1, n)), max_terms=max_terms), values)
    fc = product_numeric.get("cutoff_hz") or a.numeric["loaded"].get("cutoff_hz")
    interfaces = []
    for k in range(1, n):
        zout = derive(connect(chain, 0, k, load=False), "zout", max_terms=max_terms)
        zin = derive(connect(chain, k, n, source=False), "zin", max_terms=max_terms)
        _view, numbers = transfer_view(derive(connect(chain, buffers=[k]), max_terms=max_terms), values)
        interfaces.append(Interface(k, stage_nodes(chain, k - 1)[1], chain.stages[k - 1].name, chain.stages[k].name,
                                    zout, zin, _loading(zout, zin, values, fc), numbers))
    return ChainResult(chain, a, tuple(stages), product, product_numeric, buffered, buffered_numeric,
                       tuple(interfaces), tolerance)


#: The curves of a chain's Bode plot, in drawing order.
SWEEP_VIEWS = ("loaded", "ideal", "product", "buffered")


def chain_sweep(r: ChainResult, fmin: float | None = None, fmax: float | None = None, points: int = 400):
    """Frequencies and the four responses of a chain: connected loaded and ideal, stages alone, all buffered.

    Parameters
    ----------
    r : ChainResult
    fmin, fmax : float, optional
        Sweep range in Hz; default two decades either side of the cutoffs.
    points : int
        Number of frequencies, logarithmically spaced.

    Returns
    -------
    (numpy.ndarray, dict)
        Frequencies, and view (:data:`SWEEP_VIEWS`) -> (dB, phase in degrees).

    Raises
    ------
    UsageError
        A symbol has no value, or the range is not usable.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.model.chain import Chain, ChainStage
    >>> rc = ChainStage("RC", catalogue.build("rc-lowpass"))
    >>> f, curves = chain_sweep(chain_report(Chain((rc, rc))), points=5)
    >>> len(f), sorted(curves)
    (5, ['buffered', 'ideal', 'loaded', 'product'])
    """
    import numpy as np

    from symfilt.analysis.bode import default_range, missing_values, transfer_sweep
    from symfilt.errors import UsageError

    values = r.analysis.circuit.values()
    missing = missing_values(r.analysis.loaded.transfer, values)
    if missing:
        raise UsageError("chain plot", "no value for " + ", ".join(missing),
                         "give every part, source and load a value to plot the chain")
    marks = [d.get(k) for d in (r.analysis.numeric["loaded"], r.analysis.numeric["ideal"], r.product_numeric,
                                r.buffered_numeric) for k in ("cutoff_hz", "f0_hz", "low_edge_hz", "high_edge_hz")]
    marks = [m for m in marks if m]
    lo, hi = default_range({"chain": {str(k): m for k, m in enumerate(marks)}})
    lo, hi = (fmin if fmin is not None else lo), (fmax if fmax is not None else hi)
    if not 0 < lo < hi:
        raise UsageError("chain plot", f"the range {lo:g} .. {hi:g} Hz is empty", "give --fmin below --fmax")
    f = np.geomspace(lo, hi, max(2, int(points)))
    views = {"loaded": r.analysis.loaded, "ideal": r.analysis.ideal, "product": r.product, "buffered": r.buffered}
    return f, {k: transfer_sweep(views[k].transfer, values, f) for k in SWEEP_VIEWS}
