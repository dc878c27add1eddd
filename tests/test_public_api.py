"""The library as a notebook user meets it: names, reprs, writing, and the command's statuses.

Expected values come from the netlists written here: an R-C charged from a
10 V step follows v(t) = 10 (1 - exp(-t / RC)) (common practice, no source).
"""

from __future__ import annotations

import ast
import dataclasses
import json
import subprocess
import sys
from collections import Counter
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
import sympy

import lumped
from lumped.errors import LumpedError, NetlistError, ParametersNeeded, UnknownQuantityError

SOURCE = Path(__file__).resolve().parents[1] / "src" / "lumped"

# RC = 1 kohm * 1 uF = 1 ms; final value 10 V (common practice).
RC_STEP = """\
voltage source V at a step 10 V
resistor R from a to b 1 kohm
capacitor C from b to ground 1 uF
watch voltage at b, current in R
window 10 ms
require final value of voltage at b between 9.9 V and 10.1 V
require peak of current in R below 15 mA
"""


@pytest.fixture(scope="module")
def rc_analysis():
    return lumped.analyse(lumped.loads(RC_STEP, source="rc.lumped"))


# -- names -------------------------------------------------------------------------------


def test_import_lumped_loads_no_heavy_library():
    code = ("import sys, lumped; lumped.LumpedError; "
            "print(sorted(m for m in ('sympy', 'numpy', 'lark', 'networkx', 'pint', 'flint', "
            "'matplotlib') if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, check=True)
    assert done.stdout.strip() == "[]"


def test_stage_subpackages_load_on_first_attribute_access():
    # e^{-t} is the inverse transform of 1/(s + 1) (Laplace table, from memory).
    s = sympy.Symbol("s")
    response = lumped.inversion.invert(1 / (s + 1), s)
    times = np.array([0.0, 0.5, 2.0])
    assert np.allclose(response.evaluate(times), np.exp(-times), rtol=1e-14)
    assert lumped.io.render is lumped.render


def test_every_public_name_resolves_and_dir_lists_them():
    assert dir(lumped) == sorted(lumped.__all__)
    for name in lumped.__all__:
        assert getattr(lumped, name) is not None, name
    assert lumped.LumpedError is LumpedError
    assert {"load", "loads", "analyse", "write", "Analysis", "QuantityResult",
            "LumpedError", "inversion", "io"} <= set(lumped.__all__)
    with pytest.raises(AttributeError, match="no_such_name"):
        lumped.no_such_name  # noqa: B018


def test_only_the_command_line_imports_argparse():
    importers = []
    for path in sorted(SOURCE.rglob("*.py")):
        tree = ast.parse(path.read_text("utf-8"))
        for node in ast.walk(tree):
            names = ([alias.name for alias in node.names] if isinstance(node, ast.Import)
                     else [node.module or ""] if isinstance(node, ast.ImportFrom) else [])
            if any(name.split(".")[0] == "argparse" for name in names):
                importers.append(path.relative_to(SOURCE).as_posix())
    assert importers == ["cli.py"]


def test_type_information_ships_with_the_package():
    import tomllib

    project = tomllib.loads((SOURCE.parents[1] / "pyproject.toml").read_text("utf-8"))
    assert "py.typed" in project["tool"]["setuptools"]["package-data"]["lumped"]
    assert (SOURCE / "py.typed").is_file()


# -- reprs -------------------------------------------------------------------------------


def test_analysis_repr_is_a_few_lines(rc_analysis):
    text = repr(rc_analysis)
    assert len(text.splitlines()) <= 4 and len(text) <= 400, text
    assert "rc.lumped" in text and "voltage at b [V]" in text and "current in R [A]" in text
    assert "2 of 2 requirements pass" in text


def test_analysis_repr_stays_short_on_a_large_network():
    lines = ["voltage source V at n0 step 1 V"]
    lines += [f"resistor R{k} from n{k} to n{k + 1} 1 ohm" for k in range(40)]
    lines += ["capacitor C from n40 to ground 1 mF", "window 1 s"]
    lines += [f"watch voltage at n{k}" for k in range(40)]
    analysis = lumped.analyse(lumped.loads("\n".join(lines) + "\n"))
    text = repr(analysis)
    assert len(text) <= 400, text
    assert "and 36 more" in text


def test_quantity_result_repr_is_one_short_line(rc_analysis):
    result = rc_analysis.result("voltage at b")
    text = repr(result)
    assert "\n" not in text and len(text) <= 160, text
    assert text.startswith("<QuantityResult voltage at b [V]")
    assert "final 10" in text  # the source voltage (common practice)


def test_drop_result_repr_is_one_short_line():
    analysis = lumped.analyse(lumped.loads(
        "mass box 1 kg\nspring K from box to frame 1 kN/m\ngravity 9.81 m/s^2\n"
        "drop box from 0.5 m\nwatch displacement of box\nwindow 0.1 s\n"))
    (drop,) = analysis.drops
    text = repr(drop)
    assert "\n" not in text and len(text) <= 200, text
    # contact velocity -sqrt(2 g h) (free fall, common practice)
    assert f"{-(2 * 9.81 * 0.5) ** 0.5:.4g} m/s" in text


def test_latex_repr_is_the_closed_form(rc_analysis):
    t = sympy.Symbol("t")
    expected = sympy.latex(10 - 10 * sympy.exp(-1000 * t))  # 10 (1 - e^(-t/RC)), RC = 1 ms
    text = rc_analysis.result("voltage at b")._repr_latex_()
    assert text.startswith("$x(t) = ") and text.endswith("$")
    assert expected in text


def test_latex_repr_without_a_time_response_is_the_s_domain_form():
    # Third order in s with a free resistance: no closed form in time without a value.
    analysis = lumped.analyse(lumped.loads(
        "let R in ohm\nvoltage source V at a step 1 V\nresistor R1 from a to b R\n"
        "inductor L from b to c 1 mH\ncapacitor C1 from c to ground 1 uF\n"
        "inductor L2 from c to d 1 mH\ncapacitor C2 from d to ground 1 uF\n"
        "watch voltage at d\n"))
    result = analysis.result("voltage at d")
    assert result.time is None
    text = result._repr_latex_()
    assert text.startswith("$X(s) = ") and text.endswith("$") and "R" in text


class _Cells(HTMLParser):
    """The text of every table cell, and every tag met."""

    def __init__(self) -> None:
        super().__init__()
        self.cells: list[str] = []
        self.tags: list[str] = []
        self._open = False

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        if tag in ("td", "th"):
            self._open = True
            self.cells.append("")

    def handle_endtag(self, tag):
        if tag in ("td", "th"):
            self._open = False

    def handle_data(self, data):
        if self._open:
            self.cells[-1] += data


def test_html_repr_lists_figures_and_verdicts(rc_analysis):
    page = _Cells()
    page.feed(rc_analysis._repr_html_())
    assert page.cells.count("PASS") == 2
    assert "voltage at b" in page.cells and "current in R" in page.cells
    # the peak current is 10 V / 1 kohm at t = 0+ (common practice)
    assert any("10.0 mA" in cell for cell in page.cells)


def test_html_repr_escapes_every_text(tmp_path):
    # Element names are letters, digits and underscores only (grammar/lumped.lark), so a
    # netlist's text cannot carry markup; its file name can.
    hostile = '<script>alert("x")</script>&<i>'
    analysis = lumped.analyse(lumped.loads(RC_STEP, source=hostile))
    page = analysis._repr_html_()
    assert "<script>" not in page
    assert "<i>" not in page
    assert "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&amp;&lt;i&gt;" in page
    parsed = _Cells()
    parsed.feed(page)
    assert "script" not in parsed.tags
    # the same from a file on disk whose name holds markup
    path = tmp_path / "<img src=x onerror=alert(1)>.lumped"
    path.write_text(RC_STEP, encoding="utf-8")
    page = lumped.analyse(lumped.load(path))._repr_html_()
    assert "<img" not in page and "&lt;img src=x onerror=alert(1)&gt;" in page


# -- immutable results, lookups ------------------------------------------------------------


def test_results_are_immutable(rc_analysis):
    with pytest.raises(dataclasses.FrozenInstanceError):
        rc_analysis.stop = 1.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        rc_analysis.results[0].figures = None
    for field in ("results", "verdicts", "cautions", "notes", "dissipation", "drops"):
        assert isinstance(getattr(rc_analysis, field), tuple), field


def test_an_unknown_label_names_the_known_ones(rc_analysis):
    with pytest.raises(UnknownQuantityError) as caught:
        rc_analysis.result("voltage at nowhere")
    assert isinstance(caught.value, KeyError) and isinstance(caught.value, LumpedError)
    assert "'voltage at b'" in str(caught.value) and "'current in R'" in str(caught.value)


# -- each quantity inverted once --------------------------------------------------------


def test_no_quantity_is_solved_or_inverted_twice(monkeypatch):
    from lumped.analysis import responses
    from lumped.network import Solution

    asked: list[str] = []
    inverted: list[object] = []
    solve, invert, invert_ratios = Solution.response, responses.invert, responses.invert_ratios

    def counting_response(self, quantity):
        asked.append(quantity.label)
        return solve(self, quantity)

    def counting_invert(transform, s):
        inverted.append(transform)
        return invert(transform, s)

    def counting_invert_ratios(transform, s, ratios):
        inverted.append(transform)
        return invert_ratios(transform, s, ratios)

    monkeypatch.setattr(Solution, "response", counting_response)
    monkeypatch.setattr(responses, "invert", counting_invert)
    monkeypatch.setattr(responses, "invert_ratios", counting_invert_ratios)
    # The watched current in R is also the dissipation's; the watched node voltage also
    # the hazard check's; the drop's force in the damper is also watched and dissipated.
    lumped.analyse(lumped.loads(RC_STEP))
    lumped.analyse(lumped.loads(
        "mass box 1 kg\nspring K from box to frame 1 kN/m\n"
        "damper D from box to frame 10 N*s/m\ngravity 9.81 m/s^2\ndrop box from 0.5 m\n"
        "watch force in D, velocity of box\nwindow 0.1 s\n"))
    first = asked[:asked.index("force in D")]
    assert {"voltage at b", "current in R", "voltage at a"} <= set(first)
    assert {"force in D", "force in K", "velocity of box"} <= set(asked)
    repeated = {label: n for label, n in Counter(first).items() if n > 1}
    repeated |= {label: n for label, n in Counter(asked[len(first):]).items() if n > 1}
    assert not repeated
    assert len(inverted) == len(asked)


# -- writing -------------------------------------------------------------------------------


def test_write_files_agree_with_the_textbook_curve(rc_analysis, tmp_path):
    written = lumped.write(rc_analysis, json=tmp_path / "rc.json", csv=tmp_path / "rc.csv",
                           latex=tmp_path / "rc.tex", samples=101)
    assert [p.name for p in written] == ["rc.json", "rc.csv", "rc.tex"]
    document = json.loads((tmp_path / "rc.json").read_text("utf-8"))
    assert document["passed"] is True
    data = np.loadtxt(tmp_path / "rc.csv", delimiter=",", skiprows=1)
    assert data.shape == (101, 3)
    assert np.allclose(data[:, 1], 10 * (1 - np.exp(-data[:, 0] / 1e-3)), rtol=0, atol=1e-12)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rc.csv", "rc.json", "rc.tex"]


def test_write_never_replaces_the_input_and_writes_all_or_nothing(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(RC_STEP, encoding="utf-8")
    analysis = lumped.analyse(lumped.load(source))
    with pytest.raises(NetlistError, match="refusing to overwrite the input file"):
        lumped.write(analysis, json=source)
    with pytest.raises(NetlistError, match="does not exist"):
        lumped.write(analysis, json=tmp_path / "rc.json", csv=tmp_path / "no" / "rc.csv")
    with pytest.raises(NetlistError, match=r"\.png or \.svg"):
        lumped.write(analysis, plot=tmp_path / "rc.pdf")
    assert [p.name for p in tmp_path.iterdir()] == ["rc.lumped"]
    assert source.read_text("utf-8") == RC_STEP


def test_render_is_the_report(rc_analysis):
    report = lumped.render(rc_analysis, quiet=True)
    assert "PASS" in report and report.endswith("2 of 2 requirements pass")
    assert "\x1b[" not in report and "\x1b[" in lumped.render(rc_analysis, color=True)


# -- the command line's one map from errors to statuses --------------------------------------


@pytest.fixture
def rc_file(tmp_path):
    path = tmp_path / "rc.lumped"
    path.write_text(RC_STEP, encoding="utf-8")
    return path


def _raising(error):
    def analyse(netlist):
        raise error

    return analyse


def test_parameters_needed_reaching_the_command_exits_2_with_a_hint(monkeypatch, capsys,
                                                                    rc_file):
    from lumped import api
    from lumped.cli import main

    monkeypatch.setattr(api, "analyse", _raising(ParametersNeeded([sympy.Symbol("R")])))
    assert main([str(rc_file)]) == 2
    err = capsys.readouterr().err
    assert "values needed for parameter(s): R" in err and "hint: " in err and "--set" in err
    assert "Traceback" not in err


def test_an_unexpected_exception_exits_3_without_a_traceback(monkeypatch, capsys, rc_file):
    from lumped import api
    from lumped.cli import main

    monkeypatch.delenv("LUMPED_DEBUG", raising=False)
    monkeypatch.setattr(api, "analyse", _raising(RuntimeError("boom")))
    assert main([str(rc_file)]) == 3
    err = capsys.readouterr().err
    assert f"internal error while working on {rc_file}: RuntimeError: boom" in err
    assert "Traceback" not in err
    monkeypatch.setenv("LUMPED_DEBUG", "1")
    with pytest.raises(RuntimeError, match="boom"):
        main([str(rc_file)])


def test_library_misuse_raises_the_one_root():
    # Every error the package raises on purpose derives from LumpedError, also for
    # inputs a notebook user can hand the stages directly.
    import sympy

    from lumped.errors import LumpedError, TransformError, UnknownWordError
    from lumped.inversion import invert
    from lumped.model import Kind, QuantityKind

    s = sympy.Symbol("s")
    for bad in (sympy.sin(s), sympy.exp(s) / s, sympy.exp(-s**2) / s, "1/s"):
        with pytest.raises(TransformError) as info:
            invert(bad, s)
        assert isinstance(info.value, LumpedError)
    with pytest.raises(UnknownWordError) as info:
        Kind.from_word("flux capacitor")
    assert isinstance(info.value, (LumpedError, KeyError))
    with pytest.raises(UnknownWordError):
        QuantityKind.from_word("charge")
    with pytest.raises(TransformError):
        invert(1 / (s + 1), s).evaluate([0.0], derivative=-1)
