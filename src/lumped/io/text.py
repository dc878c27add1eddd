"""Plain-text report: engineering notation, 80 columns, colour only on a terminal."""

from __future__ import annotations

import math

import sympy

from lumped import model as m
from lumped.algebra.exact import IRRATIONAL_DIGITS
from lumped.figures import in_g
from lumped.io.notation import (
    WIDTH,
    engineering,
    pretty_unit,
    short_formula,
    short_number,
    wrap,
)
from lumped.io.summary import network_summary

_MAX_TERMS = 8

def _terms(expr: sympy.Expr) -> tuple[str, int]:
    terms = sympy.Add.make_args(expr)
    if len(terms) <= _MAX_TERMS:
        return short_formula(expr), 0
    shown = sympy.Add(*terms[:_MAX_TERMS], evaluate=False)
    return short_formula(shown) + " + ...", len(terms) - _MAX_TERMS


_MAX_SHOWN_DEGREE = 6


def _transform_text(response) -> str:
    """X(s) for reading; a large network's ratio is summarised by its degrees."""
    parts = []
    for ratio, delay in response.terms:
        numerator, denominator = sympy.fraction(ratio)
        symbols = sorted(ratio.free_symbols, key=str)
        s = next((x for x in symbols if x.name == "s"), None)
        degree = sympy.Poly(denominator, s).degree() if s is not None else 0
        if degree > _MAX_SHOWN_DEGREE:
            text = (f"N(s)/D(s) with D of degree {degree}, N of degree "
                    f"{sympy.Poly(numerator, s).degree()}")
        else:
            text = short_formula(ratio)
        if delay != 0:
            text = f"({text})*exp(-{short_formula(delay)}*s)"
        parts.append(text)
    return " + ".join(parts).replace("+ -", "- ") if parts else "0"


def _scaled(coefficient: float, factors: list[str]) -> str | None:
    """``coefficient*f1*f2...`` for reading: None when the coefficient is exactly zero,
    and no ``1*`` in front of a product."""
    if coefficient == 0:
        return None
    number = short_number(coefficient)
    if not factors:
        return number
    body = "*".join(factors)
    if number in ("1", "-1"):
        return ("-" if number == "-1" else "") + body
    return f"{number}*{body}"


def _modes_text(time) -> tuple[str, int]:
    """x(t) for reading, straight from the modes (fast for large networks).

    Exactly zero coefficients and real parts leave no trace (no ``0*sin``, no
    ``exp(0*t)``); the inversion stage makes a real part exactly zero only
    where the pole is certified to lie on the imaginary axis.
    """
    terms = []
    for mode in time.modes:
        delay = float(mode.delay)
        tau = "t" if delay == 0 else f"(t - {short_number(delay)})"
        pole = mode.pole
        growth = [f"exp({short_number(pole.real)}*{tau})"] if pole.real != 0 else []
        for k, c in enumerate(mode.coefficients):
            power = [] if k == 0 else ([tau] if k == 1 else [f"{tau}**{k}/{math.factorial(k)}"])
            if mode.is_pair:
                w = short_number(pole.imag)
                parts = [p for p in (_scaled(2 * c.real, [f"cos({w}*{tau})"]),
                                     _scaled(-2 * c.imag, [f"sin({w}*{tau})"])) if p]
                if not parts:
                    continue
                inner = " + ".join(parts).replace("+ -", "- ")
                body = [f"({inner})" if len(parts) > 1 else inner]
                text = "*".join(body + growth + power)
            else:
                text = _scaled(c.real, growth + power)
                if text is None:
                    continue
            if delay != 0:
                text += f"*u(t - {short_number(delay)})"
            terms.append(text)
    for impulse in time.impulses:
        name = "δ" if impulse.order == 0 else "δ" + "'" * impulse.order
        at = "t" if impulse.delay == 0 else f"t - {short_number(float(impulse.delay))}"
        text = _scaled(float(impulse.weight), [f"{name}({at})"])
        if text is not None:
            terms.append(text)
    shown = terms[:_MAX_TERMS]
    text = " + ".join(shown).replace("+ -", "- ") if shown else "0"
    return text, len(terms) - len(shown)


def _cases(expr: sympy.Expr) -> list[tuple[sympy.Expr, sympy.Expr]]:
    """Split ``rest + Piecewise(...)`` into one closed form per case, with its condition."""
    terms = sympy.Add.make_args(expr)
    pieces = [t for t in terms if isinstance(t, sympy.Piecewise)]
    if len(pieces) != 1:
        return []
    rest = sympy.Add(*[t for t in terms if t is not pieces[0]])
    return [(branch + rest, condition) for branch, condition in pieces[0].args]


def _rule(title: str, colour) -> str:
    text = f"── {title} "
    return colour(text + "─" * max(3, WIDTH - len(text)), "bold")


def figure_rows(result) -> list[tuple[str, str]]:
    """The review figures of one quantity as (name, text) rows, reasons where one is missing.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("current source I at a step 1 mA\\nresistor R from a to ground 1 kohm\\n")
    >>> figure_rows(analyse(net).results[0])[:2]
    [('value at 0+', '1.00 V'), ('final value', '1.00 V')]
    """
    figs = result.figures
    unit = result.unit
    rows: list[tuple[str, str]] = []
    # Rounding noise of the float evaluation is shown as zero.
    scale = max((abs(e.value) for e in (figs.peak, figs.minimum) if e is not None), default=0.0)

    def clean(value: float | None) -> float | None:
        if value is not None and abs(value) < 1e-9 * scale:
            return 0.0
        return value

    def add(name: str, text: str | None, key: str | None = None) -> None:
        if text is not None:
            rows.append((name, text))
        elif key and key in figs.reasons:
            rows.append((name, figs.reasons[key]))

    def at(extremum) -> str | None:
        if extremum is None:
            return None
        return f"{engineering(clean(extremum.value), unit)} at {engineering(extremum.time, 's')}"

    add("value at 0+", engineering(clean(figs.initial), unit) if figs.initial is not None
        else None, "initial")
    add("final value", engineering(clean(figs.final), unit) if figs.final is not None else None,
        "final")
    add("peak", at(figs.peak), "peak")
    add("minimum", at(figs.minimum), "minimum")
    if "extremes" in figs.reasons:
        add("extremes", figs.reasons["extremes"])
    if figs.peak_g is not None or figs.minimum_g is not None:
        add("peak in g", f"{figs.peak_g:.3g} g / minimum {figs.minimum_g:.3g} g"
            if figs.peak_g is not None and figs.minimum_g is not None else None)
    if figs.max_travel is not None:
        add("maximum travel", engineering(figs.max_travel, unit))
    def percent(fraction: float | None) -> str | None:
        if fraction is None:
            return None
        # Excursions below a part per billion of the change are rounding, not overshoot.
        return f"{fraction * 100:.3g} %" if abs(fraction) >= 1e-9 else "0 %"

    # Which of these apply is decided once, by the figures stage; a missing one
    # prints the reason it carries.
    add("overshoot", percent(figs.overshoot), "overshoot")
    add("undershoot", percent(figs.undershoot), "undershoot")
    add("rise time 10-90 %", engineering(figs.rise_time, "s") if figs.rise_time is not None
        else None, "rise_time")
    add(f"settling ±{figs.band * 100:g} %", engineering(figs.settling_time, "s")
        if figs.settling_time is not None else None, "settling_time")
    add("time constant", engineering(figs.time_constant, "s") if figs.time_constant else None)
    if figs.natural_frequency:
        zeta = f", damping ratio {figs.damping_ratio:.3g}" if figs.damping_ratio is not None else ""
        add("dominant pair", f"fn {engineering(figs.natural_frequency / (2 * math.pi), 'Hz')}"
            f"{zeta}")
    if figs.ringing_frequency_hz:
        add("ringing", engineering(figs.ringing_frequency_hz, "Hz"))
    for impulse in figs.impulses:
        add("impulse", f"order {impulse.order}, weight {complex(impulse.weight).real:.4g} at "
            f"{engineering(float(impulse.delay), 's')}")
    return rows


def _merge_reasons(rows: list[tuple[str, str]]) -> list[tuple[str, str]]:
    """Rows that give the same explanation are said once, under all their names."""
    merged: list[tuple[str, str]] = []
    for name, value in rows:
        if merged and merged[-1][1] == value and not value[:1].isdigit():
            merged[-1] = (f"{merged[-1][0]}, {name}", value)
        else:
            merged.append((name, value))
    result = []
    for name, value in merged:
        if len(name) > 20:
            result.append((name, ""))
            result.append(("", value))
        else:
            result.append((name, value))
    return result


def _in_unit(value: float, unit: str) -> str:
    """A requirement's number: fractions as per cent, everything else with its unit."""
    return f"{value * 100:.3g} %" if unit == "%" else engineering(value, unit)


def _bound_text(verdict) -> str:
    requirement = verdict.requirement
    unit = requirement.unit

    def show(value):
        return None if value is None else _in_unit(value, unit)

    def bound(value, exact):
        if value is not None:
            return value
        if exact is not None and not exact.free_symbols:
            return float(exact)
        return None

    lower_value = bound(verdict.lower, requirement.lower)
    upper_value = bound(verdict.upper, requirement.upper)
    lower, upper = show(lower_value), show(upper_value)
    if lower is None and requirement.lower is not None:
        lower = short_formula(requirement.lower)
    if upper is None and requirement.upper is not None:
        upper = short_formula(requirement.upper)
    if requirement.quantity.kind is m.QuantityKind.ACCELERATION:
        if lower_value is not None:
            lower = f"{lower} ({in_g(lower_value):.3g} g)"
        if upper_value is not None:
            upper = f"{upper} ({in_g(upper_value):.3g} g)"
    if lower and upper:
        return f"between {lower} and {upper}"
    if upper:
        return f"below {upper}"
    return f"above {lower}"


def requirement_text(verdict) -> tuple[str, str]:
    """What a requirement asks and what the response gives, as two sentences.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("current source I at a step 1 mA\\nresistor R from a to ground 1 kohm\\n"
    ...             "require final value of voltage at a below 2 V\\n")
    >>> requirement_text(analyse(net).verdicts[0])
    ('final value of voltage at a below 2.00 V', 'is 1.00 V, margin 1.00 V')
    """
    requirement = verdict.requirement
    unit = requirement.unit
    what = f"{requirement.figure.value} of {requirement.quantity.label} {_bound_text(verdict)}"
    if verdict.value is None:
        return what, verdict.reason
    value = _in_unit(verdict.value, unit)
    if requirement.quantity.kind is m.QuantityKind.ACCELERATION:
        value += f" ({in_g(verdict.value):.3g} g)"
    margin = ""
    if verdict.margin is not None:
        margin = f", margin {_in_unit(verdict.margin, unit)}"
    return what, f"is {value}{margin}"


def verdict_line(verdict, colour=lambda text, _style: text) -> str:
    """One line per requirement: PASS/FAIL, what, value, margin.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("current source I at a step 1 mA\\nresistor R from a to ground 1 kohm\\n"
    ...             "require final value of voltage at a below 2 V\\n")
    >>> print(verdict_line(analyse(net).verdicts[0]))
      PASS  final value of voltage at a below 2.00 V (line 3)
            is 1.00 V, margin 1.00 V
    """
    requirement = verdict.requirement
    mark = {True: colour("PASS", "green"), False: colour("FAIL", "red"),
            None: colour("????", "yellow")}[verdict.passed]
    what, got = requirement_text(verdict)
    line = requirement.location.line if requirement.location else "?"
    return f"  {mark}  {what} (line {line})\n        {got}"


def _rounded(analysis) -> bool:
    """True when an irrational number (pi, sqrt(2)) was taken as a rational somewhere."""
    return bool(getattr(analysis.netlist, "rounded", ())) or any(
        result.time is not None and getattr(result.time, "rounded", False)
        for result in analysis.results)


def render(analysis, *, color: bool = False, quiet: bool = False) -> str:
    """The plain-text report of an analysis (80 columns; ANSI colour when asked).

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("current source I at a step 1 mA\\nresistor R from a to ground 1 kohm\\n"
    ...             "capacitor C from a to ground 1 uF\\nwatch voltage at a\\nwindow 10 ms\\n")
    >>> "final value" in render(analyse(net))
    True
    """
    styles = {"bold": "1", "green": "32;1", "red": "31;1", "yellow": "33;1", "dim": "2"}

    def colour(text: str, style: str) -> str:
        return f"\x1b[{styles[style]}m{text}\x1b[0m" if color else text

    out: list[str] = []
    if not quiet:
        out.append(network_summary(analysis.netlist))
        rule = getattr(analysis, "window_rule", "")
        chosen = f" (chosen by the tool: {rule})" if analysis.window_chosen and rule else ""
        out.extend(wrap("", f"Window {engineering(analysis.start, 's')} to "
                         f"{engineering(analysis.stop, 's')}{chosen}"))
        tolerances = {r.figures.extreme_tolerance for r in analysis.results
                      if r.figures is not None and r.figures.extreme_tolerance is not None}
        if tolerances:
            out.extend(wrap("", "Peak and minimum: each at the first time reached, within "
                             f"{max(tolerances):.0e} of the largest |x| of the quantity"))
        for note in analysis.notes:
            out.extend(wrap("  note: ", note))
        if _rounded(analysis):
            out.extend(wrap("  note: ", f"irrational values taken to {IRRATIONAL_DIGITS} "
                                         "significant digits"))
        for result in analysis.results:
            out.append("")
            unit = pretty_unit(result.unit)
            out.append(_rule(f"{result.quantity.label} [{unit}]", colour))
            out.extend(wrap("  X(s) = ", _transform_text(result.response)))
            if result.time is None:
                out.extend(wrap("  x(t): ", result.problem or "not available"))
                continue
            cases = _cases(result.time.expression) if result.time.parameters else []
            if not result.time.parameters:
                text, more = _modes_text(result.time)
                out.extend(wrap("  x(t) = ", text + (f"  (+{more} more terms; the full form "
                                                      "is in --json / --latex)" if more else "")))
            elif cases:
                for branch, condition in cases:
                    out.extend(wrap("  x(t) = ", short_formula(branch)))
                    if isinstance(condition, sympy.Equality):
                        shown = f"{short_formula(condition.lhs)} = {short_formula(condition.rhs)}"
                    else:
                        shown = short_formula(condition)
                    out.extend(wrap("         when ", shown))
            else:
                text, more = _terms(result.time.expression)
                out.extend(wrap("  x(t) = ", text + (f"  (+{more} more terms; the full form "
                                                      "is in --json / --latex)" if more else "")))
            out.append("         for t ≥ 0")
            if result.figures is None:
                out.extend(wrap("  figures: ", result.problem or "not available"))
                continue
            for name, value in _merge_reasons(figure_rows(result)):
                out.extend(wrap(f"    {name:<20} ", value))
        for drop in analysis.drops:
            out.append("")
            out.append(_rule(f"drop of {drop.mass} from {engineering(drop.height, 'm')}", colour))
            rows = [("contact velocity", engineering(drop.contact_velocity, "m/s"))]
            if len(drop.falling) > 1:
                rows.append(("falling together", ", ".join(drop.falling) + " (all arrive at "
                             "the contact velocity; internal springs start as written)"))
            if drop.max_compression is not None:
                rows.append(("maximum compression", f"{engineering(drop.max_compression, 'm')} "
                             f"at {engineering(drop.compression_time, 's')}"))
            if drop.peak_deceleration is not None:
                rows.append(("peak deceleration", f"{in_g(drop.peak_deceleration):.3g} g "
                             f"({engineering(drop.peak_deceleration, 'm/s^2')}) at "
                             f"{engineering(drop.deceleration_time, 's')}"))
            if drop.separation_time is not None:
                rows.append(("leaves the surface", f"at {engineering(drop.separation_time, 's')},"
                             f" rebounding at {engineering(drop.rebound_velocity, 'm/s')}"))
            else:
                rows.append(("leaves the surface", "not within the window"))
            for name, value in rows:
                out.extend(wrap(f"    {name:<20} ", value))
        dissipators = sum(1 for e in analysis.netlist.elements
                          if e.kind.role is m.Role.DISSIPATOR)
        if dissipators and not analysis.dissipation:
            out.append("")
            out.append(_rule("energy dissipated over the window", colour))
            out.extend(wrap("    ", f"not computed: {dissipators} resistors and dampers (the "
                             "report does this for 12 or fewer, or for dissipators with values)"))
        if analysis.dissipation:
            out.append("")
            out.append(_rule("energy dissipated over the window", colour))
            for item in analysis.dissipation:
                out.append(f"    {item.element:<20} {engineering(item.energy, 'J')}")
    if analysis.verdicts:
        out.append("")
        out.append(_rule("requirements", colour))
        for verdict in analysis.verdicts:
            head, detail = verdict_line(verdict, colour).split("\n", 1)
            out.extend(wrap("", head))
            out.extend(wrap("        ", detail.strip()))
    if not quiet:
        out.append("")
        out.append(_rule("cautions", colour))
        for caution in analysis.cautions:
            out.extend(wrap("  ! ", caution))
    out.append("")
    passed = sum(1 for v in analysis.verdicts if v.passed)
    total = len(analysis.verdicts)
    if total:
        summary = f"{passed} of {total} requirements pass"
        out.append(colour(summary, "green" if passed == total else "red"))
    else:
        out.append("no requirements stated")
    return "\n".join(line.rstrip() for line in out)
