"""The words for every :class:`~symfilt.analysis.findings.Finding`, in one place.

The analysis and design layers report findings as codes and data; the exporters
(text, JSON, notes, design reports, the CLI) call :func:`describe` where a
sentence is shown.
"""

from __future__ import annotations

from typing import Callable

from symfilt.analysis.findings import Finding


def _dc_gain_sign(d: dict) -> str:
    sign = "negative" if d["negative"] else "positive"
    return f"the DC gain is {sign}; its magnitude is sized to {d['magnitude']:g}"


_WORDS: dict[str, Callable[[dict], str]] = {
    "bandpass-has-two-edges": lambda d: "a band-pass has two edges",
    "allpass-has-no-cutoff": lambda d: "an all-pass has no cutoff",
    "notch-has-no-cutoff": lambda d: "a notch is described by w0 and Q",
    "no-closed-form-cutoff": lambda d: f"no closed form for a {d['kind']} response of order {d['order']}",
    "fixture-has-no-effect": lambda d: "does not change the transfer function",
    "needs-every-value": lambda d: "needs values for every part to compute",
    "bound-outside-scan": lambda d: "outside the range scanned",
    "within-tolerance-over-scan": lambda d: "the cutoff stays within the tolerance over the whole range scanned",
    "sum-rules-no-w0": lambda d: "sum rules not checked: no w0 (not a first- or second-order standard form)",
    "sum-rules-parameter-unit": lambda d: ("sum rules not checked: the unit of parameter " + ", ".join(d["names"])
                                           + " does not follow from the parts it sets"),
    "equation-too-large": lambda d: "the equation is too large for a closed form",
    "equation-not-polynomial": lambda d: "the equation is not polynomial in the varied part",
    "equation-degree": lambda d: f"the equation is of degree {d['degree']} in the varied part",
    "equation-factor-degree": lambda d: f"the equation has a factor of degree {d['degree']} in the varied part",
    "no-closed-form-quantity": lambda d: f"no closed form of the loaded {d['quantity']}",
    "closed-form-roots-miss": lambda d: "the closed-form roots do not meet the target at these values",
    "dc-gain-sign": _dc_gain_sign,
    "numeric-root-unconfirmed": lambda d: "the numeric root could not be confirmed with the exact transfer function",
    "ratio-off-series": lambda d: "the other varied parts follow the first in their ratio and may fall between series values",
    "joint-solutions": lambda d: f"{d['count']} solutions found; the series values around each were ranked together",
    "tolerance-no-effect": lambda d: "no effect on the transfer function: " + ", ".join(d["names"]),
    "too-many-corners": lambda d: f"more than {d['limit']} toleranced parts: worst case from the sensitivities only",
    "normal-corners": lambda d: "normal distribution, tolerance = 3 sigma; corners are at +-tol (samples may pass them)",
    "quantity-undefined": lambda d: f"{d['quantity']}: not defined at these values",
    "ideal-dc-gain-zero": lambda d: "the ideal DC gain is zero: no relative DC error",
    "cutoff-error-too-large": lambda d: "the exact cutoff error is too large to show: "
                                        + ("numbers only" if d.get("exact_only") else "first-order terms and numbers only"),
    "no-closed-form-real-cutoff": lambda d: f"no closed-form cutoff with {'the given' if d['model'] == 'as given' else d['model']} op-amps "
                                                  f"(order {d['order']}): numeric only",
    "first-order-cutoff-too-large": lambda d: "the first-order cutoff coefficients are too large to show: numeric only",
    "first-order-needs-dc-passband": lambda d: "first-order cutoff terms need a pass band at DC",
    "opamp-error-exact-only": lambda d: ("the op-amps' " + ", ".join(d["parameters"]) + " stay as the open-loop "
                                         "gain grows, so there are no first-order terms in 1/A and 1/GBW: "
                                         "the error shown is the exact one, real against ideal"),
    "noise-opamp-noiseless": lambda d: ("no noise data (en, in) for " + ", ".join(d["names"])
                                        + ": counted noiseless"),
    "noise-no-total": lambda d: ("the noise over all frequencies is not finite (a flat or 1/f density): "
                                 "give --band F1,F2 or --sample-rate FS"),
}


def describe(finding: Finding | None) -> str:
    """The sentence for a finding (plain text, no final full stop); ``""`` for None.

    Parameters
    ----------
    finding : Finding or None

    Returns
    -------
    str

    Examples
    --------
    >>> from symfilt.analysis.findings import finding
    >>> describe(finding("notch-has-no-cutoff"))
    'a notch is described by w0 and Q'
    >>> describe(finding("sum-rules-parameter-unit", names=("k",)))
    'sum rules not checked: the unit of parameter k does not follow from the parts it sets'
    """
    if finding is None:
        return ""
    return _WORDS[finding.kind](dict(finding.data))


def describe_all(findings) -> list[str]:
    """The sentences for a sequence of findings, in order.

    Parameters
    ----------
    findings : iterable of Finding
        The findings to word (None entries give ``""``).

    Returns
    -------
    list of str

    Examples
    --------
    >>> from symfilt.analysis.findings import finding
    >>> describe_all([finding("normal-corners")])
    ['normal distribution, tolerance = 3 sigma; corners are at +-tol (samples may pass them)']
    """
    return [describe(f) for f in findings]


__all__ = ["describe", "describe_all"]
