"""Sampling and refinement on the closed form: where the extremes and crossings are.

The response is sampled on a grid adapted to its time scales (uniform,
geometric after every switching instant, and dense enough for the fastest
ringing), split at every jump; extremes and crossings found on the grid are
then refined on the closed form itself, through the response's own
evaluator: stationary points by bisection on the derivative over all
brackets at once, crossings by false position.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Sequence

import numpy as np

from lumped.figures.modes import _LIVE_DECAYS, ModeLike, ResponseLike, _active
from lumped.figures.records import Extremum

_BASE_POINTS = 20000  # uniform grid points across the window
_GEOMETRIC_POINTS = 400  # geometric points after every switching instant
_POINTS_PER_PERIOD = 24  # grid density for oscillating modes
_MAX_POINTS = 400000  # cap on the grid size, to bound the cost


class _Sampler:
    """The response on an adapted grid over the window, split at every jump.

    Segments run between consecutive switching instants.  A segment's first
    point is its start (where the response already includes the term
    switched on there) and its last point sits one floating-point step
    before the next switching instant, so the values there are the one-sided
    limits just after and just before each jump.
    """

    def __init__(self, response: ResponseLike, start: float, stop: float) -> None:
        self.response = response
        modes = [m for m in response.modes if _active(m)]
        delays = {float(m.delay) for m in modes}
        inner = sorted(d for d in delays if start < d < stop)
        breaks = [start, *inner, stop]
        window = stop - start
        self.capped = False

        # Each part is evaluated on its own: uniform parts take the inversion
        # stage's fast path for evenly spaced times.
        parts: list[np.ndarray] = []
        for a, b in itertools.pairwise(breaks):
            live = [m for m in modes if float(m.delay) <= a]
            parts.extend(self._segment_parts(a, b, live, window))
        values = [self.values(part) for part in parts]
        slopes = [self.values(part, 1) for part in parts]
        # The inversion stage switches a delayed term on at its delay (t >= d),
        # so a switching instant itself carries the value just after the jump;
        # one floating-point step before it gives the value just before.
        ends = [d for d in breaks[1:] if d in delays]
        before = np.array([math.nextafter(d, -math.inf) for d in ends])
        t_all = np.concatenate([*parts, before])
        report = np.concatenate([*parts, np.array(ends, dtype=float)])
        x_all = np.concatenate([*values, self.values(before)])
        dx_all = np.concatenate([*slopes, self.values(before, 1)])
        if stop in delays:  # the window ends exactly at a switching instant
            keep = t_all < stop
            t_all, report, x_all, dx_all = t_all[keep], report[keep], x_all[keep], dx_all[keep]
        order = np.argsort(t_all, kind="stable")
        t_all = t_all[order]
        unique = np.concatenate(([True], np.diff(t_all) > 0))
        self.t = t_all[unique]
        self.t_report = report[order][unique]
        self.x = x_all[order][unique]
        self.dx = dx_all[order][unique]
        segment = np.searchsorted(np.array(breaks), self.t, side="right") - 1
        self.seg = np.minimum(segment, len(breaks) - 2)
        # first and last sample of every segment: window ends and one-sided limits at jumps
        edges = np.nonzero(np.diff(self.seg) != 0)[0]
        self._ends = np.unique(np.concatenate(([0, self.t.size - 1], edges, edges + 1)))
        self._cache: dict[int, float] = {}

    def _segment_parts(
        self, a: float, b: float, live: Sequence[ModeLike], window: float
    ) -> list[np.ndarray]:
        length = b - a
        n_uniform = max(64, int(_BASE_POINTS * length / window))
        parts = [np.linspace(a, b, n_uniform)]
        fastest = min(
            [1.0 / abs(complex(m.pole)) for m in live if complex(m.pole) != 0] + [math.inf]
        )
        if fastest / 20.0 < length:
            parts.append(a + np.geomspace(fastest / 20.0, length, _GEOMETRIC_POINTS))
        budget = _MAX_POINTS
        for mode in live:
            pole = complex(mode.pole)
            omega = abs(pole.imag)
            if omega == 0.0:
                continue
            span = length if pole.real >= 0 else min(length, _LIVE_DECAYS / -pole.real)
            needed = math.ceil(span * omega / (2 * math.pi) * _POINTS_PER_PERIOD) + 1
            if needed <= n_uniform * span / length:
                continue  # the uniform grid already resolves it
            if needed > budget:
                self.capped = True
                needed = budget
            budget -= needed
            if needed > 1:
                parts.append(np.linspace(a, a + span, needed))
        return [np.clip(part, a, b) for part in parts]

    def values(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        out = self.response.evaluate(np.asarray(times, dtype=float), derivative=derivative)
        return np.real(np.asarray(out)).astype(float, copy=False)

    def value(self, time: float, derivative: int = 0) -> float:
        return float(self.values(np.array([float(time)]), derivative)[0])

    def root(self, func: Callable[[float], float], a: float, b: float) -> float:
        """Brent's method on ``[a, b]`` to a tolerance relative to the times.

        The bracket comes from the grid values; where the closed form at an
        end rounds to the other sign (a root within rounding of a grid
        point) that end is the root.
        """
        fa, fb = func(a), func(b)
        if fa == 0 or fb == 0 or (fa > 0) == (fb > 0):
            return float(a if abs(fa) <= abs(fb) else b)
        xtol = max((b - a) * 1e-14, abs(b) * 4e-16, 1e-300)
        return _bracketed_root(func, a, b, fa, fb, xtol)

    def stationaries(self, idx: np.ndarray) -> np.ndarray:
        """The roots of the derivative between grid points i and i+1, for every i at once."""
        idx = np.asarray(idx, dtype=np.intp)
        todo = np.array([i for i in dict.fromkeys(idx.tolist()) if i not in self._cache],
                        dtype=np.intp)
        if todo.size:
            roots = _bisect_all(lambda u: self.values(u, 1), self.t[todo], self.t[todo + 1])
            self._cache.update(zip(todo.tolist(), roots.tolist(), strict=True))
        return np.array([self._cache[i] for i in idx.tolist()], dtype=float)

    def brackets(self) -> np.ndarray:
        """Indices i where the derivative changes sign inside a segment."""
        same = self.seg[:-1] == self.seg[1:]
        change = self.dx[:-1] * self.dx[1:] < 0
        return np.nonzero(same & change)[0]

    def extremum(self, sign: float, tolerance: float) -> Extremum:
        """Largest value of ``sign * x`` over the window (sign = +1 or -1), first reached.

        Candidates are the window's ends, the one-sided limits at switching
        instants and the stationary points.  A bracket of a local maximum can
        exceed its samples by about ``slope * step``; every bracket whose bound
        comes within ``tolerance`` of the best sample is refined (all at
        once), and the earliest candidate within ``tolerance`` of the largest
        value is reported, so an undamped ring reports its first crest.
        """
        y = sign * self.x
        best = int(np.argmax(y))
        best_value = float(y[best])
        slope = sign * self.dx
        same = self.seg[:-1] == self.seg[1:]
        idx = np.nonzero(same & (slope[:-1] > 0) & (slope[1:] <= 0))[0]  # local maxima of y
        times = [self.t_report[self._ends]]
        values = [y[self._ends]]
        if idx.size:
            step = self.t[idx + 1] - self.t[idx]
            # generous bound: twice the excess a linear slope would allow
            bound = np.minimum(y[idx] + slope[idx] * step, y[idx + 1] - slope[idx + 1] * step)
            idx = idx[bound >= best_value - tolerance]
            roots = self.stationaries(idx)
            times.append(roots)
            values.append(sign * self.values(roots))
        cand_t, cand_v = np.concatenate(times), np.concatenate(values)
        top = max(float(np.max(cand_v)), best_value)
        close = np.nonzero(cand_v >= top - tolerance)[0]
        if close.size == 0:  # only the grid saw it: keep the sample
            return Extremum(value=sign * best_value, time=float(self.t_report[best]))
        first = close[np.argmin(cand_t[close])]
        return Extremum(value=sign * float(cand_v[first]), time=float(cand_t[first]))

    def first_reach(self, level: float, direction: float) -> tuple[float | None, bool]:
        """First time ``direction * (x - level) >= 0``; also whether at the start."""
        g = direction * (self.x - level)
        hits = np.nonzero(g >= 0)[0]
        if hits.size == 0:
            return None, False
        i = int(hits[0])
        if i == 0:
            return float(self.t_report[0]), True
        if g[i] == 0:
            return float(self.t_report[i]), False
        t = self.root(lambda u: self.value(u) - level, self.t[i - 1], self.t[i])
        return t, False

    def settling(self, final: float, half_width: float) -> tuple[float | None, str]:
        """Last entry into ``|x - final| <= half_width``; None if outside at the end."""
        e = np.abs(self.x - final) - half_width
        outside = np.nonzero(e > 0)[0]
        if outside.size == 0:
            return float(self.t_report[0]), "inside"
        last = int(outside[-1])
        if last == self.t.size - 1:
            return None, "not settled within the window"
        # An excursion between grid points after `last` would be missed by the
        # samples: refine the extremes there that come close to the band edge.
        exit_time, entry_hi = float(self.t[last]), float(self.t[last + 1])
        idx = self.brackets()
        idx = idx[idx >= last]
        idx = idx[np.maximum(e[idx], e[idx + 1]) > -0.25 * half_width]
        roots = self.stationaries(idx)
        outside_band = np.abs(self.values(roots) - final) - half_width > 0
        late = np.nonzero(outside_band & (roots > exit_time))[0]
        if late.size:
            k = late[np.argmax(roots[late])]
            exit_time, entry_hi = float(roots[k]), float(self.t[idx[k] + 1])
        t = self.root(lambda u: abs(self.value(u) - final) - half_width, exit_time, entry_hi)
        return t, ""


def _bisect_all(
    func: Callable[[np.ndarray], np.ndarray], a: np.ndarray, b: np.ndarray
) -> np.ndarray:
    """Bisection on many sign-changing brackets at once, to a few ulps of the times.

    One call of ``func`` per halving serves every bracket still open, so a
    window holding thousands of extremes costs a few dozen array evaluations.
    A bracket whose ends do not differ in sign (a root within rounding of a
    grid point) gives the end nearer zero.
    """
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    fa, fb = func(a), func(b)
    for _ in range(120):
        xtol = np.maximum(np.maximum(np.abs(a), np.abs(b)) * 4e-16, 1e-300)
        open_ = np.nonzero((b - a > xtol) & (fa != 0) & (fb != 0) & ((fa > 0) != (fb > 0)))[0]
        if open_.size == 0:
            break
        middle = 0.5 * (a[open_] + b[open_])
        fm = func(middle)
        right = (fm > 0) == (fa[open_] > 0)  # the sign change lies in [middle, b]
        a[open_[right]], fa[open_[right]] = middle[right], fm[right]
        b[open_[~right]], fb[open_[~right]] = middle[~right], fm[~right]
    return np.where(np.abs(fa) <= np.abs(fb), a, b)


def _bracketed_root(
    func: Callable[[float], float], a: float, b: float, fa: float, fb: float, xtol: float
) -> float:
    """Illinois false position on a sign-changing bracket, bisecting when it stalls.

    A few lines of our own instead of scipy.optimize: importing that package
    costs most of a second of start-up, more than a whole small analysis.
    """
    side = 0
    for iteration in range(200):
        if b - a <= xtol:
            break
        if iteration % 4 == 3:
            c = 0.5 * (a + b)  # guaranteed progress now and then
        else:
            c = b - fb * (b - a) / (fb - fa)
            if not a < c < b:
                c = 0.5 * (a + b)
        fc = func(c)
        if fc == 0:
            return float(c)
        if (fc > 0) == (fb > 0):
            b, fb = c, fc
            if side == 1:
                fa *= 0.5
            side = 1
        else:
            a, fa = c, fc
            if side == -1:
                fb *= 0.5
            side = -1
    return float(a if abs(fa) <= abs(fb) else b)
