"""What the command line loads: only what the path it takes needs.

Each check runs the command in a fresh interpreter and reads ``sys.modules``
afterwards.  sympy itself loads python-flint and mpmath (sympy 1.13 and later
with python-flint installed), so those two are not on the lists.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap
from pathlib import Path

EXAMPLES = sorted(str(p) for p in (Path(__file__).resolve().parents[1] / "examples")
                  .glob("*.lumped"))
# Loaded by no path that does not need them: the checks need neither arrays, plots,
# graph libraries nor pint's registry (the unit table answers for the known words).
NOT_FOR_CHECKS = ("numpy", "matplotlib", "networkx", "pint", "scipy", "PIL")


def modules_after(calls: list[list[str]]) -> dict:
    """Run ``lumped.cli.main`` on each argument list in one fresh interpreter."""
    code = textwrap.dedent(f"""
        import contextlib, io, json, sys
        from lumped.cli import main
        statuses = []
        for argv in {calls!r}:
            with contextlib.redirect_stdout(io.StringIO()):
                statuses.append(main(argv))
        print(json.dumps({{"statuses": statuses, "modules": sorted(
            {{name.partition(".")[0] for name in sys.modules}})}}))
    """)
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=300, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def test_check_on_every_example_loads_no_array_plot_graph_or_unit_library():
    result = modules_after([["--check", path] for path in EXAMPLES])
    assert result["statuses"] == [0] * len(EXAMPLES)
    assert "sympy" in result["modules"] and "lumped" in result["modules"]
    assert [name for name in NOT_FOR_CHECKS if name in result["modules"]] == []


def test_a_full_run_loads_matplotlib_only_when_a_plot_is_asked_for(tmp_path):
    example = next(p for p in EXAMPLES if p.endswith("rc_inrush_limiter.lumped"))
    plain = modules_after([[example, "--quiet"]])
    assert plain["statuses"] == [0]
    assert "numpy" in plain["modules"]  # the figures sample the responses
    assert [name for name in ("matplotlib", "networkx", "pint", "PIL")
            if name in plain["modules"]] == []
    plotted = modules_after([[example, "--quiet", "--plot", str(tmp_path / "plot.svg")]])
    assert plotted["statuses"] == [0]
    assert "matplotlib" in plotted["modules"]
    assert (tmp_path / "plot.svg").read_text().lstrip().startswith("<?xml")


def test_a_unit_word_outside_the_table_still_reads_through_pint():
    # A mile is 1609.344 m exactly (international yard and pound, 1959; from memory).
    code = ("import sys; from lumped.language.units import UNIT_TABLE, parse_unit; "
            "assert 'mile' not in UNIT_TABLE; "
            "print(parse_unit('mile')[0], 'pint' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=120, check=True)
    assert done.stdout.split() == ["201168/125", "True"]
