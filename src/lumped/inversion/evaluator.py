"""The one fast numeric evaluator of a closed form, shared by every later stage.

Figures, energies, plots and CSV samples all read ``x(t)`` (and its time
derivatives) through :meth:`lumped.inversion.TimeResponse.evaluate`, which is
this evaluator, built once per response.  Each delay group holds its poles
and Laurent coefficients to the requested digits; the coefficient matrix of
each derivative order is formed once in that precision (so the cancellation
in ``p c_k + c_{k+1}`` costs nothing) and rounded to complex128, then kept.

A uniformly spaced ascending array of times takes a path built on matrix
products; other long arrays use grid tables plus a short Taylor sum per
sample, and a few instants (up to ``_FEW_TIMES``) are summed directly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import mpmath
import numpy as np

from lumped.errors import TransformError

# Up to this many scattered times, the direct sum is cheaper than the grid tables
# (measured: the tables cost a fixed 0.3-0.9 ms for 4 to 40 modes).
_FEW_TIMES = 512


@dataclass(frozen=True)
class _NumericGroup:
    """One delay group's modes in the precision the evaluator reads.

    ``coeffs`` holds each mode's ``c_k`` (doubled for a conjugate pair, which
    contributes twice the real part), ``poles_precise`` the poles, both to the
    requested digits; ``poles`` the poles rounded to complex.
    """

    delay: float
    poles: tuple[complex, ...]
    coeffs: tuple[tuple[Any, ...], ...]
    poles_precise: tuple[Any, ...]


class _Evaluator:
    """``x(t)`` and its time derivatives in float64, for the delay groups of one response.

    The coefficient matrix of each derivative order is computed on first use
    and kept, so repeated calls (root refinement, quadrature) cost only the
    sums themselves.

    Parameters
    ----------
    groups : tuple of _NumericGroup
        The delay groups.
    digits : int
        Digits of the precise coefficients.
    """

    def __init__(self, groups: tuple[_NumericGroup, ...], digits: int) -> None:
        self._groups = groups
        self._digits = digits
        self._poles = tuple(_frozen(np.array(g.poles, dtype=complex)) for g in groups)
        self._matrices: dict[tuple[int, int], np.ndarray] = {}

    def _matrix(self, index: int, order: int) -> np.ndarray:
        key = (index, order)
        matrix = self._matrices.get(key)
        if matrix is None:
            matrix = _frozen(_derivative_coefficients(self._groups[index], order, self._digits))
            self._matrices[key] = matrix
        return matrix

    def __call__(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        if derivative < 0:
            raise TransformError("derivative must be >= 0")
        times = np.asarray(times, dtype=float)
        flat = times.ravel()
        out = np.zeros(flat.shape, dtype=float)
        uniform = _uniform_step(flat)
        for index, group in enumerate(self._groups):
            poles = self._poles[index]
            if poles.size == 0:
                continue
            matrix = self._matrix(index, derivative)
            if uniform is not None:
                # ascending grid: the group is live on one contiguous tail
                start = int(np.searchsorted(flat - group.delay >= 0, True))
                if start < flat.size:
                    out[start:] += _uniform_sum(
                        float(flat[start] - group.delay), uniform, flat.size - start,
                        poles, matrix,
                    )
            else:
                tau = flat - group.delay
                mask = tau >= 0
                if mask.any():
                    out[mask] += _scattered_sum(tau[mask], poles, matrix)
        return out.reshape(times.shape)


def _frozen(array: np.ndarray) -> np.ndarray:
    """The array made read-only: it is shared by every later call."""
    array.flags.writeable = False
    return array


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
    so the truncation (|p| h/2)^(J+1)/(J+1)! stays below 1e-17.  A few times
    (the iterates of a root search) are summed directly: building the tables
    would cost more than the exponentials they save.
    """
    if tau.size <= _FEW_TIMES:
        return _direct_sum(tau, poles, matrix)
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

