"""Numbers for other tools: scipy systems, poles and zeros, vectorised frequency responses.

:class:`ScipyViews` is a mixin of :class:`~symfilt.analysis.network.NetworkFunction`
(kept here so that ``network.py`` stays small). Two coefficient orders exist and both
are kept on purpose:

* :meth:`NetworkFunction.coefficient_values` and the JSON contract list the **lowest**
  power of s first (``a0 + a1 s + ...``, the order of the standard forms);
* the scipy-facing helpers here (:meth:`ScipyViews.scipy_coefficients`,
  :meth:`ScipyViews.to_scipy`) list the **highest** power first, as
  ``scipy.signal.TransferFunction``, ``scipy.signal.freqs`` and ``numpy.polyval`` expect.

Every helper works at the values: the exact coefficients at the values first lose their
common factor (:func:`symfilt.analysis.response.reduce_at_values`), so the poles and zeros
here are the ones :func:`symfilt.analysis.response.response_numbers` lists, and a pole
cancelled by a zero at the values (the balanced twin-T) is in neither.
"""

from __future__ import annotations

import math
from typing import Mapping

from symfilt.errors import UsageError


def named_values(values: Mapping | None) -> dict:
    """Symbol or name -> number, as name -> exact or float number (text like ``"4k7"`` is read exactly).

    Parameters
    ----------
    values : mapping or None
        Symbol (or its name) -> int, float, Rational or value text.

    Returns
    -------
    dict

    Examples
    --------
    >>> named_values({"R1": "4k7", "C1": 1e-9})
    {'R1': 4700, 'C1': 1e-09}
    """
    from symfilt.model.values import parse_value

    out = {}
    for k, v in dict(values or {}).items():
        name = k.name if hasattr(k, "name") else str(k)
        out[name] = parse_value(v, where=name) if isinstance(v, str) else v
    return out


class ScipyViews:
    """Scipy systems, poles, zeros and frequency responses of a network function at the values.

    Mixed into :class:`~symfilt.analysis.network.NetworkFunction`; it uses only that class's
    ``coefficient_values``, ``free_symbols`` and ``infinite``.

    Examples
    --------
    >>> from symfilt import catalogue
    >>> from symfilt.analysis.network import derive
    >>> c = catalogue.build("rc-lowpass")
    >>> b, a = derive(c).ideal().scipy_coefficients(c.values())
    >>> len(b), len(a), a[-1]
    (1, 2, 1.0)
    """

    def _reduced(self, values):
        from symfilt.analysis.response import reduce_at_values

        given = named_values(values)
        if self.infinite:
            raise UsageError("network function", "it is infinite (an input that draws no current)",
                             "ask for a finite quantity")
        missing = sorted(str(x) for x in self.free_symbols() if str(x) != "s" and str(x) not in given)
        if missing:
            raise UsageError("values", "no value for " + ", ".join(missing), "give every symbol a number")
        red = reduce_at_values(self, given)
        if red is None:  # the function is zero at the values
            cv = self.coefficient_values(given, exact=True)
            return (0,), tuple(cv[1]) if cv else (1,)
        return red.num, red.den

    def scipy_coefficients(self, values: Mapping) -> tuple[list[float], list[float]]:
        """Numerator and denominator coefficients at the values, **highest power of s first**.

        The exact coefficients lose their common factor at the values, then are scaled so that
        the denominator's lowest nonzero coefficient is 1 (the JSON contract's normalisation),
        then rounded to floats and reversed.

        Parameters
        ----------
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        (list of float, list of float)
            ``b`` and ``a`` as ``scipy.signal.TransferFunction(b, a)`` takes them.

        Examples
        --------
        >>> import sympy
        >>> from symfilt.analysis.network import NetworkFunction
        >>> from symfilt.model.circuit import S
        >>> R, C = sympy.symbols("R C", positive=True)
        >>> NetworkFunction.from_expr(1 / (1 + S * R * C)).scipy_coefficients({"R": "1k", "C": "1u"})
        ([1.0], [0.001, 1.0])
        """
        num, den = self._reduced(values)
        scale = next(c for c in den if c != 0)
        return [float(c / scale) for c in reversed(num)], [float(c / scale) for c in reversed(den)]

    def to_scipy(self, values: Mapping):
        """The function at the values as a ``scipy.signal.TransferFunction`` (continuous time).

        Needs scipy (``pip install scipy``; symfilt itself does not depend on it).

        Parameters
        ----------
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        scipy.signal.TransferFunction

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> c = catalogue.build("rc-lowpass")
        >>> sys = derive(c).ideal().to_scipy(c.values())
        >>> [round(float(p), 3) for p in sys.poles]
        [-9671.18]
        """
        try:
            from scipy import signal
        except ImportError:
            raise UsageError("to_scipy", "scipy is not installed", "pip install scipy") from None
        b, a = self.scipy_coefficients(values)
        return signal.TransferFunction(b, a)

    def poles(self, values: Mapping) -> list[complex]:
        """The poles at the values (rad/s, after cancelling a common factor), sorted by frequency.

        The same roots, in the same order, as ``response_numbers(h, values)["poles"]``.

        Parameters
        ----------
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        list of complex

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> c = catalogue.build("sallen-key-lowpass")
        >>> [round(abs(p)) for p in derive(c).ideal().poles(c.values())]
        [17236, 17236]
        """
        return _roots(self._reduced(values)[1])

    def zeros(self, values: Mapping) -> list[complex]:
        """The finite zeros at the values (rad/s, after cancelling a common factor), sorted by frequency.

        Parameters
        ----------
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        list of complex

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> c = catalogue.build("rc-highpass")
        >>> derive(c).ideal().zeros(c.values())
        [0j]
        """
        return _roots(self._reduced(values)[0])

    def lambdify(self, values: Mapping):
        """A numpy function of frequency in Hz: ``fn(f)`` is H(j 2 pi f), vectorised over ``f``.

        Parameters
        ----------
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        callable
            ``fn(f: array_like) -> numpy.ndarray`` of complex.

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> c = catalogue.build("rc-lowpass")
        >>> fn = derive(c).ideal().lambdify(c.values())
        >>> [round(float(abs(x)), 4) for x in fn([0.0, 1e9])]
        [1.0, 0.0]
        """
        import numpy as np

        b, a = self.scipy_coefficients(values)

        def response(f):
            s = 2j * math.pi * np.asarray(f, dtype=float)
            return np.polyval(b, s) / np.polyval(a, s)

        return response

    def frequency_response(self, f, values: Mapping):
        """H(j 2 pi f) at frequencies ``f`` in Hz (complex numpy array), at the values.

        Parameters
        ----------
        f : array_like
            Frequencies in Hz.
        values : mapping
            Symbol (or name) -> number for every symbol but ``s``.

        Returns
        -------
        numpy.ndarray

        Examples
        --------
        >>> from symfilt import catalogue
        >>> from symfilt.analysis.network import derive
        >>> c = catalogue.build("rc-lowpass")
        >>> h = derive(c).ideal()
        >>> fc = abs(h.poles(c.values())[0]) / (2 * math.pi)
        >>> round(float(abs(h.frequency_response([fc], c.values())[0])) ** 2, 6)
        0.5
        """
        return self.lambdify(values)(f)


def _roots(coeffs) -> list[complex]:
    from symfilt.analysis.response import root_list

    return [complex(r["real"], r["imag"]) for r in root_list(coeffs)]
