"""Good netlists parse to the right model: exact units, parameters, sources, statements."""

from __future__ import annotations

import dataclasses

import sympy
from sympy import Rational, Symbol, pi, sqrt

from lumped import model as m
from lumped.language import parse_text
from lumped.topology import validate

# Exact definitions (from memory, exact by definition): 1 lbf = 4.4482216152605 N,
# 1 in = 0.0254 m, 1 ft = 0.3048 m, standard gravity = 9.80665 m/s^2.
LBF = Rational(44482216152605, 10**13)
INCH = Rational(254, 10**4)
FOOT = Rational(3048, 10**4)
G0 = Rational(980665, 10**5)


def parse(text: str) -> m.Netlist:
    return parse_text(text, "t.lumped")


def only(netlist: m.Netlist, name: str) -> m.Element:
    element = netlist.element(name)
    assert element is not None
    return element


# ---- units -------------------------------------------------------------------------


def test_capacitor_in_microfarad_is_exact_rational():
    net = parse("capacitor C1 from a to ground 4.7 uF\n")
    assert only(net, "C1").value == Rational(47, 10**7)
    assert isinstance(only(net, "C1").value, sympy.Rational)


def test_spring_rate_in_kilonewton_per_metre():
    assert only(parse("spring K from a to frame 22 kN/m\n"), "K").value == 22000


def test_damper_in_kilonewton_second_per_metre():
    assert only(parse("damper C from a to frame 1.8 kN*s/m\n"), "C").value == 1800


def test_imperial_spring_rate_is_exact():
    value = only(parse("spring K from a to frame 3 lbf/in\n"), "K").value
    assert value == 3 * LBF / INCH


def test_micro_and_ohm_signs_are_accepted():
    net = parse("resistor R from a to ground 10 kΩ\ncapacitor C from a to ground 4.7 µF\n")
    assert only(net, "R").value == 10000
    assert only(net, "C").value == Rational(47, 10**7)


def test_inertia_in_kilogram_square_metre():
    assert only(parse("inertia J at s 0.02 kg*m^2\n"), "J").value == Rational(1, 50)


def test_rpm_converts_to_exact_radians_per_second():
    net = parse("inertia J at s 1 kg*m^2\nangular velocity source W at s step 1500 rpm\n")
    assert only(net, "W").waveform.terms[0].amplitude == 50 * pi


def test_phase_in_degrees_is_an_exact_multiple_of_pi():
    net = parse("resistor R from a to ground 1 ohm\n"
                "voltage source V at a sine 1 V at 50 Hz phase 30 deg\n")
    assert sympy.simplify(only(net, "V").waveform.terms[0].phase - pi / 6) == 0


def test_drop_height_in_feet_is_exact():
    net = parse("mass box 1 kg\nspring K from box to frame 1 kN/m\ndrop box from 2 ft\n")
    assert net.drops[0].height == 2 * FOOT


def test_percent_settling_band_is_a_fraction():
    net = parse("resistor R from a to ground 1 ohm\nsettling band 5 %\n")
    assert net.settling_band == Rational(1, 20)


def test_default_settling_band_is_two_percent():
    assert parse("resistor R from a to ground 1 ohm\n").settling_band == Rational(2, 100)


def test_g_means_standard_gravity_in_an_acceleration_bound():
    net = parse("mass box 1 kg\nspring K from box to frame 1 kN/m\n"
                "require peak magnitude of acceleration of box below 40 g\n")
    assert net.requirements[0].upper == 40 * G0


def test_g_means_grams_for_a_mass():
    assert only(parse("mass box 500 g\n"), "box").value == Rational(1, 2)


# ---- parameters and arithmetic ----------------------------------------------------------


def test_parameter_used_before_its_definition():
    net = parse("resistor R from a to ground 2 * Rb\nlet Rb = 1.1 kohm\n")
    assert only(net, "R").value == 2200


def test_nested_parentheses_and_power():
    net = parse("let x = ((2 + 3) * (4 - 1)) ^ 2\nresistor R from a to ground x * 1 ohm\n")
    assert only(net, "R").value == 225


def test_sqrt_of_a_squared_unit_and_pi():
    net = parse("let L = 10 uH\nlet C = 1 uF\nlet Z = sqrt(L / C)\n"
                "resistor R from a to ground Z * pi\n")
    expected = sqrt(Rational(1, 10**5) / Rational(1, 10**6)) * pi
    assert sympy.simplify(only(net, "R").value - expected) == 0


def test_power_binds_tighter_than_unary_minus_and_product():
    net = parse("let k = -2^2 * 3\nresistor R from a to ground (0 - k) * 1 ohm\n")
    assert only(net, "R").value == 12


def test_parameter_values_are_recorded_with_their_unit():
    net = parse("let Lloop = 12 nH\nresistor R from a to ground 1 ohm\n")
    parameter = net.parameters[0]
    assert parameter.name == "Lloop"
    assert parameter.value == Rational(12, 10**9)
    assert parameter.unit == "H"


def test_free_parameter_stays_a_symbol_in_the_element_value():
    net = parse("let Rd in ohm\nresistor R from a to ground Rd\n"
                "resistor R2 from a to ground 2 * Rd\n")
    symbol = Symbol("Rd", positive=True)
    assert only(net, "R").value == symbol
    assert isinstance(only(net, "R").value, sympy.Symbol)
    assert only(net, "R2").value == 2 * symbol
    assert [p.name for p in net.free_parameters] == ["Rd"]


def test_dimensionless_free_parameter_times_a_value():
    net = parse("let n\nresistor R from a to ground n * 3 ohm\n")
    assert only(net, "R").value == 3 * Symbol("n", positive=True)


# ---- initial conditions ---------------------------------------------------------------


def test_initial_conditions_in_each_storing_element():
    net = parse(
        "capacitor C from a to ground 1 uF, initially 5 V\n"
        "inductor L from a to ground 1 mH initially 50 mA\n"
        "mass body 2 kg, initially -1.2 m/s\n"
        "spring K from body to frame 1 kN/m, initially 10 N\n"
        "inertia J at s 1 kg*m^2, initially 3 rad/s\n"
        "torsion spring T from s to frame 5 N*m/rad, initially 2 N*m\n"
    )
    assert only(net, "C").initial == 5
    assert only(net, "L").initial == Rational(1, 20)
    assert only(net, "body").initial == Rational(-6, 5)
    assert only(net, "K").initial == 10
    assert only(net, "J").initial == 3
    assert only(net, "T").initial == 2


def test_element_without_initial_condition_has_none():
    assert only(parse("capacitor C from a to ground 1 uF\n"), "C").initial is None


# ---- waveforms -----------------------------------------------------------------------------

_SOURCE = "resistor R from a to ground 1 ohm\nvoltage source V from a to ground {}\n"


def terms(waveform_text: str) -> tuple[m.WaveformTerm, ...]:
    return only(parse(_SOURCE.format(waveform_text)), "V").waveform.terms


def test_constant_waveform():
    (term,) = terms("12 V")
    assert term.shape is m.Shape.CONSTANT
    assert term.amplitude == 12
    assert term.delay == 0


def test_step_with_delay():
    (term,) = terms("step 48 V after 1 us")
    assert term.shape is m.Shape.STEP
    assert (term.amplitude, term.delay) == (48, Rational(1, 10**6))


def test_ramp_amplitude_is_a_slope():
    (term,) = terms("ramp 2 V/ms")
    assert term.shape is m.Shape.RAMP
    assert term.amplitude == 2000


def test_impulse_amplitude_is_an_area():
    (term,) = terms("impulse 3 mV*s after 2 ms")
    assert term.shape is m.Shape.IMPULSE
    assert (term.amplitude, term.delay) == (Rational(3, 1000), Rational(2, 1000))


def test_pulse_has_a_duration():
    (term,) = terms("pulse 5 V for 10 us")
    assert term.shape is m.Shape.PULSE
    assert (term.amplitude, term.duration) == (5, Rational(1, 10**5))


def test_sine_with_frequency_phase_and_delay():
    (term,) = terms("sine 10 V at 50 Hz phase 90 deg after 5 ms")
    assert term.shape is m.Shape.SINE
    assert (term.amplitude, term.frequency, term.delay) == (10, 50, Rational(1, 200))
    assert sympy.simplify(term.phase - pi / 2) == 0


def test_exponential_has_a_time_constant():
    (term,) = terms("exponential 5 V tau 1 ms")
    assert term.shape is m.Shape.EXPONENTIAL
    assert (term.amplitude, term.time_constant) == (5, Rational(1, 1000))


def test_bump_is_a_half_sine_of_given_height_and_length():
    net = parse("mass body 1 kg\nspring K from body to road 1 kN/m\n"
                "displacement source D at road bump 40 mm for 0.12 s after 0.1 s\n")
    (term,) = only(net, "D").waveform.terms
    assert term.shape is m.Shape.HALF_SINE
    assert (term.amplitude, term.duration, term.delay) == (
        Rational(1, 25), Rational(3, 25), Rational(1, 10))


def test_plus_sums_terms_each_with_its_own_delay():
    first, second, third = terms("step 12 V plus step 2 V after 2 ms plus sine 1 V at 1 MHz")
    assert (first.shape, first.amplitude, first.delay) == (m.Shape.STEP, 12, 0)
    assert (second.shape, second.amplitude, second.delay) == (m.Shape.STEP, 2, Rational(1, 500))
    assert (third.shape, third.frequency) == (m.Shape.SINE, 10**6)


# ---- couplings -----------------------------------------------------------------------------


def test_rack_radius_becomes_ratio_one_over_radius():
    net = parse("inertia J at p 1 kg*m^2\nmass cart 1 kg\n"
                "rack Rk from p to cart radius 25 mm\n")
    coupling = net.coupling("Rk")
    assert coupling.kind is m.CouplingKind.RACK
    assert coupling.ratio == 40
    assert (coupling.input.positive, coupling.output.positive) == ("p", "cart")
    assert (coupling.input.negative, coupling.output.negative) == ("frame", "frame")


def test_gear_motor_and_lever_factors():
    net = parse(
        "resistor R from a to ground 1 ohm\n"
        "motor M from a to s constant 0.06 V*s/rad\n"
        "inertia J at s 1 kg*m^2\ninertia D at d 1 kg*m^2\n"
        "gear G from s to d ratio 12\n"
        "mass x 1 kg\nmass y 1 kg\nlever Lv from x to y ratio 3\n"
    )
    assert net.coupling("M").ratio == Rational(3, 50)
    assert net.coupling("M").input.negative == "ground"
    assert net.coupling("M").output.negative == "frame"
    assert net.coupling("G").ratio == 12
    assert net.coupling("Lv").ratio == 3


def test_transformer_with_floating_windings():
    net = parse("resistor R1 from p to ground 1 ohm\nresistor R2 from s1 to s2 1 ohm\n"
                "resistor R3 from s2 to ground 1 ohm\n"
                "transformer T from (p, ground) to (s1, s2) ratio 2\n")
    coupling = net.coupling("T")
    assert (coupling.output.positive, coupling.output.negative) == ("s1", "s2")
    assert coupling.ratio == 2


# ---- watch, require, window, gravity, drop ------------------------------------------------


def test_watch_list_with_every_preposition():
    net = parse("resistor R from a to ground 1 ohm\n"
                "watch voltage at a, current in R, voltage across R, current through R\n")
    got = [(q.kind, q.preposition, q.target) for q in net.watches]
    assert got == [
        (m.QuantityKind.VOLTAGE, "at", "a"), (m.QuantityKind.CURRENT, "in", "R"),
        (m.QuantityKind.VOLTAGE, "across", "R"), (m.QuantityKind.CURRENT, "through", "R"),
    ]


def test_two_word_quantities():
    net = parse("inertia drum 1 kg*m^2\nrotary damper B from drum to frame 1 N*m*s/rad\n"
                "watch angular velocity of drum, angular acceleration of drum, angle of drum\n")
    assert [q.kind for q in net.watches] == [
        m.QuantityKind.ANGULAR_VELOCITY, m.QuantityKind.ANGULAR_ACCELERATION,
        m.QuantityKind.ANGLE,
    ]


def test_requirements_with_each_kind_of_bound():
    net = parse(
        "resistor R from a to ground 1 ohm\ncurrent source I at a step 1 A\n"
        "require peak of voltage at a below 75 V\n"
        "require minimum of voltage at a above -2 V\n"
        "require final value of current in R between 0.95 A and 1.05 A\n"
        "require overshoot of voltage at a below 10 %\n"
        "require rise time of voltage at a below 2 us\n"
        "require settling time within 5 % of voltage at a below 80 ms\n"
    )
    peak, low, final, over, rise, settle = net.requirements
    assert (peak.figure, peak.lower, peak.upper, peak.unit) == (m.Figure.PEAK, None, 75, "V")
    assert (low.figure, low.lower, low.upper) == (m.Figure.MINIMUM, -2, None)
    assert (final.lower, final.upper, final.unit) == (Rational(19, 20), Rational(21, 20), "A")
    assert (over.figure, over.upper, over.unit) == (m.Figure.OVERSHOOT, Rational(1, 10), "%")
    assert (rise.figure, rise.upper, rise.unit) == (m.Figure.RISE_TIME, Rational(1, 500000), "s")
    assert (settle.figure, settle.band, settle.upper) == (
        m.Figure.SETTLING_TIME, Rational(1, 20), Rational(2, 25))


def test_window_with_and_without_a_start():
    one = parse("resistor R from a to ground 1 ohm\nwindow 200 ns\n").window
    two = parse("resistor R from a to ground 1 ohm\nwindow 10 us to 2 ms\n").window
    assert (one.start, one.stop) == (0, Rational(2, 10**7))
    assert (two.start, two.stop) == (Rational(1, 10**5), Rational(1, 500))


def test_gravity_forms():
    base = "mass b 1 kg\nspring K from b to frame 1 kN/m\n"
    plain = parse(base + "gravity\n").gravity
    given = parse(base + "gravity 9.81 m/s^2 from equilibrium\n").gravity
    unloaded = parse(base + "gravity from unloaded\n").gravity
    assert (plain.acceleration, plain.start) == (G0, m.GravityStart.UNLOADED)
    assert (given.acceleration, given.start) == (Rational(981, 100), m.GravityStart.EQUILIBRIUM)
    assert unloaded.start is m.GravityStart.UNLOADED
    assert parse(base).gravity is None


def test_drop_names_the_mass_and_height():
    net = parse("mass crate 12 kg\nspring K from crate to frame 90 kN/m\ndrop crate from 0.6 m\n")
    assert (net.drops[0].mass, net.drops[0].height) == ("crate", Rational(3, 5))


# ---- placement and orientation ---------------------------------------------------------------


def test_at_node_runs_passive_elements_and_across_sources_into_the_reference():
    net = parse("resistor R at a 1 ohm\nvoltage source V at a step 1 V\n"
                "velocity source U at b step 1 m/s\ndamper B at b 1 N*s/m\n")
    assert (only(net, "R").positive, only(net, "R").negative) == ("a", "ground")
    assert (only(net, "V").positive, only(net, "V").negative) == ("a", "ground")
    assert (only(net, "U").positive, only(net, "U").negative) == ("b", "frame")


def test_at_node_runs_through_sources_from_the_reference_into_the_node():
    net = parse("resistor R at out 1 ohm\ncurrent source I at out step 1 A\n"
                "mass body 1 kg\nforce source F at body step 1 kN\n"
                "inertia J at s 1 kg*m^2\ntorque source T at s step 2 N*m\n")
    assert (only(net, "I").positive, only(net, "I").negative) == ("ground", "out")
    assert (only(net, "F").positive, only(net, "F").negative) == ("frame", "body")
    assert (only(net, "T").positive, only(net, "T").negative) == ("frame", "s")


def test_from_to_keeps_the_written_order():
    e = only(parse("resistor R from x to y 1 ohm\nresistor G from y to ground 1 ohm\n"), "R")
    assert (e.positive, e.negative) == ("x", "y")


def test_mass_without_at_sits_on_a_node_of_its_own_name():
    body = only(parse("mass body 350 kg\n"), "body")
    assert (body.positive, body.negative, body.value) == ("body", "frame", 350)


def test_mass_at_a_node_and_from_node_to_frame():
    net = parse("mass m1 at hub 2 kg\nmass m2 from rim to frame 3 kg\n")
    assert (only(net, "m1").positive, only(net, "m1").negative) == ("hub", "frame")
    assert (only(net, "m2").positive, only(net, "m2").negative) == ("rim", "frame")


# ---- text conventions --------------------------------------------------------------------------


def test_crlf_line_endings_are_accepted_and_lines_counted():
    net = parse_text(b"resistor R from a to ground 1 ohm\r\ncapacitor C from a to ground 1 uF\r\n")
    assert [e.name for e in net.elements] == ["R", "C"]
    assert only(net, "C").location.line == 2


def test_byte_order_mark_is_skipped():
    net = parse_text(b"\xef\xbb\xbfresistor R from a to ground 1 ohm\n")
    assert only(net, "R").location.column == 1


def test_tabs_comments_and_blank_lines():
    net = parse("# header\n\n\tresistor\tR  from a\tto ground 1 ohm   # trailing comment\n\n")
    element = only(net, "R")
    assert element.value == 1
    assert element.location.line == 3


def test_last_line_without_newline():
    assert only(parse("resistor R from a to ground 1 ohm"), "R").value == 1


def test_nodes_called_in_and_out():
    net = parse("resistor R from in to out 1 ohm\nresistor R2 from out to ground 1 ohm\n"
                "watch voltage at in, voltage at out\n")
    validate(net)
    assert (only(net, "R").positive, only(net, "R").negative) == ("in", "out")
    assert [q.target for q in net.watches] == ["in", "out"]


def test_names_are_case_sensitive():
    net = parse("resistor r from a to ground 1 ohm\nresistor R from A to ground 2 ohm\n")
    assert (only(net, "r").value, only(net, "R").value) == (1, 2)


def test_element_location_points_at_its_line():
    net = parse("# one\n\nresistor R from a to ground 1 ohm\n")
    assert (only(net, "R").location.line, only(net, "R").location.column) == (3, 1)


# ---- the model handed on is immutable ---------------------------------------------------


def _records_and_values(item) -> list:
    """Every model record reachable from ``item``, and every value it holds."""
    stack, found = [item], []
    while stack:
        current = stack.pop()
        found.append(current)
        if dataclasses.is_dataclass(current):
            stack.extend(getattr(current, f.name) for f in dataclasses.fields(current))
        elif isinstance(current, tuple):
            stack.extend(current)
    return found


def test_model_records_are_frozen_and_hold_no_mutable_containers():
    text = ("let R = 2 kohm\nlet k in N/m\nresistor R1 from a to b R\n"
            "capacitor C1 from b to ground 1 uF, initially 2 V\n"
            "voltage source V1 from a to ground step 5 V plus sine 1 V at 50 Hz after 1 ms\n"
            "transformer T1 from (a, ground) to (c, ground) ratio sqrt(2)\n"
            "resistor RL from c to ground 1 kohm\n"
            "mass m1 at body 2 kg\nspring K from body to frame k\ngravity\ndrop m1 from 1 m\n"
            "watch voltage at b, current in R1\nwindow 10 ms\nsettling band 5 %\n"
            "require peak of voltage at b below 6 V\n")
    net = parse(text)
    items = _records_and_values(net)
    records = [x for x in items if dataclasses.is_dataclass(x)]
    assert {type(r).__name__ for r in records} >= {
        "Netlist", "Parameter", "Element", "Waveform", "WaveformTerm", "Coupling", "Port",
        "Quantity", "Requirement", "Window", "Gravity", "Drop", "Location"}
    for record in records:
        assert type(record).__dataclass_params__.frozen, type(record).__name__
        first = dataclasses.fields(record)[0].name
        try:
            setattr(record, first, None)
        except dataclasses.FrozenInstanceError:
            pass
        else:
            raise AssertionError(f"{type(record).__name__}.{first} could be reassigned")
    assert not [x for x in items if isinstance(x, list | dict | set | bytearray)]
    assert len(net.rounded) == 1  # sqrt(2), noted where it was written


def test_a_netlist_built_from_lists_holds_tuples():
    element = m.make_element("R1", "resistor", "a", "ground", 5)
    net = m.Netlist("ex", "", elements=[element], watches=[])
    assert net.elements == (element,) and net.watches == ()
    wave = m.Waveform([m.WaveformTerm(m.Shape.STEP, sympy.Integer(1))])
    assert isinstance(wave.terms, tuple)
