"""Netlist text -> model.

The lark grammar in ``grammar/lumped.lark`` is the single definition of the
syntax.  A :class:`lark.Transformer` turns the parse tree into statements whose
arithmetic is a small tree of our own; parameters are then evaluated in
dependency order (networkx) and every value is reduced to an exact SI
magnitude with its dimensions checked against what the element needs.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from fractions import Fraction
from functools import cache
from importlib import resources
from pathlib import Path

import networkx as nx
import sympy
from lark import Lark, Token, Transformer, Tree, v_args
from lark.exceptions import (
    UnexpectedCharacters,
    UnexpectedEOF,
    UnexpectedInput,
    VisitError,
)

from lumped import model as m
from lumped.algebra.exact import (
    LARGEST_VALUE,
    LONGEST_WINDOW,
    NARROWEST_BAND,
    SMALLEST_VALUE,
    WIDEST_BAND,
    rationalise,
)
from lumped.constants import STANDARD_GRAVITY
from lumped.errors import Location, NetlistError, UnitError
from lumped.language.units import (
    DIMENSIONLESS,
    Dims,
    SIValue,
    describe,
    dims_of,
    multiply,
    parse_unit,
    power,
)

FILE_EXTENSION = ".lumped"

# Resource limits: inputs beyond these are refused with a clear message.
MAX_BYTES = 2_000_000
MAX_STATEMENTS = 5_000
MAX_NESTING = 200
MAX_LINE = 20_000

# Names the published formulas use themselves: a parameter so named would read
# ambiguously in the JSON and LaTeX (and could not be parsed back).
RESERVED_NAMES = {
    "s": "the Laplace variable", "t": "time", "pi": "the number pi",
    "I": "the imaginary unit", "E": "Euler's number", "S": "sympy singletons",
    "N": "numeric evaluation", "Q": "assumptions", "O": "order terms", "oo": "infinity",
    "exp": "the exponential", "sqrt": "the square root", "sin": "sine", "cos": "cosine",
    "sinh": "hyperbolic sine", "cosh": "hyperbolic cosine", "Heaviside": "the unit step",
    "DiracDelta": "impulses", "Piecewise": "case forms", "Eq": "conditions",
}
MAX_EXPONENT = 600  # largest power of ten written in a number (1e600)
MAX_BITS = 2_048  # largest numerator or denominator of an exact value (about 600 digits)

KEYWORDS = (
    "let", "resistor", "inductor", "capacitor", "voltage source", "current source", "mass",
    "spring", "damper", "force source", "velocity source", "displacement source", "inertia",
    "torsion spring", "rotary damper", "torque source", "angular velocity source",
    "transformer", "lever", "gear", "belt", "rack", "motor", "watch", "window", "require",
    "settling band", "gravity", "drop",
)


# ---------------------------------------------------------------------------
# The grammar


def _grammar_text() -> str:
    try:
        return resources.files("lumped.grammar").joinpath("lumped.lark").read_text("utf-8")
    except (ModuleNotFoundError, FileNotFoundError, TypeError):
        # Running from a source checkout without installing: grammar/ beside src/.
        here = Path(__file__).resolve().parents[3] / "grammar" / "lumped.lark"
        return here.read_text("utf-8")


@cache
def parser() -> Lark:
    """The lark parser for the netlist language (built once; tables cached on disk)."""
    from lumped.cachedir import cache_folder

    options = {"parser": "lalr", "lexer": "contextual", "propagate_positions": True,
               "maybe_placeholders": False}
    folder = cache_folder("grammar")
    if folder is not None:
        try:
            # lark keys the cache file on the grammar text and options.
            return Lark(_grammar_text(), cache=str(folder / "lumped.lark.cache"), **options)
        except Exception:
            pass
    return Lark(_grammar_text(), **options)


# ---------------------------------------------------------------------------
# Arithmetic trees built by the transformer


@dataclass(frozen=True)
class Num:
    value: str  # the number as written; made exact (and checked) when evaluated
    unit: str | None
    location: Location
    unit_location: Location | None = None


@dataclass(frozen=True)
class Name:
    name: str
    location: Location


@dataclass(frozen=True)
class Op:
    op: str  # + - * / ^ neg sqrt pi
    args: tuple
    location: Location


Expr = Num | Name | Op


def _names(expr: Expr) -> set[str]:
    found: set[str] = set()
    stack = [expr]
    while stack:
        item = stack.pop()
        if isinstance(item, Name):
            found.add(item.name)
        elif isinstance(item, Op):
            stack.extend(item.args)
    return found


# Raw statements (before evaluation)


@dataclass(frozen=True)
class RawStatement:
    tag: str
    fields: dict
    location: Location


class _Builder(Transformer):
    """Turns the lark tree into raw statements; arithmetic into Num/Name/Op."""

    def __init__(self, source: str) -> None:
        super().__init__()
        self.source = source

    def _loc(self, item) -> Location:
        if isinstance(item, Token):
            width = max(1, (item.end_column or item.column + 1) - item.column)
            return Location(self.source, item.line, item.column, width)
        meta = item
        width = 1
        if getattr(meta, "end_line", None) == meta.line and meta.end_column:
            width = max(1, meta.end_column - meta.column)
        return Location(self.source, meta.line, meta.column, width)

    # arithmetic ---------------------------------------------------------------
    @v_args(meta=True)
    def number(self, meta, children):
        value = str(children[0])
        if len(children) > 1:
            return Num(value, str(children[1]), self._loc(meta), self._loc(children[1]))
        return Num(value, None, self._loc(meta))

    @v_args(meta=True)
    def name(self, meta, children):
        return Name(str(children[0]), self._loc(children[0]))

    @v_args(meta=True)
    def pi(self, meta, children):
        return Op("pi", (), self._loc(meta))

    def _binary(op):  # noqa: N805 - a small factory for the four operators
        @v_args(meta=True)
        def build(self, meta, children):
            return Op(op, (children[0], children[1]), self._loc(meta))

        return build

    add = _binary("+")
    subtract = _binary("-")
    multiply = _binary("*")
    divide = _binary("/")
    power = _binary("^")

    @v_args(meta=True)
    def negate(self, meta, children):
        return Op("neg", (children[0],), self._loc(meta))

    @v_args(meta=True)
    def call(self, meta, children):
        return Op(str(children[0]), (children[1],), self._loc(meta))

    # pieces -------------------------------------------------------------------
    def passive_kind(self, children):
        return children[0]

    source_kind = passive_kind

    def between(self, children):
        return ("between", children[0], children[1])

    def at_node(self, children):
        return ("at", children[0])

    def initial(self, children):
        return ("initial", children[0])

    def delay(self, children):
        return ("delay", children[0])

    def phase(self, children):
        return ("phase", children[0])

    def grounded_port(self, children):
        return (children[0], None)

    def floating_port(self, children):
        return (children[0], children[1])

    def factor(self, children):
        return (children[0], children[1])

    @v_args(meta=True)
    def quantity(self, meta, children):
        word, prep, target = children
        return {
            "word": " ".join(str(word).split()),
            "preposition": str(prep),
            "target": target,
            "location": self._loc(meta),
        }

    def figure(self, children):
        word = children[0]
        band = children[1] if len(children) > 1 else None
        return (" ".join(str(word).split()), band, word)

    def below(self, children):
        return ("below", children[0], None)

    def above(self, children):
        return ("above", children[0], None)

    def between_bounds(self, children):
        return ("between", children[0], children[1])

    def gravity_start(self, children):
        return ("start", str(children[0]))

    # waveforms ----------------------------------------------------------------
    def _wave(shape, *slots):  # noqa: N805
        @v_args(meta=True)
        def build(self, meta, children):
            fields = {"shape": shape}
            plain = [c for c in children if not isinstance(c, tuple)]
            for slot, value in zip(slots, plain, strict=False):
                fields[slot] = value
            for child in children:
                if isinstance(child, tuple):
                    fields[child[0]] = child[1]
            fields["location"] = self._loc(meta)
            return fields

        return build

    constant = _wave(m.Shape.CONSTANT, "amplitude")
    step = _wave(m.Shape.STEP, "amplitude")
    ramp = _wave(m.Shape.RAMP, "amplitude")
    impulse = _wave(m.Shape.IMPULSE, "amplitude")
    pulse = _wave(m.Shape.PULSE, "amplitude", "duration")
    sine = _wave(m.Shape.SINE, "amplitude", "frequency")
    exponential = _wave(m.Shape.EXPONENTIAL, "amplitude", "time_constant")
    bump = _wave(m.Shape.HALF_SINE, "amplitude", "duration")

    @v_args(meta=True)
    def waveform(self, meta, children):
        return ("waveform", tuple(children), self._loc(meta))

    # statements ---------------------------------------------------------------
    def _statement(tag):  # noqa: N805
        @v_args(meta=True)
        def build(self, meta, children):
            return RawStatement(tag, {"children": children}, self._loc(meta))

        return build

    let_value = _statement("let_value")
    let_free = _statement("let_free")
    element = _statement("element")
    coupling = _statement("coupling")
    watch = _statement("watch")
    window = _statement("window")
    require = _statement("require")
    settling_band = _statement("settling_band")
    gravity = _statement("gravity")
    drop = _statement("drop")

    def start(self, children):
        return [c for c in children if isinstance(c, RawStatement)]


# ---------------------------------------------------------------------------
# Parse errors in the user's terms

_EXAMPLES: dict[str, list[str]] = {
    "missing value: write the element's value with its unit, e.g. `4.7 uF`": [
        "resistor R1 from a to b\n",
        "capacitor C1 from a to ground\n",
        "inductor L1 from a to b initially 1 A\n",
        "mass m1 at body\n",
    ],
    "missing waveform: say what the source does, e.g. `step 48 V` or `sine 1 V at 50 Hz`": [
        "voltage source V1 from a to ground\n",
        "current source I1 from a to ground\n",
        "force source F1 at body\n",
        "velocity source V1 at body\n",
    ],
    "missing nodes: write `from NODE to NODE` (or `at NODE`) after the name": [
        "resistor R1 2 ohm from\n",
        "resistor R1 from a 2 ohm\n",
        "resistor R1 from a to\n",
    ],
    "unbalanced parentheses: close every `(` with a `)`": [
        "let a = (2 + 3\n",
        "let a = ((1 V)\n",
        "let a = 2 )\n",
        "resistor R1 from a to b (2 ohm\n",
    ],
    "missing name: every element needs a name right after its kind, "
    "e.g. `resistor R1 from a to b 1 ohm`": [
        "resistor from a to b 1 ohm\n",
        "capacitor at a 1 uF\n",
    ],
    "incomplete arithmetic: an operator needs a value on both sides": [
        "let a = 2 +\n",
        "let a = 2 * * 3\n",
        "resistor R1 from a to b 2 ohm *\n",
    ],
}

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
    for label, examples in _EXAMPLES.items():
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
        return next(label for label in _EXAMPLES if label.startswith(_MISSING_NAME))
    exact, by_state = _example_keys()
    key = _error_key(error)
    return exact.get((*key, _token_type(error))) or by_state.get(key)


def _error_from_lark(error: UnexpectedInput, text: str, source: str) -> NetlistError:
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
    if word is None or not _is_unit(word.group(0)):
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
# Pre-checks: text-level problems lark should not have to meet


def _prepare(data: bytes | str, source: str) -> str:
    if isinstance(data, bytes):
        if len(data) > MAX_BYTES:
            raise NetlistError(
                f"the file is too large ({len(data)} bytes; the limit is {MAX_BYTES})",
                Location(source, 1, 1),
                hint="split the network or check that this is the right file",
                line_text=data[:200].split(b"\n")[0].decode("utf-8", "replace"),
            )
        if data.startswith(b"\xef\xbb\xbf"):
            data = data[3:]
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as exc:
            line = data[: exc.start].count(b"\n") + 1
            line_start = data.rfind(b"\n", 0, exc.start) + 1
            line_end = data.find(b"\n", exc.start)
            # Columns count characters; everything before the bad byte decodes.
            column = len(data[line_start : exc.start].decode("utf-8")) + 1
            raise NetlistError(
                f"this is not UTF-8 text (byte 0x{data[exc.start]:02x})",
                Location(source, line, column),
                hint="a netlist is a plain text file; save it as UTF-8",
                line_text=data[line_start : line_end if line_end >= 0 else len(data)].decode(
                    "utf-8", "replace"),
            ) from None
    else:
        text = data.lstrip("\ufeff")
        if len(text) > MAX_BYTES:
            raise NetlistError(
                f"the text is too large ({len(text)} characters; the limit is {MAX_BYTES})",
                Location(source, 1, 1),
                hint="split the network",
                line_text=text[:200].split("\n")[0],
            )
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    depth = 0
    for number, line in enumerate(text.split("\n"), start=1):
        if len(line) > MAX_LINE:
            raise NetlistError(
                f"line {number} is {len(line)} characters long (the limit is {MAX_LINE})",
                Location(source, number, MAX_LINE),
                hint="write one statement per line and name long expressions with let",
                line_text=line[:200],
            )
        for column, char in enumerate(line, start=1):
            if char == "\x00" or (ord(char) < 32 and char not in "\t\f"):
                raise NetlistError(
                    f"control character {char!r} in the text",
                    Location(source, number, column),
                    hint="a netlist is a plain text file; is this the right file?",
                    line_text=line,
                )
            if char == "#":
                break
            if char == "(":
                depth += 1
                if depth > MAX_NESTING:
                    raise NetlistError(
                        f"parentheses nested more than {MAX_NESTING} deep",
                        Location(source, number, column),
                        hint="name parts of the expression with let",
                        line_text=line,
                    )
            elif char == ")":
                depth = max(0, depth - 1)
        depth = 0
    if not text.endswith("\n"):
        text += "\n"
    return text


# ---------------------------------------------------------------------------
# Evaluation of arithmetic to exact SI values


class _Scope:
    def __init__(self, source: str) -> None:
        self.source = source
        self.values: dict[str, SIValue] = {}
        self.parameters: dict[str, m.Parameter] = {}

    def evaluate(self, expr: Expr, expected: Dims | None = None) -> SIValue:
        if isinstance(expr, Num):
            return self._number(expr, expected)
        if isinstance(expr, Name):
            if expr.name not in self.values:
                known = list(self.values)
                close = difflib.get_close_matches(expr.name, known, n=1)
                hint = (
                    f"did you mean '{close[0]}'?"
                    if close
                    else f"define it first with `let {expr.name} = ...`"
                )
                if _is_unit(expr.name):
                    hint = (f"'{expr.name}' is a unit: write it right after a number "
                            f"(`2 {expr.name}`), or multiply by one (`... * 1 {expr.name}`)")
                raise NetlistError(f"unknown parameter '{expr.name}'", expr.location, hint=hint)
            return self.values[expr.name]
        op = expr.op
        if op == "pi":
            return SIValue(sympy.pi, DIMENSIONLESS)
        if op == "neg":
            inner = self.evaluate(expr.args[0], expected)
            return SIValue(-inner.value, inner.dims)
        if op == "sqrt":
            inner = self.evaluate(expr.args[0])
            dims = power(inner.dims, Fraction(1, 2))
            if dims is None:
                raise NetlistError(
                    f"the square root of {describe(inner.dims)} has no unit",
                    expr.location,
                    hint="take roots of quantities whose units are squares",
                )
            if inner.value.is_negative:  # a number, or -n with n a (positive) parameter
                raise NetlistError("square root of a negative value", expr.location,
                                   hint="the value under sqrt(...) must not be negative")
            return SIValue(sympy.sqrt(inner.value), dims)
        left = self.evaluate(expr.args[0], expected if op in "+-" else None)
        right = self.evaluate(expr.args[1], expected if op in "+-" else None)
        if op in "+-":
            if left.dims != right.dims:
                raise NetlistError(
                    f"cannot {'add' if op == '+' else 'subtract'} {describe(right.dims)} "
                    f"{'to' if op == '+' else 'from'} {describe(left.dims)}",
                    expr.location,
                    hint="both sides of + and - need the same kind of unit",
                )
            value = left.value + right.value if op == "+" else left.value - right.value
            return SIValue(_bounded(value, expr.location), left.dims)
        if op == "*":
            return SIValue(_bounded(left.value * right.value, expr.location),
                           multiply(left.dims, right.dims))
        if op == "/":
            if right.value == 0:
                raise NetlistError("division by zero", expr.location,
                                   hint="the divisor works out to zero")
            return SIValue(_bounded(left.value / right.value, expr.location),
                           multiply(left.dims, right.dims, -1))
        if op == "^":
            if right.dims or not right.value.is_Rational:
                hint = "write a power without a unit, such as `^2` or `^-1`"
                if isinstance(expr.args[1], Num) and expr.args[1].unit:
                    # `10^30 ohm` reads as 10 to the power `30 ohm`.
                    hint = (f"the unit went onto the exponent: write "
                            f"`({_source_text(expr.args[0])}^{expr.args[1].value}) * 1 "
                            f"{expr.args[1].unit}`")
                raise NetlistError(
                    "an exponent must be a plain rational number", expr.args[1].location,
                    hint=hint,
                )
            exponent = Fraction(int(right.value.p), int(right.value.q))
            if abs(exponent) > 64:
                raise NetlistError("exponent too large (the limit is 64)", expr.args[1].location,
                                   hint="name parts of the expression with let")
            dims = power(left.dims, exponent)
            if dims is None:
                raise NetlistError(
                    f"{describe(left.dims)} to the power {exponent} has no unit", expr.location,
                    hint="a fractional power needs a unit whose exponents it divides",
                )
            if exponent.denominator != 1 and (
                    left.value.is_negative or left.value.is_real is False):
                raise NetlistError(
                    f"{_show(left.value)} to the power {exponent} is not a real number",
                    expr.location,
                    hint="a fractional power needs a value that is not negative",
                )
            if left.value == 0 and exponent < 0:
                raise NetlistError("division by zero", expr.location,
                                   hint="zero cannot be raised to a negative power")
            if _bits(left.value) * abs(exponent.numerator) > MAX_BITS:
                raise _too_large(expr.location)
            return SIValue(left.value ** sympy.Rational(exponent.numerator, exponent.denominator),
                           dims)
        raise NetlistError(f"unknown operation {op}", expr.location,  # grammar prevents this
                           hint="use + - * / ^ and parentheses")

    def _number(self, expr: Num, expected: Dims | None) -> SIValue:
        _, _, exponent = expr.value.lower().partition("e")
        if exponent and abs(int(exponent)) > MAX_EXPONENT:
            raise NetlistError(
                f"the number {expr.value} is out of range (the limit is 1e{MAX_EXPONENT})",
                expr.location, hint="use a prefixed unit or a smaller power of ten",
            )
        exact = Fraction(expr.value)
        value = _bounded(sympy.Rational(exact.numerator, exact.denominator), expr.location)
        if expr.unit is None:
            return SIValue(value, DIMENSIONLESS)
        if expr.unit == "g" and expected == dims_of("m/s^2"):
            # `38 g` where an acceleration is expected means standard gravity, not grams.
            return SIValue(value * STANDARD_GRAVITY, expected)
        try:
            factor, dims = parse_unit(expr.unit)
        except UnitError as exc:
            where = expr.unit_location or expr.location
            raise NetlistError(
                str(exc),
                Location(self.source, where.line, where.column + exc.offset, exc.width),
                hint=exc.hint,
            ) from None
        return SIValue(value * factor, dims)


def _source_text(expr: Expr) -> str:
    """A short rendering of an arithmetic tree for hints (numbers and names as written)."""
    if isinstance(expr, Num):
        return expr.value + (f" {expr.unit}" if expr.unit else "")
    if isinstance(expr, Name):
        return expr.name
    return "..."


def _not_real(value: sympy.Expr) -> bool:
    """True when a value is complex: sqrt(-2), (-8)^(1/3), or such a factor times a parameter."""
    if value.is_real is False or value.has(sympy.I):
        return True
    return any(p.is_number and p.is_real is False for p in value.atoms(sympy.Pow))


def _is_unit(word: str) -> bool:
    try:
        parse_unit(word)
    except UnitError:
        return False
    return True


def _bits(value: sympy.Expr) -> int:
    """Size of the exact rational part of a value (numerator or denominator, in bits)."""
    coefficient = value if value.is_Rational else value.as_coeff_Mul()[0]
    if not coefficient.is_Rational:
        return 0
    return max(int(coefficient.p).bit_length(), int(coefficient.q).bit_length())


def _too_large(location: Location) -> NetlistError:
    return NetlistError(
        f"a value in this expression is too large to handle exactly (more than about "
        f"{MAX_BITS * 3 // 10} digits)", location,
        hint="check the powers of ten and the units",
    )


def _bounded(value: sympy.Expr, location: Location) -> sympy.Expr:
    """Refuse exact values too large to work with (they would stall the algebra)."""
    if _bits(value) > MAX_BITS:
        raise _too_large(location)
    return value


# ---------------------------------------------------------------------------
# Statement building


def _kind_word(token) -> str:
    return " ".join(str(token).split())


class _ModelBuilder:
    def __init__(self, source: str, text: str, overrides: dict | None = None) -> None:
        self.source = source
        self.text = text
        self.scope = _Scope(source)
        self.overrides = overrides or {}
        self.rounded: list[Location] = []

    def value(self, expr: Expr, unit: str, what: str, *, positive: bool = False,
              number: bool = False, hint: str = "a physical element has a positive value",
              largest: sympy.Expr = LARGEST_VALUE, ranged: bool = True) -> sympy.Expr:
        """The exact SI value of ``expr``, checked for its unit, reality and range.

        Every value read from the text passes here: it must be real and lie in
        the documented range (:mod:`lumped.algebra.exact`).  Values stay exact (``pi``
        stays ``pi``); where one is irrational its place is noted, since the
        algebra takes it at :data:`~lumped.algebra.exact.IRRATIONAL_DIGITS` digits.
        """
        expected = dims_of(unit)
        _check_rotation_units(expr, unit, what)
        result = self.scope.evaluate(expr, expected)
        if result.dims != expected:
            got = describe(result.dims)
            want = describe(expected) if expected else "a plain number"
            if not result.dims:
                message = f"{what} needs a unit: expected {want}, got a plain number"
                hint = f"add the unit after the number, e.g. `{example_value(unit)}`"
            else:
                message = f"{what} must be in {want}, not {got}"
                hint = f"write it in {want} (or a prefixed form), e.g. `{example_value(unit)}`"
            raise NetlistError(message, expr.location, hint=hint)
        value = result.value
        if _not_real(value):
            raise NetlistError(f"{what} is not a real number ({value})", expr.location,
                               hint="check the signs under roots and fractional powers")
        if number and value.free_symbols:
            names = ", ".join(sorted(str(x) for x in value.free_symbols))
            raise NetlistError(
                f"{what} must be a number; it depends on {names}, which has no value",
                expr.location,
                hint="give the parameter a value with `let` or `--set NAME=VALUE`",
            )
        if value.is_number:
            value = self._checked_number(value, expr, unit, what,
                                         largest if ranged else sympy.oo, positive and ranged)
        if positive and value.is_number and not (value > 0):
            raise NetlistError(
                f"{what} must be greater than zero, not {_show(value)}",
                expr.location,
                hint=hint,
            )
        return value

    def _checked_number(self, value: sympy.Expr, expr: Expr, unit: str, what: str,
                        largest: sympy.Expr, positive: bool) -> sympy.Expr:
        """A real number within the accepted range (irrational ones are noted)."""
        # Checked at 40 digits; the model keeps the exact value (pi stays pi) and the
        # algebra takes irrational numbers as rationals where it meets them.
        exact = rationalise(value)
        if not exact.is_Rational:  # nothing the grammar builds, but never pass it on
            raise NetlistError(f"{what} cannot be worked out as a number ({value})",
                               expr.location, hint="simplify the expression")
        if exact != value:
            self.rounded.append(expr.location)
        # A physical size (positive) lies within the range; a signed value (an
        # amplitude, an initial condition, a bound) may also be zero or tiny.
        smallest = SMALLEST_VALUE if positive else 0
        if exact != 0 and not smallest <= abs(exact) <= largest:
            shown = describe(dims_of(unit)) if unit else ""
            raise NetlistError(
                f"{what} is {_show(exact)}{' ' + shown if shown else ''}, outside the range "
                f"the tool accepts: {float(smallest):g} to {float(largest):g}"
                f"{' ' + shown if shown else ''} in magnitude",
                expr.location,
                hint="check the power of ten and the unit prefix",
            )
        return value

    def build(self, statements: list[RawStatement]) -> m.Netlist:
        if len(statements) > MAX_STATEMENTS:
            raise NetlistError(
                f"too many statements ({len(statements)}; the limit is {MAX_STATEMENTS})",
                statements[MAX_STATEMENTS].location,
                hint="split the network into smaller files",
            )
        parameters = self._parameters([s for s in statements if s.tag.startswith("let")])
        elements, couplings, watches, requirements, drops = [], [], [], [], []
        window = gravity = None
        band = sympy.Rational(2, 100)
        for statement in statements:
            tag, children, loc = statement.tag, statement.fields["children"], statement.location
            if tag == "element":
                elements.append(self._element(children, loc))
            elif tag == "coupling":
                couplings.append(self._coupling(children, loc))
            elif tag == "watch":
                watches.extend(self._quantity(q) for q in children)
            elif tag == "window":
                if window is not None:
                    raise NetlistError(
                        "a second window statement", loc,
                        hint=f"keep one window (the first is on line {window.location.line})",
                    )
                window = self._window(children, loc)
            elif tag == "require":
                requirements.append(self._requirement(children, loc))
            elif tag == "settling_band":
                band = self._band(children[0])
            elif tag == "gravity":
                if gravity is not None:
                    raise NetlistError(
                        "a second gravity statement", loc,
                        hint=f"keep one (the first is on line {gravity.location.line})",
                    )
                gravity = self._gravity(children, loc)
            elif tag == "drop":
                height = self.value(children[1], "m", "a drop height", number=True,
                                    positive=True)
                drops.append(m.Drop(str(children[0]), height, _token_loc(self.source,
                                                                         children[0])))
        return m.Netlist(
            source=self.source,
            text=self.text,
            parameters=tuple(parameters),
            elements=tuple(elements),
            couplings=tuple(couplings),
            watches=tuple(watches),
            requirements=tuple(requirements),
            window=window,
            settling_band=band,
            gravity=gravity,
            drops=tuple(drops),
            rounded=tuple(self.rounded),
        )

    def _parameters(self, statements: list[RawStatement]) -> list[m.Parameter]:
        graph = nx.DiGraph()
        by_name: dict[str, RawStatement] = {}
        for statement in statements:
            name_token = statement.fields["children"][0]
            name = str(name_token)
            if name in by_name:
                first = by_name[name].location.line
                raise NetlistError(
                    f"parameter '{name}' is defined twice", _token_loc(self.source, name_token),
                    hint=f"the first definition is on line {first}; keep one",
                )
            if name in RESERVED_NAMES:
                raise NetlistError(
                    f"'{name}' is reserved and cannot name a parameter",
                    _token_loc(self.source, name_token),
                    hint="the results use it for " + RESERVED_NAMES[name] + "; choose another name",
                )
            by_name[name] = statement
            graph.add_node(name)
        declared: dict[str, RawStatement] = {}
        for name, (expr, where, line) in self.overrides.items():
            if name not in by_name:
                known = ", ".join(sorted(by_name)) or "none"
                raise NetlistError(
                    f"'{name}' is not a parameter of this netlist", where,
                    hint=f"the parameters are: {known}", line_text=line,
                )
            declared[name] = by_name[name]
            by_name[name] = RawStatement(
                "let_value", {"children": [by_name[name].fields["children"][0], expr]},
                by_name[name].location,
            )
        for name, statement in by_name.items():
            if statement.tag == "let_value":
                for used in _names(statement.fields["children"][1]):
                    if used in by_name:
                        graph.add_edge(used, name)
        try:
            order = list(nx.topological_sort(graph))
        except nx.NetworkXUnfeasible:
            cycle = [edge[0] for edge in nx.find_cycle(graph)]
            first = by_name[cycle[0]]
            raise NetlistError(
                "parameters defined in a circle: " + " -> ".join([*cycle, cycle[0]]),
                first.location,
                hint="give one of them a value that does not depend on the others",
            ) from None
        parameters = []
        for name in order:
            statement = by_name[name]
            children = statement.fields["children"]
            if statement.tag == "let_value":
                result = self.scope.evaluate(children[1])
                parameter = m.Parameter(
                    name, sympy.Symbol(name, positive=True), result.value,
                    describe(result.dims) if result.dims else "", statement.location,
                )
            else:
                unit_text = str(children[1]) if len(children) > 1 else ""
                dims = DIMENSIONLESS
                if unit_text:
                    try:
                        _, dims = parse_unit(unit_text)
                    except UnitError as exc:
                        raise NetlistError(
                            str(exc), _token_loc(self.source, children[1]), hint=exc.hint
                        ) from None
                symbol = sympy.Symbol(name, positive=True)
                # A free parameter is a symbol in SI units of its dimension.
                result = SIValue(symbol, dims)
                parameter = m.Parameter(
                    name, symbol, None, describe(dims) if dims else "", statement.location
                )
            self.scope.values[name] = result
            parameters.append(parameter)
        for name, original in declared.items():
            self._check_override(name, original, self.scope.values[name])
        # Keep the order of the file for display.
        parameters.sort(key=lambda p: (p.location.line, p.location.column))
        return parameters

    def _check_override(self, name: str, declared: RawStatement, result: SIValue) -> None:
        """A value given on the command line must have the declared parameter's unit."""
        children = declared.fields["children"]
        if declared.tag == "let_free":
            wanted = parse_unit(str(children[1]))[1] if len(children) > 1 else DIMENSIONLESS
        else:
            wanted = self.scope.evaluate(children[1]).dims
        if result.dims != wanted:
            _, where, line = self.overrides[name]
            raise NetlistError(
                f"the value given for '{name}' is in {describe(result.dims)}, but the netlist "
                f"uses it as {describe(wanted)}", where,
                hint=f"give '{name}' a value in {describe(wanted)}", line_text=line,
            )

    def _placement(self, placement, name: str, kind: m.Kind, loc: Location) -> tuple[str, str]:
        reference = kind.domain.reference
        if placement is None:
            if kind.value.one_terminal:
                return name, reference
            raise NetlistError(
                f"{kind.word} '{name}' needs its nodes",
                loc,
                hint=f"write `{kind.word} {name} from NODE to NODE ...`"
                + (" or `at NODE`" if kind.is_source else ""),
            )
        if placement[0] == "between":
            a, b = str(placement[1]), str(placement[2])
            if kind.value.one_terminal and reference not in (a, b):
                raise NetlistError(
                    f"a {kind.word} always connects to the {reference}",
                    loc,
                    hint=f"write `{kind.word} {name} at NODE ...`",
                )
            if kind.value.one_terminal and a == reference:
                # A mass's across value is its node's velocity against the frame,
                # whichever way round the line names the two.
                a, b = b, a
            return a, b
        node = str(placement[1])
        if kind.role is m.Role.THROUGH_SOURCE:
            return reference, node
        return node, reference

    def _element(self, children, loc: Location) -> m.Element:
        kind_token, name_token = children[0], children[1]
        kind = m.Kind.from_word(_kind_word(kind_token))
        name = str(name_token)
        rest = list(children[2:])
        placement = rest.pop(0) if rest and isinstance(rest[0], tuple) and rest[0][0] in (
            "between", "at") else None
        positive, negative = self._placement(placement, name, kind, loc)
        if kind.is_source:
            waveform = self._waveform(rest[0], kind)
            return m.Element(name, kind, positive, negative, None, waveform, None, loc)
        value = self.value(rest[0], kind.value.value_unit, f"the value of {kind.word} '{name}'",
                           positive=True)
        initial = None
        if len(rest) > 1:
            initial_expr = rest[1][1]
            if not kind.value.initial_unit:
                raise NetlistError(
                    f"a {kind.word} stores no energy, so it takes no initial condition",
                    initial_expr.location,
                    hint="initial conditions go on capacitors, inductors, masses, springs, "
                    "inertias and torsion springs",
                )
            initial = self.value(initial_expr, kind.value.initial_unit,
                                 f"the initial condition of {kind.word} '{name}'")
        return m.Element(name, kind, positive, negative, value, None, initial, loc)

    def _waveform(self, raw, kind: m.Kind) -> m.Waveform:
        _, terms, loc = raw
        unit = kind.value.value_unit
        built = []
        for term in terms:
            shape: m.Shape = term["shape"]
            amplitude_unit = unit
            if shape is m.Shape.RAMP:
                amplitude_unit = f"{unit}/s"
            elif shape is m.Shape.IMPULSE:
                amplitude_unit = f"{unit}*s"
            amplitude = self.value(term["amplitude"], amplitude_unit,
                                   f"the {shape.value} amplitude of {kind.word}")
            fields = {"amplitude": amplitude, "location": term["location"]}
            if "delay" in term:
                delay = self.value(term["delay"], "s", "a delay")
                if delay.is_number and delay < 0:
                    raise NetlistError("a delay cannot be negative", term["delay"].location,
                                       hint="sources start at t = 0 or later")
                fields["delay"] = delay
            if "duration" in term:
                fields["duration"] = self.value(term["duration"], "s", "a duration", positive=True)
            if "frequency" in term:
                fields["frequency"] = self.value(term["frequency"], "Hz", "a frequency",
                                                 positive=True)
            if "phase" in term:
                fields["phase"] = self.value(term["phase"], "", "a phase", number=True)
            if "time_constant" in term:
                fields["time_constant"] = self.value(term["time_constant"], "s", "a time constant",
                                                     positive=True)
            built.append(m.WaveformTerm(shape=shape, **fields))
        return m.Waveform(tuple(built), loc)

    def _coupling(self, children, loc: Location) -> m.Coupling:
        kind = m.CouplingKind.from_word(str(children[0]))
        name = str(children[1])
        ports = []
        for raw, domain in ((children[2], kind.input_domain), (children[3], kind.output_domain)):
            positive, negative = raw
            ports.append(m.Port(str(positive), str(negative) if negative else domain.reference))
        word_token, expr = children[4]
        word = str(word_token)
        expected_word = {"rack": "radius", "motor": "constant"}.get(kind.word, "ratio")
        if word != expected_word:
            raise NetlistError(
                f"a {kind.word} is given by its {expected_word}, not a {word}",
                _token_loc(self.source, word_token),
                hint=f"write `{expected_word} ...`",
            )
        if kind is m.CouplingKind.RACK:
            radius = self.value(expr, "m", f"the radius of rack '{name}'", positive=True)
            ratio = 1 / radius
        elif kind is m.CouplingKind.MOTOR:
            ratio = self.value(expr, "V*s/rad", f"the constant of motor '{name}'", positive=True)
        else:
            ratio = self.value(expr, "", f"the ratio of {kind.word} '{name}'", positive=True)
        return m.Coupling(name, kind, ports[0], ports[1], ratio, loc)

    def _quantity(self, raw: dict) -> m.Quantity:
        kind = m.QuantityKind.from_word(raw["word"])
        return m.Quantity(kind, str(raw["target"]), raw["preposition"], raw["location"])

    def _window(self, children, loc: Location) -> m.Window:
        longer = "a window is a length of time above zero, e.g. `window 10 ms`"
        if len(children) == 1:
            start = sympy.Integer(0)
            stop = self.value(children[0], "s", "the window", positive=True, number=True,
                              hint=longer, largest=LONGEST_WINDOW)
        else:
            start = self.value(children[0], "s", "the window start", number=True,
                               largest=LONGEST_WINDOW)
            stop = self.value(children[1], "s", "the window end", positive=True, number=True,
                              hint=longer, largest=LONGEST_WINDOW)
        if start.is_number and start < 0:
            raise NetlistError("the window cannot start before t = 0", children[0].location,
                               hint="write `window START to STOP` with START >= 0")
        if start.is_number and stop.is_number and not stop > start:
            raise NetlistError("the window must end after it starts", loc,
                               hint="write `window START to STOP` with STOP > START")
        return m.Window(start, stop, loc)

    def _band(self, expr: Expr) -> sympy.Expr:
        band = self.value(expr, "", "the settling band", positive=True, number=True,
                          hint="a band such as `2 %` or `5 %`", ranged=False)
        if not NARROWEST_BAND <= band <= WIDEST_BAND:
            raise NetlistError(
                f"the settling band is {_show(100 * band)} %; it must lie between "
                f"{float(100 * NARROWEST_BAND):g} % and {float(100 * WIDEST_BAND):g} %",
                expr.location, hint="a band such as `2 %` or `5 %`")
        return band

    def _requirement(self, children, loc: Location) -> m.Requirement:
        words, band_expr, _word_token = children[0]
        figure = m.Figure.from_words(words)
        quantity = self._quantity(children[1])
        how, first, second = children[2]
        if figure in (m.Figure.OVERSHOOT, m.Figure.UNDERSHOOT):
            unit = ""
        elif figure in (m.Figure.RISE_TIME, m.Figure.SETTLING_TIME):
            unit = "s"
        else:
            unit = quantity.kind.unit
        what = f"the bound on the {figure.value} of {quantity.label}"
        lower = upper = None
        if how == "below":
            upper = self.value(first, unit, what)
        elif how == "above":
            lower = self.value(first, unit, what)
        else:
            lower, upper = self.value(first, unit, what), self.value(second, unit, what)
            if lower.is_number and upper.is_number and not lower < upper:
                raise NetlistError("the lower bound must be below the upper bound",
                                   first.location, hint="write `between LOW and HIGH`")
        band = self._band(band_expr) if band_expr is not None else None
        shown_unit = "%" if figure in (m.Figure.OVERSHOOT, m.Figure.UNDERSHOOT) else unit
        return m.Requirement(figure, quantity, lower, upper, shown_unit, band, loc)

    def _gravity(self, children, loc: Location) -> m.Gravity:
        acceleration = STANDARD_GRAVITY
        start = m.GravityStart.UNLOADED
        for child in children:
            if isinstance(child, tuple):
                start = m.GravityStart(child[1])
            else:
                acceleration = self.value(child, "m/s^2", "gravity", positive=True, number=True)
        return m.Gravity(acceleration, start, loc)


_ANGLE_WORDS = ("rad", "deg", "degree", "rev", "rpm", "turn", "grad", "arcmin", "arcsec")


def _unit_texts(expr: Expr) -> list[tuple[str, Location]]:
    found, stack = [], [expr]
    while stack:
        item = stack.pop()
        if isinstance(item, Num) and item.unit:
            found.append((item.unit, item.unit_location or item.location))
        elif isinstance(item, Op):
            stack.extend(item.args)
    return found


def _check_rotation_units(expr: Expr, unit: str, what: str) -> None:
    """Hz and rad/s have the same dimensions; refuse the one that is off by 2 pi."""
    for text, where in _unit_texts(expr):
        words = re.findall(r"[A-Za-zµΩ°]+", text)
        angular = any(w in _ANGLE_WORDS for w in words)
        cycles = any(w.endswith("Hz") for w in words)
        if unit == "Hz" and angular:
            raise NetlistError(
                f"{what} must be in Hz, not an angular speed ({text})", where,
                hint="f = omega / (2 pi): write e.g. `50 Hz`",
            )
        if unit.startswith("rad") and cycles:
            raise NetlistError(
                f"{what} must be in rad/s, not a frequency ({text})", where,
                hint="omega = 2 pi f: write e.g. `314 rad/s` or `3000 rpm`",
            )


def _token_loc(source: str, token) -> Location:
    width = max(1, len(str(token)))
    return Location(source, getattr(token, "line", 1) or 1, getattr(token, "column", 1) or 1,
                    width)


_EXAMPLE_VALUES = {
    "ohm": "2.2 kohm", "H": "10 uH", "F": "4.7 uF", "V": "12 V", "A": "2 A", "kg": "350 kg",
    "N/m": "22 kN/m", "N*s/m": "1.8 kN*s/m", "N": "100 N", "m/s": "1.5 m/s", "m": "30 mm",
    "kg*m^2": "0.02 kg*m^2", "N*m/rad": "150 N*m/rad", "N*m*s/rad": "0.01 N*m*s/rad",
    "N*m": "2 N*m", "rad/s": "100 rad/s", "s": "200 us", "Hz": "50 Hz", "m/s^2": "9.81 m/s^2",
    "V*s/rad": "0.05 V*s/rad",
}


def example_value(unit: str) -> str:
    """A sample value with a unit of the given SI unit's kind, for hints.

    Examples
    --------
    >>> example_value("ohm")
    '2.2 kohm'
    """
    return _EXAMPLE_VALUES.get(unit, f"1 {unit}" if unit else "2")



def _show(value: sympy.Expr) -> str:
    try:
        number = float(value)
    except TypeError:
        return str(value)
    if value != 0 and (number == 0 or not math.isfinite(number)):
        return str(sympy.Float(value, 3))  # beyond double precision: sympy's own digits
    return f"{number:g}"


# ---------------------------------------------------------------------------
# Entry points


def _override_expressions(values: dict[str, str]) -> dict[str, tuple[Expr, Location, str]]:
    """Parse ``NAME=VALUE`` settings given outside the netlist with the same grammar."""
    parsed = {}
    for name, value in values.items():
        source = f"--set {name}"
        line = f"let {name} = {value}"
        where = Location(source, 1, len(line) - len(value) + 1, max(1, len(value)))
        if "\n" in value or "#" in value:
            raise NetlistError("a value must be one expression on one line", where,
                               hint="e.g. --set R=4.7kohm or --set R='2 * 2.2 kohm'",
                               line_text=line)
        try:
            tree = parser().parse(line + "\n")
            statements = _Builder(source).transform(tree)
        except UnexpectedInput as error:
            raise _error_from_lark(error, line + "\n", source) from None
        except VisitError as error:
            raise NetlistError("cannot read this value", where, line_text=line) from error
        except NetlistError as error:
            raise error.with_text(line) from None
        if len(statements) != 1 or statements[0].tag != "let_value":
            raise NetlistError("cannot read this value", where,
                               hint="write NAME=VALUE, e.g. R=4.7kohm", line_text=line)
        parsed[name] = (statements[0].fields["children"][1], where, line)
    return parsed


def parse_text(text: str | bytes, source: str = "<text>",
               values: dict[str, str] | None = None) -> m.Netlist:
    """Parse netlist text into a model (syntax, units and values checked).

    Parameters
    ----------
    text : str or bytes
        The netlist.  Bytes are decoded as UTF-8 (a byte-order mark is skipped).
    source : str
        Name used in messages, usually the file name.
    values : dict of str to str, optional
        Values for parameters, written as in the netlist (``{"R": "4.7 kohm"}``);
        they give free parameters a value or replace a ``let`` value.

    Returns
    -------
    Netlist
        The model; topology is checked separately by :func:`lumped.topology.validate`.

    Raises
    ------
    NetlistError
        For any problem in the text, with its location.

    Examples
    --------
    >>> net = parse_text("resistor R1 from a to ground 2.2 kohm\\n")
    >>> net.elements[0].value
    2200
    """
    prepared = _prepare(text, source)
    if not prepared.strip():
        raise NetlistError(f"{source} is empty",
                           hint="write the network one statement a line, e.g. `resistor R1 "
                           "from a to ground 1 kohm`; `lumped --syntax` shows the language")
    try:
        tree = parser().parse(prepared)
    except UnexpectedInput as error:
        raise _error_from_lark(error, prepared, source) from None
    try:
        try:
            statements = _Builder(source).transform(tree)
        except VisitError as error:
            # lark wraps what goes wrong inside a transformer callback.
            raise error.orig_exc from None
        overrides = _override_expressions(values) if values else None
        return _ModelBuilder(source, prepared, overrides).build(statements)
    except NetlistError as error:
        where = error.location.source if error.location is not None else source
        name = where.removeprefix("--set ")
        if values and where != source and name in values:
            raise error.with_text(f"let {name} = {values[name]}") from None  # a --set value
        raise error.with_text(prepared) from None
    except RecursionError:
        raise NetlistError(
            "the expression is nested too deeply", Location(source, 1, 1),
            hint="name parts of the expression with let",
        ) from None


def load_file(path: str | Path, values: dict[str, str] | None = None) -> m.Netlist:
    """Read a netlist file and parse it.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "rc.lumped"
    >>> _ = p.write_text("resistor R from a to ground 1 kohm\\n")
    >>> load_file(p).elements[0].name
    'R'
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise NetlistError(f"no such file: {path}", hint="check the path") from None
    except IsADirectoryError:
        raise NetlistError(f"{path} is a folder, not a netlist file",
                           hint=f"name a {FILE_EXTENSION} file") from None
    except OSError as exc:
        raise NetlistError(f"cannot read {path}: {exc.strerror}", hint="check the path") from None
    return parse_text(data, str(path), values)
