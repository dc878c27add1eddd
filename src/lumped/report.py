"""Plain-text report: engineering notation, 80 columns, colour only on a terminal."""

from __future__ import annotations

import math

import sympy

from . import model as m

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
