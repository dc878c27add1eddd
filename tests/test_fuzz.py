"""Fuzzing the front end: any text either parses or fails with a located NetlistError."""

from __future__ import annotations

import re
import time
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lumped.errors import NetlistError
from lumped.language import MAX_NESTING, MAX_STATEMENTS, parse_text
from lumped.topology import validate

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "examples").glob("*.lumped"))
EXAMPLE_TEXTS = [p.read_text("utf-8") for p in EXAMPLES]
SOURCE = "fuzz.lumped"
LOCATED = re.compile(rf"^{re.escape(SOURCE)}:\d+:\d+: \S")
HANG_GUARD_SECONDS = 5.0

settings.register_profile(
    "front-end-fuzz", deadline=None, derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
MUTATIONS = settings(settings.get_profile("front-end-fuzz"), max_examples=300)
RANDOM = settings(settings.get_profile("front-end-fuzz"), max_examples=200)


def check_front_end(text: str | bytes) -> None:
    """Parse and validate; only a NetlistError with a usable message may escape."""
    started = time.perf_counter()
    try:
        validate(parse_text(text, SOURCE))
    except NetlistError as error:
        rendered = error.render()
        if error.location is None:
            assert error.message and "\n" not in error.message
        else:
            assert LOCATED.match(rendered), rendered
            assert error.location.line >= 1 and error.location.column >= 1
        assert "Traceback" not in rendered
    elapsed = time.perf_counter() - started
    assert elapsed < HANG_GUARD_SECONDS, f"took {elapsed:.1f} s"


# ---- (a) random text and bytes -------------------------------------------------------------

_WORDS = st.sampled_from([
    "resistor", "capacitor", "inductor", "mass", "spring", "damper", "voltage source",
    "current source", "force source", "from", "to", "at", "ground", "frame", "let", "=",
    "initially", "step", "sine", "plus", "after", "watch", "require", "peak", "below", "of",
    "voltage", "current", "(", ")", "^", "*", "/", "+", "-", "1", "4.7", "1e3", "uF", "kohm",
    "V", "A", "kN/m", "g", "%", "#", ",", "\n", "\t", "R1", "a", "b", "sqrt", "pi",
])


@RANDOM
@given(st.text(max_size=400))
def test_random_unicode_text(text):
    check_front_end(text)


@RANDOM
@given(st.text(alphabet=st.characters(min_codepoint=9, max_codepoint=126), max_size=400))
def test_random_printable_text(text):
    check_front_end(text)


@RANDOM
@given(st.binary(max_size=600))
def test_random_bytes(data):
    check_front_end(data)


@RANDOM
@given(st.lists(_WORDS, max_size=60))
def test_random_sequences_of_netlist_words(words):
    check_front_end(" ".join(words))


# ---- (b) mutations of the example files --------------------------------------------------------


@st.composite
def mutated_example(draw):
    text = draw(st.sampled_from(EXAMPLE_TEXTS))
    for _ in range(draw(st.integers(1, 4))):
        unit = draw(st.sampled_from(["char", "token", "line"]))
        if unit == "char":
            pieces = list(text)
        elif unit == "token":
            pieces = re.split(r"(\s+)", text)
        else:
            pieces = text.splitlines(keepends=True)
        if not pieces:
            break
        i = draw(st.integers(0, len(pieces) - 1))
        j = draw(st.integers(0, len(pieces) - 1))
        action = draw(st.sampled_from(["delete", "insert", "duplicate", "swap", "truncate"]))
        if action == "delete":
            del pieces[i]
        elif action == "insert":
            pieces.insert(i, draw(st.sampled_from(
                [*pieces[: 50], "(", ")", "#", "\n", "\x00", "µ", "Ω", "-", "1e999", " plus "])))
        elif action == "duplicate":
            pieces.insert(i, pieces[j])
        elif action == "swap":
            pieces[i], pieces[j] = pieces[j], pieces[i]
        else:
            pieces = pieces[:i]
        text = "".join(pieces)
    return text


@MUTATIONS
@given(mutated_example())
def test_mutated_examples(text):
    check_front_end(text)


@MUTATIONS
@given(mutated_example())
def test_mutated_examples_as_crlf_bytes(text):
    check_front_end(b"\xef\xbb\xbf" + text.replace("\n", "\r\n").encode("utf-8"))


# ---- resource limits ---------------------------------------------------------------


def _limit_error(text: str) -> NetlistError:
    started = time.perf_counter()
    try:
        validate(parse_text(text, SOURCE))
    except NetlistError as error:
        assert time.perf_counter() - started < 4 * HANG_GUARD_SECONDS
        return error
    raise AssertionError("the input was accepted")


def test_too_many_statements_is_refused():
    text = "".join(f"resistor R{i} from n{i} to ground 1 ohm\n" for i in range(6000))
    error = _limit_error(text)
    assert "too many statements" in error.message
    assert error.location.line == MAX_STATEMENTS + 1


def test_parentheses_thousands_deep_are_refused():
    error = _limit_error("let x = " + "(" * 3000 + "1" + ")" * 3000 + "\n")
    assert f"nested more than {MAX_NESTING} deep" in error.message
    assert error.location.line == 1


def test_long_chains_of_operators_are_refused_not_crashed():
    for text in ("let x = " + "-" * 15_000 + "1\n", "let x = " + "2^" * 6000 + "1\n",
                 "let x = " + "1*" * 6000 + "1\n"):
        assert "nested too deeply" in _limit_error(text).message


def test_numbers_too_large_to_handle_exactly_are_refused():
    assert "out of range" in _limit_error("let x = 1e999999999\n").message
    grow = "let a = 1e300\nlet b = a * a\nlet c = b * b\nlet d = c * c\n"
    assert "too large to handle exactly" in _limit_error(grow).message
