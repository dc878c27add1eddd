"""Every shipped example parses, validates, explains itself, watches and requires something."""

from __future__ import annotations

from pathlib import Path

import pytest

from lumped.language import load_file
from lumped.topology import validate

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "examples").glob("*.lumped"))


def test_there_are_examples():
    assert len(EXAMPLES) >= 5


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_example_parses_and_validates(path):
    netlist = load_file(path)
    topology = validate(netlist)
    assert netlist.elements
    assert set(topology.domains) == set(netlist.nodes) - {"ground", "frame"}


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_example_has_a_leading_comment_a_watch_and_a_requirement(path):
    lines = path.read_text("utf-8").splitlines()
    assert lines[0].startswith("# ") and len(lines[0]) > 10
    statements = [line.split("#")[0].strip() for line in lines]
    assert any(s.startswith("watch ") for s in statements)
    assert any(s.startswith("require ") for s in statements)
    netlist = load_file(path)
    assert netlist.watches and netlist.requirements
