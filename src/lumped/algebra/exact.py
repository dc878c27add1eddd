"""Where irrational numbers become exact rationals, and the limits values must keep to.

The algebra of the tool works over the rationals (and free parameters): the
network matrix is solved over Z[s] and X(s) is inverted from rational
polynomials.  Irrational numbers (``pi``, ``sqrt(2)``, ``cos(1)``) written in a
netlist or handed to the inversion are replaced by :func:`rationalise`, and by
nothing else, with the rational of :data:`IRRATIONAL_DIGITS` significant digits;
parts that depend on a free parameter keep their symbols.  It is called where
the algebra meets numbers: the solve of the network matrix and the inversion.

The documented ranges of values (``grammar/language.md``) live here too.
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

    Each irrational atom (``pi``, ``sqrt(2)``, ``cos(sin(7)/2)``) is replaced by
    its rational; arithmetic on atoms is then redone exactly.  Symbols and the
    functions applied to them stay as they are; so does any number that is not
    real (a complex constant is left for the caller to refuse).

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> rationalise(sympy.pi * x, 5)
    3927*x/1250
    >>> rationalise(sympy.sqrt(x) + sympy.sqrt(2), 3)
    sqrt(x) + 141/100
    """

    def walk(node: sympy.Basic) -> sympy.Basic:
        if node.is_Rational or node.is_Symbol or not isinstance(node, sympy.Expr):
            return node
        arithmetic = node.is_Add or node.is_Mul or (node.is_Pow and node.exp.is_Integer)
        if node.is_number and not arithmetic:
            # An irrational atom (pi, sqrt(2), cos(1)): the same rational wherever it
            # occurs, and sums and products of atoms are then formed exactly, so
            # relations among coefficients survive (4*pi**2 is 4*r**2 everywhere,
            # and (s + 1)(s**2 + 4*pi**2) still factors).
            if node.is_real is False:
                return node
            value = node.evalf(digits + 5)
            if not value.is_Float:  # not real after all (evalf left an I behind)
                return node
            return sympy.Rational(str(sympy.Float(value, digits)))
        if not node.args:
            return node
        args = [walk(arg) for arg in node.args]
        if all(new is old for new, old in zip(args, node.args, strict=True)):
            return node  # nothing irrational below: no rebuilding of large expressions
        return node.func(*args)

    if isinstance(expr, bool) or not isinstance(expr, (sympy.Basic, int, float)):
        raise TypeError("rationalise takes a sympy expression or a Python number")
    if isinstance(expr, int):
        expr = sympy.Integer(expr)
    elif isinstance(expr, float):
        expr = sympy.Float(expr)
    return walk(expr)
