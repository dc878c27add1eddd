"""The model: frozen dataclasses describing one netlist.

Every magnitude is an exact sympy expression in coherent SI units (rationals,
and symbols for parameters left without a value).  Every object carries the
:class:`~lumped.errors.Location` it was written at, so later stages can point
back at the user's text.

Sign convention (stated once, used everywhere): an element written
``from A to B`` has across variable ``across(A) - across(B)`` (voltage,
velocity, angular velocity) and through variable flowing from A through the
element to B (current, force, torque).  A one-terminal form ``at N`` means
``from N to <reference>`` for passive elements and across sources, and
``from <reference> to N`` for through sources, so that a force source
``at body`` pushes ``body`` in the positive direction.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import Enum
from fractions import Fraction
from types import MappingProxyType

import sympy

from lumped.errors import Location, UnknownWordError

GROUND = "ground"
FRAME = "frame"
REFERENCE_NODES = (GROUND, FRAME)
ZERO = sympy.Integer(0)  # sympy integers are immutable, so a shared default is safe
DEFAULT_SETTLING_BAND = sympy.Rational(2, 100)  # 2 %, where no `settling band` line says


def _freeze(record: object, *names: str) -> None:
    """Make sequence fields tuples, so a record built from lists is as immutable as any."""
    for name in names:
        value = getattr(record, name)
        if not isinstance(value, tuple):
            object.__setattr__(record, name, tuple(value))  # the frozen class's own idiom


class Domain(Enum):
    """Physical domain of a node or an element terminal."""

    ELECTRICAL = "electrical"
    TRANSLATIONAL = "translational"
    ROTATIONAL = "rotational"

    @property
    def reference(self) -> str:
        """Name of this domain's reference node."""
        return GROUND if self is Domain.ELECTRICAL else FRAME

    @property
    def across_unit(self) -> str:
        return {"electrical": "V", "translational": "m/s", "rotational": "rad/s"}[self.value]

    @property
    def through_unit(self) -> str:
        return {"electrical": "A", "translational": "N", "rotational": "N*m"}[self.value]

    # The one table from a domain to its quantities (every stage asks here).
    @property
    def across_kind(self) -> QuantityKind:
        """The across quantity a node of this domain holds (voltage, velocity, ...)."""
        return _DOMAIN_KINDS[self][0]

    @property
    def through_kind(self) -> QuantityKind:
        """The through quantity that flows in an element of this domain."""
        return _DOMAIN_KINDS[self][1]

    @property
    def watched_by_default(self) -> QuantityKind:
        """What is watched at each node when a netlist has no watch lines.

        Position, not velocity, for translational nodes: a suspension or drop
        review reads travel first.
        """
        return _DOMAIN_KINDS[self][2]

    @property
    def quantity_kinds(self) -> tuple[QuantityKind, ...]:
        """Every quantity that can be watched in this domain."""
        return tuple(kind for kind in QuantityKind if kind.domain is self)


class Role(Enum):
    """What an element does in the across/through formulation."""

    ACROSS_STORE = "across store"  # capacitor, mass, inertia: holds an across value
    THROUGH_STORE = "through store"  # inductor, spring, torsion spring: holds a through value
    DISSIPATOR = "dissipator"  # resistor, damper, rotary damper
    ACROSS_SOURCE = "across source"
    THROUGH_SOURCE = "through source"


@dataclass(frozen=True)
class KindInfo:
    """Facts about one element kind."""

    word: str
    domain: Domain
    role: Role
    value_unit: str  # SI unit the value must reduce to ("" for sources)
    initial_unit: str  # unit of an initial condition ("" when none is allowed)
    one_terminal: bool = False  # always connected to the reference (mass, inertia)


class Kind(Enum):
    """Element kinds, named by the words used in the netlist."""

    RESISTOR = KindInfo("resistor", Domain.ELECTRICAL, Role.DISSIPATOR, "ohm", "")
    INDUCTOR = KindInfo("inductor", Domain.ELECTRICAL, Role.THROUGH_STORE, "H", "A")
    CAPACITOR = KindInfo("capacitor", Domain.ELECTRICAL, Role.ACROSS_STORE, "F", "V")
    VOLTAGE_SOURCE = KindInfo("voltage source", Domain.ELECTRICAL, Role.ACROSS_SOURCE, "V", "")
    CURRENT_SOURCE = KindInfo("current source", Domain.ELECTRICAL, Role.THROUGH_SOURCE, "A", "")
    MASS = KindInfo("mass", Domain.TRANSLATIONAL, Role.ACROSS_STORE, "kg", "m/s", True)
    SPRING = KindInfo("spring", Domain.TRANSLATIONAL, Role.THROUGH_STORE, "N/m", "N")
    DAMPER = KindInfo("damper", Domain.TRANSLATIONAL, Role.DISSIPATOR, "N*s/m", "")
    FORCE_SOURCE = KindInfo("force source", Domain.TRANSLATIONAL, Role.THROUGH_SOURCE, "N", "")
    VELOCITY_SOURCE = KindInfo(
        "velocity source", Domain.TRANSLATIONAL, Role.ACROSS_SOURCE, "m/s", ""
    )
    DISPLACEMENT_SOURCE = KindInfo(
        "displacement source", Domain.TRANSLATIONAL, Role.ACROSS_SOURCE, "m", ""
    )
    INERTIA = KindInfo("inertia", Domain.ROTATIONAL, Role.ACROSS_STORE, "kg*m^2", "rad/s", True)
    TORSION_SPRING = KindInfo(
        "torsion spring", Domain.ROTATIONAL, Role.THROUGH_STORE, "N*m/rad", "N*m"
    )
    ROTARY_DAMPER = KindInfo("rotary damper", Domain.ROTATIONAL, Role.DISSIPATOR, "N*m*s/rad", "")
    TORQUE_SOURCE = KindInfo("torque source", Domain.ROTATIONAL, Role.THROUGH_SOURCE, "N*m", "")
    ANGULAR_VELOCITY_SOURCE = KindInfo(
        "angular velocity source", Domain.ROTATIONAL, Role.ACROSS_SOURCE, "rad/s", ""
    )

    @property
    def word(self) -> str:
        return self.value.word

    @property
    def domain(self) -> Domain:
        return self.value.domain

    @property
    def role(self) -> Role:
        return self.value.role

    @property
    def is_source(self) -> bool:
        return self.value.role in (Role.ACROSS_SOURCE, Role.THROUGH_SOURCE)

    @classmethod
    def from_word(cls, word: str) -> Kind:
        for kind in cls:
            if kind.word == word:
                return kind
        raise UnknownWordError(word, "an element kind")


class CouplingKind(Enum):
    """Ideal two-port couplings.  ``(input domain, output domain, factor unit)``.

    Every coupling obeys ``across(input) = n * across(output)`` and delivers
    ``n * through(input)`` into the output port, so power is conserved.
    """

    TRANSFORMER = ("transformer", Domain.ELECTRICAL, Domain.ELECTRICAL, "")
    LEVER = ("lever", Domain.TRANSLATIONAL, Domain.TRANSLATIONAL, "")
    GEAR = ("gear", Domain.ROTATIONAL, Domain.ROTATIONAL, "")
    BELT = ("belt", Domain.ROTATIONAL, Domain.ROTATIONAL, "")
    RACK = ("rack", Domain.ROTATIONAL, Domain.TRANSLATIONAL, "m")  # given as a radius r: n = 1/r
    MOTOR = ("motor", Domain.ELECTRICAL, Domain.ROTATIONAL, "V*s/rad")  # n = k

    @property
    def word(self) -> str:
        return self.value[0]

    @property
    def input_domain(self) -> Domain:
        return self.value[1]

    @property
    def output_domain(self) -> Domain:
        return self.value[2]

    @property
    def factor_unit(self) -> str:
        return self.value[3]

    @classmethod
    def from_word(cls, word: str) -> CouplingKind:
        for kind in cls:
            if kind.word == word:
                return kind
        raise UnknownWordError(word, "a coupling kind")


class Shape(Enum):
    """Source waveform shapes; each is zero before its delay."""

    CONSTANT = "constant"  # a plain value: the level from t = 0 on
    STEP = "step"
    RAMP = "ramp"  # amplitude is the slope (unit per second)
    IMPULSE = "impulse"  # amplitude is the area (unit times second)
    PULSE = "pulse"  # rectangular: amplitude for `duration`
    SINE = "sine"  # amplitude * sin(2 pi f (t - delay) + phase)
    EXPONENTIAL = "exponential"  # amplitude * exp(-(t - delay) / time_constant)
    HALF_SINE = "half-sine"  # amplitude * sin(pi (t - delay) / duration) for `duration`


@dataclass(frozen=True)
class WaveformTerm:
    """One term of a source waveform (magnitudes in SI)."""

    shape: Shape
    amplitude: sympy.Expr
    delay: sympy.Expr = ZERO
    duration: sympy.Expr | None = None
    frequency: sympy.Expr | None = None  # hertz
    phase: sympy.Expr = ZERO  # radians
    time_constant: sympy.Expr | None = None
    location: Location | None = None


@dataclass(frozen=True)
class Waveform:
    """A source waveform: the sum of its terms."""

    terms: tuple[WaveformTerm, ...]
    location: Location | None = None

    def __post_init__(self) -> None:
        _freeze(self, "terms")


@dataclass(frozen=True)
class Parameter:
    """A named parameter; ``value`` is None when it stays a symbol."""

    name: str
    symbol: sympy.Symbol
    value: sympy.Expr | None
    unit: str  # SI unit it reduces to, as written by the tool ("" dimensionless)
    location: Location


@dataclass(frozen=True)
class Element:
    """A two-terminal element; ``positive``/``negative`` are the from/to nodes."""

    name: str
    kind: Kind
    positive: str
    negative: str
    value: sympy.Expr | None  # None for sources
    waveform: Waveform | None = None  # sources only
    initial: sympy.Expr | None = None  # stored across (stores of across) or through value
    location: Location | None = None

    @property
    def domain(self) -> Domain:
        return self.kind.domain


def _exact(value):
    if isinstance(value, int):
        return sympy.Integer(value)
    if isinstance(value, Fraction):
        return sympy.Rational(value.numerator, value.denominator)
    return value


def make_element(
    name: str,
    kind: str,
    positive: str,
    negative: str,
    value=None,
    initial=None,
    waveform: Waveform | None = None,
) -> Element:
    """Build an element in Python, without a netlist (ints and Fractions become exact).

    Examples
    --------
    >>> make_element("C1", "capacitor", "a", "ground", Fraction(1, 10**6), initial=5).initial
    5
    """
    return Element(name, Kind.from_word(kind), positive, negative, _exact(value), waveform,
                   _exact(initial))


@dataclass(frozen=True)
class Port:
    """One side of a coupling: from ``positive`` to ``negative``."""

    positive: str
    negative: str


@dataclass(frozen=True)
class Coupling:
    """An ideal two-port: ``across(input) = ratio * across(output)``."""

    name: str
    kind: CouplingKind
    input: Port
    output: Port
    ratio: sympy.Expr  # n, already converted (a rack's radius r gives n = 1/r)
    location: Location | None = None


class QuantityKind(Enum):
    """What can be watched, with its SI unit."""

    VOLTAGE = ("voltage", "V", Domain.ELECTRICAL)
    CURRENT = ("current", "A", Domain.ELECTRICAL)
    DISPLACEMENT = ("displacement", "m", Domain.TRANSLATIONAL)
    VELOCITY = ("velocity", "m/s", Domain.TRANSLATIONAL)
    ACCELERATION = ("acceleration", "m/s^2", Domain.TRANSLATIONAL)
    FORCE = ("force", "N", Domain.TRANSLATIONAL)
    ANGLE = ("angle", "rad", Domain.ROTATIONAL)
    ANGULAR_VELOCITY = ("angular velocity", "rad/s", Domain.ROTATIONAL)
    ANGULAR_ACCELERATION = ("angular acceleration", "rad/s^2", Domain.ROTATIONAL)
    TORQUE = ("torque", "N*m", Domain.ROTATIONAL)

    @property
    def word(self) -> str:
        return self.value[0]

    @property
    def unit(self) -> str:
        return self.value[1]

    @property
    def domain(self) -> Domain:
        return self.value[2]

    @property
    def is_through(self) -> bool:
        return self is self.domain.through_kind

    @property
    def integral_order(self) -> int:
        """+1 for displacement/angle, -1 for acceleration, 0 otherwise."""
        if self in (QuantityKind.DISPLACEMENT, QuantityKind.ANGLE):
            return 1
        if self in (QuantityKind.ACCELERATION, QuantityKind.ANGULAR_ACCELERATION):
            return -1
        return 0

    @classmethod
    def from_word(cls, word: str) -> QuantityKind:
        for kind in cls:
            if kind.word == word:
                return kind
        raise UnknownWordError(word, "a quantity")


_DOMAIN_KINDS = MappingProxyType({  # across, through, watched without watch lines
    Domain.ELECTRICAL: (QuantityKind.VOLTAGE, QuantityKind.CURRENT, QuantityKind.VOLTAGE),
    Domain.TRANSLATIONAL: (QuantityKind.VELOCITY, QuantityKind.FORCE, QuantityKind.DISPLACEMENT),
    Domain.ROTATIONAL: (QuantityKind.ANGULAR_VELOCITY, QuantityKind.TORQUE,
                        QuantityKind.ANGULAR_VELOCITY),
})


@dataclass(frozen=True)
class Quantity:
    """A watched quantity: ``voltage at sw``, ``current in Lp``, ``force in Ks``.

    ``target`` is a node (``preposition`` 'at' / 'of' naming a node) or an
    element (``in`` / ``through`` / ``across``, or 'of' naming an element).
    """

    kind: QuantityKind
    target: str
    preposition: str
    location: Location | None = None

    @property
    def label(self) -> str:
        return f"{self.kind.word} {self.preposition} {self.target}"


class Figure(Enum):
    """Figures that requirements can bound."""

    INITIAL = "initial value"
    PEAK = "peak"
    MINIMUM = "minimum"
    MAGNITUDE = "peak magnitude"
    FINAL = "final value"
    OVERSHOOT = "overshoot"
    UNDERSHOOT = "undershoot"
    RISE_TIME = "rise time"
    SETTLING_TIME = "settling time"

    @classmethod
    def from_words(cls, words: str) -> Figure:
        for figure in cls:
            if figure.value == words:
                return figure
        raise UnknownWordError(words, "a figure")


@dataclass(frozen=True)
class Requirement:
    """``require <figure> of <quantity> below/above/between ...`` (SI bounds)."""

    figure: Figure
    quantity: Quantity
    lower: sympy.Expr | None
    upper: sympy.Expr | None
    unit: str  # SI unit of the bounds ("%" for overshoot, "s" for times)
    band: sympy.Expr | None = None  # settling band as a fraction, overrides the default
    location: Location | None = None


class GravityStart(Enum):
    UNLOADED = "unloaded"  # weights applied at t = 0, springs start unloaded (a drop)
    EQUILIBRIUM = "equilibrium"  # springs already carry the weights; response from rest


@dataclass(frozen=True)
class Gravity:
    """Weight m*g on every mass, acting in the negative direction."""

    acceleration: sympy.Expr
    start: GravityStart
    location: Location | None = None


@dataclass(frozen=True)
class Drop:
    """A mass released from ``height`` above first contact: contact velocity -sqrt(2 g h)."""

    mass: str
    height: sympy.Expr
    location: Location | None = None


@dataclass(frozen=True)
class Window:
    start: sympy.Expr
    stop: sympy.Expr
    location: Location | None = None


@dataclass(frozen=True)
class Netlist:
    """One netlist: the network, its sources, what to watch and the requirements.

    Immutable, like every record it holds: sequences are tuples (lists given
    are made tuples), so later stages can share it without copying.

    Examples
    --------
    >>> net = Netlist("ex", "", elements=[make_element("R1", "resistor", "a", "ground", 5)])
    >>> net.elements[0].value, type(net.elements).__name__, net.nodes
    (5, 'tuple', ('a', 'ground'))
    """

    source: str
    text: str
    parameters: tuple[Parameter, ...] = ()
    elements: tuple[Element, ...] = ()
    couplings: tuple[Coupling, ...] = ()
    watches: tuple[Quantity, ...] = ()
    requirements: tuple[Requirement, ...] = ()
    window: Window | None = None
    settling_band: sympy.Expr = DEFAULT_SETTLING_BAND
    gravity: Gravity | None = None
    drops: tuple[Drop, ...] = ()
    # Where a value is irrational (pi, sqrt(2)): the algebra takes it at 40 digits.
    rounded: tuple[Location, ...] = ()

    def __post_init__(self) -> None:
        _freeze(self, "parameters", "elements", "couplings", "watches", "requirements",
                "drops", "rounded")

    def element(self, name: str) -> Element | None:
        for element in self.elements:
            if element.name == name:
                return element
        return None

    def coupling(self, name: str) -> Coupling | None:
        for coupling in self.couplings:
            if coupling.name == name:
                return coupling
        return None

    @property
    def nodes(self) -> tuple[str, ...]:
        """Every node name, in order of first appearance."""
        seen: dict[str, None] = {}
        for element in self.elements:
            seen.setdefault(element.positive)
            seen.setdefault(element.negative)
        for coupling in self.couplings:
            for port in (coupling.input, coupling.output):
                seen.setdefault(port.positive)
                seen.setdefault(port.negative)
        return tuple(seen)

    @property
    def free_parameters(self) -> tuple[Parameter, ...]:
        return tuple(p for p in self.parameters if p.value is None)
