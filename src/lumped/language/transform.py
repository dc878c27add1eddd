"""Parse tree -> typed statements (:mod:`lumped.language.syntax`).

A :class:`lark.Transformer` walks the tree lark builds from the grammar and
hands back one frozen statement per line, with the place of every piece.
"""

from __future__ import annotations

from dataclasses import dataclass

from lark import Token, Transformer, Tree, v_args

from lumped import model as m
from lumped.errors import Location
from lumped.language.syntax import (
    STATEMENT_TYPES,
    AtNode,
    Between,
    CouplingStatement,
    DropStatement,
    ElementStatement,
    Expr,
    GravityStatement,
    LetFree,
    LetValue,
    Name,
    Num,
    Op,
    PortSyntax,
    QuantitySyntax,
    RequireStatement,
    SettlingBandStatement,
    Statement,
    WatchStatement,
    WaveformSyntax,
    WaveTerm,
    WindowStatement,
)


def token_location(source: str, token: Token) -> Location:
    """Where a token was written, as wide as its text.

    Examples
    --------
    >>> token_location("f.lumped", Token("NAME", "R1", line=2, column=10))
    Location(source='f.lumped', line=2, column=10, width=2)
    """
    width = max(1, len(str(token)))
    return Location(source, getattr(token, "line", 1) or 1, getattr(token, "column", 1) or 1,
                    width)


def statements_from_tree(tree: Tree, source: str) -> tuple[Statement, ...]:
    """The statements of a parse tree, in the order written.

    Raises
    ------
    lark.exceptions.VisitError
        Wrapping whatever went wrong while reading the tree (``orig_exc``);
        callers decide what it means for their text.

    Examples
    --------
    >>> from lumped.language.grammar import parser
    >>> [type(s).__name__ for s in statements_from_tree(
    ...     parser().parse("let R = 2 ohm\\nwatch voltage at a\\n"), "f")]
    ['LetValue', 'WatchStatement']
    """
    return _Statements(source).transform(tree)


# Optional parts of a waveform term, told apart from its plain expressions.
@dataclass(frozen=True)
class _Delay:
    expr: Expr


@dataclass(frozen=True)
class _Phase:
    expr: Expr


@dataclass(frozen=True)
class _Figure:
    words: str
    band: Expr | None


@dataclass(frozen=True)
class _Bound:
    lower: Expr | None
    upper: Expr | None


@dataclass(frozen=True)
class _Factor:
    word: str
    word_location: Location
    expr: Expr


class _Statements(Transformer):
    """Turns the lark tree into typed statements; arithmetic into Num/Name/Op."""

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
        return Between(str(children[0]), str(children[1]))

    def at_node(self, children):
        return AtNode(str(children[0]))

    def initial(self, children):
        return children[0]

    def delay(self, children):
        return _Delay(children[0])

    def phase(self, children):
        return _Phase(children[0])

    def grounded_port(self, children):
        return PortSyntax(str(children[0]), None)

    def floating_port(self, children):
        return PortSyntax(str(children[0]), str(children[1]))

    def factor(self, children):
        word = children[0]
        return _Factor(str(word), token_location(self.source, word), children[1])

    @v_args(meta=True)
    def quantity(self, meta, children):
        word, preposition, target = children
        return QuantitySyntax(" ".join(str(word).split()), str(preposition), str(target),
                              self._loc(meta))

    def figure(self, children):
        band = children[1] if len(children) > 1 else None
        return _Figure(" ".join(str(children[0]).split()), band)

    def below(self, children):
        return _Bound(None, children[0])

    def above(self, children):
        return _Bound(children[0], None)

    def between_bounds(self, children):
        return _Bound(children[0], children[1])

    def gravity_start(self, children):
        return str(children[0])

    # waveforms ----------------------------------------------------------------
    def _wave(shape, *slots):  # noqa: N805 - a small factory, one per waveform shape
        @v_args(meta=True)
        def build(self, meta, children):
            plain = [c for c in children if not isinstance(c, _Delay | _Phase)]
            fields = dict(zip(slots, plain, strict=False))
            for child in children:
                if isinstance(child, _Delay):
                    fields["delay"] = child.expr
                elif isinstance(child, _Phase):
                    fields["phase"] = child.expr
            return WaveTerm(shape=shape, location=self._loc(meta), **fields)

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
        return WaveformSyntax(tuple(children), self._loc(meta))

    # statements ---------------------------------------------------------------
    @v_args(meta=True)
    def let_value(self, meta, children):
        name, value = children
        return LetValue(str(name), token_location(self.source, name), value, self._loc(meta))

    @v_args(meta=True)
    def let_free(self, meta, children):
        name = children[0]
        unit = children[1] if len(children) > 1 else None
        return LetFree(str(name), token_location(self.source, name),
                       str(unit) if unit is not None else None,
                       token_location(self.source, unit) if unit is not None else None,
                       self._loc(meta))

    @v_args(meta=True)
    def element(self, meta, children):
        kind_token, name, *rest = children
        placement = rest.pop(0) if rest and isinstance(rest[0], Between | AtNode) else None
        waveform = value = initial = None
        if isinstance(rest[0], WaveformSyntax):
            waveform = rest[0]
        else:
            value = rest[0]
            initial = rest[1] if len(rest) > 1 else None
        return ElementStatement(" ".join(str(kind_token).split()), str(name), placement, value,
                                initial, waveform, self._loc(meta))

    @v_args(meta=True)
    def coupling(self, meta, children):
        kind, name, input_port, output_port, factor = children
        return CouplingStatement(str(kind), str(name), input_port, output_port, factor.word,
                                 factor.word_location, factor.expr, self._loc(meta))

    @v_args(meta=True)
    def watch(self, meta, children):
        return WatchStatement(tuple(children), self._loc(meta))

    @v_args(meta=True)
    def window(self, meta, children):
        start, stop = (None, children[0]) if len(children) == 1 else children
        return WindowStatement(start, stop, self._loc(meta))

    @v_args(meta=True)
    def require(self, meta, children):
        figure, quantity, bound = children
        return RequireStatement(figure.words, figure.band, quantity, bound.lower, bound.upper,
                                self._loc(meta))

    @v_args(meta=True)
    def settling_band(self, meta, children):
        return SettlingBandStatement(children[0], self._loc(meta))

    @v_args(meta=True)
    def gravity(self, meta, children):
        acceleration = start = None
        for child in children:
            if isinstance(child, str):
                start = child
            else:
                acceleration = child
        return GravityStatement(acceleration, start, self._loc(meta))

    @v_args(meta=True)
    def drop(self, meta, children):
        mass, height = children
        return DropStatement(str(mass), token_location(self.source, mass), height,
                             self._loc(meta))

    def start(self, children):
        return tuple(c for c in children if isinstance(c, STATEMENT_TYPES))
