"""Short texts about a network: its summary (for ``--check``) and transfer functions."""

from __future__ import annotations

import math

import sympy

from lumped import model as m
from lumped.io.notation import WIDTH, engineering, exact_value, short_formula, wrap


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
    >>> from lumped.analysis import analyse
    >>> net = loads("voltage source V at a step 1 V\\nresistor R from a to b 1 kohm\\n"
    ...             "capacitor C from b to ground 1 uF\\nwatch voltage at b\\n")
    >>> text = transfer_text(analyse(net).solution.transfer_function("V", net.watches[0]))
    >>> "stable" in text
    True
    """
    lines = [f"── from {tf.source} to {tf.quantity.label} " + "─" * max(
        3, WIDTH - 12 - len(tf.source) - len(tf.quantity.label))]
    lines.extend(wrap("  H(s) = ", short_formula(tf.expr)))
    lines.extend(wrap("  poles  ", _roots_text(tf.poles, tf.denominator)))
    lines.extend(wrap("  zeros  ", _roots_text(tf.zeros, tf.numerator)))
    if tf.dc_gain is not None:
        lines.extend(wrap("  DC gain  ", short_formula(tf.dc_gain)))
    else:
        lines.extend(wrap("  DC gain  ", tf.dc_gain_note or "none"))
    for factor in tf.second_order_factors:
        wn, zeta, q = factor.natural_frequency, factor.damping_ratio, factor.quality_factor
        if wn.free_symbols or zeta.free_symbols:
            text = (f"wn = {short_formula(wn)} rad/s, zeta = {short_formula(zeta)}, "
                    f"Q = {short_formula(q)}")
        else:
            q_text = "infinite" if q == sympy.oo else f"{float(q):.3g}"
            text = (f"fn {engineering(float(wn) / (2 * math.pi), 'Hz')}, damping ratio "
                    f"{float(zeta):.3g}, Q {q_text}")
        lines.extend(wrap("  pair   ", text))
    verdict = tf.stability
    if tf.offending_poles:
        verdict += " (poles at " + ", ".join(_complex_text(p) for p in tf.offending_poles) + ")"
    lines.extend(wrap("  stability  ", verdict))
    return "\n".join(lines)
