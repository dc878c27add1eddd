"""One test per validation rule: the message says what is wrong and points at the line."""

from __future__ import annotations

import pytest

from lumped.errors import ValidationError
from lumped.language import parse_text
from lumped.topology import validate


def failure(text: str) -> ValidationError:
    netlist = parse_text(text, "net.lumped")
    with pytest.raises(ValidationError) as caught:
        validate(netlist)
    return caught.value


def test_a_good_network_validates_with_node_domains():
    topology = validate(parse_text("resistor R from a to ground 1 ohm\nmass b 1 kg\n"))
    assert topology.domains["a"].value == "electrical"
    assert topology.domains["b"].value == "translational"


def test_no_elements():
    error = failure("# nothing here\n")
    assert error.message == "the netlist has no elements"
    assert error.location is None


def test_no_reference_node():
    error = failure("# two resistors in a ring\nresistor R1 from a to b 1 ohm\n"
                    "resistor R2 from b to a 1 ohm\n")
    assert "nothing is connected to a reference node" in error.message
    assert error.location.line == 2
    assert "ground" in error.hint


def test_part_of_the_network_not_connected_to_the_reference():
    error = failure("resistor R1 from a to ground 1 ohm\n\nresistor R2 from x to y 1 ohm\n"
                    "resistor R3 from y to x 1 ohm\n")
    assert "'x', 'y' are not connected to the reference" in error.message
    assert error.location.line == 3


def test_both_terminals_on_the_same_node():
    error = failure("resistor R1 from a to ground 1 ohm\ncapacitor C1 from a to a 1 uF\n")
    assert error.message == "both terminals of capacitor 'C1' are on node 'a'"
    assert error.location.line == 2


def test_duplicate_element_names():
    error = failure("resistor R1 from a to ground 1 ohm\nresistor R1 from a to ground 2 ohm\n")
    assert error.message == "the name 'R1' is used twice"
    assert error.location.line == 2
    assert "line 1" in error.hint


def test_a_parameter_and_an_element_with_the_same_name():
    error = failure("resistor R1 from a to ground 1 ohm\nlet R1 = 3 ohm\n")
    assert error.message == "'R1' names both a parameter and an element"
    assert error.location.line == 2


def test_watch_of_an_unknown_node():
    error = failure("resistor R1 from out to ground 1 ohm\nwatch voltage at outt\n")
    assert error.message == "unknown node 'outt'"
    assert error.location.line == 2
    assert error.hint == "did you mean 'out'?"


def test_watch_of_an_unknown_element():
    error = failure("resistor R1 from a to ground 1 ohm\nwatch current in R2\n")
    assert error.message == "unknown element 'R2'"
    assert error.location.line == 2


def test_requirement_on_an_unknown_node():
    error = failure("resistor R1 from a to ground 1 ohm\n"
                    "require peak of voltage at nowhere below 1 V\n")
    assert error.message == "unknown node 'nowhere'"
    assert error.location.line == 2


def test_requirement_on_an_unknown_element():
    error = failure("resistor R1 from a to ground 1 ohm\nwatch voltage at a\n"
                    "require peak of current in Lx below 1 A\n")
    assert error.message == "unknown element 'Lx'"
    assert error.location.line == 3


def test_loop_of_voltage_sources():
    error = failure("voltage source V1 from a to ground step 1 V\n"
                    "resistor R from a to ground 1 ohm\n"
                    "voltage source V2 from a to ground step 2 V\n")
    assert error.message == ("voltage source 'V2' closes a loop of ideal across sources "
                             "with 'V1'")
    assert error.location.line == 3


def test_loop_of_velocity_sources():
    error = failure("mass b 1 kg\nvelocity source U1 at b step 1 m/s\n"
                    "velocity source U2 from b to frame step 2 m/s\n")
    assert "velocity source 'U2' closes a loop of ideal across sources" in error.message
    assert error.location.line == 3


def test_cut_set_of_current_sources():
    error = failure("resistor R from a to ground 1 ohm\n"
                    "current source I1 from a to b step 1 A\n"
                    "current source I2 from b to ground step 1 A\n")
    assert error.message == ("node 'b' is held only by ideal through sources "
                             "(current source 'I1')")
    assert error.location.line == 2


def test_cut_set_of_force_sources():
    error = failure("mass m 1 kg\nspring K from m to frame 1 kN/m\n"
                    "force source F from m to free step 1 N\n")
    assert error.message == ("node 'free' is held only by ideal through sources "
                             "(force source 'F')")
    assert error.location.line == 3


def test_electrical_and_mechanical_joined_without_a_coupling():
    error = failure("resistor R from a to ground 1 ohm\nspring K from a to frame 1 kN/m\n")
    assert error.message == ("node 'a' joins electrical (resistor 'R') and translational "
                             "(spring 'K') terminals")
    assert error.location.line == 2
    assert "coupling" in error.hint


def test_electrical_element_to_the_mechanical_reference():
    error = failure("resistor R from a to frame 1 ohm\n")
    assert error.message == "resistor 'R' is electrical and cannot connect to 'frame'"
    assert error.location.line == 1


def test_mechanical_element_to_the_electrical_reference():
    error = failure("mass b 1 kg\nspring K from b to ground 1 kN/m\n")
    assert error.message == "spring 'K' is translational and cannot connect to 'ground'"
    assert error.location.line == 2


def test_quantity_of_the_wrong_domain_at_a_node():
    error = failure("resistor R from a to ground 1 ohm\nwatch velocity at a\n")
    assert error.message == "velocity does not apply to electrical 'a'"
    assert error.location.line == 2


def test_quantity_of_the_wrong_domain_in_an_element():
    error = failure("mass b 1 kg\ndamper B from b to frame 1 N*s/m\n"
                    "require peak of current in B below 1 A\n")
    assert error.message == "current does not apply to translational 'B'"
    assert error.location.line == 3


def test_watching_the_reference_node():
    error = failure("resistor R from a to ground 1 ohm\nwatch voltage at ground\n")
    assert "'ground' is the reference" in error.message
    assert error.location.line == 2


def test_through_quantity_across_an_element():
    error = failure("resistor R from a to ground 1 ohm\nwatch current across R\n")
    assert error.message == "a current flows in an element, not across it"
    assert error.location.line == 2


def test_rendered_error_shows_file_line_and_caret():
    text = failure("resistor R from a to ground 1 ohm\ncapacitor C from a to a 1 uF\n").render()
    first, shown, caret, hint = text.splitlines()
    assert first.startswith("net.lumped:2:1: ")
    assert shown.strip() == "capacitor C from a to a 1 uF"
    assert set(caret.strip()) == {"^"}
    assert hint.startswith("hint: ")


def test_the_topology_handed_on_is_immutable():
    import dataclasses

    import networkx as nx

    topology = validate(parse_text("mass box 8 kg\nmass gauge 1 kg\n"
                                   "spring Kpad from box to frame 80 kN/m\n"
                                   "spring Kiso from gauge to box 20 kN/m\ndrop box from 1 m\n"))
    assert topology.falling["box"] == ("box", "gauge")
    assert topology.netlist.drops[0].mass == "box"
    with pytest.raises(TypeError):
        topology.domains["x"] = topology.domains["box"]  # type: ignore[index]
    with pytest.raises(nx.NetworkXError):
        topology.graph.add_edge("box", "gauge")
    with pytest.raises(dataclasses.FrozenInstanceError):
        topology.netlist = None  # type: ignore[misc]


def test_a_port_only_through_sources_hold_is_refused_at_the_source():
    # The cut-set rule crosses couplings; the equations do not: a floating secondary fed
    # by a current source has no unique potential (common practice: a floating winding
    # needs a reference of its own).
    from lumped.errors import SolveError

    netlist = parse_text("voltage source V1 at p step 1 V\nresistor R1 from p to q 1 ohm\n"
                         "transformer T1 from (q, ground) to (x, y) ratio 2\n"
                         "current source I1 from ground to x step 1 A\n"
                         "resistor R2 from x to y 1 ohm\n", "net.lumped")
    with pytest.raises(SolveError) as caught:
        validate(netlist)
    error = caught.value
    assert error.message.startswith("nodes x, y reach the reference only through the through "
                                    "sources I1")
    assert error.location.line == 4
    assert error.render().splitlines()[1].strip() == "current source I1 from ground to x step 1 A"
