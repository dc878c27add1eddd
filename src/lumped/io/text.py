"""Plain-text report: engineering notation, 80 columns, colour only on a terminal."""

from __future__ import annotations

import math

import sympy

from lumped import model as m
from lumped.algebra.exact import IRRATIONAL_DIGITS
from lumped.figures import in_g

_PREFIXES = [
    (1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"),
    (1e-9, "n"), (1e-12, "p"), (1e-15, "f"),
]
# Units that take an SI prefix in the report; others are shown as plain numbers.
_PREFIXABLE = {"V", "A", "ohm", "F", "H", "s", "Hz", "m", "N", "W", "J", "N/m", "N*s/m", "N*m",
               "N*m/rad", "V/s", "A/s", "V*s", "A*s"}
_PRETTY_UNIT = {"ohm": "Ω", "m/s^2": "m/s²", "rad/s^2": "rad/s²", "kg*m^2": "kg·m²",
                "N*m": "N·m", "N*s/m": "N·s/m", "N*m/rad": "N·m/rad", "N*m*s/rad": "N·m·s/rad",
                "V*s/rad": "V·s/rad"}


def engineering(value: float | None, unit: str = "", digits: int = 3) -> str:
    """Format a number in engineering notation with an SI prefix.

    Examples
    --------
    >>> engineering(6.83e-5, "s")
    '68.3 µs'
    >>> engineering(0.0042, "m")
    '4.20 mm'
    >>> engineering(-1234.5, "V")
    '-1.23 kV'
    >>> engineering(5.56e-25, "m")
    '5.56e-25 m'
    """
    if value is None:
        return "—"
    if isinstance(value, float) and (math.isnan(value) or math.isinf(value)):
        return f"{value} {unit}".strip()
    shown_unit = _PRETTY_UNIT.get(unit, unit)
    if value == 0:
        return f"0 {shown_unit}".strip()
    magnitude = abs(value)
    if unit not in _PREFIXABLE:
        if 1e-3 <= magnitude < 1e5:
            return f"{_significant(value, digits)} {shown_unit}".strip()
        return f"{value:.{digits - 1}e} {shown_unit}".strip()
    smallest, largest = _PREFIXES[-1][0], _PREFIXES[0][0]
    if magnitude < smallest * 0.9995 or magnitude >= largest * 1000:
        # Beyond the prefixes: a plain power of ten reads better than 0.000000000556 fm.
        return f"{value:.{digits - 1}e} {shown_unit}".strip()
    if unit == "m" and 1e-3 <= magnitude < 1:
        factor, prefix = 1e-3, "m"
    else:
        factor, prefix = next(((f, p) for f, p in _PREFIXES if magnitude >= f * 0.9995),
                              _PREFIXES[-1])
    return f"{_significant(value / factor, digits)} {prefix}{shown_unit}".strip()


def _significant(value: float, digits: int) -> str:
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    decimals = max(0, digits - 1 - exponent)
    text = f"{value:.{decimals}f}"
    if abs(float(text)) >= 10 ** (exponent + 1) and decimals > 0:
        text = f"{value:.{decimals - 1}f}"
    return text


def exact_value(value: sympy.Expr | None, unit: str) -> str:
    """An exact model value for display: a number in engineering form, or the symbol."""
    if value is None:
        return "—"
    if value.free_symbols:
        return f"{value} {_PRETTY_UNIT.get(unit, unit)}".strip()
    return engineering(float(value), unit)


def _waveform_text(waveform: m.Waveform, unit: str) -> str:
    parts = []
    for term in waveform.terms:
        amp_unit = {m.Shape.RAMP: f"{unit}/s", m.Shape.IMPULSE: f"{unit}*s"}.get(term.shape, unit)
        text = f"{term.shape.value} {exact_value(term.amplitude, amp_unit)}"
        if term.shape is m.Shape.CONSTANT:
            text = exact_value(term.amplitude, unit)
        if term.duration is not None:
            text += f" for {exact_value(term.duration, 's')}"
        if term.frequency is not None:
            text += f" at {exact_value(term.frequency, 'Hz')}"
        if term.phase != 0:
            text += f" phase {float(term.phase) * 180 / math.pi:.4g}°"
        if term.time_constant is not None:
            text += f" tau {exact_value(term.time_constant, 's')}"
        if term.delay != 0:
            text += f" after {exact_value(term.delay, 's')}"
        parts.append(text)
    return " plus ".join(parts)


def network_summary(netlist: m.Netlist) -> str:
    """A short summary of the network: elements, nodes, sources, initial conditions.

    Examples
    --------
    >>> from lumped.api import loads
    >>> print(network_summary(loads("resistor R from a to ground 1 kohm\\n")).splitlines()[0])
    Network <text>: 1 element, 1 node besides the references
    """
    nodes = [n for n in netlist.nodes if n not in m.REFERENCE_NODES]
    count = len(netlist.elements) + len(netlist.couplings)
    lines = [
        f"Network {netlist.source}: {count} element{'s' if count != 1 else ''}, "
        f"{len(nodes)} node{'s' if len(nodes) != 1 else ''} besides the references",
    ]
    if netlist.parameters:
        shown = []
        for p in netlist.parameters:
            shown.append(f"{p.name} = {exact_value(p.value, p.unit)}" if p.value is not None
                         else f"{p.name} (free{', ' + p.unit if p.unit else ''})")
        lines.append("  parameters: " + ", ".join(shown))
    width = max((len(e.name) for e in (*netlist.elements, *netlist.couplings)), default=4)
    for element in netlist.elements:
        unit = element.kind.value.value_unit
        where = f"{element.positive} → {element.negative}"
        if element.kind.is_source:
            what = _waveform_text(element.waveform, unit)
        else:
            what = exact_value(element.value, unit)
        if element.initial is not None:
            what += f", initially {exact_value(element.initial, element.kind.value.initial_unit)}"
        lines.append(f"  {element.name:<{width}}  {element.kind.word:<23} {where:<22} {what}")
    for coupling in netlist.couplings:
        where = f"{coupling.input.positive} → {coupling.output.positive}"
        if coupling.kind is m.CouplingKind.RACK:
            what = f"radius {exact_value(1 / coupling.ratio, 'm')}"
        elif coupling.kind is m.CouplingKind.MOTOR:
            what = f"constant {exact_value(coupling.ratio, 'V*s/rad')}"
        else:
            what = f"ratio {exact_value(coupling.ratio, '')}"
        lines.append(f"  {coupling.name:<{width}}  {coupling.kind.word:<23} {where:<22} {what}")
    if netlist.gravity is not None:
        lines.append(f"  gravity {exact_value(netlist.gravity.acceleration, 'm/s^2')}, "
                     f"from {netlist.gravity.start.value}")
    for drop in netlist.drops:
        lines.append(f"  drop of {drop.mass} from {exact_value(drop.height, 'm')}")
    return "\n".join(lines)


# ---------------------------------------------------------------------------
# The full report

_WIDTH = 80
_MAX_TERMS = 8


class _ShortFloats(sympy.printing.str.StrPrinter):
    """Prints numbers to a few significant figures for reading; JSON keeps full precision."""

    def __init__(self, digits: int = 4) -> None:
        super().__init__()
        self.digits = digits

    def _print_Float(self, expr) -> str:  # noqa: N802 - sympy's printer protocol
        return f"{float(expr):.{self.digits}g}".replace("e+0", "e").replace("e-0", "e-").replace(
            "e+", "e")

    def _print_Rational(self, expr) -> str:  # noqa: N802
        if expr.q == 1:
            return self._print_Float(sympy.Float(expr.p)) if abs(expr.p) >= 10**5 else str(expr.p)
        return self._print_Float(sympy.Float(expr))

    _print_Integer = _print_Rational  # noqa: N815 - sympy's printer protocol


def numeric(expr: sympy.Expr, digits: int = 15) -> sympy.Expr:
    """Evaluate every constant part of an expression (roots, pi, fractions) to floats."""
    if expr.is_Integer:
        return expr
    if expr.is_Pow and expr.exp.is_Rational and not expr.base.is_number:
        return sympy.Pow(numeric(expr.base, digits), expr.exp)
    if expr.is_number:
        return sympy.Float(expr.evalf(digits), digits) if expr.is_real is not False \
            else expr.evalf(digits)
    if not expr.args:
        return expr
    return expr.func(*[numeric(arg, digits) for arg in expr.args])


def short_formula(expr: sympy.Expr, digits: int = 4) -> str:
    """A readable one-line form of an expression: numbers to ``digits`` figures.

    Examples
    --------
    >>> t = sympy.Symbol("t")
    >>> short_formula(sympy.Rational(1, 3) * sympy.exp(-t / 7))
    '0.3333*exp(-0.1429*t)'
    """
    return _ShortFloats(digits).doprint(numeric(expr))


def _wrap(prefix: str, text: str, width: int = _WIDTH) -> list[str]:
    import textwrap

    indent = " " * len(prefix)
    return textwrap.wrap(text, width=width, initial_indent=prefix, subsequent_indent=indent,
                         break_long_words=True, break_on_hyphens=False) or [prefix]


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


def _number(value: float) -> str:
    return _ShortFloats().doprint(sympy.Float(value))


def _scaled(coefficient: float, factors: list[str]) -> str | None:
    """``coefficient*f1*f2...`` for reading: None when the coefficient is exactly zero,
    and no ``1*`` in front of a product."""
    if coefficient == 0:
        return None
    number = _number(coefficient)
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
        tau = "t" if delay == 0 else f"(t - {_number(delay)})"
        pole = mode.pole
        growth = [f"exp({_number(pole.real)}*{tau})"] if pole.real != 0 else []
        for k, c in enumerate(mode.coefficients):
            power = [] if k == 0 else ([tau] if k == 1 else [f"{tau}**{k}/{math.factorial(k)}"])
            if mode.is_pair:
                w = _number(pole.imag)
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
                text += f"*u(t - {_number(delay)})"
            terms.append(text)
    for impulse in time.impulses:
        name = "δ" if impulse.order == 0 else "δ" + "'" * impulse.order
        at = "t" if impulse.delay == 0 else f"t - {_number(float(impulse.delay))}"
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
    return colour(text + "─" * max(3, _WIDTH - len(text)), "bold")


def _figure_rows(result) -> list[tuple[str, str]]:
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


def _bound_text(verdict) -> str:
    requirement = verdict.requirement
    unit = requirement.unit

    def show(value):
        if value is None:
            return None
        if unit == "%":
            return f"{value * 100:.3g} %"
        return engineering(value, unit)

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


def verdict_line(verdict, colour=lambda text, _style: text) -> str:
    """One line per requirement: PASS/FAIL, what, value, margin."""
    requirement = verdict.requirement
    unit = requirement.unit
    mark = {True: colour("PASS", "green"), False: colour("FAIL", "red"),
            None: colour("????", "yellow")}[verdict.passed]
    what = f"{requirement.figure.value} of {requirement.quantity.label} {_bound_text(verdict)}"
    if verdict.value is None:
        got = verdict.reason
    else:
        value = f"{verdict.value * 100:.3g} %" if unit == "%" else engineering(verdict.value, unit)
        if requirement.quantity.kind is m.QuantityKind.ACCELERATION:
            value += f" ({in_g(verdict.value):.3g} g)"
        margin = ""
        if verdict.margin is not None:
            margin_text = (f"{verdict.margin * 100:.3g} %" if unit == "%"
                           else engineering(verdict.margin, unit))
            margin = f", margin {margin_text}"
        got = f"is {value}{margin}"
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
        out.extend(_wrap("", f"Window {engineering(analysis.start, 's')} to "
                         f"{engineering(analysis.stop, 's')}{chosen}"))
        tolerances = {r.figures.extreme_tolerance for r in analysis.results
                      if r.figures is not None and r.figures.extreme_tolerance is not None}
        if tolerances:
            out.extend(_wrap("", "Peak and minimum: each at the first time reached, within "
                             f"{max(tolerances):.0e} of the largest |x| of the quantity"))
        for note in analysis.notes:
            out.extend(_wrap("  note: ", note))
        if _rounded(analysis):
            out.extend(_wrap("  note: ", f"irrational values taken to {IRRATIONAL_DIGITS} "
                                         "significant digits"))
        for result in analysis.results:
            out.append("")
            unit = _PRETTY_UNIT.get(result.unit, result.unit)
            out.append(_rule(f"{result.quantity.label} [{unit}]", colour))
            out.extend(_wrap("  X(s) = ", _transform_text(result.response)))
            if result.time is None:
                out.extend(_wrap("  x(t): ", result.problem or "not available"))
                continue
            cases = _cases(result.time.expression) if result.time.parameters else []
            if not result.time.parameters:
                text, more = _modes_text(result.time)
                out.extend(_wrap("  x(t) = ", text + (f"  (+{more} more terms; the full form "
                                                      "is in --json / --latex)" if more else "")))
            elif cases:
                for branch, condition in cases:
                    out.extend(_wrap("  x(t) = ", short_formula(branch)))
                    if isinstance(condition, sympy.Equality):
                        shown = f"{short_formula(condition.lhs)} = {short_formula(condition.rhs)}"
                    else:
                        shown = short_formula(condition)
                    out.extend(_wrap("         when ", shown))
            else:
                text, more = _terms(result.time.expression)
                out.extend(_wrap("  x(t) = ", text + (f"  (+{more} more terms; the full form "
                                                      "is in --json / --latex)" if more else "")))
            out.append("         for t ≥ 0")
            if result.figures is None:
                out.extend(_wrap("  figures: ", result.problem or "not available"))
                continue
            for name, value in _merge_reasons(_figure_rows(result)):
                out.extend(_wrap(f"    {name:<20} ", value))
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
                out.extend(_wrap(f"    {name:<20} ", value))
        dissipators = sum(1 for e in analysis.netlist.elements
                          if e.kind.role is m.Role.DISSIPATOR)
        if dissipators and not analysis.dissipation:
            out.append("")
            out.append(_rule("energy dissipated over the window", colour))
            out.extend(_wrap("    ", f"not computed: {dissipators} resistors and dampers (the "
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
            out.extend(_wrap("", head))
            out.extend(_wrap("        ", detail.strip()))
    if not quiet:
        out.append("")
        out.append(_rule("cautions", colour))
        for caution in analysis.cautions:
            out.extend(_wrap("  ! ", caution))
    out.append("")
    passed = sum(1 for v in analysis.verdicts if v.passed)
    total = len(analysis.verdicts)
    if total:
        summary = f"{passed} of {total} requirements pass"
        out.append(colour(summary, "green" if passed == total else "red"))
    else:
        out.append("no requirements stated")
    return "\n".join(line.rstrip() for line in out)


def _complex_text(value) -> str:
    if getattr(value, "free_symbols", None):
        return short_formula(value)  # a pole or zero in terms of the free parameters
    number = complex(sympy.N(value))
    if abs(number.imag) < 1e-12 * max(1.0, abs(number.real)):
        return f"{number.real:.4g}"
    sign = "+" if number.imag >= 0 else "-"
    return f"{number.real:.4g} {sign} j{abs(number.imag):.4g}"


def _roots_text(roots, polynomial) -> str:
    """Roots as a list; with free parameters past degree 2 they stay unnamed, so say so."""
    if roots:
        return ", ".join(_complex_text(r) for r in roots)
    degree = polynomial.degree()
    names = sorted(str(x) for x in polynomial.free_symbols - set(polynomial.gens))
    if degree > 0 and names:
        return (f"the {degree} roots of {short_formula(polynomial.as_expr())} = 0 "
                f"(no closed form above degree 2; they need values for {', '.join(names)})")
    return "none"


def transfer_text(tf) -> str:
    """A transfer function as text: H(s), poles, zeros, DC gain, 2nd-order factors, stability.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.network import assemble
    >>> net = loads("voltage source V at a step 1 V\\nresistor R from a to b 1 kohm\\n"
    ...             "capacitor C from b to ground 1 uF\\nwatch voltage at b\\n")
    >>> text = transfer_text(assemble(net).transfer_function("V", net.watches[0]))
    >>> "stable" in text
    True
    """
    lines = [f"── from {tf.source} to {tf.quantity.label} " + "─" * max(
        3, _WIDTH - 12 - len(tf.source) - len(tf.quantity.label))]
    lines.extend(_wrap("  H(s) = ", short_formula(tf.expr)))
    lines.extend(_wrap("  poles  ", _roots_text(tf.poles, tf.denominator)))
    lines.extend(_wrap("  zeros  ", _roots_text(tf.zeros, tf.numerator)))
    if tf.dc_gain is not None:
        lines.extend(_wrap("  DC gain  ", short_formula(tf.dc_gain)))
    else:
        lines.extend(_wrap("  DC gain  ", tf.dc_gain_note or "none"))
    for factor in tf.second_order_factors:
        wn, zeta, q = factor.natural_frequency, factor.damping_ratio, factor.quality_factor
        if wn.free_symbols or zeta.free_symbols:
            text = (f"wn = {short_formula(wn)} rad/s, zeta = {short_formula(zeta)}, "
                    f"Q = {short_formula(q)}")
        else:
            q_text = "infinite" if q == sympy.oo else f"{float(q):.3g}"
            text = (f"fn {engineering(float(wn) / (2 * math.pi), 'Hz')}, damping ratio "
                    f"{float(zeta):.3g}, Q {q_text}")
        lines.extend(_wrap("  pair   ", text))
    verdict = tf.stability
    if tf.offending_poles:
        verdict += " (poles at " + ", ".join(_complex_text(p) for p in tf.offending_poles) + ")"
    lines.extend(_wrap("  stability  ", verdict))
    return "\n".join(lines)
