"""The entry point of the stage: :func:`invert` a transform to its closed form.

A transform ``X(s) = sum_k R_k(s) * exp(-s*T_k)`` (each ``R_k`` rational in
``s``, each ``T_k >= 0``) is made exact (floats at their decimal value,
irrational numbers as 40-digit rationals), split into its delay groups
(:mod:`lumped.inversion.delays`), and each group is inverted by residues
(:mod:`lumped.inversion.residues`), shifted to its delay and multiplied by
``Heaviside(t - T_k)``.  Roots and other functions of free parameters stand
in as symbols of their own while the algebra runs over Q(parameters).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import sympy
from flint import fmpq, fmpq_poly

from lumped.algebra.exact import IRRATIONAL_DIGITS, rationalise
from lumped.algebra.roots import to_fmpq_poly
from lumped.errors import TransformError
from lumped.inversion.closed_form import DEFAULT_T, TimeResponse, _Group
from lumped.inversion.delays import _split_delays
from lumped.inversion.evaluator import _NumericGroup
from lumped.inversion.residues import _numeric_group, _symbolic_group


def _parameter_radicals(expr: sympy.Expr, s: sympy.Symbol) -> set:
    """Parts of ``expr`` that depend on parameters but are not polynomial in them."""
    found = set()
    for node in sympy.preorder_traversal(expr):
        if not isinstance(node, sympy.Expr) or node.has(s) or not node.free_symbols:
            continue
        if (node.is_Pow and not node.exp.is_Integer) or isinstance(node, sympy.Function):
            found.add(node)
    # Keep the outermost ones: sqrt(1 + sqrt(n)) stands in whole.
    return {a for a in found if not any(a != b and b.has(a) for b in found)}


def _exact_number(value: Any) -> sympy.Expr:
    # Only Python numbers reach sympify here (guarded by the isinstance), never text.
    expr = sympy.sympify(value) if isinstance(value, (int, float, complex)) else value  # numbers
    if isinstance(expr, sympy.Basic) and expr.atoms(sympy.Float):
        expr = sympy.nsimplify(expr, rational=True)
    return expr


def _flint_rational(expr: sympy.Expr, s: sympy.Symbol) -> tuple[fmpq_poly, fmpq_poly] | None:
    """``expr`` as (numerator, denominator) over Q, or None if it is not.

    Walks the expression tree with flint polynomials instead of calling
    ``together``/``Poly``, which dominate the cost for large networks.  Sums
    use the lcm of denominators so repeated denominators do not multiply up.
    """
    if expr is s:
        return fmpq_poly([0, 1]), fmpq_poly([1])
    if expr.is_Rational:
        return fmpq_poly([fmpq(int(expr.p), int(expr.q))]), fmpq_poly([1])
    if isinstance(expr, sympy.Add):
        num, den = fmpq_poly([0]), fmpq_poly([1])
        for arg in expr.args:
            part = _flint_rational(arg, s)
            if part is None:
                return None
            n2, d2 = part
            common = den.gcd(d2)
            left, right = den // common, d2 // common
            num, den = num * right + n2 * left, left * d2
        return num, den
    if isinstance(expr, sympy.Mul):
        num, den = fmpq_poly([1]), fmpq_poly([1])
        for arg in expr.args:
            part = _flint_rational(arg, s)
            if part is None:
                return None
            num, den = num * part[0], den * part[1]
        return num, den
    if isinstance(expr, sympy.Pow) and expr.exp.is_Integer:
        part = _flint_rational(expr.base, s)
        if part is None:
            return None
        power = int(expr.exp)
        if power >= 0:
            return part[0] ** power, part[1] ** power
        if part[0].is_zero():
            raise TransformError("transform has a zero denominator")
        return part[1] ** -power, part[0] ** -power
    return None


def invert(
    transform: sympy.Expr,
    s: sympy.Symbol,
    *,
    t: sympy.Symbol | None = None,
    digits: int = 30,
) -> TimeResponse:
    """Invert ``X(s) = sum_k R_k(s) exp(-s T_k)`` in closed form.

    Parameters
    ----------
    transform : sympy.Expr
        The transform; each ``R_k`` rational in ``s``, possibly with parameters;
        each ``T_k >= 0``.  Floats are taken at their decimal value, irrational
        numbers (``pi``, ``sqrt(2)``) as rationals of 40 significant digits.
    s : sympy.Symbol
        The Laplace variable.
    t : sympy.Symbol, optional
        Time symbol; default ``sympy.Symbol("t", real=True)``.
    digits : int, optional
        Significant digits for numeric poles and residues (default 30).

    Returns
    -------
    TimeResponse

    Raises
    ------
    ParametersNeeded
        If parameters remain and an irreducible denominator factor has degree
        greater than 2 in ``s``.
    ValueError
        If the transform is not a finite sum of delayed rational functions, or
        a delay is negative.

    Examples
    --------
    >>> import sympy
    >>> s = sympy.Symbol("s")
    >>> invert(1 / (s * (s + 2)), s).expression
    1/2 - exp(-2*t)/2
    >>> invert(sympy.exp(-3*s) / s, s).expression
    Heaviside(t - 3)
    """
    if not isinstance(transform, sympy.Basic):
        raise TransformError("transform must be a sympy expression")
    if t is None:
        t = DEFAULT_T
    expr = _exact_number(transform)
    # Irrational coefficients (pi, sqrt(2), cos(sin(7)/2)) become rationals of
    # IRRATIONAL_DIGITS significant digits (more when more digits are asked for):
    # the residue machinery works over the rationals.
    exact = rationalise(expr, max(IRRATIONAL_DIGITS, digits + 10))
    rounded = exact != expr
    expr = exact
    parameters = frozenset(expr.free_symbols - {s})
    # Roots and other functions of parameters (sqrt(L/C)) stand in as symbols of
    # their own while the algebra runs over Q(parameters); the closed form gets
    # them back.  Identities over that larger field hold for the actual values.
    stand_ins: dict = {}
    while radicals := _parameter_radicals(expr, s):  # outermost first, then what is left
        fresh = {atom: sympy.Dummy(f"p{len(stand_ins) + k}", positive=True)
                 for k, atom in enumerate(sorted(radicals, key=sympy.default_sort_key))}
        expr = expr.xreplace(fresh)
        stand_ins.update(fresh)

    groups_raw = _split_delays(expr, s)
    groups: list[_Group] = []
    numerics: list[_NumericGroup] | None = []
    for delay in sorted(groups_raw, key=sympy.default_sort_key):
        if delay.is_number and delay.is_negative:
            raise TransformError(f"negative delay {delay}: the response would precede its cause")
        if delay.is_nonnegative is False:
            raise TransformError(f"delay {delay} must be nonnegative")
        part = groups_raw[delay]
        pair = None if part.free_symbols - {s} else _flint_rational(part, s)
        if pair is None:
            numer, denom = sympy.fraction(sympy.together(part))
            if denom == 0:
                raise TransformError("transform has a zero denominator")
            if not (numer.is_polynomial(s) and denom.is_polynomial(s)):
                raise TransformError(f"unsupported function of s: {part}")
            group_params = sorted((numer.free_symbols | denom.free_symbols) - {s}, key=str)
            if group_params:
                groups.append(_symbolic_group(numer, denom, s, group_params, delay))
                numerics = None
                continue
            pair = (
                to_fmpq_poly(sympy.Poly(numer, s, domain=sympy.QQ)),
                to_fmpq_poly(sympy.Poly(denom, s, domain=sympy.QQ)),
            )
        if pair[1].is_zero():
            raise TransformError("transform has a zero denominator")
        group, numeric = _numeric_group(pair[0], pair[1], delay, digits)
        groups.append(group)
        if numerics is not None:
            if delay.is_number:
                numerics.append(numeric)
            else:
                numerics = None

    return _response(transform, s, t, digits, groups, numerics, parameters=parameters,
                     rounded=rounded,
                     restore=tuple((dummy, atom) for atom, dummy in stand_ins.items()))


def invert_ratios(
    transform: sympy.Expr,
    s: sympy.Symbol,
    ratios: Sequence[tuple[sympy.Expr, fmpq_poly, fmpq_poly]],
    *,
    t: sympy.Symbol | None = None,
    digits: int = 30,
) -> TimeResponse:
    """:func:`invert` for a transform its caller holds as ratios over the rationals.

    The network stage has each quantity's ``X(s) = sum_k N_k(s)/D_k(s) exp(-s T_k)``
    as python-flint polynomials (one term per delay ``T_k``, a number); handing
    them on spares reading them back from ``transform``.  The result is the
    one :func:`invert` gives for ``transform``.

    Parameters
    ----------
    transform : sympy.Expr
        The same sum as an expression, kept in the result.
    s : sympy.Symbol
        The Laplace variable.
    ratios : sequence of (sympy.Expr, fmpq_poly, fmpq_poly)
        ``(T_k, N_k, D_k)``, one per delay.
    t : sympy.Symbol, optional
        Time symbol; default ``sympy.Symbol("t", real=True)``.
    digits : int, optional
        Significant digits for numeric poles and residues (default 30).

    Returns
    -------
    TimeResponse

    Examples
    --------
    >>> import sympy
    >>> s = sympy.Symbol("s")
    >>> ratio = (sympy.Integer(0), fmpq_poly([1]), fmpq_poly([0, 2, 1]))
    >>> invert_ratios(1 / (s * (s + 2)), s, [ratio]).expression
    1/2 - exp(-2*t)/2
    """
    if t is None:
        t = DEFAULT_T
    groups: list[_Group] = []
    numerics: list[_NumericGroup] = []
    for delay, numerator, denominator in sorted(ratios, key=lambda r: sympy.default_sort_key(r[0])):
        if not delay.is_number or delay.is_negative:
            raise TransformError(f"delay {delay} must be a number, zero or more")
        if denominator.is_zero():
            raise TransformError("transform has a zero denominator")
        group, numeric = _numeric_group(numerator, denominator, delay, digits)
        groups.append(group)
        numerics.append(numeric)
    return _response(transform, s, t, digits, groups, numerics)


def _response(transform: sympy.Expr, s: sympy.Symbol, t: sympy.Symbol, digits: int,
              groups: Sequence[_Group], numerics: Sequence[_NumericGroup] | None, *,
              parameters: frozenset = frozenset(), rounded: bool = False,
              restore: tuple = ()) -> TimeResponse:
    """The result of both entry points, from the groups of modes they found."""
    return TimeResponse(
        modes=tuple(m for g in groups for m in g.modes),
        impulses=tuple(i for g in groups for i in g.impulses),
        parameters=parameters,
        transform=transform,
        s=s,
        t=t,
        digits=digits,
        rounded=rounded,
        _restore=restore,
        _groups=tuple(groups),
        _numeric=tuple(numerics) if numerics is not None else None,
    )

