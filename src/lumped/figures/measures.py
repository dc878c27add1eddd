"""Figures of a closed-form time response, and verdicts on requirements.

This stage reads a time response (the closed form produced by the inversion
stage: a sum of modes ``c_k t^k/k! e^{p t}``, each switched on at its delay,
plus impulses) and measures what a design review asks for: initial and final
value, peak and minimum with their times, overshoot, rise time, settling time,
the dominant time constant and the dominant oscillatory pair.

Definitions (used consistently everywhere in this module)
---------------------------------------------------------
``change``
    ``final - initial``, where ``initial`` is x(0+) and ``final`` comes from
    the final-value theorem.
``overshoot``
    The largest excursion beyond the final value *in the direction of the
    change*, as a fraction of ``|change|`` (0.2 means 20 %); 0 for a response
    that never passes its final value.  Stored as a fraction, formatted as a
    percentage by the report stage.
``undershoot``
    The largest excursion beyond the initial value *against* the direction of
    the change (a wrong-way start), as a fraction of ``|change|``.
``rise time``
    From the first time the response reaches ``initial + 0.1 change`` to the
    first time it reaches ``initial + 0.9 change``.
``settling time``
    The last time ``|x - final| = band |change|``, that is the last entry
    into the band; the window start (0 for a window from 0) if the response
    never leaves the band within the window.

``peak``, ``minimum``
    The largest and smallest values over the window, each at the first time
    the response comes within ``EXTREME_TOLERANCE`` of its largest ``|x|``
    of that value (an undamped ring reports its first crest).

Which of the change figures apply is decided in one place,
:func:`_response_shape`: rise time, overshoot and undershoot belong to a
step-like change, settling time to any change toward a final value; where a
figure does not apply, ``Figures.reasons`` says why.

Time-domain figures are measured over the window ``[start, stop]``; the
initial value, final value and mode figures do not depend on the window.
Extremes and crossings are located on a grid adapted to the response's
time scales (uniform, geometric after every switching instant, and dense
enough for the fastest ringing) and then refined on the closed form:
stationary points by bisection on the derivative over all brackets at once,
crossings by false position.  Once the transient has died out, a response
made of sinusoids with a common period repeats, so extremes are searched
over the transient and one period, however long the window.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any, Protocol

import numpy as np

from lumped.constants import STANDARD_GRAVITY_SI
from lumped.model import Domain, Figure, QuantityKind, Requirement

"""Standard acceleration of gravity in m/s^2, used by :func:`in_g`."""

# Tolerance for classifying poles at the origin (they arrive as floating-point numbers
# from root finding).  Poles on the imaginary axis need none: the inversion certifies
# them and gives them a real part of exactly 0 (exact factors, or even factors whose
# enclosures touch the axis), so any other real part is real damping, however light:
# a 510 GHz ringing decaying over 0.4 s has a final value.
_ORIGIN_TOL = 1e-12  # |p| below this times the largest |p| counts as s = 0
_CANCEL_TOL = 1e-9  # relative size below which combined coefficients cancel

_BASE_POINTS = 20000  # uniform grid points across the window
_GEOMETRIC_POINTS = 400  # geometric points after every switching instant
_POINTS_PER_PERIOD = 24  # grid density for oscillating modes
_MAX_POINTS = 400000  # cap on the grid size, to bound the cost
_LIVE_DECAYS = 40.0  # a mode is negligible after e^-40 of its start value
# Extremes that differ by less than this fraction of the largest |x| count as the same
# value; the report gives the first time such a value is reached.
EXTREME_TOLERANCE = 1e-9
_MAX_SEARCH_PERIODS = 200  # periods searched when sustained frequencies never line up
_STEP_SWING = 0.05  # a change below this fraction of the swing is not a step-like change


class ModeLike(Protocol):
    """The attributes of a mode this module reads."""

    pole: complex
    multiplicity: int
    coefficients: tuple[complex, ...]
    delay: float
    is_pair: bool


class ImpulseLike(Protocol):
    """The attributes of an impulse this module reads."""

    order: int
    weight: float
    delay: float


class ResponseLike(Protocol):
    """The attributes of a time response this module reads."""

    @property
    def modes(self) -> Sequence[ModeLike]: ...

    @property
    def impulses(self) -> Sequence[ImpulseLike]: ...

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray: ...


@dataclass(frozen=True)
class Extremum:
    """A value of the response and the time it occurs.

    Examples
    --------
    >>> Extremum(value=1.16, time=3.6).value
    1.16
    """

    value: float
    time: float


@dataclass(frozen=True)
class Figures:
    """Figures of one response over one window.

    Every figure is ``None`` where it does not apply; ``reasons`` maps the
    field name to a sentence saying why (and also carries caveats on figures
    that are present, e.g. a settling time equal to a late window start).
    Fractions (``overshoot``, ``undershoot``, ``band``) are plain fractions:
    0.2 means 20 %.  Frequencies are in rad/s unless the name ends in
    ``_hz``.  Times are in seconds.

    Attributes
    ----------
    start, stop, band, kind
        The settings the figures were computed with.
    initial, final, change
        x(0+), the final value and ``final - initial``.
    peak, minimum, magnitude
        Largest value, smallest value and largest ``|x|`` over the window,
        with their times; None when an impulse in the window makes them
        unbounded (``peak_unbounded`` / ``minimum_unbounded`` say which).
    overshoot, undershoot
        Fractions of ``|change|`` (see the module docstring).
    rise_time, rise_crossings
        10-90 % rise time and the two crossing times.
    settling_time
        Last entry into the band (see the module docstring).
    time_constant
        Of the slowest decaying mode, ``max(-1/Re p)``.
    natural_frequency, damping_ratio, ringing_frequency, ringing_frequency_hz
        ``|p|``, ``-Re p/|p|`` and ``Im p`` of the complex pair with the
        largest real part (the slowest to die out, or a growing one).
    impulses
        The response's impulses that fall inside the window.
    peak_g, minimum_g, magnitude_g
        The extremes in g, for an acceleration.
    max_travel
        Largest ``|x|``, for a displacement or an angle.
    reasons
        Field name (or ``"impulses"``, ``"grid"``, ``"extremes"``) to an
        explanation; every figure that does not apply has one here.
    shape
        What the response does, by the one rule that decides which figures
        apply: ``"step"`` (a step-like change: rise time, overshoot,
        undershoot and settling), ``"decay"`` (back toward zero or where it
        started: settling only), ``"oscillation"`` (sustained) or
        ``"growth"`` (unbounded), or ``"constant"``; the mode figures (time constant, pair,
        ringing) describe the network and apply whenever such modes exist.
    extreme_tolerance
        Peak and minimum are the first instants at which the response comes
        within this fraction of its largest ``|x|`` of its extreme value.

    Examples
    --------
    >>> figs = Figures(start=0.0, stop=1.0, band=0.02, kind=None)
    >>> figs.peak is None
    True
    """

    start: float
    stop: float
    band: float
    kind: QuantityKind | None
    initial: float | None = None
    final: float | None = None
    change: float | None = None
    peak: Extremum | None = None
    minimum: Extremum | None = None
    magnitude: Extremum | None = None
    peak_unbounded: bool = False
    minimum_unbounded: bool = False
    overshoot: float | None = None
    undershoot: float | None = None
    rise_time: float | None = None
    rise_crossings: tuple[float, float] | None = None
    settling_time: float | None = None
    time_constant: float | None = None
    natural_frequency: float | None = None
    damping_ratio: float | None = None
    ringing_frequency: float | None = None
    ringing_frequency_hz: float | None = None
    impulses: tuple[Any, ...] = ()
    peak_g: float | None = None
    minimum_g: float | None = None
    magnitude_g: float | None = None
    max_travel: float | None = None
    reasons: dict[str, str] = field(default_factory=dict)
    shape: str | None = None
    extreme_tolerance: float | None = None


@dataclass(frozen=True)
class Verdict:
    """The outcome of judging one requirement.

    ``passed`` is ``None`` when the requirement cannot be judged (the figure
    does not apply, or a bound is not a number); ``reason`` says why.
    ``margin`` is the distance to the nearest limit in the requirement's
    units (a fraction for percentages), positive when passing.

    Examples
    --------
    >>> Verdict(None, 1.0, None, 2.0, True, 1.0, "ok").margin
    1.0
    """

    requirement: Requirement | None
    value: float | None
    lower: float | None
    upper: float | None
    passed: bool | None
    margin: float | None
    reason: str


def in_g(value: float) -> float:
    """Express an acceleration in m/s^2 as a multiple of standard gravity.

    Parameters
    ----------
    value : float
        Acceleration in m/s^2.

    Returns
    -------
    float
        ``value / 9.80665``.

    Examples
    --------
    >>> in_g(9.80665)
    1.0
    """
    return float(value) / STANDARD_GRAVITY_SI


def _fmt(value: float) -> str:
    return f"{value:.4g}"


def _real(value: Any) -> float:
    """Real part of a number given as a float, complex or exact sympy number."""
    return complex(value).real


class _ClosedForm:
    """The modes as arrays, for cheap evaluation at single instants.

    Root refinement and quadrature evaluate the response one instant at a
    time; doing that through the modes directly (``c_k tau^k/k! e^{p tau}``
    switched on at the delay, twice the real part for a pair) keeps each call
    to a few small array operations.  Derivatives use
    ``d/dt [sum c_k t^k/k! e^{pt}] = sum (p c_k + c_{k+1}) t^k/k! e^{pt}``.
    """

    def __init__(self, modes: Sequence[ModeLike]) -> None:
        active = [m for m in modes if _active(m)]
        width = max((len(m.coefficients) for m in active), default=1)
        self.poles = np.array([complex(m.pole) for m in active], dtype=complex)
        self.delays = np.array([float(m.delay) for m in active], dtype=float)
        matrix = np.zeros((len(active), width), dtype=complex)
        for i, mode in enumerate(active):
            factor = 2.0 if mode.is_pair else 1.0
            matrix[i, : len(mode.coefficients)] = [factor * complex(c) for c in mode.coefficients]
        self._matrices = [matrix]
        self._factorials = np.array([math.factorial(k) for k in range(width)], dtype=float)

    def _matrix(self, derivative: int) -> np.ndarray:
        while len(self._matrices) <= derivative:
            last = self._matrices[-1]
            shifted = np.zeros_like(last)
            shifted[:, :-1] = last[:, 1:]
            self._matrices.append(self.poles[:, None] * last + shifted)
        return self._matrices[derivative]

    def __call__(self, time: float, derivative: int = 0) -> float:
        return float(self.at(np.array([float(time)]), derivative)[0])

    def at(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        """The response (or a derivative) at many instants, in one array operation."""
        times = np.asarray(times, dtype=float).ravel()
        out = np.zeros(times.size)
        if self.poles.size == 0:
            return out
        matrix = self._matrix(derivative)
        chunk = max(1, (1 << 18) // max(1, self.poles.size))  # bound the (n, M) temporaries
        for lo in range(0, times.size, chunk):
            tau = times[lo : lo + chunk, None] - self.delays[None, :]
            on = tau >= 0
            tau = np.where(on, tau, 0.0)
            # Horner in tau: c_0 + tau (c_1 + tau/2 (c_2 + ...)) gives sum c_k tau^k/k!
            poly = np.broadcast_to(matrix[None, :, -1], tau.shape).astype(complex)
            for k in range(matrix.shape[1] - 2, -1, -1):
                poly = poly * (tau / (k + 1)) + matrix[None, :, k]
            with np.errstate(over="ignore", invalid="ignore"):
                terms = np.where(on, poly * np.exp(self.poles[None, :] * tau), 0.0)
            out[lo : lo + chunk] = terms.real.sum(axis=1)
        return out


# ----------------------------------------------------------------------------
# Mode bookkeeping


def _active(mode: ModeLike) -> bool:
    return any(c != 0 for c in mode.coefficients)


def _pole_scale(modes: Sequence[ModeLike]) -> float:
    return max([abs(complex(m.pole)) for m in modes] + [1.0])


def _late_groups(
    modes: Sequence[ModeLike],
) -> list[tuple[complex, bool, list[complex]]]:
    """Combine the modes that do not decay into one polynomial per pole.

    For t after the last delay, ``sum_j c_jk (t - d_j)^k/k! e^{p (t - d_j)}``
    over the modes at pole ``p`` equals ``sum_k a_k t^k/k! e^{p t}``.  Terms
    that cancel there (a pulse is a step minus a delayed step, a half-sine is
    two shifted sines) must not count against a final value, so leading
    coefficients that vanish relative to the terms they came from are
    dropped.  Decaying modes are left out: they never block a final value.
    """
    scale = _pole_scale(modes)
    groups: list[tuple[complex, bool, list[tuple[ModeLike, complex]]]] = []
    for mode in modes:
        pole = complex(mode.pole)
        if not _active(mode):
            continue
        if abs(pole) <= _ORIGIN_TOL * scale:
            pole = 0j
        elif pole.real < 0:
            continue
        for g_pole, g_pair, members in groups:
            if g_pair == bool(mode.is_pair) and abs(g_pole - pole) <= 1e-9 * max(abs(pole), 1e-300):
                members.append((mode, pole))
                break
        else:
            groups.append((pole, bool(mode.is_pair), [(mode, pole)]))

    result = []
    for pole, pair, members in groups:
        order = max(len(m.coefficients) for m, _ in members)
        combined = np.zeros(order, dtype=complex)
        size = np.zeros(order)
        for mode, p in members:
            d = float(mode.delay)
            shift = np.exp(-p * d)  # |shift| <= 1 here since Re p >= 0
            coeffs = [complex(c) for c in mode.coefficients]
            for j in range(len(coeffs)):
                for k in range(j, len(coeffs)):
                    term = shift * coeffs[k] * (-d) ** (k - j) / math.factorial(k - j)
                    combined[j] += term
                    size[j] += abs(term)
        kept = [complex(a) for a in combined]
        while kept and abs(kept[-1]) <= _CANCEL_TOL * size[len(kept) - 1]:
            kept.pop()
        if kept:
            result.append((pole, pair, kept))
    return result


def _final_value(modes: Sequence[ModeLike]) -> tuple[float | None, str]:
    """Final value by the final-value theorem, or the reason there is none."""
    problems: list[str] = []
    oscillations: list[str] = []
    value = 0.0
    for pole, pair, coeffs in _late_groups(modes):
        axis = pole.real == 0
        if pole == 0:
            if len(coeffs) >= 2:
                problems.append(
                    f"no final value: pole at s = 0 with multiplicity {len(coeffs)} "
                    "(grows without bound)"
                )
            else:
                value += _real(coeffs[0])
        elif pole.real > 0 and not axis:
            problems.append(
                f"no final value: pole at s = {_fmt(pole.real)}"
                + (f" ± j{_fmt(abs(pole.imag))}" if pair else "")
                + " in the right half-plane (grows without bound)"
            )
        else:
            extra = f" with multiplicity {len(coeffs)}" if len(coeffs) > 1 else ""
            oscillations.append(f"±j{_fmt(abs(pole.imag))} rad/s{extra}")
    if oscillations:
        problems.append(
            "no final value: poles on the imaginary axis at "
            + ", ".join(oscillations)
            + " (sustained oscillation)"
        )
    if problems:
        return None, "; ".join(problems)
    return value, ""


def _sustained(modes: Sequence[ModeLike]) -> tuple[bool, list[float]]:
    """Whether the response grows without bound, and the frequencies that never die out."""
    omegas = []
    grows = False
    for pole, _pair, coeffs in _late_groups(modes):
        on_axis = pole.real == 0
        if len(coeffs) >= 2 or not on_axis:
            grows = True  # a repeated pole on the axis or one in the right half-plane
        elif pole != 0:
            omegas.append(abs(pole.imag))
    return grows, omegas


def _common_period(omegas: Sequence[float]) -> float | None:
    """The period of a sum of sinusoids, or None when the frequencies never line up.

    Ratios to the slowest frequency are matched to fractions with small
    denominators; two sources at 50 Hz and 150 Hz repeat every 20 ms, a
    network's own 1.23 kHz ringing beside a 1 kHz source does not repeat soon.
    """
    slowest = min(omegas)
    common = 1
    for omega in omegas:
        ratio = omega / slowest
        fraction = Fraction(ratio).limit_denominator(16)
        if abs(ratio - float(fraction)) > 1e-9 * ratio:
            return None
        common = math.lcm(common, fraction.denominator)
    return 2 * math.pi * common / slowest


def _periodic_tail(
    modes: Sequence[ModeLike], start: float
) -> tuple[float, float | None, list[float]]:
    """When the response becomes a constant plus sinusoids, their period, their frequencies.

    ``quiet`` is after every switching instant and after every decaying mode
    has fallen to e^-40 of its start.  The frequencies are empty when nothing
    oscillates for ever or something grows; the period is None when the
    frequencies have no common period.
    """
    active = [m for m in modes if _active(m)]
    grows, omegas = _sustained(active)
    if grows or not omegas:
        return math.inf, None, []
    quiet = max([start] + [float(m.delay) for m in active])
    for mode in active:
        pole = complex(mode.pole)
        if pole.real < 0:
            quiet = max(quiet, float(mode.delay) + _LIVE_DECAYS / -pole.real)
    return quiet, _common_period(omegas), omegas


def _search_stop(modes: Sequence[ModeLike], start: float, stop: float) -> tuple[float, str]:
    """Where the search for extremes can end without missing a new value.

    Once every decaying mode has died out (e^-40 of its start) and every
    source has switched, a response made of a constant and sinusoids with a
    common period repeats every period: its extremes after that time are
    those of one period, reached first within it.  So the search covers the
    transient plus one period, however many periods the window holds.
    Frequencies without a common period are searched over a fixed number of
    periods, and the reason says so.
    """
    quiet, period, omegas = _periodic_tail(modes, start)
    if not omegas:
        return stop, ""
    if period is not None:
        end = quiet + 1.01 * period  # a hair over one period: both ends of it are seen
        return (end, "") if end < stop else (stop, "")
    end = quiet + _MAX_SEARCH_PERIODS * 2 * math.pi / min(omegas)
    if end >= stop:
        return stop, ""
    return end, (
        f"the sustained oscillation mixes frequencies without a common period; extremes "
        f"were searched up to t = {_fmt(end)} s ({_MAX_SEARCH_PERIODS} periods of the "
        "slowest after the transient), later values may come closer to the sum of the "
        "amplitudes"
    )


def _response_shape(
    final: float | None,
    initial: float,
    grows: bool,
    high: float,
    low: float,
) -> tuple[str, str]:
    """The one rule that says which figures apply: the shape and, if not a step, why.

    ``step``: a step-like change from the initial to a different final value
    (rise time, overshoot, undershoot and settling apply).  ``decay``: the
    response returns toward zero or toward where it started (a discharge, a
    pulse, a dropped body's acceleration; settling applies when there is a
    change, rise time and overshoot do not).  ``oscillation``: it never
    settles, ``growth``: it grows without bound (no final value, so none of
    the change figures apply).  ``constant``: nothing changes.  ``high`` and
    ``low`` bound the response over the window.
    """
    if final is None:
        if grows:
            return "growth", "no final value: the response grows without bound"
        return "oscillation", "no final value: the response is a sustained oscillation"
    change = final - initial
    swing = max(high, initial, final) - min(low, initial, final)
    scale = max(abs(initial), abs(final), swing)
    if scale == 0 or swing <= 1e-12 * scale:
        return "constant", "the response is constant (no change to measure against)"
    if abs(change) <= 1e-9 * scale:
        return "decay", ("the response returns to where it started (no change to measure "
                         "against: a decay or pulse, not a step-like change)")
    if abs(final) <= 1e-9 * scale:
        return "decay", ("the response decays toward zero (a decay, not a step-like "
                         "change)")
    if abs(change) < _STEP_SWING * swing:
        return "decay", (f"the response ends within {_STEP_SWING * 100:g} % of its swing "
                         "from where it started (a decay or pulse, not a step-like change)")
    return "step", ""


def _initial_value(modes: Sequence[ModeLike]) -> float:
    """x(0+): the constant coefficients of the modes switched on at t = 0."""
    total = 0.0
    for mode in modes:
        if float(mode.delay) <= 0.0 and mode.coefficients:
            c0 = _real(mode.coefficients[0])
            total += 2.0 * c0 if mode.is_pair else c0
    return total


# ----------------------------------------------------------------------------
# Sampling and refinement on the closed form


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
        self.closed = _ClosedForm(modes)
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
        return self.closed(time, derivative)

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
            roots = _bisect_all(lambda u: self.closed.at(u, 1), self.t[todo], self.t[todo + 1])
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
            values.append(sign * self.closed.at(roots))
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
        outside_band = np.abs(self.closed.at(roots) - final) - half_width > 0
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


# ----------------------------------------------------------------------------
# Public API


def compute_figures(
    response: ResponseLike,
    start: float,
    stop: float,
    *,
    band: float = 0.02,
    kind: QuantityKind | None = None,
    own_pole: Callable[[complex], bool] | None = None,
) -> Figures:
    """Measure the figures of a closed-form time response over a window.

    Parameters
    ----------
    response : TimeResponse
        A closed-form response from :func:`lumped.inversion.invert` (any
        object with ``modes``, ``impulses`` and ``evaluate(times,
        derivative=0)`` will do).
    start, stop : float
        The window in seconds, ``0 <= start < stop``.
    band : float, optional
        Settling band as a fraction of the final change (default 2 %).
    kind : QuantityKind or None, optional
        What the response is; acceleration adds figures in g, displacement
        and angle add the maximum travel.
    own_pole : callable, optional
        Tells whether a pole belongs to the network itself; the dominant time
        constant and pair are then taken from those alone, not from poles a
        source's waveform brings in (a sine's ±jω).

    Returns
    -------
    Figures
        The figures; see the module docstring for the definitions.

    Examples
    --------
    A first-order step response ``1 - e^(-t)`` given by its modes:

    >>> import numpy as np
    >>> from types import SimpleNamespace as NS
    >>> modes = (NS(pole=0j, multiplicity=1, coefficients=(1,), delay=0.0, is_pair=False),
    ...          NS(pole=-1 + 0j, multiplicity=1, coefficients=(-1,), delay=0.0, is_pair=False))
    >>> def evaluate(t, derivative=0):
    ...     return (1.0 if derivative == 0 else 0.0) - (-1.0) ** derivative * np.exp(-t)
    >>> response = NS(modes=modes, impulses=(), evaluate=evaluate)
    >>> figs = compute_figures(response, 0.0, 10.0)
    >>> round(figs.final, 6), round(figs.rise_time, 6)  # ln 9 = 2.197225
    (1.0, 2.197225)
    """
    start, stop, band = float(start), float(stop), float(band)
    if not (math.isfinite(start) and math.isfinite(stop) and 0.0 <= start < stop):
        raise ValueError(f"the window must satisfy 0 <= start < stop, got {start} .. {stop}")
    if not 0.0 < band < 1.0:
        raise ValueError(f"the settling band must be a fraction between 0 and 1, got {band}")
    reasons: dict[str, str] = {}
    modes = tuple(response.modes)
    impulses = tuple(response.impulses)
    search_stop, search_note = _search_stop(modes, start, stop)
    if search_note:
        reasons["extremes"] = search_note
    sampler = _Sampler(response, start, search_stop)
    if sampler.capped:
        reasons["grid"] = (
            "the ringing is too fast to resolve fully over this window; "
            "narrow the window for reliable extremes"
        )

    initial = _initial_value(modes)
    final, why = _final_value(modes)
    if final is None:
        reasons["final"] = why
    change = None if final is None else final - initial

    # Extremes of the smooth part; impulses inside the window make them unbounded.
    finite = sampler.x[np.isfinite(sampler.x)]
    tolerance = EXTREME_TOLERANCE * (float(np.max(np.abs(finite))) if finite.size else 0.0)
    peak, minimum = sampler.extremum(1.0, tolerance), sampler.extremum(-1.0, tolerance)
    inside = [imp for imp in impulses if start <= _real(imp.delay) <= stop]
    peak_unbounded = any(imp.order > 0 or _real(imp.weight) > 0 for imp in inside)
    minimum_unbounded = any(imp.order > 0 or _real(imp.weight) < 0 for imp in inside)
    if inside:
        listed = ", ".join(
            f"{'an impulse' if imp.order == 0 else f'an impulse derivative of order {imp.order}'}"
            f" of weight {_fmt(_real(imp.weight))} at t = {_fmt(_real(imp.delay))} s"
            for imp in inside
        )
        reasons["impulses"] = f"the response contains {listed}"
    if peak_unbounded:
        reasons["peak"] = (
            f"unbounded: the response contains an impulse (the smooth part peaks at "
            f"{_fmt(peak.value)} at t = {_fmt(peak.time)} s)"
        )
    if minimum_unbounded:
        reasons["minimum"] = (
            f"unbounded below: the response contains an impulse (the smooth part's "
            f"minimum is {_fmt(minimum.value)} at t = {_fmt(minimum.time)} s)"
        )
    magnitude = max(
        (
            Extremum(abs(peak.value), peak.time),
            Extremum(abs(minimum.value), minimum.time),
        ),
        key=lambda e: e.value,
    )
    if peak_unbounded or minimum_unbounded:
        reasons["magnitude"] = "unbounded: the response contains an impulse"

    overshoot = undershoot = rise_time = settling_time = None
    rise_crossings = None
    grows, _ = _sustained([m for m in modes if _active(m)])
    shape, not_step = _response_shape(final, initial, grows, peak.value, minimum.value)
    step_figures = ("overshoot", "undershoot", "rise_time")
    if change is None:
        for name in (*step_figures, "settling_time"):
            reasons[name] = not_step
    elif change == 0.0 or abs(change) <= 1e-12 * max(abs(initial), abs(final or 0.0)):
        for name in step_figures:
            reasons[name] = not_step
        reasons["settling_time"] = (
            "the final value equals the initial value (no change to measure against)"
        )
    else:
        assert final is not None
        direction = 1.0 if change > 0 else -1.0
        if shape != "step":
            for name in step_figures:
                reasons[name] = not_step
        else:
            ahead_unbounded = peak_unbounded if direction > 0 else minimum_unbounded
            behind_unbounded = minimum_unbounded if direction > 0 else peak_unbounded
            ahead = peak.value if direction > 0 else minimum.value
            behind = minimum.value if direction > 0 else peak.value
            if ahead_unbounded:
                reasons["overshoot"] = "unbounded: the response contains an impulse"
            else:
                overshoot = max(0.0, (ahead - final) / change)
            if behind_unbounded:
                reasons["undershoot"] = "unbounded: the response contains an impulse"
            else:
                undershoot = max(0.0, (behind - initial) / -change)

            t10, at_start10 = sampler.first_reach(initial + 0.1 * change, direction)
            t90, _ = sampler.first_reach(initial + 0.9 * change, direction)
            if t10 is None or t90 is None:
                reasons["rise_time"] = (
                    f"does not reach {'10' if t10 is None else '90'} % of the final change "
                    "within the window"
                )
            elif at_start10 and start > 0.0:
                reasons["rise_time"] = "the 10 % level was already passed at the window start"
            else:
                rise_time, rise_crossings = t90 - t10, (t10, t90)

        settling_time, how = sampler.settling(final, band * abs(change))
        if settling_time is None:
            reasons["settling_time"] = how
        elif how == "inside" and start > 0.0:
            reasons["settling_time"] = (
                "inside the band over the whole window: settled at or before the window start"
            )

    # Mode figures: these describe the system, not the window.
    def counted(mode) -> bool:
        return _active(mode) and (own_pole is None or own_pole(complex(mode.pole)))

    decaying = [complex(m.pole) for m in modes if counted(m) and complex(m.pole).real < 0]
    time_constant = max((-1.0 / p.real for p in decaying), default=None)
    if time_constant is None:
        reasons["time_constant"] = "no decaying mode"
    pairs = [complex(m.pole) for m in modes if counted(m) and m.is_pair]
    natural = damping = ringing = ringing_hz = None
    if pairs:
        top = max(pairs, key=lambda p: p.real)
        natural = abs(top)
        damping = -top.real / natural + 0.0  # + 0.0: an undamped pair reads 0, never -0
        ringing = abs(top.imag)
        ringing_hz = ringing / (2 * math.pi)
    else:
        for name in ("natural_frequency", "damping_ratio", "ringing_frequency"):
            reasons[name] = "no oscillatory (complex) pair of poles"

    peak_g = minimum_g = magnitude_g = max_travel = None
    if kind is not None and kind.domain is not Domain.ELECTRICAL:
        if kind is QuantityKind.ACCELERATION:
            peak_g = None if peak_unbounded else in_g(peak.value)
            minimum_g = None if minimum_unbounded else in_g(minimum.value)
            magnitude_g = None if (peak_unbounded or minimum_unbounded) else in_g(magnitude.value)
        if kind in (QuantityKind.DISPLACEMENT, QuantityKind.ANGLE):
            max_travel = None if (peak_unbounded or minimum_unbounded) else magnitude.value

    return Figures(
        start=start,
        stop=stop,
        band=band,
        kind=kind,
        initial=initial,
        final=final,
        change=change,
        peak=None if peak_unbounded else peak,
        minimum=None if minimum_unbounded else minimum,
        magnitude=None if (peak_unbounded or minimum_unbounded) else magnitude,
        peak_unbounded=peak_unbounded,
        minimum_unbounded=minimum_unbounded,
        overshoot=overshoot,
        undershoot=undershoot,
        rise_time=rise_time,
        rise_crossings=rise_crossings,
        settling_time=settling_time,
        time_constant=time_constant,
        natural_frequency=natural,
        damping_ratio=damping,
        ringing_frequency=ringing,
        ringing_frequency_hz=ringing_hz,
        impulses=tuple(inside),
        peak_g=peak_g,
        minimum_g=minimum_g,
        magnitude_g=magnitude_g,
        max_travel=max_travel,
        reasons=reasons,
        shape=shape,
        extreme_tolerance=EXTREME_TOLERANCE,
    )


_MAX_INTERVALS = 50_000


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
    nodes, weights = np.polynomial.legendre.leggauss(16)

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


def _number(bound: Any) -> tuple[float | None, str]:
    if bound is None:
        return None, ""
    free = getattr(bound, "free_symbols", set())
    if free:
        names = ", ".join(sorted(str(s) for s in free))
        return None, f"the bound depends on the free parameter(s) {names}"
    return float(bound), ""


def _figure_value(figure: Figure, figures: Figures) -> tuple[float | None, str]:
    """The figure a requirement bounds, or the reason it is missing."""

    def ext(e: Extremum | None) -> float | None:
        return None if e is None else e.value

    table: dict[Figure, tuple[str, float | None]] = {
        Figure.INITIAL: ("initial", figures.initial),
        Figure.PEAK: ("peak", ext(figures.peak)),
        Figure.MINIMUM: ("minimum", ext(figures.minimum)),
        Figure.MAGNITUDE: ("magnitude", ext(figures.magnitude)),
        Figure.FINAL: ("final", figures.final),
        Figure.OVERSHOOT: ("overshoot", figures.overshoot),
        Figure.UNDERSHOOT: ("undershoot", figures.undershoot),
        Figure.RISE_TIME: ("rise_time", figures.rise_time),
        Figure.SETTLING_TIME: ("settling_time", figures.settling_time),
    }
    name, value = table[figure]
    if value is None:
        unbounded = {
            Figure.PEAK: (figures.peak_unbounded, math.inf),
            Figure.MINIMUM: (figures.minimum_unbounded, -math.inf),
            Figure.MAGNITUDE: (
                figures.peak_unbounded or figures.minimum_unbounded,
                math.inf,
            ),
        }
        flag, infinite = unbounded.get(figure, (False, 0.0))
        if flag:
            return infinite, "unbounded (the response contains an impulse)"
        return None, figures.reasons.get(name, f"no {figure.value}")
    return value, ""


def _show(value: float, unit: str) -> str:
    if unit == "%":
        return f"{value * 100:.4g} %"
    return f"{value:.4g} {unit}".rstrip()


def judge(
    requirement: Requirement,
    figures: Figures,
    response: ResponseLike | None = None,
) -> Verdict:
    """Judge one requirement against the figures of its quantity.

    Bounds are SI values, and fractions for percentages (a requirement with
    unit ``"%"`` and upper bound 0.2 means at most 20 %), matching how
    :class:`Figures` stores overshoot.  A requirement may set its own
    settling band; when that differs from the band the figures were computed
    with, the settling time is recomputed from ``response`` (over the same
    window), so pass the response for such requirements.  Limits are
    inclusive.  An unbounded peak (an impulse) fails an upper limit.

    Parameters
    ----------
    requirement : Requirement
        The requirement; its quantity must be the one ``figures`` describe.
    figures : Figures
        Figures from :func:`compute_figures`.
    response : TimeResponse or None, optional
        Needed only for a settling time with a band of its own.

    Returns
    -------
    Verdict
        ``passed`` True/False, or None with the reason it cannot be judged.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Figure, Quantity, QuantityKind, Requirement
    >>> q = Quantity(QuantityKind.VOLTAGE, "sw", "at")
    >>> req = Requirement(Figure.FINAL, q, None, sympy.Integer(50), "V")
    >>> figs = Figures(start=0.0, stop=1.0, band=0.02, kind=None, final=48.0)
    >>> v = judge(req, figs)
    >>> v.passed, v.margin
    (True, 2.0)
    """
    lower, why_lower = _number(requirement.lower)
    upper, why_upper = _number(requirement.upper)
    unit = requirement.unit
    if why_lower or why_upper:
        return Verdict(requirement, None, lower, upper, None, None, why_lower or why_upper)
    if lower is None and upper is None:
        return Verdict(requirement, None, None, None, None, None, "the requirement has no limit")

    if requirement.figure is Figure.SETTLING_TIME and requirement.band is not None:
        wanted = _number(requirement.band)[0]
        if wanted is not None and abs(wanted - figures.band) > 1e-12 * max(wanted, 1e-300):
            if response is None:
                return Verdict(
                    requirement,
                    None,
                    lower,
                    upper,
                    None,
                    None,
                    f"the requirement asks a {wanted * 100:.4g} % band but the figures use "
                    f"{figures.band * 100:.4g} %; pass the response to recompute",
                )
            figures = compute_figures(
                response, figures.start, figures.stop, band=wanted, kind=figures.kind
            )

    value, why = _figure_value(requirement.figure, figures)
    if value is None:
        return Verdict(requirement, None, lower, upper, None, None, f"cannot be judged: {why}")

    margins = []
    if lower is not None:
        margins.append(value - lower)
    if upper is not None:
        margins.append(upper - value)
    margin = min(margins)
    passed = margin >= 0
    name = requirement.figure.value
    if math.isinf(value):
        reason = f"{name} is {why}"
    else:
        reason = f"{name} is {_show(value, unit)}"
    limits = []
    if lower is not None:
        limits.append(f"at least {_show(lower, unit)}")
    if upper is not None:
        limits.append(f"at most {_show(upper, unit)}")
    reason += f"; required {' and '.join(limits)}: "
    if math.isinf(margin):
        reason += "passes" if passed else "fails"
    else:
        reason += f"{'passes' if passed else 'fails'} by {_show(abs(margin), unit)}"
    return Verdict(requirement, value, lower, upper, passed, margin, reason)
