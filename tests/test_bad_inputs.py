"""Bad netlists through the real command line: exit 2, a located message, a hint, no trace."""

from __future__ import annotations

import os
import random
import re
import subprocess
import sys
from pathlib import Path

import pytest

from lumped.cli import main
from lumped.language import MAX_BYTES

SRC = Path(__file__).resolve().parents[1] / "src"

R = "resistor R from a to ground 1 ohm\n"
MECH = "mass body 1 kg\nspring K from body to frame 1 kN/m\n"

# (id, file content, a piece of the message).  Every one of these points at a line.
LOCATED: list[tuple[str, bytes | str, str]] = [
    ("missing-value", "resistor R1 from a to ground\n", "missing value"),
    ("missing-unit", "resistor R1 from a to ground 2.2\n", "needs a unit: expected ohm"),
    ("unknown-unit", "resistor R1 from a to ground 2.2 kohmz\n", "unknown unit 'kohmz'"),
    ("capacitor-in-ohm", "capacitor C1 from a to ground 4.7 ohm\n", "must be in F, not ohm"),
    ("unknown-kind", "transistor Q1 from a to ground 1 ohm\n", "unknown statement 'transistor'"),
    ("misspelt-from", "resistor R1 fro a to ground 1 ohm\n", "unknown word 'fro'"),
    ("misspelt-initially", "capacitor C1 from a to ground 1 uF initialy 5 V\n",
     "unknown word 'initialy'"),
    ("misspelt-watch", R + "watc voltage at a\n", "unknown statement 'watc'"),
    ("unclosed-parenthesis", R + "let x = (2 + 3\n", "unbalanced parentheses"),
    ("extra-parenthesis", R + "let x = 2 + 3)\n", "unbalanced parentheses"),
    ("zero-value", "resistor R1 from a to ground 0 ohm\n", "must be greater than zero, not 0"),
    ("negative-value", "capacitor C1 from a to ground -1 uF\n", "must be greater than zero"),
    ("negative-delay", R + "voltage source V at a step 1 V after -1 ms\n",
     "a delay cannot be negative"),
    ("unknown-parameter", "resistor R from a to ground Rx\n", "unknown parameter 'Rx'"),
    ("parameter-circle", "let p = q\nlet q = p\n" + R, "parameters defined in a circle"),
    ("duplicate-parameter", "let p = 1 ohm\nlet p = 2 ohm\n" + R, "parameter 'p' is defined twice"),
    ("volts-plus-amps", "resistor R from a to ground 1 V + 1 A\n", "cannot add A to V"),
    ("exponent-with-unit", R + "let x = 2 ^ (3 V)\n", "an exponent must be a plain"),
    ("division-by-zero", "resistor R from a to ground 1 ohm / (2 - 2)\n", "division by zero"),
    ("resistor-initial-condition", "resistor R from a to ground 1 ohm, initially 1 V\n",
     "takes no initial condition"),
    ("mass-between-two-nodes", "mass m from a to b 1 kg\n", "a mass always connects to the frame"),
    ("window-ends-before-start", R + "window 2 ms to 1 ms\n", "the window must end after it"),
    ("settling-band-100-percent", R + "settling band 100 %\n",
     "it must lie between 1e-06 % and 50 %"),
    ("binary-bytes", random.Random(7).randbytes(3000) + b"\x00", "not UTF-8"),
    ("nul-byte", b"resistor R from a\x00 to ground 1 ohm\n", "control character"),
    ("invalid-utf8", b"resistor R from a to ground 1 \xffohm\n", "this is not UTF-8 text"),
    ("very-long-line", "let x = " + "1+" * 50_000 + "1\n" + R, "characters long"),
    ("deep-nesting", "let x = " + "(" * 5000 + "1" + ")" * 5000 + "\n" + R, "nested more than"),
    ("huge-file", "# " + "x" * 1000 + "\n" + ("# padding\n" * (MAX_BYTES // 10 + 10)) + R,
     "too large"),
    ("unknown-quantity", R + "watch voltag at a\n", "unexpected 'voltag'"),
    ("unknown-figure", R + "require peek of voltage at a below 1 V\n", "unexpected 'peek'"),
    ("bound-in-wrong-unit", R + "require peak of voltage at a below 1 A\n", "must be in V, not A"),
    ("gear-with-radius", "inertia J at a 1 kg*m^2\ninertia K at b 1 kg*m^2\n"
     "gear G from a to b radius 3 mm\n", "a gear is given by its ratio, not a radius"),
    ("motor-between-electrical-nodes", R + "resistor R2 from b to ground 1 ohm\n"
     "motor M from a to b constant 0.1 V*s/rad\n", "joins electrical"),
    ("huge-number", "resistor R from a to ground 1e999999999 ohm\n", "out of range"),
    ("lower-bound-above-upper", R + "require peak of voltage at a between 2 V and 1 V\n",
     "the lower bound must be below the upper bound"),
    ("second-window", R + "window 1 ms\nwindow 2 ms\n", "a second window statement"),
    ("offset-unit", "resistor R from a to ground 1 degC\n", "unknown unit 'degC'"),
    ("topology-no-reference", "resistor R from a to b 1 ohm\n", "nothing is connected"),
    ("topology-voltage-loop", R + "voltage source V1 at a step 1 V\n"
     "voltage source V2 at a step 2 V\n", "closes a loop of ideal across sources"),
    ("topology-force-cut-set", MECH + "force source F from body to loose step 1 N\n",
     "held only by ideal through sources"),
    ("topology-unknown-watch", R + "watch current in Rz\n", "unknown element 'Rz'"),
    ("topology-same-node", "resistor R from a to a 1 ohm\n", "both terminals"),
]

# Problems of the whole file: exit 2 and a clear message, but no line to point at.
WHOLE_FILE: list[tuple[str, bytes | str, str]] = [
    ("empty-file", b"", "bad.lumped is empty"),
    ("only-comments", "# a comment\n   # another\n\n", "the netlist has no elements"),
]

CAPTION = re.compile(r"^\s+\^+$", re.MULTILINE)


def _write(folder: Path, content: bytes | str) -> Path:
    path = folder / "bad.lumped"
    path.write_bytes(content.encode() if isinstance(content, str) else content)
    return path


def _listing(folder: Path) -> list[tuple[str, int]]:
    return sorted((p.name, p.stat().st_size) for p in folder.iterdir())


def _run_in_process(path: Path, capsys) -> tuple[int, str, str]:
    status = main(["--check", str(path)])
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def _assert_located(path: Path, status: int, err: str, message: str) -> None:
    assert status == 2
    assert "Traceback" not in err
    first = err.splitlines()[0]
    assert re.match(rf"^{re.escape(str(path))}:\d+:\d+: ", first), first
    assert message in first
    assert CAPTION.search(err), err
    assert re.search(r"^hint: \S", err, re.MULTILINE), err


@pytest.mark.parametrize(("content", "message"), [c[1:] for c in LOCATED],
                         ids=[c[0] for c in LOCATED])
def test_bad_input_is_refused_with_a_located_message(tmp_path, capsys, content, message):
    path = _write(tmp_path, content)
    before = _listing(tmp_path)
    status, out, err = _run_in_process(path, capsys)
    _assert_located(path, status, err, message)
    assert "Traceback" not in out
    assert _listing(tmp_path) == before


@pytest.mark.parametrize(("content", "message"), [c[1:] for c in WHOLE_FILE],
                         ids=[c[0] for c in WHOLE_FILE])
def test_whole_file_problem_is_refused_with_a_clear_message(tmp_path, capsys, content, message):
    path = _write(tmp_path, content)
    before = _listing(tmp_path)
    status, _, err = _run_in_process(path, capsys)
    assert status == 2
    assert "Traceback" not in err
    assert message in err.splitlines()[0]
    assert re.search(r"^hint: \S", err, re.MULTILINE)
    assert _listing(tmp_path) == before


def test_missing_file_is_refused(tmp_path, capsys):
    path = tmp_path / "absent.lumped"
    status, _, err = _run_in_process(path, capsys)
    assert status == 2
    assert "no such file" in err and str(path) in err
    assert "Traceback" not in err
    assert list(tmp_path.iterdir()) == []


def test_folder_instead_of_a_file_is_refused(tmp_path, capsys):
    status, _, err = _run_in_process(tmp_path, capsys)
    assert status == 2
    assert "is a folder" in err
    assert "Traceback" not in err


def test_tab_inside_a_line_is_fine(tmp_path, capsys):
    path = _write(tmp_path, "resistor\tR\tfrom a to ground\t1 ohm\n")
    status, out, err = _run_in_process(path, capsys)
    assert (status, err) == (0, "")
    assert "resistor" in out


def _subprocess(path: Path) -> subprocess.CompletedProcess:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(SRC) + os.pathsep + env.get("PYTHONPATH", "")
    return subprocess.run([sys.executable, "-m", "lumped.cli", "--check", str(path)],
                          capture_output=True, text=True, env=env, timeout=120, check=False)


SUBPROCESS_CASES = ["capacitor-in-ohm", "misspelt-initially", "binary-bytes", "deep-nesting",
                    "topology-voltage-loop"]


@pytest.mark.parametrize("case", SUBPROCESS_CASES)
def test_bad_input_through_a_separate_process(tmp_path, case):
    content, message = next(c[1:] for c in LOCATED if c[0] == case)
    path = _write(tmp_path, content)
    before = _listing(tmp_path)
    result = _subprocess(path)
    _assert_located(path, result.returncode, result.stderr, message)
    assert "Traceback" not in result.stdout
    assert _listing(tmp_path) == before


def test_empty_file_through_a_separate_process(tmp_path):
    result = _subprocess(_write(tmp_path, b""))
    assert result.returncode == 2
    assert result.stderr.startswith(f"{tmp_path / 'bad.lumped'} is empty")
    assert "Traceback" not in result.stderr


def test_good_input_through_a_separate_process(tmp_path):
    result = _subprocess(_write(tmp_path, "resistor\tR from a to ground 1 ohm\n"))
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""


def test_the_cases_are_distinct():
    contents = [c[1] for c in LOCATED + WHOLE_FILE]
    assert len(set(contents)) == len(contents) >= 35


# --- values given on the command line ------------------------------------------------

SYMBOLIC_RC = (
    "let R in ohm\n"
    "voltage source V at a step 10 V\n"
    "resistor R1 from a to b R\n"
    "capacitor C from b to ground 1 uF\n"
    "watch voltage at b\n"
    "window 1 ms\n"
)


@pytest.mark.parametrize(
    "setting, message",
    [
        ("R=10uF", "the value given for 'R' is in F, but the netlist uses it as ohm"),
        ("Q=10ohm", "'Q' is not a parameter of this netlist"),
        ("R=(10 ohm", "unbalanced parentheses"),
        ("R", "is not NAME=VALUE"),
    ],
    ids=["wrong-unit", "unknown-name", "unbalanced", "no-equals"],
)
def test_bad_set_values_exit_2_with_a_message(tmp_path, capsys, setting, message) -> None:
    netlist = tmp_path / "rc.lumped"
    netlist.write_text(SYMBOLIC_RC)
    before = sorted(p.name for p in tmp_path.iterdir())
    status = main([str(netlist), "--set", setting, "--json", str(tmp_path / "out.json")])
    err = capsys.readouterr().err
    assert status == 2
    assert message in err
    assert "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_set_value_gives_a_free_parameter_its_value(tmp_path, capsys) -> None:
    # RC charging (common practice): v(t) = 10 V (1 - exp(-t / RC)); at t = RC it is 6.32 V.
    netlist = tmp_path / "rc.lumped"
    netlist.write_text(SYMBOLIC_RC + "require final value of voltage at b above 9.9 V\n")
    status = main([str(netlist), "--set", "R=1 kohm", "--quiet"])
    assert status == 0
    assert "PASS" in capsys.readouterr().out
