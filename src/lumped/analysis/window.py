"""The time window: the one the tool chooses, and the ringing it refuses to follow.

Examples
--------
>>> period, periods = ringing_beyond_window([(-1 + 1e12j, 0.0)], 0.0, 5.0)
>>> f"{period:.3g} s"
'6.28e-12 s'
"""

from __future__ import annotations

import math
from collections.abc import Iterable

from lumped import model as m
from lumped.errors import NetlistError
from lumped.inversion import TimeResponse

# The automatic window: the transients settling (several of the slowest decaying time
# constants) plus a few periods of what goes on for ever (common practice, no source).
_WINDOW_TIME_CONSTANTS = 6
_WINDOW_PERIODS = 3
_WINDOW_GROWTH_TIMES = 5

# The most periods of one ringing mode a window may hold while the mode lasts.
# Beyond this the review figures would have to follow each period, and past
# about 1e9 radians double precision no longer knows the phase at all.
MOST_PERIODS = 100_000
# A mode has died out once its envelope fell by e^-37 (below double resolution).
_DECAYED = 37.0


def _seconds(value: float) -> str:
    """A time for a sentence, with an SI prefix (3 significant figures)."""
    for factor, prefix in ((1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"), (1e-12, "p")):
        if value >= factor * 0.9995:
            return f"{value / factor:.3g} {prefix}s"
    return f"{value:.3g} s"


def default_window(times: Iterable[TimeResponse],
                   netlist: m.Netlist) -> tuple[float, float, str]:
    """The window a reader wants when the netlist gives none, and the rule that chose it.

    The slowest decaying pole sets the settling part (the network's or a
    source's: both must have died out).  Poles on the imaginary axis, the
    network's or a source's, add a few periods; a pole at 0 (a conserved charge
    or momentum, a constant) adds nothing; a pole is on the axis only when the
    inversion certified it there (real part exactly 0).  Growing modes add a
    few growth times.  Everything starts after the last switching instant.

    Parameters
    ----------
    times : iterable of TimeResponse
        The closed forms of the quantities the window is for.
    netlist : Netlist
        For the sources' switching instants.

    Returns
    -------
    (start, stop, rule)
        The window in seconds and a sentence saying how it was chosen.

    Examples
    --------
    >>> import sympy
    >>> from lumped.api import loads
    >>> from lumped.inversion import invert
    >>> s = sympy.Symbol("s")
    >>> net = loads("resistor R at a 1 ohm\\n")
    >>> default_window([invert(1 / (s + 1000), s)], net)
    (0.0, 0.006, '6 times the slowest decaying time constant (1 ms)')
    """
    tau = 0.0
    growth = math.inf
    periods: list[float] = []
    delays = [0.0]
    for time in times:
        for mode in time.modes:
            if not any(c != 0 for c in mode.coefficients):
                continue
            delays.append(float(mode.delay))
            pole = complex(mode.pole)
            if pole == 0:
                continue  # a constant or a conserved quantity: no time scale
            if pole.real == 0:
                periods.append(2 * math.pi / abs(pole.imag))
            elif pole.real > 0:
                growth = min(growth, 1 / pole.real)
            else:
                tau = max(tau, -1 / pole.real)
    for element in netlist.elements:
        for term in element.waveform.terms if element.waveform else ():
            if term.delay.is_number:
                delays.append(float(term.delay))
    parts, rules = [], []
    if tau > 0:
        parts.append(_WINDOW_TIME_CONSTANTS * tau)
        rules.append(f"{_WINDOW_TIME_CONSTANTS} times the slowest decaying time constant "
                     f"({_seconds(tau)})")
    if periods:
        parts.append(_WINDOW_PERIODS * max(periods))
        rules.append(f"{_WINDOW_PERIODS} periods of the slowest sustained oscillation "
                     f"({_seconds(max(periods))} each)")
    if math.isfinite(growth):
        parts.append(_WINDOW_GROWTH_TIMES * growth)
        rules.append(f"{_WINDOW_GROWTH_TIMES} growth times of the fastest-growing mode "
                     f"({_seconds(growth)})")
    if not parts:
        parts.append(1.0)
        rules.append("1 s (the response has no time scale of its own)")
    last = max(delays)
    rule = " plus ".join(rules)
    if last > 0:
        rule = f"the last switching instant ({_seconds(last)}) plus " + rule
    return 0.0, last + sum(parts), rule


def ringing_beyond_window(poles: Iterable[tuple[complex, float]], start: float,
                          stop: float) -> tuple[float, float] | None:
    """The fastest ringing that lasts more than :data:`MOST_PERIODS` periods in the window.

    Parameters
    ----------
    poles : iterable of (complex, float)
        Each pole with the delay at which its term starts.
    start, stop : float
        The window, in seconds.

    Returns
    -------
    (period, periods) or None
        The ringing period in seconds and how many periods it lasts within the
        window, for the worst mode; None when every mode is within the limit.

    Examples
    --------
    >>> period, periods = ringing_beyond_window([(-1 + 1e12j, 0.0)], 0.0, 5.0)
    >>> f"{period:.3g} s, {periods:.3g} periods"
    '6.28e-12 s, 7.96e+11 periods'
    >>> ringing_beyond_window([(-1 + 10j, 0.0)], 0.0, 5.0) is None
    True
    """
    worst = None
    for pole, delay in poles:
        omega = abs(complex(pole).imag)
        if omega == 0 or not math.isfinite(omega):
            continue
        decay = -complex(pole).real
        ends = min(stop, delay + _DECAYED / decay) if decay > 0 else stop
        alive = ends - max(start, delay)
        if alive <= 0:
            continue
        periods = omega * alive / (2 * math.pi)
        if periods > MOST_PERIODS and (worst is None or periods > worst[1]):
            worst = (2 * math.pi / omega, periods)
    return worst


def refuse_unresolvable(netlist: m.Netlist, times: Iterable[TimeResponse | None], start: float,
                        stop: float, window_rule: str = "") -> None:
    """Refuse a network whose fastest ringing the window cannot follow (see MOST_PERIODS).

    Raises
    ------
    NetlistError
        Naming the ringing period and the window; at the ``window`` line when
        the netlist has one.

    Examples
    --------
    >>> from lumped.analysis import analyse
    >>> from lumped.api import loads
    >>> try:
    ...     analyse(loads("capacitor C at a 1 pF\\ninductor L at a 1 pH, initially 1 A\\n"
    ...                   "resistor R at a 1 Gohm\\nwatch voltage at a\\nwindow 1 s\\n"))
    ... except Exception as error:
    ...     print(error.message.split(" within")[0])
    the network rings with a period of 6.28e-12 s for about 1.18e+10 periods
    """
    poles = [(mode.pole, float(mode.delay)) for time in times if time is not None
             for mode in time.modes]
    worst = ringing_beyond_window(poles, start, stop)
    if worst is None:
        return
    period, periods = worst
    window = netlist.window
    chosen = f" (chosen by the tool: {window_rule})" if window_rule else ""
    raise NetlistError(
        f"the network rings with a period of {period:.3g} s for about {periods:.3g} periods "
        f"within the window of {stop - start:.3g} s{chosen}; the tool follows at most "
        f"{MOST_PERIODS:.0e} periods of one ringing, so these two time scales are too far "
        "apart to solve here",
        window.location if window is not None else None,
        hint="check the values that set the ringing and the slow decay (a stiffness, a "
        "constant or a damping many decades off?), or "
        + ("give a `window`" if window_rule else "shorten the window")
        + f" of a few periods, e.g. `window {10 * period:.3g} s`",
    ).with_text(netlist.text)
