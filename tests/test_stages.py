"""Each stage used on its own, through its public names only.

Every check runs in a fresh interpreter, so what a stage imports is visible:
a stage must not load any stage after it (results flow one way).
"""

from __future__ import annotations

import subprocess
import sys
import textwrap

import pytest

LATER = {
    "language": ["lumped.topology", "lumped.network", "lumped.inversion", "lumped.figures",
                 "lumped.analysis", "lumped.io"],
    "topology": ["lumped.network", "lumped.inversion", "lumped.figures", "lumped.analysis",
                 "lumped.io"],
    "network": ["lumped.inversion", "lumped.figures", "lumped.analysis", "lumped.io"],
    "algebra": ["lumped.language", "lumped.network", "lumped.inversion", "lumped.figures",
                "lumped.analysis", "lumped.io"],
    "inversion": ["lumped.language", "lumped.network", "lumped.figures", "lumped.analysis",
                  "lumped.io"],
    "figures": ["lumped.language", "lumped.network", "lumped.analysis", "lumped.io"],
    "analysis": ["lumped.io"],
}

# Each snippet is the developer guide's three-line example of the stage, plus a check
# against a result known from outside (named beside it).
SNIPPETS = {
    "language": """
        from lumped.language import parse_text
        netlist = parse_text("resistor R from a to ground 2 kohm\\n")
        assert [e.name for e in netlist.elements] == ["R"] and netlist.elements[0].value == 2000
    """,
    "topology": """
        from lumped.language import parse_text
        from lumped.topology import validate
        topology = validate(parse_text("resistor R from a to ground 1 ohm\\n"
                                       "capacitor C from a to b 1 F\\n"
                                       "resistor Q from b to ground 1 ohm\\n"))
        assert set(topology.domains) >= {"a", "b"}
    """,
    "network": """
        import sympy
        from lumped.constants import s
        from lumped.language import parse_text
        from lumped.model import Quantity, QuantityKind
        from lumped.network import assemble
        from lumped.topology import validate
        net = parse_text("resistor R from a to ground 1 kohm\\n"
                         "capacitor C from a to ground 1 uF, initially 5 V\\n")
        response = assemble(validate(net)).response(Quantity(QuantityKind.VOLTAGE, "a", "at"))
        # RC discharge: V(s) = v0 / (s + 1/RC) (from memory).
        assert sympy.simplify(response.transform - 5 / (s + 1000)) == 0
    """,
    "algebra": """
        import sympy
        from lumped.algebra import rationalise
        value = rationalise(sympy.pi)
        assert value.is_Rational and abs(float(value) - 3.141592653589793) < 1e-15
    """,
    "inversion": """
        from lumped.constants import s
        from lumped.inversion import invert
        time = invert(1 / (s**2 + 2*s + 5), s)
        # 1/((s+1)^2 + 4) -> e^-t sin(2t)/2 (Laplace table, from memory).
        import math
        assert abs(float(time.evaluate([0.7])[0]) - math.exp(-0.7) * math.sin(1.4) / 2) < 1e-12
    """,
    "figures": """
        from lumped.constants import s
        from lumped.figures import compute_figures
        from lumped.inversion import invert
        figures = compute_figures(invert(1 / (s * (s + 1)), s), 0.0, 10.0)
        # First-order step: 10-90 % rise time = ln 9 tau (from memory).
        import math
        assert abs(figures.rise_time - math.log(9)) < 1e-6
    """,
    "analysis": """
        from lumped.analysis import analyse
        from lumped.language import parse_text
        analysis = analyse(parse_text("voltage source V from a to ground step 5 V\\n"
                                      "resistor R from a to b 1 kohm\\n"
                                      "capacitor C from b to ground 1 uF\\nwatch voltage at b\\n"))
        # RC charging to the source voltage (from memory).
        assert abs(analysis.result("voltage at b").figures.final - 5) < 1e-9
    """,
}


@pytest.mark.parametrize("stage", sorted(SNIPPETS))
def test_stage_alone(stage: str) -> None:
    code = textwrap.dedent(SNIPPETS[stage]) + textwrap.dedent(f"""
        import sys
        later = [name for name in {LATER[stage]!r} if name in sys.modules]
        assert not later, f"the {stage} stage loaded later stages: {{later}}"
    """)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120)
    assert done.returncode == 0, done.stderr


def test_io_stage_alone() -> None:
    code = textwrap.dedent("""
        import lumped
        from lumped.io import render
        netlist = lumped.loads("resistor R from a to ground 1 ohm\\n"
                               "capacitor C from a to ground 1 F, initially 1 V\\n")
        text = render(lumped.analyse(netlist))
        assert "voltage at a" in text
    """)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120)
    assert done.returncode == 0, done.stderr
