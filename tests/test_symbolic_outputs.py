"""A netlist with a free parameter: the transfer function as formulas; outputs needing numbers.

Sources: for the series R-L-C low-pass (output across C), H(s) = 1/(LC s^2 + RC s + 1),
wn = 1/sqrt(LC), zeta = (R/2) sqrt(C/L), Q = 1/(2 zeta) (from memory); sympy checks equality.
"""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import pytest
import sympy

from lumped.api import loads
from lumped.cli import main
from lumped.constants import s
from lumped.network import assemble

SYMBOLIC = """\
let R in ohm
voltage source V1 at a step 5 V
resistor R1 from a to b R
inductor L1 from b to out 1 mH
capacitor C1 at out 1 uF
watch voltage at out
"""

R = sympy.Symbol("R", positive=True)
L = sympy.Rational(1, 1000)
C = sympy.Rational(1, 10**6)


def _run(folder: Path, text: str, *args: str) -> tuple[int, str, str]:
    source = folder / "f.lumped"
    source.write_text(text, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main([str(source), *args])
    return status, out.getvalue(), err.getvalue()


def test_transfer_of_a_symbolic_network_prints_formulas(tmp_path):
    status, out, err = _run(tmp_path, SYMBOLIC, "--transfer", "V1")
    assert status == 0, err
    section = out.split("── from V1 to voltage at out")[1]
    assert "H(s) = " in section and "R" in section.split("poles")[1].split("\n")[0]
    assert "wn = " in section and "zeta = " in section and "Q = " in section


def test_symbolic_transfer_function_matches_the_published_forms():
    net = loads(SYMBOLIC)
    tf = assemble(net).transfer_function("V1", net.watches[0])
    expected = 1 / (L * C * s**2 + R * C * s + 1)
    assert sympy.simplify(tf.expr - expected) == 0
    (pair,) = tf.second_order_factors
    zeta = R / 2 * sympy.sqrt(C / L)
    assert sympy.simplify(pair.natural_frequency - 1 / sympy.sqrt(L * C)) == 0
    assert sympy.simplify(pair.damping_ratio - zeta) == 0
    assert sympy.simplify(pair.quality_factor - 1 / (2 * zeta)) == 0
    # the poles as expressions: roots of L C s^2 + R C s + 1 (quadratic formula, from memory)
    x = sympy.Symbol("x")
    roots = sympy.solve(L * C * x**2 + R * C * x + 1, x)
    assert len(tf.poles) == 2
    for pole in tf.poles:
        assert any(sympy.simplify(pole - root) == 0 for root in roots)


@pytest.mark.parametrize("option, name", [("--csv", "out.csv"), ("--plot", "out.png"),
                                          ("--plot", "out.svg")])
def test_sampled_outputs_of_a_symbolic_netlist_are_refused(tmp_path, option, name):
    status, out, err = _run(tmp_path, SYMBOLIC, option, str(tmp_path / name))
    assert status == 2
    assert not (tmp_path / name).exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["f.lumped"]  # nothing else either
    assert "R" in err and "--set" in err and "kohm" in err  # a value in the parameter's unit
    assert out == ""


def test_refusal_writes_none_of_the_other_outputs_either(tmp_path):
    status, _, err = _run(tmp_path, SYMBOLIC, "--json", str(tmp_path / "o.json"), "--csv",
                          str(tmp_path / "o.csv"))
    assert status == 2, err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["f.lumped"]


def test_symbolic_json_and_latex_still_carry_the_closed_forms(tmp_path):
    status, _, err = _run(tmp_path, SYMBOLIC, "--json", str(tmp_path / "o.json"), "--latex",
                          str(tmp_path / "o.tex"))
    assert status == 0, err
    data = json.loads((tmp_path / "o.json").read_text())
    assert "R" in json.dumps(data)
    assert "R" in (tmp_path / "o.tex").read_text()


def test_values_given_with_set_make_the_csv(tmp_path):
    status, _, err = _run(tmp_path, SYMBOLIC, "--csv", str(tmp_path / "o.csv"), "--set",
                          "R=10 ohm")
    assert status == 0, err
    header = (tmp_path / "o.csv").read_text().splitlines()[0]
    assert "voltage at out" in header


def test_poles_of_a_fourth_order_symbolic_network_are_not_called_none(tmp_path):
    text = SYMBOLIC.replace("capacitor C1 at out 1 uF\n", "capacitor C1 at c 1 uF\n").replace(
        "inductor L1 from b to out 1 mH\n",
        "inductor L1 from b to c 1 mH\ninductor L2 from c to out 1 mH\n"
        "capacitor C2 at out 1 uF\n")
    status, out, err = _run(tmp_path, text, "--transfer", "V1")
    assert status == 0, err
    poles = " ".join(out.split("── from V1")[1].split("zeros")[0].split())
    assert "poles the 4 roots of" in poles and "need values for R" in poles


def test_library_csv_and_plot_refuse_symbolic_responses(tmp_path):
    from lumped.analysis import analyse
    from lumped.errors import NetlistError
    from lumped.io import plot, to_csv

    analysis = analyse(loads(SYMBOLIC))
    with pytest.raises(NetlistError, match="R has no value"):
        to_csv(analysis)
    with pytest.raises(NetlistError, match="R has no value"):
        plot(analysis, tmp_path / "p.png")
