"""The immutable records of the figures stage: an extremum and the figures of a response.

The definitions of the figures are stated once, in :mod:`lumped.figures.measures`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from lumped.model import QuantityKind


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
        Fractions of ``|change|`` (defined in :mod:`lumped.figures.measures`).
    rise_time, rise_crossings
        10-90 % rise time and the two crossing times.
    settling_time
        Last entry into the band (defined in :mod:`lumped.figures.measures`).
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
    reasons: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))
    shape: str | None = None
    extreme_tolerance: float | None = None

    def __post_init__(self) -> None:
        # A copy behind a read-only view: the caller's dict cannot change the record.
        object.__setattr__(self, "reasons", MappingProxyType(dict(self.reasons)))
        object.__setattr__(self, "impulses", tuple(self.impulses))

    def __repr__(self) -> str:
        """A short summary: the shape, the values and times a review reads first.

        Examples
        --------
        >>> Figures(start=0.0, stop=10.0, band=0.02, kind=None, initial=0.0, final=1.0,
        ...         peak=Extremum(1.16, 3.6), overshoot=0.16, settling_time=5.3)
        Figures(0..10 s: initial 0, final 1, peak 1.16 at 3.6 s, overshoot 16 %, settling 5.3 s)
        """
        items = [] if self.shape is None else [self.shape]
        for name in ("initial", "final"):
            if (value := getattr(self, name)) is not None:
                items.append(f"{name} {value:.4g}")
        for name, extremum, unbounded in (("peak", self.peak, self.peak_unbounded),
                                          ("minimum", self.minimum, self.minimum_unbounded)):
            if unbounded:
                items.append(f"{name} unbounded")
            elif extremum is not None:
                items.append(f"{name} {extremum.value:.4g} at {extremum.time:.4g} s")
        if self.overshoot is not None:
            items.append(f"overshoot {self.overshoot * 100:.3g} %")
        for name, label in (("rise_time", "rise"), ("settling_time", "settling"),
                            ("time_constant", "time constant")):
            if (value := getattr(self, name)) is not None:
                items.append(f"{label} {value:.4g} s")
        if self.damping_ratio is not None and self.ringing_frequency is not None:
            items.append(f"damping ratio {self.damping_ratio:.3g}")
            items.append(f"ringing {self.ringing_frequency:.4g} rad/s")
        window = f"{self.start:.4g}..{self.stop:.4g} s"
        return f"Figures({window}: {', '.join(items)})" if items else f"Figures({window})"
