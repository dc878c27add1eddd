"""Algebra: the exact-number services the network and inversion stages share.

Receives sympy expressions and polynomials with rational coefficients; hands
on exact rationals for irrational numbers (:func:`rationalise`, in one place),
the documented value ranges the parser checks against, and certified roots
(:mod:`lumped.algebra.roots`: factors over the rationals, root enclosures,
roots decided exactly on the imaginary axis).
"""

from lumped.algebra.exact import (
    IRRATIONAL_DIGITS,
    LARGEST_VALUE,
    LONGEST_WINDOW,
    NARROWEST_BAND,
    SMALLEST_VALUE,
    WIDEST_BAND,
    rationalise,
)
from lumped.algebra.roots import (
    Root,
    axis_root_count,
    certified_roots,
    irreducible_factors,
    onto_axis,
    polynomial_roots,
    real_part_sign,
)

__all__ = [
    "IRRATIONAL_DIGITS",
    "LARGEST_VALUE",
    "LONGEST_WINDOW",
    "NARROWEST_BAND",
    "SMALLEST_VALUE",
    "WIDEST_BAND",
    "Root",
    "axis_root_count",
    "certified_roots",
    "irreducible_factors",
    "onto_axis",
    "polynomial_roots",
    "rationalise",
    "real_part_sign",
]
