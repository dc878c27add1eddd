"""Where irrational numbers become exact rationals, and the ranges values must lie in.

The algebra of the tool works over the rationals (and free parameters): the
network matrix is solved over Z[s] and X(s) is inverted from rational
polynomials.  Irrational numbers (``pi``, ``sqrt(2)``, ``cos(1)``) written in a
netlist or handed to the inversion are replaced here, and only here, by the
rational nearest to them at :data:`IRRATIONAL_DIGITS` significant digits.
Parts that depend on a free parameter keep their symbols.
"""

from __future__ import annotations

import sympy

# Significant digits kept of an irrational number: far beyond double precision
# (about 16 digits), so no figure the tool prints can tell the difference.
IRRATIONAL_DIGITS = 40

# The range of magnitudes a value may have in SI units (zero aside, where zero is allowed).
SMALLEST_VALUE = sympy.Rational(1, 10**30)
LARGEST_VALUE = sympy.Integer(10) ** 30
# The longest window, in seconds (about 32 years).
LONGEST_WINDOW = sympy.Integer(10) ** 9
# The settling band, as a fraction of the final change: up to half of it, and no
# narrower than double-precision evaluation of the response can resolve with a margin.
WIDEST_BAND = sympy.Rational(1, 2)
NARROWEST_BAND = sympy.Rational(1, 10**8)


def rationalise(expr: sympy.Expr, digits: int = IRRATIONAL_DIGITS) -> sympy.Expr:
    """Replace irrational real numbers in ``expr`` by rationals of ``digits`` significant digits.

    Symbols and the functions applied to them stay as they are; so does any
    number that is not real (a complex constant is left for the caller to refuse).

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> rationalise(sympy.pi * x, 5)
    3927*x/1250
    >>> rationalise(sympy.sqrt(x) + sympy.sqrt(2), 3)
    sqrt(x) + 707/500
    """

    def walk(node: sympy.Basic) -> sympy.Basic:
        if node.is_Rational or node.is_Symbol or not isinstance(node, sympy.Expr):
            return node
        if node.is_number:
            if node.is_real is False:
                return node
            value = node.evalf(digits + 5)
            if not value.is_Float:  # not real after all (evalf left an I behind)
                return node
            return sympy.Rational(str(sympy.Float(value, digits)))
        if not node.args:
            return node
        return node.func(*[walk(arg) for arg in node.args])

    return walk(sympy.sympify(expr) if not isinstance(expr, sympy.Basic) else expr)

