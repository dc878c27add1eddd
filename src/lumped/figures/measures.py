"""Figures of a closed-form time response: the measures a design review reads.

This stage reads a time response (the closed form produced by the inversion
stage: a sum of modes ``c_k t^k/k! e^{p t}``, each switched on at its delay,
plus impulses) and measures what a design review asks for: initial and final
value, peak and minimum with their times, overshoot, rise time, settling time,
the dominant time constant and the dominant oscillatory pair.

Definitions (used consistently everywhere in this stage)
--------------------------------------------------------
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
:func:`lumped.figures.modes._response_shape`: rise time, overshoot and undershoot belong to a
step-like change, settling time to any change toward a final value; where a
figure does not apply, ``Figures.reasons`` says why.

Time-domain figures are measured over the window ``[start, stop]``; the
initial value, final value and mode figures do not depend on the window.
Extremes and crossings are located on a grid adapted to the response's
time scales (uniform, geometric after every switching instant, and dense
enough for the fastest ringing) and then refined on the closed form by
safeguarded Newton steps over all brackets at once: first every stationary
point (extremes, and excursions near the settling band), then every level
crossing (10 % and 90 % of the change, the band's edge).  Once the
transient has died out, a response made of sinusoids with a common period
repeats, so extremes are searched over the transient and one period,
however long the window.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from lumped.constants import STANDARD_GRAVITY_SI
from lumped.figures.modes import (
    ResponseLike,
    _active,
    _final_value,
    _fmt,
    _initial_value,
    _real,
    _response_shape,
    _search_stop,
    _sustained,
)
from lumped.figures.records import Extremum, Figures
from lumped.figures.sampling import _Sampler
from lumped.model import Domain, QuantityKind

# Extremes that differ by less than this fraction of the largest |x| count as the same
# value; the report gives the first time such a value is reached.
EXTREME_TOLERANCE = 1e-9


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
    no_change = change is None or change == 0.0 or abs(change) <= 1e-12 * max(
        abs(initial), abs(final or 0.0))
    # the settling band, when there is a change to measure it against
    settle = None if no_change else (final, band * abs(change))

    # Extremes of the smooth part; impulses inside the window make them unbounded.
    # The stationary points the settling time needs are refined in the same pass.
    finite = sampler.x[np.isfinite(sampler.x)]
    tolerance = EXTREME_TOLERANCE * (float(np.max(np.abs(finite))) if finite.size else 0.0)
    peak, minimum = sampler.extremes(tolerance, settle)
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
    elif no_change:
        for name in step_figures:
            reasons[name] = not_step
        reasons["settling_time"] = (
            "the final value equals the initial value (no change to measure against)"
        )
    else:
        assert final is not None
        direction = 1.0 if change > 0 else -1.0
        # the 10 % and 90 % crossings and the settling time, refined together
        levels = [initial + 0.1 * change, initial + 0.9 * change] if shape == "step" else []
        reached, settled = sampler.crossings([(level, direction) for level in levels], settle)
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

            (t10, at_start10), (t90, _) = reached
            if t10 is None or t90 is None:
                reasons["rise_time"] = (
                    f"does not reach {'10' if t10 is None else '90'} % of the final change "
                    "within the window"
                )
            elif at_start10 and start > 0.0:
                reasons["rise_time"] = "the 10 % level was already passed at the window start"
            else:
                rise_time, rise_crossings = t90 - t10, (t10, t90)

        assert settled is not None
        settling_time, how = settled
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
