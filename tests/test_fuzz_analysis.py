"""Whole-pipeline fuzzing: perturbed example netlists must give results or our own errors.

The front-end fuzzing (test_fuzz.py) stops at a validated model; here the
perturbed netlists go on through the solve, the inversion, the figures and the
report, where a crash would otherwise surface as an internal error.
"""

from __future__ import annotations

import re
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lumped.analysis import analyse
from lumped.api import loads
from lumped.errors import LumpedError
from lumped.io.text import render

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "examples").glob("*.lumped"))
NUMBER = re.compile(r"(?<![\w.])(\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)(?=\s*[A-Za-zµΩ%])")


def _perturb(text: str, factors: list[float]) -> str:
    """Scale every number that carries a unit by the next factor (cycled)."""
    count = 0

    def scale(match: re.Match) -> str:
        nonlocal count
        factor = factors[count % len(factors)]
        count += 1
        return f"{float(match.group(1)) * factor:.6g}"

    return NUMBER.sub(scale, text)


@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(
    example=st.sampled_from(EXAMPLES),
    factors=st.lists(st.floats(min_value=1e-3, max_value=1e3, allow_nan=False), min_size=1,
                     max_size=8),
)
def test_perturbed_examples_analyse_or_fail_cleanly(example: Path, factors: list[float]) -> None:
    text = _perturb(example.read_text(encoding="utf-8"), factors)
    try:
        analysis = analyse(loads(text, example.name))
    except LumpedError:
        return  # a clear error of ours is an acceptable outcome
    report = render(analysis)
    assert "requirements" in report or "no requirements stated" in report
    for result in analysis.results:
        if result.figures is not None and result.figures.peak is not None:
            assert result.figures.peak.value >= result.figures.minimum.value
