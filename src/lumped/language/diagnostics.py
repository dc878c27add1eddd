"""Parse errors in the user's terms: place, caret and a hint saying what to do.

lark reports where it stopped and what it expected; this module turns that
into a :class:`~lumped.errors.NetlistError`.  Common slips are recognised by
the parser state they stop in: :data:`SLIP_EXAMPLES` lists example mistakes
under the message each must get, and an error reaching the same state is given
that message.  Misspelt words, units after a closing parenthesis and units
split by spaces are recognised from the text around the place.
"""

from __future__ import annotations

import difflib
import re
from functools import cache
from types import MappingProxyType

from lark import Token, Tree
from lark.exceptions import UnexpectedCharacters, UnexpectedEOF, UnexpectedInput

from lumped.errors import Location, NetlistError, UnitError
from lumped.language.grammar import KEYWORDS, parser
from lumped.language.units import is_unit, parse_unit

# Label ("what: hint") -> example slips that must be given it.
SLIP_EXAMPLES: MappingProxyType[str, tuple[str, ...]] = MappingProxyType({
    "missing value: write the element's value with its unit, e.g. `4.7 uF`": (
        "resistor R1 from a to b\n",
        "capacitor C1 from a to ground\n",
        "inductor L1 from a to b initially 1 A\n",
        "mass m1 at body\n",
    ),
    "missing waveform: say what the source does, e.g. `step 48 V` or `sine 1 V at 50 Hz`": (
        "voltage source V1 from a to ground\n",
        "current source I1 from a to ground\n",
        "force source F1 at body\n",
        "velocity source V1 at body\n",
    ),
    "missing nodes: write `from NODE to NODE` (or `at NODE`) after the name": (
        "resistor R1 2 ohm from\n",
        "resistor R1 from a 2 ohm\n",
        "resistor R1 from a to\n",
    ),
    "unbalanced parentheses: close every `(` with a `)`": (
        "let a = (2 + 3\n",
        "let a = ((1 V)\n",
        "let a = 2 )\n",
        "resistor R1 from a to b (2 ohm\n",
    ),
    "missing name: every element needs a name right after its kind, "
    "e.g. `resistor R1 from a to b 1 ohm`": (
        "resistor from a to b 1 ohm\n",
        "capacitor at a 1 uF\n",
    ),
    "incomplete arithmetic: an operator needs a value on both sides": (
        "let a = 2 +\n",
        "let a = 2 * * 3\n",
        "resistor R1 from a to b 2 ohm *\n",
    ),
})

_FALLBACK_HINT = (
    "each line starts with a keyword: let, an element kind (resistor, capacitor, mass, "
    "spring, ...), a coupling (gear, motor, ...), watch, window, require, gravity or drop"
)


def _error_key(error: UnexpectedInput) -> tuple:
    state = getattr(error, "state", None)
    position = getattr(state, "position", state)
    accepts = getattr(error, "accepts", None) or getattr(error, "expected", None) or ()
    return position, frozenset(accepts)


def _token_type(error: UnexpectedInput) -> str:
    token = getattr(error, "token", None)
    return "$END" if token is None else str(token.type)


@cache
def _example_keys() -> tuple[dict[tuple, str], dict[tuple, str]]:
    """Parser states reached by the example slips, each mapped to its label.

    Two slips can stop the parser in the same state and differ only in the
    token met there (`resistor R1 2 ohm from` and `resistor from a to b`, where
    `from` was taken as the name): the first map keys on the token too, the
    second on the state alone for slips the examples do not spell out.
    """
    exact: dict[tuple, str] = {}
    by_state: dict[tuple, str] = {}
    for label, examples in SLIP_EXAMPLES.items():
        for example in examples:
            try:
                parser().parse(example)
            except UnexpectedInput as error:
                exact.setdefault((*_error_key(error), _token_type(error)), label)
                by_state.setdefault(_error_key(error), label)
    return exact, by_state


_MISSING_NAME = "missing name"
_NOT_NAMED = {"let", "watch", "window", "require", "settling band", "gravity", "drop"}
# A placement word where the name should be: the parser takes the word as the name.
_NAME_IS_A_PLACEMENT = re.compile(
    r"^[ \t]*(?:" + "|".join(k.replace(" ", r"[ \t]+") for k in sorted(
        set(KEYWORDS) - _NOT_NAMED, key=len, reverse=True)) + r")[ \t]+(?:from|at|on)[ \t]")


def _classify(error: UnexpectedInput, line_text: str = "") -> str | None:
    """Match an error against the example slips by the parser state they reach."""
    if _NAME_IS_A_PLACEMENT.match(line_text):
        return next(label for label in SLIP_EXAMPLES if label.startswith(_MISSING_NAME))
    exact, by_state = _example_keys()
    key = _error_key(error)
    return exact.get((*key, _token_type(error))) or by_state.get(key)


def error_from_lark(error: UnexpectedInput, text: str, source: str) -> NetlistError:
    """The message for a parse error: what is wrong, where (line and column) and a hint.

    Parameters
    ----------
    error : lark.exceptions.UnexpectedInput
        What lark raised while parsing ``text``.
    text : str
        The whole netlist text that was parsed (ending in a newline).
    source : str
        The name used in messages, usually the file name.

    Examples
    --------
    >>> text = "resistor R1 from a to b\\n"
    >>> try:
    ...     parser().parse(text)
    ... except UnexpectedInput as error:
    ...     print(error_from_lark(error, text, "f.lumped").render())
    f.lumped:1:24: missing value (the line ends here)
        resistor R1 from a to b
                               ^
    hint: write the element's value with its unit, e.g. `4.7 uF`
    """
    line = getattr(error, "line", 1) or 1
    column = getattr(error, "column", 1) or 1
    width = 1
    token = getattr(error, "token", None)
    if isinstance(error, UnexpectedEOF) or (token is not None and token.type == "$END"):
        lines = text[:-1].split("\n") if text.endswith("\n") else text.split("\n")
        line = len(lines)
        column = len(lines[-1]) + 1
    if token is not None and token.type not in ("$END", "_NL"):
        width = max(1, len(str(token)))
    stray = _unit_after_expression(text, line, column)
    if stray is not None:
        word, before = stray
        return NetlistError(
            f"the unit '{word}' follows {before}, not a number",
            Location(source, line, column, len(word)),
            hint=f"a unit goes right after a number; multiply instead: `... * 1 {word}`",
        ).with_text(text)
    spaced = _spaced_unit(text, line, column)
    if spaced is not None:
        written, joined, start = spaced
        return NetlistError(
            f"a space inside the unit '{written}'",
            Location(source, line, start, len(written)),
            hint=f"write units without spaces: `{joined}`",
        ).with_text(text)
    misspelt = _misspelt_word_before(text, line, column)
    if misspelt is not None:
        word, keyword, word_column = misspelt
        return NetlistError(
            f"unknown word '{word}'", Location(source, line, word_column, len(word)),
            hint=f"did you mean '{keyword}'?",
        ).with_text(text)
    lines = text.split("\n")
    label = _classify(error, lines[line - 1] if 1 <= line <= len(lines) else "")
    if label is not None:
        what, hint = label.split(": ", 1)
        found = _describe_token(token, error)
        message = f"{what}{found}"
    else:
        message, hint = _generic_message(error, token)
    return NetlistError(message, Location(source, line, column, width), hint=hint).with_text(text)


# Words that follow a name or a value inside a statement; a near miss of one of
# these is reported as a misspelling rather than as whatever it broke next.
_INNER_WORDS = (
    "from", "to", "at", "on", "initially", "after", "for", "phase", "plus", "step", "ramp",
    "impulse", "pulse", "sine", "exponential", "tau", "bump", "ratio", "radius", "constant",
    "below", "above", "between", "and", "within", "of", "in", "through", "across",
    "equilibrium", "unloaded",
)


def _misspelt_word_before(text: str, line: int, column: int) -> tuple[str, str, int] | None:
    lines = text.split("\n")
    if not 1 <= line <= len(lines):
        return None
    before = lines[line - 1][: column - 1]
    words = list(re.finditer(r"[A-Za-z_][A-Za-z0-9_]*", before))
    # The word the parser stopped in counts too (`initialy` stops at its `in`).
    here = re.compile(r"[A-Za-z_][A-Za-z0-9_]*").match(lines[line - 1], column - 1)
    if here is not None and before[-1:].strip() == "" and here.start() == column - 1:
        words.append(here)
    for match in reversed(words[-2:]):
        word = match.group(0)
        if word in _INNER_WORDS or word in KEYWORDS:
            return None
        close = difflib.get_close_matches(word, _INNER_WORDS, n=1, cutoff=0.75)
        if close and len(word) >= 2:
            return word, close[0], match.start() + 1
    return None


_NUMBER_THEN_WORDS = re.compile(
    r"(\d+(?:\.\d*)?(?:[eE][-+]?\d+)?|\.\d+(?:[eE][-+]?\d+)?)[ \t]+"
    r"((?:[A-Za-zµΩ°%][^\s#()]*[ \t]+)+)$")


def _unit_after_expression(text: str, line: int, column: int) -> tuple[str, str] | None:
    """`sqrt(2) ohm`, `pi rad`: a unit after something other than a number."""
    lines = text.split("\n")
    if not 1 <= line <= len(lines):
        return None
    here = lines[line - 1]
    word = re.match(r"[A-Za-zµΩ°%][A-Za-z0-9µΩ°_*/^.-]*", here[column - 1 :])
    before = here[: column - 1].rstrip()
    if word is None or not is_unit(word.group(0)):
        return None
    if before.endswith(")"):
        return word.group(0), "a closing parenthesis"
    if re.search(r"(?<![A-Za-z0-9_])pi$", before):
        return word.group(0), "pi"
    return None


def _spaced_unit(text: str, line: int, column: int) -> tuple[str, str, int] | None:
    """`1 k ohm`, `2 m V`: a number followed by a unit split by spaces, read as one.

    Returns the unit as written, the number with the unit joined, and its column.
    """
    lines = text.split("\n")
    if not 1 <= line <= len(lines):
        return None
    here = lines[line - 1]
    found = _NUMBER_THEN_WORDS.search(here[: column - 1])
    word = re.match(r"[A-Za-zµΩ°%][^\s#()]*", here[column - 1 :])
    if found is None or word is None:
        return None
    pieces = [*found.group(2).split(), word.group(0)]
    joined = "".join(pieces)
    try:
        parse_unit(joined)
    except UnitError:
        return None
    start = found.start(2) + 1
    written = here[start - 1 : column - 1 + len(word.group(0))]
    return written, f"{found.group(1)} {joined}", start


def _describe_token(token, error) -> str:
    if isinstance(error, UnexpectedCharacters):
        return f" (unexpected character {error.char!r})"
    if token is None or token.type == "$END":
        return " (the file ends here)"
    if token.type == "_NL":
        return " (the line ends here)"
    return f" (found '{token}')"


def _generic_message(error: UnexpectedInput, token) -> tuple[str, str]:
    if isinstance(error, UnexpectedCharacters):
        char = error.char
        if char == "\t":
            char = "tab"
        return f"unexpected character {char!r}", _FALLBACK_HINT
    expected = set(getattr(error, "expected", ()) or getattr(error, "accepts", ()) or ())
    if token is not None and token.type in ("NAME", "UNIT") and _at_line_start(error):
        close = difflib.get_close_matches(str(token), KEYWORDS, n=2, cutoff=0.6)
        if close:
            return (
                f"unknown statement '{token}'",
                "did you mean " + " or ".join(f"'{c}'" for c in close) + "?",
            )
        return f"unknown statement '{token}'", _FALLBACK_HINT
    if token is not None and token.type not in ("$END", "_NL"):
        word = str(token)
        wanted = _readable_expected(expected)
        close = difflib.get_close_matches(word, _keyword_words(expected), n=1, cutoff=0.6)
        hint = f"did you mean '{close[0]}'?" if close else f"expected {wanted}"
        return f"unexpected '{word}'", hint
    wanted = _readable_expected(expected)
    return "the line ends too early", f"expected {wanted}"


def _at_line_start(error: UnexpectedInput) -> bool:
    state = getattr(error, "state", None)
    interactive = getattr(error, "interactive_parser", None)
    if interactive is not None:
        try:
            return len(interactive.parser_state.value_stack) == 0 or all(
                (isinstance(v, Token) and v.type == "_NL") or isinstance(v, Tree)
                for v in interactive.parser_state.value_stack
            )
        except AttributeError:
            return False
    return state == 0


_TERMINAL_WORDS = {
    "NAME": "a name", "NUMBER": "a number", "UNIT": "a unit", "_NL": "the end of the line",
    "LPAR": "'('", "RPAR": "')'", "PLUS": "'+'", "MINUS": "'-'", "STAR": "'*'", "SLASH": "'/'",
    "CIRCUMFLEX": "'^'", "COMMA": "','", "EQUAL": "'='", "QUANTITY_WORD": "a quantity word "
    "(voltage, current, velocity, displacement, acceleration, force, angle, torque)",
    "PREPOSITION": "at, of, in, through or across", "FIGURE_WORD": "a figure (peak, minimum, "
    "final value, overshoot, rise time, settling time, ...)",
}


def _readable_expected(expected: set[str]) -> str:
    words = []
    for name in sorted(expected):
        if name.startswith("__ANON") or name.startswith("ANON") or name == "SETTLING_TIME":
            continue
        if name in _TERMINAL_WORDS:
            words.append(_TERMINAL_WORDS[name])
        elif name.isupper() and not name.startswith("__"):
            words.append(name.lower().replace("_", " "))
        else:
            words.append(name.strip("_").lower())
    words = sorted(set(words))
    if not words:
        return "something else"
    if len(words) > 6:
        return ", ".join(words[:6]) + ", ..."
    return ", ".join(words)


def _keyword_words(expected: set[str]) -> list[str]:
    return [name.lower().replace("_", " ") for name in expected if name.isupper()]


# ---------------------------------------------------------------------------
