"""What a netlist says, before any value is worked out: typed syntax nodes.

Arithmetic is a small tree of :class:`Num`, :class:`Name` and :class:`Op`;
each statement kind is a frozen dataclass whose fields hold these trees, the
names as written and the places they were written at.  Nothing here knows
units or values: :mod:`lumped.language.values` evaluates the trees and
:mod:`lumped.language.build` turns the statements into the model.
"""

from __future__ import annotations

from dataclasses import dataclass

from lumped import model as m
from lumped.errors import Location

# ---------------------------------------------------------------------------
# Arithmetic


@dataclass(frozen=True)
class Num:
    """A number as written, with its unit word (made exact and checked when evaluated)."""

    value: str
    unit: str | None
    location: Location
    unit_location: Location | None = None


@dataclass(frozen=True)
class Name:
    """A parameter named in an expression."""

    name: str
    location: Location


@dataclass(frozen=True)
class Op:
    """An operation: ``+ - * / ^``, ``neg`` (unary minus), ``sqrt`` or ``pi`` (no arguments)."""

    op: str
    args: tuple[Expr, ...]
    location: Location


Expr = Num | Name | Op


def names_used(expr: Expr) -> frozenset[str]:
    """Every parameter name an expression refers to.

    Examples
    --------
    >>> here = Location("x", 1, 1)
    >>> sorted(names_used(Op("*", (Name("R", here), Name("C", here)), here)))
    ['C', 'R']
    """
    found: set[str] = set()
    stack: list[Expr] = [expr]
    while stack:  # a loop, not recursion: expressions may nest deeply
        item = stack.pop()
        if isinstance(item, Name):
            found.add(item.name)
        elif isinstance(item, Op):
            stack.extend(item.args)
    return frozenset(found)


def unit_words(expr: Expr) -> tuple[tuple[str, Location], ...]:
    """Every unit written in an expression, with where it was written.

    Examples
    --------
    >>> here = Location("x", 1, 1)
    >>> [word for word, _ in unit_words(Num("50", "Hz", here))]
    ['Hz']
    """
    found: list[tuple[str, Location]] = []
    stack: list[Expr] = [expr]
    while stack:
        item = stack.pop()
        if isinstance(item, Num) and item.unit:
            found.append((item.unit, item.unit_location or item.location))
        elif isinstance(item, Op):
            stack.extend(item.args)
    return tuple(found)


# ---------------------------------------------------------------------------
# Pieces of statements


@dataclass(frozen=True)
class Between:
    """``from POSITIVE to NEGATIVE``."""

    positive: str
    negative: str


@dataclass(frozen=True)
class AtNode:
    """``at NODE`` (or ``on NODE``): the other terminal is the reference."""

    node: str


Placement = Between | AtNode


@dataclass(frozen=True)
class WaveTerm:
    """One term of a source waveform as written (``step 5 V after 1 ms``)."""

    shape: m.Shape
    amplitude: Expr
    location: Location
    duration: Expr | None = None
    frequency: Expr | None = None
    time_constant: Expr | None = None
    delay: Expr | None = None
    phase: Expr | None = None


@dataclass(frozen=True)
class WaveformSyntax:
    """A source waveform as written: terms joined by ``plus``."""

    terms: tuple[WaveTerm, ...]
    location: Location


@dataclass(frozen=True)
class PortSyntax:
    """A coupling port: a node (grounded) or ``(POSITIVE, NEGATIVE)``."""

    positive: str
    negative: str | None


@dataclass(frozen=True)
class QuantitySyntax:
    """``voltage at sw``: the quantity word, its preposition and the node or element."""

    word: str
    preposition: str
    target: str
    location: Location


# ---------------------------------------------------------------------------
# Statements


@dataclass(frozen=True)
class LetValue:
    """``let NAME = EXPR``."""

    name: str
    name_location: Location
    value: Expr
    location: Location


@dataclass(frozen=True)
class LetFree:
    """``let NAME`` or ``let NAME in UNIT``: a parameter left as a symbol."""

    name: str
    name_location: Location
    unit: str | None
    unit_location: Location | None
    location: Location


@dataclass(frozen=True)
class ElementStatement:
    """An element line: ``value`` and ``initial`` for a passive one, ``waveform`` for a source."""

    kind_word: str
    name: str
    placement: Placement | None
    value: Expr | None
    initial: Expr | None
    waveform: WaveformSyntax | None
    location: Location


@dataclass(frozen=True)
class CouplingStatement:
    """``gear G1 from a to b ratio 3`` and the other two-ports."""

    kind_word: str
    name: str
    input: PortSyntax
    output: PortSyntax
    factor_word: str
    factor_word_location: Location
    factor: Expr
    location: Location


@dataclass(frozen=True)
class WatchStatement:
    """``watch QUANTITY, QUANTITY, ...``."""

    quantities: tuple[QuantitySyntax, ...]
    location: Location


@dataclass(frozen=True)
class WindowStatement:
    """``window STOP`` or ``window START to STOP``."""

    start: Expr | None
    stop: Expr
    location: Location


@dataclass(frozen=True)
class RequireStatement:
    """``require FIGURE of QUANTITY below/above/between ...``; bounds absent are None."""

    figure_words: str
    band: Expr | None
    quantity: QuantitySyntax
    lower: Expr | None
    upper: Expr | None
    location: Location


@dataclass(frozen=True)
class SettlingBandStatement:
    """``settling band EXPR``."""

    band: Expr
    location: Location


@dataclass(frozen=True)
class GravityStatement:
    """``gravity [EXPR] [from equilibrium|unloaded]``."""

    acceleration: Expr | None
    start: str | None
    location: Location


@dataclass(frozen=True)
class DropStatement:
    """``drop MASS from HEIGHT``."""

    mass: str
    mass_location: Location
    height: Expr
    location: Location


Statement = (
    LetValue | LetFree | ElementStatement | CouplingStatement | WatchStatement
    | WindowStatement | RequireStatement | SettlingBandStatement | GravityStatement
    | DropStatement
)
STATEMENT_TYPES = (
    LetValue, LetFree, ElementStatement, CouplingStatement, WatchStatement, WindowStatement,
    RequireStatement, SettlingBandStatement, GravityStatement, DropStatement,
)
