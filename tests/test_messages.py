"""Messages for common slips: each names the place, says what is wrong and what to do.

The slip catalogue is the parser's own (``lumped.language.SLIP_EXAMPLES``): every example in
it must be given the label it is listed under.
"""

from __future__ import annotations

import contextlib
import io
from pathlib import Path

import pytest

from lumped.analysis import analyse
from lumped.api import loads
from lumped.cli import main
from lumped.errors import LumpedError, NetlistError, UnknownQuantityError
from lumped.language import SLIP_EXAMPLES

CATALOGUE = [
    (label, example) for label, examples in SLIP_EXAMPLES.items() for example in examples
]


@pytest.mark.parametrize("label, example", CATALOGUE,
                         ids=[repr(example.strip()) for _, example in CATALOGUE])
def test_every_catalogue_slip_gets_its_own_label(label, example):
    what, hint = label.split(": ", 1)
    with pytest.raises(NetlistError) as caught:
        loads(example, "slip.lumped")
    error = caught.value
    assert error.message.startswith(what), error.render()
    assert error.hint == hint
    assert error.location is not None and error.location.source == "slip.lumped"


def _run(folder: Path, content: str | bytes, *args: str) -> tuple[int, str]:
    source = folder / "f.lumped"
    if isinstance(content, bytes):
        source.write_bytes(content)
    else:
        source.write_text(content, encoding="utf-8")
    err = io.StringIO()
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(err):
        status = main([str(source), *args])
    return status, err.getvalue()


@pytest.mark.parametrize("line, written, joined", [
    ("resistor R1 from a to ground 1 k ohm", "k ohm", "1 kohm"),
    ("voltage source V at a step 2 m V\nresistor R from a to ground 1 ohm", "m V", "2 mV"),
    ("spring K at body 22 kN / m\nmass body 1 kg", None, None),  # `/ m` is arithmetic here
])
def test_a_space_inside_a_unit_is_named(tmp_path, line, written, joined):
    status, err = _run(tmp_path, line + "\n")
    assert status == 2
    if written is None:
        assert "space inside" not in err
        return
    assert f"a space inside the unit '{written}'" in err
    assert f"`{joined}`" in err
    assert "^" * len(written) in err


@pytest.mark.parametrize("content", ["", b"", "\n\n", "   \n\t\n", b"\xef\xbb\xbf"],
                         ids=["empty", "empty-bytes", "blank-lines", "whitespace", "bom-only"])
def test_an_empty_file_is_named(tmp_path, content):
    status, err = _run(tmp_path, content)
    assert status == 2
    assert f"{tmp_path / 'f.lumped'} is empty" in err
    assert "hint:" in err


def test_a_file_of_comments_names_the_file(tmp_path):
    status, err = _run(tmp_path, "# just a note\n")
    assert status == 2
    assert err.startswith(str(tmp_path / "f.lumped"))


def test_window_zero_is_about_the_window(tmp_path):
    status, err = _run(tmp_path, "resistor R from a to ground 1 ohm\n"
                                 "current source I at a step 1 A\nwindow 0 s\n")
    assert status == 2
    assert "the window must be greater than zero" in err
    assert "window" in err.split("hint:")[1] and "element" not in err


def test_unknown_quantity_label_lists_the_labels():
    analysis = analyse(loads("current source I at a step 1 mA\nresistor R at a 1 kohm\n"
                             "capacitor C at a 1 uF\nwatch voltage at a, current in R\n"))
    with pytest.raises(UnknownQuantityError) as caught:
        analysis.result("voltage at nowhere")
    assert isinstance(caught.value, LumpedError) and isinstance(caught.value, KeyError)
    message = str(caught.value)
    assert "'voltage at nowhere'" in message
    assert "'voltage at a'" in message and "'current in R'" in message
    assert analysis.result("voltage at a").quantity.label == "voltage at a"


@pytest.mark.parametrize("value, before", [("sqrt(2) kohm", "a closing parenthesis"),
                                           ("2 * pi ohm", "pi")])
def test_a_unit_after_something_other_than_a_number(tmp_path, value, before):
    status, err = _run(tmp_path, f"resistor R1 from a to ground {value}\n")
    assert status == 2
    unit = value.split()[-1]
    assert f"the unit '{unit}' follows {before}, not a number" in err
    assert f"`... * 1 {unit}`" in err


def test_a_unit_used_as_a_parameter_says_it_is_a_unit(tmp_path):
    status, err = _run(tmp_path, "resistor R1 from a to ground 2 / ohm\n")
    assert status == 2
    assert "unknown parameter 'ohm'" in err and "'ohm' is a unit" in err


@pytest.mark.parametrize("setting, shown", [
    ("R=1e999 ohm", "let R = 1e999 ohm"),
    ("R=1 kohm / ohm", "let R = 1 kohm / ohm"),
])
def test_a_bad_set_value_shows_its_own_line(tmp_path, setting, shown):
    status, err = _run(tmp_path, "let R in ohm\nresistor R1 from a to ground R\n",
                       "--set", setting)
    assert status == 2
    assert err.startswith("--set R:1:")
    assert err.splitlines()[1].strip() == shown


def test_a_unit_after_an_exponent_is_pointed_out(tmp_path):
    status, err = _run(tmp_path, "resistor R at a 10^30 ohm\n")
    assert status == 2
    assert "an exponent must be a plain rational number" in err
    assert "`(10^30) * 1 ohm`" in err


def test_the_degree_sign_is_a_degree():
    # 30° = pi/6 rad (definition of the degree).
    import sympy

    sign = loads("resistor R at a 1 ohm\nvoltage source V at a sine 1 V at 50 Hz phase 30 °\n")
    word = loads("resistor R at a 1 ohm\nvoltage source V at a sine 1 V at 50 Hz phase 30 deg\n")
    phase = sign.element("V").waveform.terms[0].phase
    assert phase == word.element("V").waveform.terms[0].phase
    assert sympy.simplify(phase - sympy.pi / 6) == 0


def test_a_network_without_a_unique_solution_points_at_the_first_element_named(tmp_path):
    # A current source into a transformer whose secondary is open: the secondary cannot
    # carry n i, so the equations are singular (common practice).
    status, err = _run(tmp_path, "# open secondary\n"
                                 "current source I1 from ground to p step 1 A\n"
                                 "resistor R1 at x 1 ohm\n"
                                 "transformer T1 from p to q ratio 2\n")
    assert status == 2
    first, shown, caret, hint = err.strip().splitlines()
    assert first == (f"{tmp_path / 'f.lumped'}:2:1: the network equations have no unique "
                     "solution; elements involved: I1, T1")
    assert shown.strip() == "current source I1 from ground to p step 1 A"
    assert set(caret.strip()) == {"^"}
    assert hint.startswith("hint: ")
