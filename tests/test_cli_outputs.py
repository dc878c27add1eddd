"""The command line end to end: exit status, output files, colour, cautions.

Each test runs ``python -m lumped.cli`` in a subprocess, as a user would.
Expected values come from the netlists written here (an R-C charging to its
source, common practice) or from the documented behaviour in docs/outputs.md
and grammar/language.md, never from a previous run.
"""

from __future__ import annotations

import importlib.metadata
import json
import math
import os
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import sympy
from scipy.integrate import solve_ivp

REPO = Path(__file__).resolve().parents[1]
EXAMPLES = REPO / "examples"
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"

# A first-order R-C charged from a 10 V step: v(t) = 10 (1 - exp(-t / RC)), RC = 1 ms,
# final value 10 V (common practice, no source).  The requirement cannot hold.
FAILING_RC = """\
# R-C charging from a 10 V step
voltage source V at a step 10 V
resistor R from a to b 1 kohm
capacitor C from b to ground 1 uF
watch voltage at b
window 10 ms
require final value of voltage at b below 5 V
"""

BAD_SYNTAX = """\
voltage source V at a step 10 V
resistor R from a to b 1 kohm kohm kohm
watch voltage at b
"""


def _environment() -> dict[str, str]:
    env = dict(os.environ)
    env.pop("NO_COLOR", None)
    try:
        importlib.metadata.distribution("lumped")
    except importlib.metadata.PackageNotFoundError:
        # not installed: run the source tree
        env["PYTHONPATH"] = os.pathsep.join(
            [str(REPO / "src"), *filter(None, [env.get("PYTHONPATH")])])
    return env


def run(*args, cwd: Path | None = None, **kwargs) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "lumped.cli", *map(str, args)],
                          capture_output=True, text=True, env=_environment(), cwd=cwd,
                          timeout=120, **kwargs)


def words(text: str) -> str:
    """The report with its line wrapping undone."""
    return " ".join(text.split())


@pytest.fixture(scope="module")
def full_run(tmp_path_factory):
    """One passing example with every output: JSON, CSV, PNG plot, LaTeX."""
    folder = tmp_path_factory.mktemp("outputs")
    source = folder / "lc_input_filter.lumped"
    source.write_bytes((EXAMPLES / "lc_input_filter.lumped").read_bytes())
    result = run(source, "--json", folder / "out.json", "--csv", folder / "out.csv",
                 "--plot", folder / "out.png", "--latex", folder / "out.tex", "--samples", 801)
    return folder, source, result


# -- exit status -----------------------------------------------------------------------


def test_a_passing_example_exits_0(full_run):
    _, _, result = full_run
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""


def test_a_failing_requirement_exits_1_and_still_writes_its_outputs(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    result = run(source, "--json", tmp_path / "rc.json", "--csv", tmp_path / "rc.csv")
    assert result.returncode == 1, result.stderr
    assert "FAIL" in result.stdout
    document = json.loads((tmp_path / "rc.json").read_text("utf-8"))
    assert document["passed"] is False
    (requirement,) = document["requirements"]
    assert requirement["passed"] is False
    assert requirement["value"] == pytest.approx(10.0, rel=1e-12)  # the source voltage
    # the CSV follows the textbook charging curve (common practice)
    data = np.loadtxt(tmp_path / "rc.csv", delimiter=",", skiprows=1)
    assert np.allclose(data[:, 1], 10 * (1 - np.exp(-data[:, 0] / 1e-3)), rtol=0, atol=1e-12)
    # nothing else in the folder: no temporary files left behind
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rc.csv", "rc.json", "rc.lumped"]


def test_bad_input_exits_2_and_writes_nothing(tmp_path):
    source = tmp_path / "bad.lumped"
    source.write_text(BAD_SYNTAX, encoding="utf-8")
    before = source.read_bytes()
    result = run(source, "--json", tmp_path / "bad.json", "--csv", tmp_path / "bad.csv",
                 "--plot", tmp_path / "bad.png", "--latex", tmp_path / "bad.tex")
    assert result.returncode == 2
    assert "Traceback" not in result.stderr
    assert "bad.lumped:2" in result.stderr  # file:line of the mistake
    assert [p.name for p in tmp_path.iterdir()] == ["bad.lumped"]
    assert source.read_bytes() == before


def test_a_missing_file_exits_2(tmp_path):
    result = run(tmp_path / "nowhere.lumped", "--json", tmp_path / "x.json")
    assert result.returncode == 2
    assert "Traceback" not in result.stderr
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("option", ["--json", "--csv", "--plot", "--latex"])
def test_refuses_to_overwrite_the_input(tmp_path, option):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    before = source.read_bytes()
    result = run(source, option, source)
    assert result.returncode == 2
    assert source.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["rc.lumped"]


def test_refuses_to_overwrite_the_input_named_another_way(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    (tmp_path / "sub").mkdir()
    before = source.read_bytes()
    result = run("rc.lumped", "--json", "sub/../rc.lumped", cwd=tmp_path)
    assert result.returncode == 2
    assert source.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rc.lumped", "sub"]


def test_help_lists_the_options_and_exits_0():
    result = run("--help")
    assert result.returncode == 0
    for option in ("--json", "--csv", "--plot", "--latex", "--quiet", "--check", "--samples"):
        assert option in result.stdout
    assert "exit status" in result.stdout


# -- output files ---------------------------------------------------------------------


def test_outputs_are_atomic_no_temporary_files_remain(full_run):
    folder, source, _ = full_run
    assert sorted(p.name for p in folder.iterdir()) == sorted(
        [source.name, "out.json", "out.csv", "out.png", "out.tex"])


def test_json_closed_forms_agree_with_the_csv_samples(full_run):
    folder, _, _ = full_run
    document = json.loads((folder / "out.json").read_text("utf-8"))
    assert document["schema"] == 1
    with (folder / "out.csv").open(encoding="utf-8") as stream:
        header = stream.readline().strip().split(",")
    data = np.loadtxt(folder / "out.csv", delimiter=",", skiprows=1)
    assert header[0] == "time [s]"
    assert data.shape == (801, len(header))
    times = data[:, 0]
    assert times[0] == pytest.approx(document["window"]["start"])
    assert times[-1] == pytest.approx(document["window"]["stop"])
    t = sympy.Symbol("t")
    checked = 0
    for quantity in document["quantities"]:
        column = header.index(f"{quantity['label']} [{quantity['unit']}]")
        # parse_expr on our own output file (not user input) is acceptable here
        expression = sympy.parse_expr(quantity["time_domain"], local_dict={"t": t})
        assert expression.free_symbols == {t}
        evaluate = sympy.lambdify(t, expression, modules="mpmath")
        expected = np.array([float(evaluate(sympy.Float(x, 30))) for x in times])
        scale = np.max(np.abs(expected))
        assert np.max(np.abs(data[:, column] - expected)) <= 1e-9 * scale, quantity["label"]
        checked += 1
    assert checked == 2


def test_json_s_domain_parses_and_its_final_value_matches_the_figures(full_run):
    # final-value theorem lim s->0 s X(s) (common practice), on the JSON's own X(s)
    folder, _, _ = full_run
    document = json.loads((folder / "out.json").read_text("utf-8"))
    s = sympy.Symbol("s")
    for quantity in document["quantities"]:
        # parse_expr on our own output file (not user input) is acceptable here
        transform = sympy.parse_expr(quantity["s_domain"], local_dict={"s": s})
        final = sympy.limit(sympy.nsimplify(s * transform, rational=True), s, 0)
        assert float(final) == pytest.approx(quantity["figures"]["final"]["value"], rel=1e-9)


def test_plot_writes_a_real_png(full_run):
    folder, _, _ = full_run
    data = (folder / "out.png").read_bytes()
    assert data.startswith(PNG_MAGIC)
    assert len(data) > 5000


def test_plot_writes_a_real_svg(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    result = run(source, "--plot", tmp_path / "rc.svg", "--samples", 201)
    assert result.returncode == 1
    text = (tmp_path / "rc.svg").read_text("utf-8")
    assert "<svg" in text[:2000] and text.rstrip().endswith("</svg>")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rc.lumped", "rc.svg"]


def test_latex_holds_display_formulas(full_run):
    folder, _, _ = full_run
    text = (folder / "out.tex").read_text("utf-8")
    assert "\\[" in text and "\\]" in text
    assert text.count("\\[") == text.count("\\]") >= 4  # X(s) and x(t) per quantity


def test_latex_numbers_have_six_significant_figures(full_run):
    folder, _, _ = full_run
    text = (folder / "out.tex").read_text("utf-8")
    body = "\n".join(line for line in text.splitlines() if not line.startswith("%"))
    mantissas = re.findall(r"\d+\.\d+", body)
    assert mantissas
    too_long = [x for x in mantissas if len(x.replace(".", "").lstrip("0")) > 6]
    assert not too_long, too_long[:3]


# -- the terminal ------------------------------------------------------------------------


def test_no_colour_codes_when_stdout_is_not_a_terminal(full_run):
    _, _, result = full_run
    assert "\x1b[" not in result.stdout


def test_colour_codes_when_asked_for_so_the_check_above_can_fail(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    assert "\x1b[" in run(source, "--color", "always").stdout


@pytest.mark.skipif(not hasattr(os, "openpty"), reason="needs a pseudo-terminal")
def test_colour_codes_on_a_terminal(tmp_path):
    source = tmp_path / "rc.lumped"
    source.write_text(FAILING_RC, encoding="utf-8")
    leader, follower = os.openpty()
    try:
        process = subprocess.run([sys.executable, "-m", "lumped.cli", str(source)],
                                 stdout=follower, stderr=subprocess.PIPE, env=_environment(),
                                 timeout=120)
        os.close(follower)
        follower = -1
        chunks = []
        while True:
            try:
                chunk = os.read(leader, 65536)
            except OSError:
                break
            if not chunk:
                break
            chunks.append(chunk)
    finally:
        if follower >= 0:
            os.close(follower)
        os.close(leader)
    assert process.returncode == 1
    assert b"\x1b[" in b"".join(chunks)


# -- cautions --------------------------------------------------------------------------

GENERAL = ("idealised linear lumped model", "licensed engineering review")


def test_the_report_always_carries_the_general_caution(full_run):
    _, _, result = full_run
    report = words(result.stdout)
    for phrase in GENERAL:
        assert phrase in report


def test_a_hazardous_voltage_brings_a_caution(tmp_path):
    # A 100 V step onto an R-C: the capacitor reaches 100 V, above the 60 V DC
    # extra-low-voltage limit (common practice, from memory).  A 12 V one does not.
    for volts, expected in ((100, True), (12, False)):
        source = tmp_path / f"rc{volts}.lumped"
        source.write_text(FAILING_RC.replace("step 10 V", f"step {volts} V")
                          .replace("below 5 V", "below 1000 V"), encoding="utf-8")
        result = run(source)
        assert result.returncode == 0, result.stderr
        report = words(result.stdout)
        assert ("extra-low-voltage" in report) is expected, volts
        assert all(phrase in report for phrase in GENERAL)


def test_the_snubber_example_above_60_v_brings_the_voltage_caution():
    # Hand-written state equations of the example (48 V step, Lp = 12 nH to sw; from sw,
    # Rpath = 0.15 ohm to Cds = 680 pF and Rs = 3.3 ohm to Cs = 2.2 nF):
    #   v_sw = (i + v_ds/Rpath + v_s/Rs) / (1/Rpath + 1/Rs)   (KCL at sw)
    #   Lp i' = 48 - v_sw ;  Cds v_ds' = (v_sw - v_ds)/Rpath ;  Cs v_s' = (v_sw - v_s)/Rs
    # source: scipy.integrate.solve_ivp (reference library), finely sampled peak.
    lp, rpath, cds, rs, cs = 12e-9, 0.15, 680e-12, 3.3, 2.2e-9
    text = (EXAMPLES / "switch_node_snubber.lumped").read_text("utf-8")
    for line in ("step 48 V", "Lloop = 12 nH", "0.15 ohm", "Coss  = 680 pF", "3.3 ohm",
                 "2.2 nF"):
        assert line in text, f"the example changed ({line!r}): update the derivation"

    def sw(y):
        return (y[0] + y[1] / rpath + y[2] / rs) / (1 / rpath + 1 / rs)

    def rates(_t, y):
        v = sw(y)
        return [(48 - v) / lp, (v - y[1]) / (rpath * cds), (v - y[2]) / (rs * cs)]

    times = np.linspace(0, 200e-9, 400_001)
    sol = solve_ivp(rates, (0, 200e-9), [0.0, 0.0, 0.0], method="DOP853", rtol=1e-12,
                    atol=1e-12, t_eval=times)
    peak = float(np.max(sw(sol.y)))
    assert peak > 60
    result = run(EXAMPLES / "switch_node_snubber.lumped")
    report = words(result.stdout)
    assert "extra-low-voltage" in report
    reached = float(re.search(r"Voltages reach ([0-9.]+) V", report).group(1))
    assert reached == pytest.approx(peak, rel=1e-3)  # stated to 4 significant figures


def _contact_turns_tensile(m: float, k: float, c: float, h: float, stop: float):
    """First time the foam would pull on the crate, by solve_ivp with an event.

    m x'' = -k x - c x' - m g from first contact (x = 0, x' = -sqrt(2 g h));
    the foam pushes with -(k x + c x'), which turns tensile when k x + c x' > 0.
    source: scipy.integrate.solve_ivp (reference library), hand-written equations.
    """
    g = 9.80665

    def pull(_t, y):
        return k * y[0] + c * y[1]

    pull.terminal = True
    pull.direction = 1
    sol = solve_ivp(lambda _t, y: [y[1], -(k * y[0] + c * y[1]) / m - g], (0, stop),
                    [0.0, -math.sqrt(2 * g * h)], rtol=1e-12, atol=1e-15, events=pull,
                    method="DOP853", first_step=1e-9)
    # the event function starts at -c sqrt(2gh) < 0, so a crossing is a true turn
    return sol.t_events[0][0] if sol.t_events[0].size else None


def test_the_crate_drop_reports_when_the_contact_turns_tensile():
    result = run(EXAMPLES / "crate_drop_foam.lumped")
    assert result.returncode in (0, 1)
    report = words(result.stdout)
    expected = _contact_turns_tensile(12.0, 90e3, 600.0, 0.6, 0.08)
    assert expected is not None
    match = re.search(r"contact force on crate turns tensile at t = ([0-9.e+-]+) s", report)
    assert match, report
    # stated to 4 significant figures
    assert float(match.group(1)) == pytest.approx(expected, rel=1e-3)
    assert all(phrase in report for phrase in GENERAL)


def test_a_heavily_damped_drop_that_never_pulls_has_no_tensile_caution(tmp_path):
    # critical damping 2 sqrt(k m) = 2078 N s/m for 12 kg on 90 kN/m (from memory); at
    # ten times that the crate creeps back and the contact stays compressive
    text = (EXAMPLES / "crate_drop_foam.lumped").read_text("utf-8").replace(
        "600 N*s/m", "20 kN*s/m")
    assert "20 kN*s/m" in text
    assert _contact_turns_tensile(12.0, 90e3, 20e3, 0.6, 0.08) is None
    source = tmp_path / "crate.lumped"
    source.write_text(text, encoding="utf-8")
    report = words(run(source).stdout)
    assert "turns tensile" not in report
    assert all(phrase in report for phrase in GENERAL)


def test_a_reader_that_leaves_early_is_no_error(tmp_path):
    # `lumped --check FILE | head -1` and the like: the pipe closes before the output ends
    # (here before it starts, so the write surely fails); the status is the run's own,
    # never an internal error (common practice).
    import subprocess
    import sys

    for extra in (["--check"], ["--transfer", "Vin"], []):
        script = ("import subprocess, sys\n"
                  f"p = subprocess.Popen([sys.executable, '-m', 'lumped.cli', *{extra!r}, "
                  "'examples/rc_inrush_limiter.lumped'], stdout=subprocess.PIPE, "
                  "stderr=subprocess.PIPE)\n"
                  "p.stdout.close()\n"
                  "err = p.stderr.read().decode(); code = p.wait()\n"
                  "print(code); print(err)\n")
        done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True,
                              timeout=120)
        code, _, err = done.stdout.partition("\n")
        assert "internal error" not in err and "Traceback" not in err, err
        assert code.strip() in ("0", "1"), done.stdout + done.stderr
