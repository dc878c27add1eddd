"""Inverse Laplace transform of delayed rational functions, in closed form.

A transform ``X(s) = sum_k R_k(s) * exp(-s*T_k)`` (each ``R_k`` rational in
``s``, each ``T_k >= 0``) is inverted by residues (Heaviside expansion):

* the improper part of each ``R_k`` (polynomial division) becomes impulses
  ``delta^(j)(t - T_k)``;
* the denominator is factored exactly over Q; linear and quadratic factors give
  exact poles (with ``sqrt``), higher irreducible factors give certified root
  enclosures (ball arithmetic) refined until every residue is known to the
  requested number of digits;
* a pole ``p`` of multiplicity ``m`` gives ``sum_k c_k t^k/k! e^{pt}``;
  conjugate pairs are written as real damped sinusoids;
* each delayed group is shifted and multiplied by ``Heaviside(t - T_k)``.

With free parameters (symbols other than ``s``) the denominator is factored
over Q(parameters).  Linear and quadratic factors still give closed forms (a
quadratic one as a ``Piecewise`` over its discriminant); a factor of higher
degree raises :class:`ParametersNeeded`.  Parameters are assumed generic:
distinct factors are taken to have distinct roots.

The default time symbol is ``sympy.Symbol("t", real=True)``.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import mpmath
import numpy as np
import sympy
from flint import acb, acb_poly, ctx, fmpq, fmpq_poly, fmpz_poly
from sympy.core.parameters import distribute

from lumped.algebra.exact import IRRATIONAL_DIGITS, rationalise
from lumped.constants import t
from lumped.errors import ParametersNeeded

__all__ = ["DEFAULT_T", "Impulse", "Mode", "TimeResponse", "invert"]

#: Default time symbol used when ``invert`` is called without ``t``.
DEFAULT_T = t


# ---------------------------------------------------------------------------
# public result types
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Impulse:
    """A Dirac impulse ``weight * delta^(order)(t - delay)``.

    Attributes
    ----------
    order : int
        0 for delta, 1 for its first derivative, and so on.
    weight : sympy.Expr
        Exact weight.
    delay : sympy.Expr
        Exact delay (time of the impulse).
    """

    order: int
    weight: sympy.Expr
    delay: sympy.Expr


@dataclass(frozen=True)
class Mode:
    """One distinct pole of one delay group and its time-domain coefficients.

    The pole contributes ``sum_k c_k (t-T)^k/k! exp(p (t-T))`` for ``t >= T``;
    a conjugate pair (``is_pair``) is stored once, with the upper-half-plane
    pole, and contributes twice the real part of that sum.

    Attributes
    ----------
    pole : complex
        Pole in float precision.
    pole_exact : sympy.Expr or None
        Exact pole when the denominator factor has degree <= 2.
    multiplicity : int
        Multiplicity ``m`` of the pole.
    coefficients : tuple of complex
        ``c_0 .. c_{m-1}`` in float precision.
    delay : float
        Delay ``T`` of the group.
    delay_exact : sympy.Expr
        Exact delay.
    is_pair : bool
        True for a conjugate pair.
    pole_precise : mpmath.mpc
        Pole to the requested digits.
    coefficients_precise : tuple of mpmath.mpc
        Coefficients to the requested digits.
    coefficients_exact : tuple of sympy.Expr or None
        Exact coefficients for exact poles.
    """

    pole: complex
    pole_exact: sympy.Expr | None
    multiplicity: int
    coefficients: tuple[complex, ...]
    delay: float
    delay_exact: sympy.Expr
    is_pair: bool
    pole_precise: Any = field(default=None, repr=False, compare=False)
    coefficients_precise: tuple[Any, ...] = field(default=(), repr=False, compare=False)
    coefficients_exact: tuple[sympy.Expr, ...] | None = field(
        default=None, repr=False, compare=False
    )

    @property
    def time_constant(self) -> float | None:
        """``-1/Re(p)``, or None when ``Re(p) == 0``."""
        if self.pole.real == 0:
            return None
        return -1.0 / self.pole.real

    @property
    def natural_frequency(self) -> float:
        """``|p|`` in rad/s."""
        return abs(self.pole)

    @property
    def damping_ratio(self) -> float | None:
        """``-Re(p)/|p|``, or None for a pole at the origin."""
        magnitude = abs(self.pole)
        if magnitude == 0:
            return None
        return -self.pole.real / magnitude + 0.0  # + 0.0: a pole on the axis gives 0, not -0

    @property
    def ringing_frequency(self) -> float:
        """``Im(p)`` in rad/s (0 for a real pole)."""
        return self.pole.imag


# ---------------------------------------------------------------------------
# internal pieces of a closed form (rendered to sympy on demand)
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class _Piece:
    """``exp(sigma*tau) * sum_k tau^k/k! * (a_k F(w tau) + b_k G(w tau))``.

    kind "real": only ``a_k``; kind "osc": F, G = cos, sin; kind "hyp":
    F, G = cosh, sinh.
    """

    kind: str
    sigma: sympy.Expr
    freq: sympy.Expr
    a: tuple[sympy.Expr, ...]
    b: tuple[sympy.Expr, ...]


@dataclass(frozen=True)
class _Cases:
    """Discriminant-dependent forms of one symbolic quadratic factor."""

    branches: tuple[tuple[Any, tuple[_Piece, ...]], ...]


@dataclass(frozen=True)
class _Group:
    delay: sympy.Expr
    items: tuple[Any, ...]  # _Piece or _Cases
    impulses: tuple[Impulse, ...]
    modes: tuple[Mode, ...]
    symbolic: bool


def _render_piece(piece: _Piece, tau: sympy.Expr, phase_form: bool) -> sympy.Expr:
    powers = [tau**k / sympy.factorial(k) for k in range(len(piece.a))]
    growth = sympy.exp(piece.sigma * tau)
    if piece.kind == "real":
        return growth * sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
    arg = piece.freq * tau
    if piece.kind == "hyp":
        cos_part = sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
        sin_part = sympy.Add(*[b * w for b, w in zip(piece.b, powers, strict=True)])
        return growth * (cos_part * sympy.cosh(arg) + sin_part * sympy.sinh(arg))
    if phase_form:
        # a cos x + b sin x = M cos(x + phi) with M cos(phi) = a, M sin(phi) = -b
        terms = []
        for a, b, w in zip(piece.a, piece.b, powers, strict=True):
            magnitude = sympy.sqrt(a**2 + b**2)
            phase = sympy.atan2(-b, a)
            # unevaluated so that sympy does not turn cos(x - pi/2) into sin(x)
            terms.append(w * magnitude * sympy.cos(arg + phase, evaluate=False))
        return growth * sympy.Add(*terms)
    cos_part = sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
    sin_part = sympy.Add(*[b * w for b, w in zip(piece.b, powers, strict=True)])
    return growth * (cos_part * sympy.cos(arg) + sin_part * sympy.sin(arg))


def _render_group(group: _Group, t: sympy.Symbol, phase_form: bool) -> sympy.Expr:
    if group.delay == 0:
        return _render_shifted(group, t, phase_form)
    # Keep (t - T) whole: distributed, exp(p*(t - T)) would become exp(-p*T)*exp(p*t),
    # whose first factor overflows floating point for long delays.
    with distribute(False):
        return _render_shifted(group, t, phase_form)


def _render_shifted(group: _Group, t: sympy.Symbol, phase_form: bool) -> sympy.Expr:
    tau = t - group.delay
    parts = []
    for item in group.items:
        if isinstance(item, _Piece):
            parts.append(_render_piece(item, tau, phase_form))
        else:
            parts.append(
                sympy.Piecewise(
                    *[
                        (sympy.Add(*[_render_piece(p, tau, phase_form) for p in pieces]), cond)
                        for cond, pieces in item.branches
                    ]
                )
            )
    smooth = sympy.Add(*parts)
    if group.delay != 0:
        smooth = smooth * sympy.Heaviside(tau)
    deltas = [
        imp.weight * (sympy.DiracDelta(tau) if imp.order == 0 else sympy.DiracDelta(tau, imp.order))
        for imp in group.impulses
    ]
    return smooth + sympy.Add(*deltas)


# ---------------------------------------------------------------------------
# TimeResponse
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class _NumericGroup:
    delay: float
    poles: np.ndarray  # (M,) complex
    coeffs: tuple[tuple[Any, ...], ...]  # per mode, mpmath mpc c_k (pairs doubled)
    poles_precise: tuple[Any, ...]


@dataclass(frozen=True)
class TimeResponse:
    """Closed-form time response ``x(t)``, valid for ``t >= 0``.

    Attributes
    ----------
    expression : sympy.Expr
        Closed form in ``t`` (cos/sin form), impulses as ``DiracDelta``.
    modes : tuple of Mode
        One per distinct pole per delay group (empty when parameters are
        symbolic in a denominator: the forms then live in ``expression``).
    impulses : tuple of Impulse
        Impulses from the improper parts.
    parameters : frozenset of sympy.Symbol
        Free symbols other than ``t`` and ``s``.
    transform : sympy.Expr
        The transform that was inverted.
    s : sympy.Symbol
        Laplace variable.
    t : sympy.Symbol
        Time symbol.
    digits : int
        Significant digits of numeric results.
    rounded : bool
        True when irrational numbers in the transform were taken as rationals of
        :data:`lumped.algebra.exact.IRRATIONAL_DIGITS` significant digits.
    """

    modes: tuple[Mode, ...]
    impulses: tuple[Impulse, ...]
    parameters: frozenset
    transform: sympy.Expr
    s: sympy.Symbol
    t: sympy.Symbol
    digits: int = 30
    rounded: bool = False
    _groups: tuple[_Group, ...] = field(default=(), repr=False, compare=False)
    _numeric: tuple[_NumericGroup, ...] | None = field(default=None, repr=False, compare=False)
    _restore: tuple = field(default=(), repr=False, compare=False)

    @functools.cached_property
    def expression(self) -> sympy.Expr:
        """The closed form, built on first use: numbers alone never need it."""
        return self._restored(sympy.Add(*[_render_group(g, self.t, False)
                                          for g in self._groups]))

    def _restored(self, expr: sympy.Expr) -> sympy.Expr:
        return expr.xreplace(dict(self._restore)) if self._restore else expr

    def amplitude_phase(self) -> sympy.Expr:
        """Closed form with each damped sinusoid as ``M e^{sigma t} cos(w t + phi)``.

        Returns
        -------
        sympy.Expr

        Examples
        --------
        >>> import sympy
        >>> s = sympy.Symbol("s")
        >>> r = invert(1 / (s**2 + 2*s + 5), s)
        >>> r.amplitude_phase()
        exp(-t)*cos(2*t - pi/2)/2
        """
        return self._restored(sympy.Add(*[_render_group(g, self.t, True)
                                          for g in self._groups]))

    def substitute(self, values: dict) -> TimeResponse:
        """Give parameters values and invert again.

        Parameters
        ----------
        values : dict
            Maps parameter symbols to numbers (floats are made exact rationals).

        Returns
        -------
        TimeResponse

        Examples
        --------
        >>> import sympy
        >>> s, a = sympy.symbols("s a", positive=True)
        >>> invert(1 / (s + a), s).substitute({a: 2}).expression
        exp(-2*t)
        """
        exact = {k: _exact_number(v) for k, v in values.items()}
        return invert(self.transform.subs(exact), self.s, t=self.t, digits=self.digits)

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        """Evaluate ``x(t)`` or its ``derivative``-th time derivative in float64.

        Impulses are excluded; each delayed group is zero before its delay and
        is differentiated as a smooth shifted term (no deltas at the jump).
        A uniformly spaced ascending ``times`` array takes a path built on
        matrix products; other arrays use grid tables plus a short Taylor sum
        per sample (see ``_scattered_sum``), a few times slower.

        Parameters
        ----------
        times : numpy.ndarray
            Sample times.
        derivative : int, optional
            Order of the time derivative (default 0).

        Returns
        -------
        numpy.ndarray
            Same shape as ``times``.

        Raises
        ------
        ParametersNeeded
            If the response still has free parameters.

        Examples
        --------
        >>> import numpy as np, sympy
        >>> s = sympy.Symbol("s")
        >>> invert(1 / (s + 1), s).evaluate(np.array([0.0, 1.0]))
        array([1.        , 0.36787944])
        """
        if self._numeric is None:
            raise ParametersNeeded(self.parameters, "numbers need values")
        if derivative < 0:
            raise ValueError("derivative must be >= 0")
        times = np.asarray(times, dtype=float)
        flat = times.ravel()
        out = np.zeros(flat.shape, dtype=float)
        uniform = _uniform_step(flat)
        for group in self._numeric:
            if group.poles.size == 0:
                continue
            matrix = _derivative_coefficients(group, derivative, self.digits)
            if uniform is not None:
                # ascending grid: the group is live on one contiguous tail
                start = int(np.searchsorted(flat - group.delay >= 0, True))
                if start < flat.size:
                    out[start:] += _uniform_sum(
                        float(flat[start] - group.delay), uniform, flat.size - start,
                        group.poles, matrix,
                    )
            else:
                tau = flat - group.delay
                mask = tau >= 0
                if mask.any():
                    out[mask] += _scattered_sum(tau[mask], group.poles, matrix)
        return out.reshape(times.shape)


def _derivative_coefficients(group: _NumericGroup, order: int, digits: int) -> np.ndarray:
    """Coefficient matrix (M, K) of the ``order``-th derivative.

    d/dt [e^{pt} sum c_k t^k/k!] = e^{pt} sum (p c_k + c_{k+1}) t^k/k!, applied
    ``order`` times in high precision before rounding to complex128.
    """
    width = max((len(c) for c in group.coeffs), default=1)
    matrix = np.zeros((len(group.coeffs), width), dtype=complex)
    with mpmath.workdps(digits + 10):
        for i, (pole, coeffs) in enumerate(zip(group.poles_precise, group.coeffs, strict=True)):
            current = list(coeffs)
            for _ in range(order):
                current = [
                    pole * current[k] + (current[k + 1] if k + 1 < len(current) else 0)
                    for k in range(len(current))
                ]
            matrix[i, : len(current)] = [complex(c) for c in current]
    return matrix


def _uniform_step(times: np.ndarray) -> float | None:
    """Step ``h`` if ``times`` is ascending and uniform to a few ulps, else None."""
    n = times.size
    if n < 16:
        return None
    step = (times[-1] - times[0]) / (n - 1)
    if not step > 0:
        return None
    scale = max(abs(times[0]), abs(times[-1]))
    deviation = np.arange(n, dtype=float)
    deviation *= step
    deviation += times[0]
    deviation -= times
    if max(deviation.max(), -deviation.min()) > 8 * np.finfo(float).eps * scale:
        return None
    return float(step)


def _uniform_real_parts(
    tau0: float, step: float, n: int, poles: np.ndarray, weights: np.ndarray
) -> np.ndarray:
    """``Re sum_m W[m, c] e^{p_m tau_i}`` on ``tau_i = tau0 + i*step``: shape (C, n).

    Writing i = b*B + j, e^{p tau_i} = e^{p (tau0 + bBh)} e^{p j h}; each column
    of W then costs one (blocks x 2M) @ (2M x B) real matrix product instead of
    n*M complex exponentials.
    """
    block = max(1, int(math.sqrt(n)))
    blocks = -(-n // block)
    outer = np.exp(np.outer(tau0 + np.arange(blocks) * (block * step), poles))
    inner = np.exp(np.outer(np.arange(block) * step, poles))
    # Re(A @ B.T) = Ar @ Br.T - Ai @ Bi.T
    inner_real = np.concatenate([inner.real, inner.imag], axis=1).T
    out = np.empty((weights.shape[1], n))
    for c in range(weights.shape[1]):
        weighted = outer * weights[:, c]
        left = np.concatenate([weighted.real, -weighted.imag], axis=1)
        out[c] = (left @ inner_real).ravel()[:n]
    return out


def _uniform_sum(
    tau0: float, step: float, n: int, poles: np.ndarray, matrix: np.ndarray
) -> np.ndarray:
    """Sum of modes ``sum_k tau^k/k! Re sum_m C[m,k] e^{p_m tau}`` on a uniform grid."""
    parts = _uniform_real_parts(tau0, step, n, poles, matrix)
    total = parts[0]
    if matrix.shape[1] > 1:
        tau = tau0 + np.arange(n) * step
        for k in range(1, matrix.shape[1]):
            total += parts[k] * (tau**k / math.factorial(k))
    return total


def _scattered_sum(tau: np.ndarray, poles: np.ndarray, matrix: np.ndarray) -> np.ndarray:
    """Sum of modes at arbitrary ``tau >= 0``.

    Each tau is split as tau = tau_q + r with tau_q on a uniform grid of step
    h and |r| <= h/2.  Since r is real, Re(sum c e^{p tau_q} e^{p r}) equals
    sum_j r^j/j! Re(sum c p^j e^{p tau_q}): tables of those real parts on the
    grid (built by matrix products) and a short Horner sum per sample replace
    the per-sample complex exponentials.  The Taylor order J and h are chosen
    so the truncation (|p| h/2)^(J+1)/(J+1)! stays below 1e-17.
    """
    rho = float(np.max(np.abs(poles)))
    lo, hi = float(tau.min()), float(tau.max())
    span = hi - lo
    budget = max(tau.size // 16, 4096)  # keep table building cheap next to the Horner sums
    if rho == 0 or span == 0:
        return _direct_sum(tau, poles, matrix)
    for order in range(3, 16):
        step = 2.0 / rho * (1e-17 * math.factorial(order + 1)) ** (1.0 / (order + 1))
        points = int(span / step) + 2
        if points <= budget:
            break
    else:
        return _direct_sum(tau, poles, matrix)
    powers = np.vander(poles, order + 1, increasing=True)  # (M, J+1): p^j
    inv_fact = np.array([1.0 / math.factorial(j) for j in range(order + 1)])
    index = np.rint((tau - lo) / step).astype(np.intp)
    offset = tau - (lo + index * step)
    total = np.zeros(tau.size)
    for k in range(matrix.shape[1]):
        if not matrix[:, k].any():
            continue
        weights = matrix[:, k : k + 1] * powers * inv_fact  # (M, J+1)
        tables = _uniform_real_parts(lo, step, points, poles, weights)
        acc = tables[order][index]
        for j in range(order - 1, -1, -1):
            acc *= offset
            acc += tables[j][index]
        if k:
            acc *= tau**k / math.factorial(k)
        total += acc
    return total


def _direct_sum(tau: np.ndarray, poles: np.ndarray, matrix: np.ndarray) -> np.ndarray:
    """Sum of modes at arbitrary ``tau >= 0``, chunked to bound memory."""
    total = np.empty(tau.size)
    chunk = 1 << 14
    for start in range(0, tau.size, chunk):
        part = tau[start : start + chunk]
        growth = np.exp(np.outer(part, poles))
        acc = np.zeros(part.size)
        for k in range(matrix.shape[1]):
            values = (growth @ matrix[:, k]).real
            if k:
                values = values * (part**k / math.factorial(k))
            acc += values
        total[start : start + chunk] = acc
    return total


# ---------------------------------------------------------------------------
# splitting X(s) into delay groups
# ---------------------------------------------------------------------------


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
        raise ValueError(f"not a finite sum of delayed rational terms: {expr}")
    if isinstance(expr, sympy.exp):
        arg = sympy.expand(expr.args[0])
        slope = sympy.diff(arg, s)
        if slope.has(s) or sympy.expand(arg - slope * s) != 0:
            raise ValueError(f"exponential is not a pure delay exp(-s*T): {expr}")
        return {sympy.simplify(-slope): sympy.Integer(1)}
    raise ValueError(f"unsupported function of s: {expr}")


def _product(left: dict, right: dict) -> dict:
    result: dict = {}
    for d1, r1 in left.items():
        for d2, r2 in right.items():
            _merge(result, d1 + d2, r1 * r2)
    return result


# ---------------------------------------------------------------------------
# exact arithmetic helpers
# ---------------------------------------------------------------------------


class _Quad:
    """Element ``x + y*sqrt(d)`` of a quadratic extension of a field K.

    Works over any K whose elements support + - * / (flint fmpq, sympy
    fraction-field elements).
    """

    __slots__ = ("d", "x", "y")

    def __init__(self, x: Any, y: Any, d: Any) -> None:
        self.x, self.y, self.d = x, y, d

    def _lift(self, other: Any) -> _Quad:
        if isinstance(other, _Quad):
            return other
        return _Quad(other, self.x - self.x, self.d)

    def __add__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x + o.x, self.y + o.y, self.d)

    __radd__ = __add__

    def __sub__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x - o.x, self.y - o.y, self.d)

    def __rsub__(self, other: Any) -> _Quad:
        return self._lift(other) - self

    def __neg__(self) -> _Quad:
        return _Quad(-self.x, -self.y, self.d)

    def __mul__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x * o.x + self.y * o.y * self.d, self.x * o.y + self.y * o.x, self.d)

    __rmul__ = __mul__

    def __truediv__(self, other: Any) -> _Quad:
        o = self._lift(other)
        norm = o.x * o.x - o.y * o.y * self.d
        return self * _Quad(o.x / norm, -o.y / norm, self.d)

    def __rtruediv__(self, other: Any) -> _Quad:
        return self._lift(other) / self


def _taylor(coeffs: Sequence[Any], point: Any, count: int, zero: Any) -> list:
    """First ``count`` Taylor coefficients of a polynomial at ``point``.

    ``coeffs`` are low-to-high.  Repeated synthetic division by (s - point).
    """
    current = list(reversed(coeffs))
    out = []
    for _ in range(count):
        if not current:
            out.append(zero)
            continue
        acc = current[0]
        quotient = [acc]
        for c in current[1:]:
            acc = acc * point + c
            quotient.append(acc)
        out.append(quotient.pop())
        current = quotient
    return out


def _series_residues(num_taylor: Sequence[Any], den_taylor: Sequence[Any]) -> list:
    """Laurent coefficients ``c_0..c_{m-1}`` at a pole of multiplicity m.

    ``num_taylor`` holds N's Taylor coefficients n_0..n_{m-1}; ``den_taylor``
    holds D's coefficients d_m..d_{2m-1} (lower ones vanish).  With
    g = N/(D/eps^m) = sum g_i eps^i, c_k = g_{m-1-k}.
    """
    m = len(num_taylor)
    g: list = []
    for i in range(m):
        acc = num_taylor[i]
        for j in range(1, i + 1):
            acc = acc - den_taylor[j] * g[i - j]
        g.append(acc / den_taylor[0])
    return [g[m - 1 - k] for k in range(m)]


def _q_to_sympy(value: fmpq) -> sympy.Rational:
    return sympy.Rational(int(value.p), int(value.q))


def _q_to_mpf(value: fmpq) -> mpmath.mpf:
    return mpmath.mpf(int(value.p)) / int(value.q)


def _arb_to_mpf(value: Any) -> mpmath.mpf:
    man, exp = value.mid().man_exp()
    return mpmath.mpf((int(man), int(exp)))


def _acb_to_mpc(value: acb) -> mpmath.mpc:
    return mpmath.mpc(_arb_to_mpf(value.real), _arb_to_mpf(value.imag))


def _float(value: mpmath.mpf, digits: int) -> sympy.Float:
    return sympy.Float(value, digits)


# ---------------------------------------------------------------------------
# numeric-coefficient groups (exact rational coefficients, no parameters)
# ---------------------------------------------------------------------------


def _to_fmpq_poly(poly: sympy.Poly) -> fmpq_poly:
    coeffs = poly.all_coeffs()[::-1]
    return fmpq_poly([fmpq(int(c.p), int(c.q)) for c in coeffs])


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
            raise ZeroDivisionError("transform has a zero denominator")
        return part[1] ** -power, part[0] ** -power
    return None


def _impulses_from_quotient(quotient: Sequence[sympy.Expr], delay: sympy.Expr) -> list[Impulse]:
    return [
        Impulse(order=j, weight=w, delay=delay) for j, w in enumerate(quotient) if w != 0
    ]


def _numeric_group(
    num: fmpq_poly, den: fmpq_poly, delay: sympy.Expr, digits: int
) -> tuple[_Group, _NumericGroup | None]:
    common = num.gcd(den)
    if common.degree() > 0:
        num, den = num // common, den // common
    quotient, num = divmod(num, den)
    impulses = _impulses_from_quotient([_q_to_sympy(c) for c in quotient.coeffs()], delay)
    delay_float = float(delay) if delay.is_number else math.nan

    factors = _factor_cached(tuple(den.coeffs()))
    modes: list[Mode] = []
    pieces: list[_Piece] = []
    numeric_factors = []
    if not num.is_zero():
        for factor, mult in factors:
            degree = factor.degree()
            monic = factor / factor.coeffs()[-1]
            if degree == 1:
                root = -monic.coeffs()[0]
                _exact_modes(num, den, root, None, mult, delay, delay_float, digits, modes, pieces)
            elif degree == 2:
                c0, c1, _ = monic.coeffs()
                disc = c1 * c1 - 4 * c0
                root = _Quad(-c1 / 2, fmpq(1, 2), disc)
                _exact_modes(num, den, root, disc, mult, delay, delay_float, digits, modes, pieces)
            else:
                numeric_factors.append((factor, mult))
        if numeric_factors:
            _ball_modes(num, den, numeric_factors, delay, delay_float, digits, modes, pieces)

    group = _Group(delay, tuple(pieces), tuple(impulses), tuple(modes), False)
    numeric = _NumericGroup(
        delay=delay_float,
        poles=np.array([m.pole for m in modes], dtype=complex),
        coeffs=tuple(
            tuple(2 * c for c in m.coefficients_precise) if m.is_pair else m.coefficients_precise
            for m in modes
        ),
        poles_precise=tuple(m.pole_precise for m in modes),
    )
    return group, numeric


def _exact_modes(
    num: fmpq_poly,
    den: fmpq_poly,
    root: Any,
    disc: fmpq | None,
    mult: int,
    delay: sympy.Expr,
    delay_float: float,
    digits: int,
    modes: list,
    pieces: list,
) -> None:
    """Modes of an exact rational root or exact root pair of a quadratic."""
    zero = fmpq(0)
    num_c, den_c = num.coeffs(), den.coeffs()
    if isinstance(root, _Quad):
        num_c = [_Quad(c, zero, disc) for c in num_c]
        den_c = [_Quad(c, zero, disc) for c in den_c]
        zero_el: Any = _Quad(zero, zero, disc)
    else:
        zero_el = zero
    n_t = _taylor(num_c, root, mult, zero_el)
    d_t = _taylor(den_c, root, 2 * mult, zero_el)[mult:]
    coeffs = _series_residues(n_t, d_t)

    with mpmath.workdps(digits + 10):
        if not isinstance(root, _Quad):
            exact = tuple(_q_to_sympy(c) for c in coeffs)
            precise = tuple(mpmath.mpc(_q_to_mpf(c)) for c in coeffs)
            pole = _q_to_mpf(root)
            modes.append(
                Mode(complex(pole), _q_to_sympy(root), mult, tuple(complex(c) for c in precise),
                     delay_float, delay, False, mpmath.mpc(pole), precise, exact)
            )
            pieces.append(_Piece("real", _q_to_sympy(root), sympy.Integer(0), exact, ()))
            return
        alpha, beta = _q_to_sympy(root.x), _q_to_sympy(root.y)
        root_d = sympy.sqrt(_q_to_sympy(abs(disc)))
        root_d_mp = mpmath.sqrt(_q_to_mpf(abs(disc)))
        if disc > 0:
            for sign in (1, -1):
                pole_e = alpha + sign * beta * root_d
                exact = tuple(_q_to_sympy(c.x) + sign * _q_to_sympy(c.y) * root_d for c in coeffs)
                precise = tuple(
                    mpmath.mpc(_q_to_mpf(c.x) + sign * _q_to_mpf(c.y) * root_d_mp) for c in coeffs
                )
                pole = mpmath.mpc(_q_to_mpf(root.x) + sign * _q_to_mpf(root.y) * root_d_mp)
                modes.append(
                    Mode(complex(pole), pole_e, mult, tuple(complex(c) for c in precise),
                         delay_float, delay, False, pole, precise, exact)
                )
                pieces.append(_Piece("real", pole_e, sympy.Integer(0), exact, ()))
            return
        # complex pair, upper pole alpha + i*beta*sqrt(|d|) (beta = 1/2 > 0)
        omega = beta * root_d
        pole_e = alpha + sympy.I * omega
        re_parts = [_q_to_sympy(c.x) for c in coeffs]
        im_parts = [_q_to_sympy(c.y) * root_d for c in coeffs]
        exact = tuple(r + sympy.I * i for r, i in zip(re_parts, im_parts, strict=True))
        precise = tuple(
            mpmath.mpc(_q_to_mpf(c.x), _q_to_mpf(c.y) * root_d_mp) for c in coeffs
        )
        pole = mpmath.mpc(_q_to_mpf(root.x), _q_to_mpf(root.y) * root_d_mp)
        modes.append(
            Mode(complex(pole), pole_e, mult, tuple(complex(c) for c in precise),
                 delay_float, delay, True, pole, precise, exact)
        )
        pieces.append(
            _Piece("osc", alpha, omega, tuple(2 * r for r in re_parts),
                   tuple(-2 * i for i in im_parts))
        )


@functools.lru_cache(maxsize=64)
def _certified_roots(coefficients: tuple[int, ...], bits: int) -> tuple:
    """Root balls of an integer polynomial, kept for the other responses of a network.

    Every quantity of one network shares its characteristic polynomial, so
    the roots are isolated once and reused (the cache is keyed on the exact
    coefficients and the working precision).
    """
    saved = ctx.prec
    try:
        ctx.prec = bits
        return tuple(r for r, _ in fmpz_poly(list(coefficients)).complex_roots())
    finally:
        ctx.prec = saved


@functools.lru_cache(maxsize=64)
def _factor_cached(coefficients: tuple) -> tuple:
    """Irreducible factors of a rational polynomial, kept for the network's other responses."""
    _, factors = fmpq_poly(list(coefficients)).factor()
    return tuple(factors)


def _onto_axis(coefficients: tuple[int, ...], upper: list) -> list:
    """The upper-half-plane roots, those certified on the imaginary axis made exactly so.

    An irreducible polynomial with a root jw also has the root -jw, so it
    equals ±p(-s): it is even, p(s) = q(s^2), and its roots on the axis are
    ±j sqrt(-u) for the negative real roots u of q (real roots of an integer
    polynomial are isolated exactly).  When the enclosures that touch the axis
    are exactly as many as those roots, each holds one of them: its real part
    is zero, not a rounding residue that would print as exp(1e-39 t).
    """
    touching = [i for i, r in enumerate(upper) if r.real.contains(0)]
    if not touching or all(upper[i].real.is_zero() for i in touching):
        return upper
    if any(c != 0 for c in coefficients[1::2]):
        return upper  # not even: no root on the axis
    even = fmpz_poly(list(coefficients[0::2]))
    negative = sum(1 for u, _ in even.complex_roots() if u.imag.is_zero() and u.real < 0)
    if negative != len(touching):
        return upper
    certified = list(upper)
    for i in touching:
        certified[i] = acb(0, upper[i].imag)
    return certified


def _ball_modes(
    num: fmpq_poly,
    den: fmpq_poly,
    factors: list,
    delay: sympy.Expr,
    delay_float: float,
    digits: int,
    modes: list,
    pieces: list,
) -> None:
    """Modes of irreducible factors of degree >= 3, by certified root balls.

    Roots come from ball arithmetic; real roots are returned with an exactly
    zero imaginary part, which (with the count check below) certifies which
    poles are real.  The working precision is doubled until every residue is
    known to ``digits`` significant digits relative to its mode.
    """
    target_bits = int(digits * 3.33) + 8
    max_mult = max(m for _, m in factors)
    bits = target_bits + 40
    saved = ctx.prec
    try:
        for _attempt in range(8):
            ctx.prec = bits
            num_p = acb_poly(list(num.coeffs()))
            den_derivs = [acb_poly(list(den.coeffs()))]
            for _ in range(2 * max_mult - 1):
                den_derivs.append(den_derivs[-1].derivative())
            num_derivs = [num_p]
            for _ in range(max_mult - 1):
                num_derivs.append(num_derivs[-1].derivative())
            results = []
            accurate = True
            for factor, mult in factors:
                roots = _certified_roots(
                    tuple(int(c * factor.denom()) for c in factor.coeffs()), bits
                )
                real = [r for r in roots if r.imag.is_zero()]
                upper = [r for r in roots if r.imag > 0]
                if len(real) + 2 * len(upper) != factor.degree():
                    accurate = False  # separation not certified yet: refine
                    break
                upper = _onto_axis(
                    tuple(int(c * factor.denom()) for c in factor.coeffs()), upper
                )
                for root, is_pair in [(r, False) for r in real] + [(r, True) for r in upper]:
                    n_t = [num_derivs[j](root) / math.factorial(j) for j in range(mult)]
                    d_t = [
                        den_derivs[j](root) / math.factorial(j) for j in range(mult, 2 * mult)
                    ]
                    coeffs = _series_residues(n_t, d_t)
                    scale = max(c.abs_upper() for c in coeffs)
                    for c in coeffs:
                        if not c.is_finite() or (
                            scale > 0 and c.rad() > scale * (2.0 ** -target_bits)
                        ):
                            accurate = False
                    results.append((root, is_pair, mult, coeffs))
                if not accurate:
                    break
            if accurate:
                break
            bits *= 2
        else:
            raise ArithmeticError("residues could not be certified to the requested digits")
        with mpmath.workprec(bits):
            for root, is_pair, mult, coeffs in results:
                pole = _acb_to_mpc(root)
                if not is_pair:
                    pole = mpmath.mpc(pole.real)
                precise = tuple(
                    _acb_to_mpc(c) if is_pair else mpmath.mpc(_arb_to_mpf(c.real)) for c in coeffs
                )
                sigma = _float(pole.real, digits)
                if is_pair:
                    omega = _float(pole.imag, digits)
                    a = tuple(_float(2 * c.real, digits) for c in precise)
                    b = tuple(_float(-2 * c.imag, digits) for c in precise)
                    pieces.append(_Piece("osc", sigma, omega, a, b))
                    pole_exact = None
                else:
                    a = tuple(_float(c.real, digits) for c in precise)
                    pieces.append(_Piece("real", sigma, sympy.Integer(0), a, ()))
                    pole_exact = None
                modes.append(
                    Mode(complex(pole), pole_exact, mult, tuple(complex(c) for c in precise),
                         delay_float, delay, is_pair, pole, precise, None)
                )
    finally:
        ctx.prec = saved


# ---------------------------------------------------------------------------
# groups with free parameters in R(s)
# ---------------------------------------------------------------------------


def _symbolic_group(
    numer: sympy.Expr, denom: sympy.Expr, s: sympy.Symbol, params: list, delay: sympy.Expr
) -> _Group:
    domain = sympy.QQ.frac_field(*params)
    num = sympy.Poly(numer, s, domain=domain)
    den = sympy.Poly(denom, s, domain=domain)
    common = num.gcd(den)
    if common.degree() > 0:
        num, den = num.exquo(common), den.exquo(common)
    quotient, num = num.div(den)
    impulses = _impulses_from_quotient(
        [sympy.factor(c) for c in quotient.all_coeffs()[::-1]], delay
    )
    items: list = []
    if num.is_zero:
        return _Group(delay, (), tuple(impulses), (), True)

    # Factor over Z[s, params]; by Gauss's lemma this is the factorisation over
    # Q(params)[s] once factors free of s are set aside.
    _, clear = den.clear_denoms(convert=True)
    _, raw = sympy.factor_list(clear.as_expr(), s, *params)
    factors = [(f, m) for f, m in raw if sympy.degree(f, s) > 0]
    too_high = [f for f, _ in factors if sympy.degree(f, s) > 2]
    if too_high:
        raise ParametersNeeded(
            (numer.free_symbols | denom.free_symbols) - {s},
            f"denominator factor of degree {sympy.degree(too_high[0], s)} in {s}",
        )

    to_sym = domain.to_sympy
    num_c = [domain.convert(c) for c in num.all_coeffs()[::-1]]
    den_c = [domain.convert(c) for c in den.all_coeffs()[::-1]]
    zero = domain.zero
    for fexpr, mult in factors:
        factor = sympy.Poly(fexpr, s, domain=domain).monic()
        fc = [domain.convert(c) for c in factor.all_coeffs()[::-1]]
        if len(fc) == 2:
            root = -fc[0]
            coeffs = _series_residues(
                _taylor(num_c, root, mult, zero), _taylor(den_c, root, 2 * mult, zero)[mult:]
            )
            items.append(
                _Piece("real", sympy.factor(to_sym(root)), sympy.Integer(0),
                       tuple(sympy.factor(to_sym(c)) for c in coeffs), ())
            )
            continue
        c0, c1 = fc[0], fc[1]
        disc = c1 * c1 - 4 * c0
        alpha = -c1 / 2
        disc_e = sympy.factor(to_sym(disc))
        alpha_e = sympy.factor(to_sym(alpha))
        # distinct roots alpha +/- sqrt(disc)/2: residues x_k +/- y_k sqrt(disc)
        qroot = _Quad(alpha, domain.one / 2, disc)
        lift = [_Quad(c, zero, disc) for c in num_c], [_Quad(c, zero, disc) for c in den_c]
        qzero = _Quad(zero, zero, disc)
        coeffs = _series_residues(
            _taylor(lift[0], qroot, mult, qzero), _taylor(lift[1], qroot, 2 * mult, qzero)[mult:]
        )
        xs = [sympy.factor(to_sym(c.x)) for c in coeffs]
        ys = [sympy.factor(to_sym(c.y)) for c in coeffs]
        root_pos = sympy.sqrt(disc_e)
        root_neg = sympy.sqrt(-disc_e)
        over = _Piece("hyp", alpha_e, root_pos / 2, tuple(2 * x for x in xs),
                      tuple(2 * y * root_pos for y in ys))
        under = _Piece("osc", alpha_e, root_neg / 2, tuple(2 * x for x in xs),
                       tuple(-2 * y * root_neg for y in ys))
        if disc_e.is_number:
            items.append(over if disc_e > 0 else under)
            continue
        # same sign as disc (it differs by the square of the leading
        # coefficient) but free of denominators, so the conditions read well
        cond_e = sympy.factor(sympy.discriminant(fexpr, s))
        branches = []
        if sympy.Gt(cond_e, 0) is not sympy.false:
            branches.append((sympy.Gt(cond_e, 0), (over,)))
        # repeated root alpha of multiplicity 2*mult when disc == 0:
        # D = lc * (s - alpha)^(2 mult) * E(s), E = D / factor^mult
        rest = den.exquo(factor**mult)
        rest_c = [domain.convert(c) for c in rest.all_coeffs()[::-1]]
        rest_t = _taylor(rest_c, alpha, 2 * mult, zero)
        # If E(alpha) vanishes identically, the double root meets a root of
        # another factor; that coincidence is outside the generic-parameter
        # contract, so no branch is given for it.
        if sympy.Eq(cond_e, 0) is not sympy.false and rest_t[0] != zero:
            crit_coeffs = _series_residues(_taylor(num_c, alpha, 2 * mult, zero), rest_t)
            critical = _Piece("real", alpha_e, sympy.Integer(0),
                              tuple(sympy.factor(to_sym(c)) for c in crit_coeffs), ())
            branches.append((sympy.Eq(cond_e, 0), (critical,)))
        if sympy.Lt(cond_e, 0) is not sympy.false:
            branches.append((sympy.Lt(cond_e, 0), (under,)))
        if len(branches) == 1:
            items.extend(branches[0][1])
        else:
            items.append(_Cases(tuple(branches)))
    return _Group(delay, tuple(items), tuple(impulses), (), True)


# ---------------------------------------------------------------------------
# entry point
# ---------------------------------------------------------------------------


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
        raise TypeError("transform must be a sympy expression")
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
            raise ValueError(f"negative delay {delay}: the response would precede its cause")
        if delay.is_nonnegative is False:
            raise ValueError(f"delay {delay} must be nonnegative")
        part = groups_raw[delay]
        pair = None if part.free_symbols - {s} else _flint_rational(part, s)
        if pair is None:
            numer, denom = sympy.fraction(sympy.together(part))
            if denom == 0:
                raise ZeroDivisionError("transform has a zero denominator")
            group_params = sorted((numer.free_symbols | denom.free_symbols) - {s}, key=str)
            if group_params:
                groups.append(_symbolic_group(numer, denom, s, group_params, delay))
                numerics = None
                continue
            pair = (
                _to_fmpq_poly(sympy.Poly(numer, s, domain=sympy.QQ)),
                _to_fmpq_poly(sympy.Poly(denom, s, domain=sympy.QQ)),
            )
        if pair[1].is_zero():
            raise ZeroDivisionError("transform has a zero denominator")
        group, numeric = _numeric_group(pair[0], pair[1], delay, digits)
        groups.append(group)
        if numerics is not None:
            if delay.is_number:
                numerics.append(numeric)
            else:
                numerics = None

    return TimeResponse(
        modes=tuple(m for g in groups for m in g.modes),
        impulses=tuple(i for g in groups for i in g.impulses),
        parameters=parameters,
        transform=transform,
        s=s,
        t=t,
        digits=digits,
        rounded=rounded,
        _restore=tuple((dummy, atom) for atom, dummy in stand_ins.items()),
        _groups=tuple(groups),
        _numeric=tuple(numerics) if numerics is not None else None,
    )
