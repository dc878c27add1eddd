"""Energy turned into heat by a dissipator: the square integral of a closed form.

The integral is taken on the response's own evaluator by adaptive
Gauss-Legendre quadrature; once only a periodic part is left, one period is
integrated and counted, so a long window costs no more than a short one.
"""

from __future__ import annotations

import functools
import math

import numpy as np

from lumped.figures.modes import _LIVE_DECAYS, ResponseLike, _active, _periodic_tail, _real

_MAX_INTERVALS = 50_000


@functools.cache
def _gauss_legendre() -> tuple[np.ndarray, np.ndarray]:
    """The 16-point Gauss-Legendre nodes and weights on [-1, 1], computed once."""
    nodes, weights = np.polynomial.legendre.leggauss(16)
    nodes.flags.writeable = weights.flags.writeable = False  # shared by every call
    return nodes, weights


def energy_dissipated(
    response: ResponseLike,
    coefficient: float,
    start: float,
    stop: float,
    *,
    rtol: float = 1e-10,
) -> float:
    """Energy turned into heat by a dissipator over a window: ∫ coefficient·x(t)² dt.

    Use the resistance with a current (``R i²``), the conductance with a
    voltage across the resistor (``v²/R``), the damping coefficient with a
    velocity (``c v²``) or its inverse with a force (``F²/c``).  The integral
    is taken on the closed form by adaptive Gauss-Legendre quadrature (16
    nodes, each interval compared with its two halves and split until the
    estimated error is below ``rtol`` of the total), starting from pieces
    that break at every switching instant, every two periods of ringing and
    along each decay.  All intervals of a pass are evaluated in one
    vectorised call, which keeps long ringing windows fast.

    Parameters
    ----------
    response : TimeResponse
        The current, voltage, velocity or force response.
    coefficient : float
        R, 1/R, c or 1/c in SI units.
    start, stop : float
        The window in seconds, ``0 <= start < stop``.
    rtol : float, optional
        Relative accuracy asked of the quadrature.

    Returns
    -------
    float
        The energy in joules; ``inf`` if the response has an impulse inside
        the window (the square of an impulse has no finite integral).

    Examples
    --------
    A current ``e^(-t)`` in 2 ohm dissipates 2·(1 - e^(-2))/2 joules over 0..1 s:

    >>> import numpy as np
    >>> from types import SimpleNamespace as NS
    >>> mode = NS(pole=-1 + 0j, multiplicity=1, coefficients=(1,), delay=0.0, is_pair=False)
    >>> def evaluate(t, derivative=0):
    ...     return (-1.0) ** derivative * np.exp(-np.asarray(t))
    >>> response = NS(modes=(mode,), impulses=(), evaluate=evaluate)
    >>> round(energy_dissipated(response, 2.0, 0.0, 1.0), 9)  # 1 - e^-2
    0.864664717
    """
    start, stop = float(start), float(stop)
    if not 0.0 <= start < stop:
        raise ValueError(f"the window must satisfy 0 <= start < stop, got {start} .. {stop}")
    if any(start <= _real(imp.delay) <= stop for imp in response.impulses):
        return math.inf
    # Once only a periodic part is left, every whole period dissipates the same energy:
    # integrate one and count them, so a long window costs no more than a short one.
    quiet, period, _ = _periodic_tail(response.modes, start)
    if period is not None and quiet + 4 * period < stop:
        whole = int((stop - quiet) // period) - 1
        middle = quiet + whole * period
        return (_square_integral(response, coefficient, start, quiet, rtol)
                + whole * _square_integral(response, coefficient, quiet, quiet + period, rtol)
                + _square_integral(response, coefficient, middle, stop, rtol))
    return _square_integral(response, coefficient, start, stop, rtol)


def _square_integral(
    response: ResponseLike, coefficient: float, start: float, stop: float, rtol: float
) -> float:
    """coefficient * ∫ x(t)^2 dt over [start, stop] by adaptive Gauss-Legendre quadrature."""
    modes = [m for m in response.modes if _active(m)]
    points = {float(m.delay) for m in modes if start < float(m.delay) < stop}
    for mode in modes:
        pole, d = complex(mode.pole), max(float(mode.delay), start)
        if d >= stop or pole == 0:
            continue
        span = stop - d if pole.real >= 0 else min(stop - d, _LIVE_DECAYS / -pole.real)
        if pole.imag:
            count = min(int(span * abs(pole.imag) / (4 * math.pi)), 20000)
            points.update(d + span * np.arange(1, count + 1) / (count + 1))
        if pole.real < 0:
            points.update(d + np.geomspace(0.05, _LIVE_DECAYS, 12) / -pole.real)
    edges = np.array([start, *sorted(p for p in points if start < p < stop), stop])
    nodes, weights = _gauss_legendre()

    def rule(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        half = (b - a) / 2
        times = ((a + b) / 2)[:, None] + half[:, None] * nodes
        values = np.real(np.asarray(response.evaluate(times.ravel()))).reshape(times.shape)
        return half * ((values * values) @ weights)

    a, b = edges[:-1], edges[1:]
    coarse = rule(a, b)
    accepted = 0.0
    for _ in range(60):
        middle = (a + b) / 2
        left, right = rule(a, middle), rule(middle, b)
        fine = left + right
        estimate = accepted + float(fine.sum())
        # The integrand is never negative, so the total bounds every part; each open
        # interval gets an equal share of the allowed error.
        good = np.abs(fine - coarse) <= rtol * estimate / len(a) + 1e-300
        accepted += float(fine[good].sum())
        if good.all():
            break
        if len(a) > _MAX_INTERVALS:
            # Far below any figure's resolution: stop refining rather than grow without bound.
            accepted += float(fine[~good].sum())
            break
        bad = ~good
        a = np.concatenate((a[bad], middle[bad]))
        b = np.concatenate((middle[bad], b[bad]))
        coarse = np.concatenate((left[bad], right[bad]))
        order = np.argsort(a)
        a, b, coarse = a[order], b[order], coarse[order]
    else:
        accepted += float(coarse.sum())
    return float(coefficient) * accepted
