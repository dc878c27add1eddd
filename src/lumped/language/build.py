"""Typed statements -> the immutable model (:class:`lumped.model.Netlist`).

Parameters are evaluated in dependency order, then every other
statement in the order written; each value passes the
:class:`~lumped.language.values.ValueReader`, which reduces it to an exact SI
magnitude and checks it against what its place needs.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType

import sympy

from lumped import model as m
from lumped.algebra.exact import LONGEST_WINDOW, NARROWEST_BAND, WIDEST_BAND
from lumped.constants import STANDARD_GRAVITY
from lumped.errors import Location, NetlistError, UnitError
from lumped.language.grammar import MAX_STATEMENTS, RESERVED_NAMES
from lumped.language.syntax import (
    AtNode,
    CouplingStatement,
    DropStatement,
    ElementStatement,
    Expr,
    GravityStatement,
    LetFree,
    LetValue,
    Placement,
    QuantitySyntax,
    RequireStatement,
    SettlingBandStatement,
    Statement,
    WatchStatement,
    WaveformSyntax,
    WindowStatement,
    names_used,
)
from lumped.language.units import DIMENSIONLESS, SIValue, describe, parse_unit
from lumped.language.values import ValueReader, format_value


def _dependency_order(users: Mapping[str, Mapping[str, None]]) -> list[str] | None:
    """Names in an order where each comes after those it uses; None if some use each other.

    Generation by generation, as networkx's ``topological_sort`` orders them
    (the order decides which of two faulty parameters is reported first).

    Examples
    --------
    >>> _dependency_order({"C": {}, "tau": {}, "R": {"tau": None}})
    ['C', 'R', 'tau']
    >>> _dependency_order({"a": {"b": None}, "b": {"a": None}}) is None
    True
    """
    waiting = {name: 0 for name in users}
    for followers in users.values():
        for follower in followers:
            waiting[follower] += 1
    order: list[str] = []
    ready = [name for name, count in waiting.items() if count == 0]
    while ready:
        order.extend(ready)
        following = []
        for name in ready:
            for follower in users[name]:
                waiting[follower] -= 1
                if waiting[follower] == 0:
                    following.append(follower)
        ready = following
    return order if len(order) == len(users) else None


def _cycle(users: Mapping[str, Mapping[str, None]]) -> list[str]:
    """The parameters of one circle of definitions, as networkx's ``find_cycle`` names it."""
    import networkx as nx  # only for this message: keeps the wording of earlier versions

    graph = nx.DiGraph()
    graph.add_nodes_from(users)
    graph.add_edges_from((name, follower) for name, followers in users.items()
                         for follower in followers)
    return [edge[0] for edge in nx.find_cycle(graph)]


@dataclass(frozen=True)
class Override:
    """A parameter value given outside the netlist (``--set NAME=VALUE``), already parsed.

    ``location`` and ``line`` point into ``let NAME = VALUE``, the line the
    value was read as, for messages.
    """

    value: Expr
    location: Location
    line: str


def build_netlist(statements: Sequence[Statement], source: str, text: str,
                  overrides: Mapping[str, Override] | None = None) -> m.Netlist:
    """The model of a netlist from its statements.

    Parameters
    ----------
    statements : sequence of Statement
        The statements in the order written (:mod:`lumped.language.transform`).
    source : str
        The name used in messages, usually the file name.
    text : str
        The netlist text, kept in the model.
    overrides : mapping of str to Override, optional
        Values for parameters given outside the netlist.

    Raises
    ------
    NetlistError
        For a value, unit or statement that cannot stand, with its location.

    Examples
    --------
    >>> from lumped.language.grammar import parser
    >>> from lumped.language.transform import statements_from_tree
    >>> text = "let R = 2 kohm\\nresistor R1 from a to ground R\\n"
    >>> net = build_netlist(statements_from_tree(parser().parse(text), "f"), "f", text)
    >>> net.elements[0].value, net.parameters[0].unit
    (2000, 'ohm')
    """
    return _NetlistBuilder(source, text, overrides).build(statements)


class _NetlistBuilder:
    def __init__(self, source: str, text: str,
                 overrides: Mapping[str, Override] | None = None) -> None:
        self.source = source
        self.text = text
        self.reader = ValueReader(source)
        self.scope = self.reader.scope
        self.read = self.reader.read
        self.overrides = MappingProxyType(dict(overrides or {}))

    def build(self, statements: Sequence[Statement]) -> m.Netlist:
        if len(statements) > MAX_STATEMENTS:
            raise NetlistError(
                f"too many statements ({len(statements)}; the limit is {MAX_STATEMENTS})",
                statements[MAX_STATEMENTS].location,
                hint="split the network into smaller files",
            )
        parameters = self._parameters(
            [s for s in statements if isinstance(s, LetValue | LetFree)])
        elements, couplings, watches, requirements, drops = [], [], [], [], []
        window = gravity = None
        band = m.DEFAULT_SETTLING_BAND
        for statement in statements:
            loc = statement.location
            if isinstance(statement, ElementStatement):
                elements.append(self._element(statement))
            elif isinstance(statement, CouplingStatement):
                couplings.append(self._coupling(statement))
            elif isinstance(statement, WatchStatement):
                watches.extend(self._quantity(q) for q in statement.quantities)
            elif isinstance(statement, WindowStatement):
                if window is not None:
                    raise NetlistError(
                        "a second window statement", loc,
                        hint=f"keep one window (the first is on line {window.location.line})",
                    )
                window = self._window(statement)
            elif isinstance(statement, RequireStatement):
                requirements.append(self._requirement(statement))
            elif isinstance(statement, SettlingBandStatement):
                band = self._band(statement.band)
            elif isinstance(statement, GravityStatement):
                if gravity is not None:
                    raise NetlistError(
                        "a second gravity statement", loc,
                        hint=f"keep one (the first is on line {gravity.location.line})",
                    )
                gravity = self._gravity(statement)
            elif isinstance(statement, DropStatement):
                height = self.read(statement.height, "m", "a drop height", number=True,
                                   positive=True)
                drops.append(m.Drop(statement.mass, height, statement.mass_location))
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
            rounded=tuple(self.reader.rounded),
        )

    # parameters ---------------------------------------------------------------
    def _parameters(self, statements: list[LetValue | LetFree]) -> list[m.Parameter]:
        users: dict[str, dict[str, None]] = {}  # each parameter's users, in first-use order
        by_name: dict[str, LetValue | LetFree] = {}
        for statement in statements:
            name = statement.name
            if name in by_name:
                first = by_name[name].location.line
                raise NetlistError(
                    f"parameter '{name}' is defined twice", statement.name_location,
                    hint=f"the first definition is on line {first}; keep one",
                )
            if name in RESERVED_NAMES:
                raise NetlistError(
                    f"'{name}' is reserved and cannot name a parameter",
                    statement.name_location,
                    hint="the results use it for " + RESERVED_NAMES[name] + "; choose another name",
                )
            by_name[name] = statement
            users[name] = {}
        declared: dict[str, LetValue | LetFree] = {}
        for name, override in self.overrides.items():
            if name not in by_name:
                known = ", ".join(sorted(by_name)) or "none"
                raise NetlistError(
                    f"'{name}' is not a parameter of this netlist", override.location,
                    hint=f"the parameters are: {known}", line_text=override.line,
                )
            original = by_name[name]
            declared[name] = original
            # The netlist's line, with the value given outside it.
            by_name[name] = LetValue(original.name, original.name_location, override.value,
                                     original.location)
        for name, statement in by_name.items():
            if isinstance(statement, LetValue):
                for used in names_used(statement.value):
                    if used in by_name:
                        users[used][name] = None
        order = _dependency_order(users)
        if order is None:
            cycle = _cycle(users)
            first = by_name[cycle[0]]
            raise NetlistError(
                "parameters defined in a circle: " + " -> ".join([*cycle, cycle[0]]),
                first.location,
                hint="give one of them a value that does not depend on the others",
            ) from None
        parameters = []
        defined: dict[str, SIValue] = {}
        for name in order:
            statement = by_name[name]
            if isinstance(statement, LetValue):
                result = self.scope.evaluate(statement.value)
                parameter = m.Parameter(
                    name, sympy.Symbol(name, positive=True), result.value,
                    describe(result.dims) if result.dims else "", statement.location,
                )
            else:
                dims = DIMENSIONLESS
                if statement.unit:
                    try:
                        _, dims = parse_unit(statement.unit)
                    except UnitError as exc:
                        raise NetlistError(
                            str(exc), statement.unit_location, hint=exc.hint
                        ) from None
                symbol = sympy.Symbol(name, positive=True)
                # A free parameter is a symbol in SI units of its dimension.
                result = SIValue(symbol, dims)
                parameter = m.Parameter(
                    name, symbol, None, describe(dims) if dims else "", statement.location
                )
            self.scope.define(name, result)
            defined[name] = result
            parameters.append(parameter)
        for name, original in declared.items():
            self._check_override(name, original, defined[name])
        # Keep the order of the file for display.
        parameters.sort(key=lambda p: (p.location.line, p.location.column))
        return parameters

    def _check_override(self, name: str, declared: LetValue | LetFree, result: SIValue) -> None:
        """A value given on the command line must have the declared parameter's unit."""
        if isinstance(declared, LetFree):
            wanted = parse_unit(declared.unit)[1] if declared.unit else DIMENSIONLESS
        else:
            wanted = self.scope.evaluate(declared.value).dims
        if result.dims != wanted:
            override = self.overrides[name]
            raise NetlistError(
                f"the value given for '{name}' is in {describe(result.dims)}, but the netlist "
                f"uses it as {describe(wanted)}", override.location,
                hint=f"give '{name}' a value in {describe(wanted)}", line_text=override.line,
            )

    # elements -----------------------------------------------------------------
    def _placement(self, placement: Placement | None, name: str, kind: m.Kind,
                   loc: Location) -> tuple[str, str]:
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
        if isinstance(placement, AtNode):
            if kind.role is m.Role.THROUGH_SOURCE:
                return reference, placement.node
            return placement.node, reference
        a, b = placement.positive, placement.negative
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

    def _element(self, statement: ElementStatement) -> m.Element:
        kind = m.Kind.from_word(statement.kind_word)
        name, loc = statement.name, statement.location
        positive, negative = self._placement(statement.placement, name, kind, loc)
        if kind.is_source:
            waveform = self._waveform(statement.waveform, kind)
            return m.Element(name, kind, positive, negative, None, waveform, None, loc)
        value = self.read(statement.value, kind.value.value_unit,
                          f"the value of {kind.word} '{name}'", positive=True)
        initial = None
        if statement.initial is not None:
            if not kind.value.initial_unit:
                raise NetlistError(
                    f"a {kind.word} stores no energy, so it takes no initial condition",
                    statement.initial.location,
                    hint="initial conditions go on capacitors, inductors, masses, springs, "
                    "inertias and torsion springs",
                )
            initial = self.read(statement.initial, kind.value.initial_unit,
                                f"the initial condition of {kind.word} '{name}'")
        return m.Element(name, kind, positive, negative, value, None, initial, loc)

    def _waveform(self, written: WaveformSyntax, kind: m.Kind) -> m.Waveform:
        unit = kind.value.value_unit
        built = []
        for term in written.terms:
            shape = term.shape
            amplitude_unit = unit
            if shape is m.Shape.RAMP:
                amplitude_unit = f"{unit}/s"
            elif shape is m.Shape.IMPULSE:
                amplitude_unit = f"{unit}*s"
            amplitude = self.read(term.amplitude, amplitude_unit,
                                  f"the {shape.value} amplitude of {kind.word}")
            fields = {"amplitude": amplitude, "location": term.location}
            if term.delay is not None:
                delay = self.read(term.delay, "s", "a delay")
                if delay.is_number and delay < 0:
                    raise NetlistError("a delay cannot be negative", term.delay.location,
                                       hint="sources start at t = 0 or later")
                fields["delay"] = delay
            if term.duration is not None:
                fields["duration"] = self.read(term.duration, "s", "a duration", positive=True)
            if term.frequency is not None:
                fields["frequency"] = self.read(term.frequency, "Hz", "a frequency",
                                                positive=True)
            if term.phase is not None:
                fields["phase"] = self.read(term.phase, "", "a phase", number=True)
            if term.time_constant is not None:
                fields["time_constant"] = self.read(term.time_constant, "s", "a time constant",
                                                    positive=True)
            built.append(m.WaveformTerm(shape=shape, **fields))
        return m.Waveform(tuple(built), written.location)

    def _coupling(self, statement: CouplingStatement) -> m.Coupling:
        kind = m.CouplingKind.from_word(statement.kind_word)
        name = statement.name
        ports = []
        for written, domain in ((statement.input, kind.input_domain),
                                (statement.output, kind.output_domain)):
            ports.append(m.Port(written.positive, written.negative or domain.reference))
        word = statement.factor_word
        expected_word = {"rack": "radius", "motor": "constant"}.get(kind.word, "ratio")
        if word != expected_word:
            raise NetlistError(
                f"a {kind.word} is given by its {expected_word}, not a {word}",
                statement.factor_word_location,
                hint=f"write `{expected_word} ...`",
            )
        expr = statement.factor
        if kind is m.CouplingKind.RACK:
            radius = self.read(expr, "m", f"the radius of rack '{name}'", positive=True)
            ratio = 1 / radius
        elif kind is m.CouplingKind.MOTOR:
            ratio = self.read(expr, "V*s/rad", f"the constant of motor '{name}'", positive=True)
        else:
            ratio = self.read(expr, "", f"the ratio of {kind.word} '{name}'", positive=True)
        return m.Coupling(name, kind, ports[0], ports[1], ratio, statement.location)

    # what to report -------------------------------------------------------------
    def _quantity(self, written: QuantitySyntax) -> m.Quantity:
        kind = m.QuantityKind.from_word(written.word)
        return m.Quantity(kind, written.target, written.preposition, written.location)

    def _window(self, statement: WindowStatement) -> m.Window:
        longer = "a window is a length of time above zero, e.g. `window 10 ms`"
        if statement.start is None:
            start = sympy.Integer(0)
        else:
            start = self.read(statement.start, "s", "the window start", number=True,
                              largest=LONGEST_WINDOW)
        what = "the window" if statement.start is None else "the window end"
        stop = self.read(statement.stop, "s", what, positive=True, number=True,
                         hint=longer, largest=LONGEST_WINDOW)
        if start.is_number and start < 0:
            raise NetlistError("the window cannot start before t = 0", statement.start.location,
                               hint="write `window START to STOP` with START >= 0")
        if start.is_number and stop.is_number and not stop > start:
            raise NetlistError("the window must end after it starts", statement.location,
                               hint="write `window START to STOP` with STOP > START")
        return m.Window(start, stop, statement.location)

    def _band(self, expr: Expr) -> sympy.Expr:
        band = self.read(expr, "", "the settling band", positive=True, number=True,
                         hint="a band such as `2 %` or `5 %`", ranged=False)
        if not NARROWEST_BAND <= band <= WIDEST_BAND:
            raise NetlistError(
                f"the settling band is {format_value(100 * band)} %; it must lie between "
                f"{float(100 * NARROWEST_BAND):g} % and {float(100 * WIDEST_BAND):g} %",
                expr.location, hint="a band such as `2 %` or `5 %`")
        return band

    def _requirement(self, statement: RequireStatement) -> m.Requirement:
        figure = m.Figure.from_words(statement.figure_words)
        quantity = self._quantity(statement.quantity)
        if figure in (m.Figure.OVERSHOOT, m.Figure.UNDERSHOOT):
            unit = ""
        elif figure in (m.Figure.RISE_TIME, m.Figure.SETTLING_TIME):
            unit = "s"
        else:
            unit = quantity.kind.unit
        what = f"the bound on the {figure.value} of {quantity.label}"
        lower = upper = None
        if statement.lower is not None:
            lower = self.read(statement.lower, unit, what)
        if statement.upper is not None:
            upper = self.read(statement.upper, unit, what)
        if lower is not None and upper is not None:
            if lower.is_number and upper.is_number and not lower < upper:
                raise NetlistError("the lower bound must be below the upper bound",
                                   statement.lower.location, hint="write `between LOW and HIGH`")
        band = self._band(statement.band) if statement.band is not None else None
        shown_unit = "%" if figure in (m.Figure.OVERSHOOT, m.Figure.UNDERSHOOT) else unit
        return m.Requirement(figure, quantity, lower, upper, shown_unit, band, statement.location)

    def _gravity(self, statement: GravityStatement) -> m.Gravity:
        acceleration = STANDARD_GRAVITY
        if statement.acceleration is not None:
            acceleration = self.read(statement.acceleration, "m/s^2", "gravity", positive=True,
                                     number=True)
        start = m.GravityStart(statement.start) if statement.start else m.GravityStart.UNLOADED
        return m.Gravity(acceleration, start, statement.location)
