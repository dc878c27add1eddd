"""Verdicts: a requirement of the netlist judged against the figures of its quantity."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from lumped.figures.measures import compute_figures
from lumped.figures.modes import ResponseLike
from lumped.figures.records import Extremum, Figures
from lumped.model import Figure, Requirement


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
