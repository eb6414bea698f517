"""sympy's 2-D printer without the import of ``sympy.physics.units`` that it does not need here.

sympy's ``PrettyPrinter._print_Mul`` imports ``sympy.physics.units`` on every product only to
move unit quantities to the end; expressions of symfilt never hold one, and that import costs a
quarter of a bare ``import sympy`` on the first 2-D print. :class:`Printer` runs the method with
a stand-in module in ``sys.modules`` (a ``Quantity`` class nothing is an instance of) when the
real module has not been imported, and takes the stand-in away afterwards, so a later
``import sympy.physics.units`` gets the real module. Output is the same character for character.
"""

from __future__ import annotations

import sys
import types

from sympy.printing.pretty.pretty import PrettyPrinter

_UNITS = "sympy.physics.units"


class _NoQuantity:
    """Nothing is an instance of this class: the stand-in for sympy's unit Quantity."""


class Printer(PrettyPrinter):
    """sympy's PrettyPrinter without importing ``sympy.physics.units``, names drawn as written.

    sympy draws ``R2`` as R₂ and ``R_s`` as Rₛ, which keeps the name; it also draws ``Rhat``
    as R̂, ``Cbar`` as C̅ and ``beta`` as β, which changes it: those are written as they are.

    Parameters
    ----------
    settings : dict, optional
        sympy's printer settings (``use_unicode``, ``order``, ``wrap_line``, ...).

    Examples
    --------
    >>> import sympy
    >>> R, C = sympy.symbols("R C")
    >>> print(Printer({"use_unicode": True}).doprint(R * C / (1 + R)))
     C⋅R 
    ─────
    R + 1
    """

    def _print_Symbol(self, e, bold_name=False):
        import unicodedata

        from sympy.printing.pretty.stringpict import prettyForm

        drawn = super()._print_Symbol(e, bold_name)
        plain = unicodedata.normalize("NFKC", str(drawn)).replace("_", "")
        return drawn if plain == e.name.replace("_", "") else prettyForm(e.name)

    def _print_Mul(self, product):
        if _UNITS in sys.modules:
            return super()._print_Mul(product)
        stand_in = types.ModuleType(_UNITS)
        stand_in.Quantity = _NoQuantity
        sys.modules[_UNITS] = stand_in
        try:
            return super()._print_Mul(product)
        finally:
            if sys.modules.get(_UNITS) is stand_in:
                del sys.modules[_UNITS]
