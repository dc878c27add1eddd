"""Reading the modes of a response: initial and final value, what lasts, what repeats.

Figures that need no sampling come straight from the modes
``c_k (t-T)^k/k! e^{p (t-T)}`` (switched on at their delay ``T``): x(0+),
the final value by the final-value theorem, whether the response grows or
keeps oscillating, the period of what is left once the transient has died
out, and the one rule (:func:`_response_shape`) that decides which change
figures apply.  The protocols say what this stage reads of a response.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from fractions import Fraction
from typing import Any, Protocol

import numpy as np

# Tolerance for classifying poles at the origin (they arrive as floating-point numbers
# from root finding).  Poles on the imaginary axis need none: the inversion certifies
# them and gives them a real part of exactly 0 (exact factors, or even factors whose
# enclosures touch the axis), so any other real part is real damping, however light:
# a 510 GHz ringing decaying over 0.4 s has a final value.
_ORIGIN_TOL = 1e-12  # |p| below this times the largest |p| counts as s = 0
_CANCEL_TOL = 1e-9  # relative size below which combined coefficients cancel

_LIVE_DECAYS = 40.0  # a mode is negligible after e^-40 of its start value
_MAX_SEARCH_PERIODS = 200  # periods searched when sustained frequencies never line up
_STEP_SWING = 0.05  # a change below this fraction of the swing is not a step-like change


class ModeLike(Protocol):
    """The attributes of a mode the figures stage reads."""

    pole: complex
    multiplicity: int
    coefficients: tuple[complex, ...]
    delay: float
    is_pair: bool


class ImpulseLike(Protocol):
    """The attributes of an impulse the figures stage reads."""

    order: int
    weight: float
    delay: float


class ResponseLike(Protocol):
    """The attributes of a time response the figures stage reads."""

    @property
    def modes(self) -> Sequence[ModeLike]: ...

    @property
    def impulses(self) -> Sequence[ImpulseLike]: ...

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray: ...



def _fmt(value: float) -> str:
    return f"{value:.4g}"


def _real(value: Any) -> float:
    """Real part of a number given as a float, complex or exact sympy number."""
    return complex(value).real



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

