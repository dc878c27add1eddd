"""Sampling and refinement on the closed form: where the extremes and crossings are.

The response is sampled on a grid adapted to its time scales (uniform,
geometric after every switching instant, and dense enough for the fastest
ringing), split at every jump; extremes and crossings found on the grid are
then refined on the closed form itself, through the response's own
evaluator.  Every refinement is vectorised: the brackets of all stationary
points (roots of the derivative) are solved together, then those of all
level crossings (10 % and 90 % of the change, the settling band's edge),
by Newton steps safeguarded with bisection (:func:`_solve_brackets`), so
the closed form is evaluated a few times on arrays, never one instant at a
time.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

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
        # The inversion stage switches a delayed term on at its delay (t >= d),
        # so a switching instant itself carries the value just after the jump;
        # one floating-point step before it gives the value just before.
        ends = [d for d in breaks[1:] if d in delays]
        if ends:
            parts.append(np.array([math.nextafter(d, -math.inf) for d in ends]))
        t_all = np.concatenate(parts)
        x_all = np.concatenate([self.values(part) for part in parts])
        dx_all = np.concatenate([self.values(part, 1) for part in parts])
        report = t_all
        if ends:  # the times reported for the points just before the jumps
            report = t_all.copy()
            report[t_all.size - len(ends):] = ends
        order = np.argsort(t_all, kind="stable")
        if stop in delays:  # the window ends exactly at a switching instant
            order = order[t_all[order] < stop]
        ordered = t_all[order]
        unique = np.empty(ordered.size, dtype=bool)
        unique[0] = True
        np.greater(ordered[1:], ordered[:-1], out=unique[1:])
        pick = order[unique]
        self.t = ordered[unique]
        self.t_report = self.t if report is t_all else report[pick]
        self.x = x_all[pick]
        self.dx = dx_all[pick]
        # first and last sample of every segment: window ends and one-sided limits at jumps
        if inner:
            segment = np.searchsorted(np.array(breaks), self.t, side="right") - 1
            self.seg = np.minimum(segment, len(breaks) - 2)
            edges = np.nonzero(np.diff(self.seg) != 0)[0]
            self._ends = np.unique(np.concatenate(([0, self.t.size - 1], edges, edges + 1)))
        else:
            self.seg = np.zeros(self.t.size, dtype=np.intp)
            self._ends = np.unique(np.array([0, self.t.size - 1]))
        self._cache: dict[int, tuple[float, float]] = {}

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

    # -- stationary points ------------------------------------------------------

    def brackets(self) -> np.ndarray:
        """Indices i where the derivative changes sign inside a segment."""
        same = self.seg[:-1] == self.seg[1:]
        change = self.dx[:-1] * self.dx[1:] < 0
        return np.nonzero(same & change)[0]

    def stationaries(self, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The root of the derivative between grid points i and i+1, and the value there.

        Every bracket not solved before is solved in one vectorised pass and
        kept, so the extremes and the settling time share the work.
        """
        idx = np.asarray(idx, dtype=np.intp)
        todo = np.array([i for i in dict.fromkeys(idx.tolist()) if i not in self._cache],
                        dtype=np.intp)
        if todo.size:
            ones = np.ones(todo.size)
            roots = _solve_brackets(
                self.values,
                _Brackets(self.t[todo], self.t[todo + 1], self.dx[todo], self.dx[todo + 1],
                          order=np.ones(todo.size, dtype=np.intp), level=0.0 * ones, sign=ones),
            )
            at_roots = self.values(roots)
            self._cache.update(zip(todo.tolist(), zip(roots.tolist(), at_roots.tolist(),
                                                       strict=True), strict=True))
        found = [self._cache[i] for i in idx.tolist()]
        return (np.array([f[0] for f in found], dtype=float),
                np.array([f[1] for f in found], dtype=float))

    def _extreme_brackets(self, sign: float, tolerance: float) -> np.ndarray:
        """Brackets of local maxima of ``sign * x`` that may come within reach of the best.

        A bracket of a local maximum can exceed its samples by about ``slope *
        step``; twice that (a generous bound) must reach within ``tolerance``
        of the best sample for the bracket to be refined.
        """
        y = sign * self.x
        best_value = float(np.max(y))
        slope = sign * self.dx
        same = self.seg[:-1] == self.seg[1:]
        idx = np.nonzero(same & (slope[:-1] > 0) & (slope[1:] <= 0))[0]  # local maxima of y
        if idx.size:
            step = self.t[idx + 1] - self.t[idx]
            bound = np.minimum(y[idx] + slope[idx] * step, y[idx + 1] - slope[idx + 1] * step)
            idx = idx[bound >= best_value - tolerance]
        return idx

    def _settling_brackets(self, final: float, half_width: float) -> np.ndarray:
        """Stationary brackets after the last sample outside the band that come near its edge.

        An excursion between grid points after that sample would be missed by
        the samples alone.
        """
        e = np.abs(self.x - final) - half_width
        outside = np.nonzero(e > 0)[0]
        if outside.size == 0 or outside[-1] == self.t.size - 1:
            return np.zeros(0, dtype=np.intp)
        idx = self.brackets()
        idx = idx[idx >= outside[-1]]
        return idx[np.maximum(e[idx], e[idx + 1]) > -0.25 * half_width]

    def extremes(
        self, tolerance: float, settle: tuple[float, float] | None = None
    ) -> tuple[Extremum, Extremum]:
        """The peak and the minimum over the window, each first reached.

        Candidates are the window's ends, the one-sided limits at switching
        instants and the stationary points; the earliest candidate within
        ``tolerance`` of the largest value is reported, so an undamped ring
        reports its first crest.  ``settle`` (final value, half width of the
        band) adds the brackets :meth:`settling` will need to the same
        vectorised pass.
        """
        above = self._extreme_brackets(1.0, tolerance)
        below = self._extreme_brackets(-1.0, tolerance)
        extra = [] if settle is None else [self._settling_brackets(*settle)]
        self.stationaries(np.concatenate([above, below, *extra]))
        return self._extremum(1.0, tolerance, above), self._extremum(-1.0, tolerance, below)

    def _extremum(self, sign: float, tolerance: float, idx: np.ndarray) -> Extremum:
        """Largest value of ``sign * x`` among the ends and the stationary points ``idx``."""
        y = sign * self.x
        best = int(np.argmax(y))
        best_value = float(y[best])
        roots, at_roots = self.stationaries(idx)
        cand_t = np.concatenate((self.t_report[self._ends], roots))
        cand_v = np.concatenate((y[self._ends], sign * at_roots))
        top = max(float(np.max(cand_v)), best_value)
        close = np.nonzero(cand_v >= top - tolerance)[0]
        if close.size == 0:  # only the grid saw it: keep the sample
            return Extremum(value=sign * best_value, time=float(self.t_report[best]))
        first = close[np.argmin(cand_t[close])]
        return Extremum(value=sign * float(cand_v[first]), time=float(cand_t[first]))

    # -- level crossings ------------------------------------------------------------

    def crossings(
        self, reaches: Sequence[tuple[float, float]], settle: tuple[float, float] | None
    ) -> tuple[list[tuple[float | None, bool]], tuple[float | None, str] | None]:
        """First reaches of levels and the settling time, all refined in one pass.

        Parameters
        ----------
        reaches : sequence of (level, direction)
            For each, the first time ``direction * (x - level) >= 0`` and
            whether that is the first sample (the window start).
        settle : (final, half_width) or None
            The last entry into ``|x - final| <= half_width``, with ``"inside"``
            when the response never leaves the band, or None and the reason
            when it is outside at the end.
        """
        found: list[tuple[float | None, bool]] = []
        pending: list[tuple[int, float, float, float, float, float, float]] = []
        for level, direction in reaches:
            g = direction * (self.x - level)
            hits = np.nonzero(g >= 0)[0]
            if hits.size == 0:
                found.append((None, False))
                continue
            i = int(hits[0])
            found.append((float(self.t_report[i]), i == 0))
            if i > 0 and g[i] != 0:  # a crossing between samples i-1 and i: refine it
                pending.append((len(found) - 1, self.t[i - 1], self.t[i], g[i - 1], g[i],
                                level, direction))
        settled: tuple[float | None, str] | None = None
        if settle is not None:
            settled, bracket = self._settling_bracket(*settle)
            if bracket is not None:
                pending.append((-1, *bracket))
        if pending:
            columns = list(zip(*pending, strict=True))
            roots = _solve_brackets(
                self.values,
                _Brackets(np.array(columns[1]), np.array(columns[2]), np.array(columns[3]),
                          np.array(columns[4]), order=np.zeros(len(pending), dtype=np.intp),
                          level=np.array(columns[5]), sign=np.array(columns[6])),
            )
            for slot, root in zip(columns[0], roots.tolist(), strict=True):
                if slot < 0:
                    settled = (root, "")
                else:
                    found[slot] = (root, False)
        return found, settled

    def _settling_bracket(
        self, final: float, half_width: float
    ) -> tuple[tuple[float | None, str], tuple[float, float, float, float, float, float] | None]:
        """The settling time if the samples decide it, else the bracket of the last entry.

        The bracket is given as (a, b, f(a), f(b), level, sign) for
        ``f = sign * (x - level)``: outside the band the response stays on one
        side of the final value, so the band's edge on that side is the level.
        """
        e = np.abs(self.x - final) - half_width
        outside = np.nonzero(e > 0)[0]
        if outside.size == 0:
            return (float(self.t_report[0]), "inside"), None
        last = int(outside[-1])
        if last == self.t.size - 1:
            return (None, "not settled within the window"), None
        exit_time, exit_value = float(self.t[last]), float(self.x[last])
        entry = last + 1
        # A later excursion out of the band between grid points (found among the
        # stationary points) moves the exit.
        idx = self._settling_brackets(final, half_width)
        roots, at_roots = self.stationaries(idx)
        late = np.nonzero((np.abs(at_roots - final) - half_width > 0) & (roots > exit_time))[0]
        if late.size:
            k = late[np.argmax(roots[late])]
            exit_time, exit_value, entry = float(roots[k]), float(at_roots[k]), int(idx[k]) + 1
        side = 1.0 if exit_value > final else -1.0
        level = final + side * half_width
        return (None, ""), (exit_time, float(self.t[entry]), side * (exit_value - level),
                            side * (float(self.x[entry]) - level), level, side)


@dataclass(frozen=True)
class _Brackets:
    """Sign-changing brackets of ``f = sign * (x^(order) - level)``, one entry each."""

    a: np.ndarray
    b: np.ndarray
    fa: np.ndarray
    fb: np.ndarray
    order: np.ndarray  # 0 for a level crossing, 1 for a stationary point
    level: np.ndarray
    sign: np.ndarray


def _solve_brackets(
    values: Callable[[np.ndarray, int], np.ndarray], brackets: _Brackets
) -> np.ndarray:
    """Roots of all brackets at once: Newton steps kept inside the bracket, else bisection.

    Each pass evaluates ``f`` and ``f'`` at every open bracket's iterate in
    at most three calls of ``values`` (one per derivative order), starting
    from the false-position point of the grid values.  As in the classic
    safeguarded Newton method, a step that would leave the bracket or that
    does not halve the step before last is replaced by bisection, so every
    bracket converges, to a few units in the last place of the time.  A
    bracket whose ends do not differ in sign once evaluated afresh on the
    closed form (a root within rounding of a grid point) gives the end
    nearer zero.
    """
    a = np.asarray(brackets.a, dtype=float)
    b = np.asarray(brackets.b, dtype=float)
    fa = np.asarray(brackets.fa, dtype=float)
    fb = np.asarray(brackets.fb, dtype=float)
    order = np.asarray(brackets.order, dtype=np.intp)
    level = np.broadcast_to(np.asarray(brackets.level, dtype=float), a.shape)
    sign = np.broadcast_to(np.asarray(brackets.sign, dtype=float), a.shape)
    vague = (fa == 0) | (fb == 0) | ((fa > 0) == (fb > 0))
    if vague.any():
        # The grid's values at an end round to zero or to the other sign: ask the
        # closed form itself at both ends of those brackets, all in one pass.
        fa, fb = fa.copy(), fb.copy()
        ends = np.concatenate((a[vague], b[vague]))
        both = _with_slope(values, ends, np.tile(order[vague], 2), np.tile(level[vague], 2),
                           np.tile(sign[vague], 2))[0]
        fa[vague], fb[vague] = np.split(both, 2)
    result = np.where(np.abs(fa) <= np.abs(fb), a, b)
    live = np.nonzero((fa != 0) & (fb != 0) & ((fa > 0) != (fb > 0)))[0]
    if live.size == 0:
        return result
    order, level, sign = order[live], level[live], sign[live]
    a, b, fa, fb = a[live], b[live], fa[live], fb[live]
    low, f_low = np.where(fa < 0, a, b), np.minimum(fa, fb)  # f < 0 there
    high, f_high = np.where(fa < 0, b, a), np.maximum(fa, fb)  # f > 0 there
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        t = a - fa * (b - a) / (fb - fa)
    # (a root within rounding of an end puts the first iterate on that end)
    t = np.where(np.isfinite(t), np.clip(t, np.minimum(a, b), np.maximum(a, b)), 0.5 * (a + b))
    step = step_before = np.abs(b - a)
    for _ in range(200):
        tolerance = np.maximum(np.maximum(np.abs(low), np.abs(high)) * 4e-16, 1e-300)
        narrow = np.abs(high - low) <= tolerance
        if narrow.any():  # no room left between the ends: the end nearer zero
            result[live[narrow]] = np.where(-f_low <= f_high, low, high)[narrow]
            keep = ~narrow
            live, t, order, level, sign = (live[keep], t[keep], order[keep], level[keep],
                                           sign[keep])
            low, high, f_low, f_high = low[keep], high[keep], f_low[keep], f_high[keep]
            step, step_before = step[keep], step_before[keep]
            if live.size == 0:
                break
        f, slope = _with_slope(values, t, order, level, sign)
        below, above = f < 0, f > 0
        low, f_low = np.where(below, t, low), np.where(below, f, f_low)
        high, f_high = np.where(above, t, high), np.where(above, f, f_high)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            newton = t - f / slope
            slow = np.abs(2.0 * f) > np.abs(step_before * slope)
        # A root within rounding of an end can send the step a few ulps past it:
        # that step still counts as inside, held at the end.
        first, last = np.minimum(low, high), np.maximum(low, high)
        slack = np.maximum(last, -first) * 8e-16
        inside = (newton >= first - slack) & (newton <= last + slack)
        newton = np.minimum(np.maximum(newton, first), last)
        new = np.where(inside & ~slow, newton, 0.5 * (low + high))
        step_before, step = step, np.abs(new - t)
        zero = f == 0
        done = zero | (step <= np.maximum(np.abs(new) * 4e-16, 1e-300))
        result[live[done]] = np.where(zero, t, new)[done]
        keep = ~done
        if not keep.any():
            break
        live, t, order, level, sign = live[keep], new[keep], order[keep], level[keep], sign[keep]
        low, high, f_low, f_high = low[keep], high[keep], f_low[keep], f_high[keep]
        step, step_before = step[keep], step_before[keep]
    return result


def _with_slope(
    values: Callable[[np.ndarray, int], np.ndarray],
    t: np.ndarray,
    order: np.ndarray,
    level: np.ndarray,
    sign: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """``f = sign * (x^(order) - level)`` and ``f'`` at ``t``: one call per derivative order."""
    first = values(t, 1)
    crossing = order == 0
    f = np.empty(t.size)
    slope = np.empty(t.size)
    if crossing.any():
        f[crossing] = values(t[crossing], 0)
        slope[crossing] = first[crossing]
    if not crossing.all():
        stationary = ~crossing
        f[stationary] = first[stationary]
        slope[stationary] = values(t[stationary], 2)
    return sign * (f - level), sign * slope
