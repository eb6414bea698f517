"""Reports of a claim check (:class:`symfilt.claims.judge.Equivalence`): short text and JSON.

Examples
--------
>>> from symfilt.claims.judge import Equivalence
>>> print(check_text(Equivalence(True, "exact", 0, (), None)), end="")
equal: the claim matches the derived result (decided exactly)
"""

from __future__ import annotations

import json
from typing import Any


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
    >>> from symfilt.claims.judge import Equivalence
    >>> r = Equivalence(False, "sampled", 24, ("agrees up to sign: a sign was lost",), {"R1": 1.0})
    >>> print(check_text(r), end="")
    different: the claim does not match the derived result (sampled at 24 points)
      - agrees up to sign: a sign was lost
    """
    if result.equivalent:
        return f"equal: the claim matches the derived result ({_how(result)})\n"
    lines = [f"different: the claim does not match the derived result ({_how(result)})"]
    lines += [f"  - {finding}" for finding in result.diagnosis]
    return "\n".join(lines) + "\n"


def check_json(result: Any) -> str:
    """The ``check`` JSON of DESIGN.md for a claim check.

    Parameters
    ----------
    result : symfilt.claims.judge.Equivalence
        The outcome of :func:`symfilt.claims.judge.equivalent`.

    Returns
    -------
    str
        ``json.dumps`` of :meth:`~symfilt.claims.judge.Equivalence.to_dict`, indented by 2.

    Examples
    --------
    >>> from symfilt.claims.judge import Equivalence
    >>> import json
    >>> json.loads(check_json(Equivalence(True, "exact", 0, (), None)))
    {'equivalent': True, 'method': 'exact', 'points': 0, 'diagnosis': [], 'counterexample': None}
    """
    return json.dumps(result.to_dict(), indent=2)
