"""Findings: what the analysis and design layers conclude, as codes and data, never as sentences.

A :class:`Finding` is a ``kind`` code (one of :data:`KINDS`) and a small tuple of
(key, value) pairs. :mod:`symfilt.export.findings` words them, in one place.
"""

from __future__ import annotations

from dataclasses import dataclass

#: Every finding kind, by the layer that reports it.
KINDS = frozenset({
    # analysis/forms.py: why a cutoff has no closed form
    "bandpass-has-two-edges", "allpass-has-no-cutoff", "notch-has-no-cutoff", "no-closed-form-cutoff",
    # analysis/loading.py: why a load limit has no value
    "fixture-has-no-effect", "needs-every-value", "bound-outside-scan", "within-tolerance-over-scan",
    # analysis/stage.py: why the sum rules were not checked
    "sum-rules-no-w0", "sum-rules-parameter-unit",
    # design/sizing.py
    "equation-too-large", "equation-not-polynomial", "equation-degree", "equation-factor-degree",
    "no-closed-form-quantity", "closed-form-roots-miss", "dc-gain-sign", "numeric-root-unconfirmed",
    "ratio-off-series", "joint-solutions",
    # design/spread.py
    "tolerance-no-effect", "too-many-corners", "normal-corners", "quantity-undefined",
    # design/opamp_error.py
    "ideal-dc-gain-zero", "cutoff-error-too-large", "no-closed-form-real-cutoff",
    "first-order-cutoff-too-large", "first-order-needs-dc-passband", "opamp-error-exact-only",
    # analysis/noise_numbers.py
    "noise-opamp-noiseless", "noise-no-total",
})


@dataclass(frozen=True)
class Finding:
    """One conclusion of the analysis or design layers, as a code and its data.

    Parameters
    ----------
    kind : str
        One of :data:`KINDS`.
    data : tuple of (str, object)
        The numbers and names the finding is about.

    Examples
    --------
    >>> f = finding("sum-rules-parameter-unit", names=("L1",))
    >>> f.get("names"), "L1" in f, "R1" in f
    (('L1',), True, False)
    """

    kind: str
    data: tuple = ()

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"unknown finding kind {self.kind!r}")

    def get(self, key: str, default=None):
        """The datum of that key.

        Parameters
        ----------
        key : str
            A key of :attr:`data`.
        default : object
            Returned when there is no such key.

        Returns
        -------
        object

        Examples
        --------
        >>> finding("equation-degree", degree=3).get("degree")
        3
        """
        return dict(self.data).get(key, default)

    def __contains__(self, word) -> bool:
        """True when the code contains ``word`` or a datum is (or lists) it.

        Examples
        --------
        >>> "w0" in finding("sum-rules-no-w0")
        True
        """
        if isinstance(word, str) and word in self.kind:
            return True
        return any(v == word or (isinstance(v, tuple) and word in v) for _k, v in self.data)


def finding(kind: str, /, **data) -> Finding:
    """A :class:`Finding` from a kind and keyword data (kept in the order given).

    Parameters
    ----------
    kind : str
        One of :data:`KINDS`.
    **data
        Hashable values (names as tuples).

    Returns
    -------
    Finding

    Examples
    --------
    >>> finding("no-closed-form-cutoff", kind="general", order=3)
    Finding(kind='no-closed-form-cutoff', data=(('kind', 'general'), ('order', 3)))
    """
    return Finding(kind, tuple(data.items()))


__all__ = ["KINDS", "Finding", "finding"]
