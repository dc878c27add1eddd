"""Splitting a transform into delay groups: ``X(s) = sum_k R_k(s) exp(-s T_k)``.

Each source that switches at ``T`` brings a factor ``exp(-s T)``; the groups
are inverted one by one and each is shifted to start at its delay.
"""

from __future__ import annotations

import sympy

from lumped.errors import TransformError


def _merge(target: dict, delay: sympy.Expr, part: sympy.Expr) -> None:
    target[delay] = target.get(delay, sympy.Integer(0)) + part


def _split_delays(expr: sympy.Expr, s: sympy.Symbol) -> dict:
    """Map each delay ``T`` to its rational factor ``R`` (``X = sum R e^{-sT}``)."""
    if not expr.has(s) or not any(e.has(s) for e in expr.atoms(sympy.exp)):
        return {sympy.Integer(0): expr}
    if isinstance(expr, sympy.Add):
        result: dict = {}
        for arg in expr.args:
            for delay, part in _split_delays(arg, s).items():
                _merge(result, delay, part)
        return result
    if isinstance(expr, sympy.Mul):
        result = {sympy.Integer(0): sympy.Integer(1)}
        for arg in expr.args:
            result = _product(result, _split_delays(arg, s))
        return result
    if isinstance(expr, sympy.Pow):
        base, power = expr.args
        if power.is_Integer and power > 0:
            factor = _split_delays(base, s)
            result = {sympy.Integer(0): sympy.Integer(1)}
            for _ in range(int(power)):
                result = _product(result, factor)
            return result
        raise TransformError(f"not a finite sum of delayed rational terms: {expr}")
    if isinstance(expr, sympy.exp):
        arg = sympy.expand(expr.args[0])
        slope = sympy.diff(arg, s)
        if slope.has(s) or sympy.expand(arg - slope * s) != 0:
            raise TransformError(f"exponential is not a pure delay exp(-s*T): {expr}")
        return {sympy.simplify(-slope): sympy.Integer(1)}
    raise TransformError(f"unsupported function of s: {expr}")


def _product(left: dict, right: dict) -> dict:
    result: dict = {}
    for d1, r1 in left.items():
        for d2, r2 in right.items():
            _merge(result, d1 + d2, r1 * r2)
    return result

