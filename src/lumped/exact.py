"""Where irrational numbers become exact rationals, and the limits values must keep to.

The algebra of the tool works over the rationals (and free parameters): the
network matrix is solved over Z[s] and X(s) is inverted from rational
polynomials.  Irrational numbers (``pi``, ``sqrt(2)``, ``cos(1)``) written in a
netlist or handed to the inversion are replaced by :func:`rationalise`, and by
nothing else, with the rational of :data:`IRRATIONAL_DIGITS` significant digits;
parts that depend on a free parameter keep their symbols.  It is called where
the algebra meets numbers: the solve of the network matrix and the inversion.

The documented ranges of values (``grammar/language.md``) and the ringing limit
(:func:`refuse_unresolvable`) live here too.
"""

from __future__ import annotations

import sympy

# Significant digits kept of an irrational number: far beyond double precision
# (about 16 digits), so no figure the tool prints can tell the difference.
IRRATIONAL_DIGITS = 40

# The range of magnitudes a value may have in SI units (zero aside, where zero is allowed).
SMALLEST_VALUE = sympy.Rational(1, 10**30)
LARGEST_VALUE = sympy.Integer(10) ** 30
# The longest window, in seconds (about 32 years).
LONGEST_WINDOW = sympy.Integer(10) ** 9
# The settling band, as a fraction of the final change: up to half of it, and no
# narrower than double-precision evaluation of the response can resolve with a margin.
WIDEST_BAND = sympy.Rational(1, 2)
NARROWEST_BAND = sympy.Rational(1, 10**8)


def rationalise(expr: sympy.Expr, digits: int = IRRATIONAL_DIGITS) -> sympy.Expr:
    """Replace irrational real numbers in ``expr`` by rationals of ``digits`` significant digits.

    Each irrational atom (``pi``, ``sqrt(2)``, ``cos(sin(7)/2)``) is replaced by
    its rational; arithmetic on atoms is then redone exactly.  Symbols and the
    functions applied to them stay as they are; so does any number that is not
    real (a complex constant is left for the caller to refuse).

    Examples
    --------
    >>> x = sympy.Symbol("x")
    >>> rationalise(sympy.pi * x, 5)
    3927*x/1250
    >>> rationalise(sympy.sqrt(x) + sympy.sqrt(2), 3)
    sqrt(x) + 141/100
    """

    def walk(node: sympy.Basic) -> sympy.Basic:
        if node.is_Rational or node.is_Symbol or not isinstance(node, sympy.Expr):
            return node
        arithmetic = node.is_Add or node.is_Mul or (node.is_Pow and node.exp.is_Integer)
        if node.is_number and not arithmetic:
            # An irrational atom (pi, sqrt(2), cos(1)): the same rational wherever it
            # occurs, and sums and products of atoms are then formed exactly, so
            # relations among coefficients survive (4*pi**2 is 4*r**2 everywhere,
            # and (s + 1)(s**2 + 4*pi**2) still factors).
            if node.is_real is False:
                return node
            value = node.evalf(digits + 5)
            if not value.is_Float:  # not real after all (evalf left an I behind)
                return node
            return sympy.Rational(str(sympy.Float(value, digits)))
        if not node.args:
            return node
        args = [walk(arg) for arg in node.args]
        if all(new is old for new, old in zip(args, node.args, strict=True)):
            return node  # nothing irrational below: no rebuilding of large expressions
        return node.func(*args)

    if isinstance(expr, bool) or not isinstance(expr, (sympy.Basic, int, float)):
        raise TypeError("rationalise takes a sympy expression or a Python number")
    if isinstance(expr, int):
        expr = sympy.Integer(expr)
    elif isinstance(expr, float):
        expr = sympy.Float(expr)
    return walk(expr)


# The most periods of one ringing mode a window may hold while the mode lasts.
# Beyond this the review figures would have to follow each period, and past
# about 1e9 radians double precision no longer knows the phase at all.
MOST_PERIODS = 100_000
# A mode has died out once its envelope fell by e^-37 (below double resolution).
_DECAYED = 37.0


def ringing_beyond_window(poles, start: float, stop: float) -> tuple[float, float] | None:
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
    import math

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


def refuse_unresolvable(netlist, times, start: float, stop: float) -> None:
    """Refuse a network whose fastest ringing the window cannot follow (see MOST_PERIODS).

    Raises
    ------
    NetlistError
        Naming the ringing period and the window; at the ``window`` line when
        the netlist has one.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> try:
    ...     analyse(loads("capacitor C at a 1 pF\\ninductor L at a 1 pH, initially 1 A\\n"
    ...                   "resistor R at a 1 Gohm\\nwatch voltage at a\\nwindow 1 s\\n"))
    ... except Exception as error:
    ...     print(error.message.split(" within")[0])
    the network rings with a period of 6.28e-12 s for about 1.18e+10 periods
    """
    from .errors import NetlistError

    poles = [(mode.pole, float(mode.delay)) for time in times if time is not None
             for mode in time.modes]
    worst = ringing_beyond_window(poles, start, stop)
    if worst is None:
        return
    period, periods = worst
    window = getattr(netlist, "window", None)
    chosen = "" if window is not None else " (chosen from the slowest time constant)"
    raise NetlistError(
        f"the network rings with a period of {period:.3g} s for about {periods:.3g} periods "
        f"within the window of {stop - start:.3g} s{chosen}; the tool follows at most "
        f"{MOST_PERIODS:.0e} periods of one ringing, so these two time scales are too far "
        "apart to solve here",
        window.location if window is not None else None,
        hint="check the values that set the ringing and the slow decay (a stiffness, a "
        "constant or a damping many decades off?), or "
        + ("shorten the window" if window is not None else "give a `window`")
        + f" of a few periods, e.g. `window {10 * period:.3g} s`",
    ).with_text(getattr(netlist, "text", ""))
