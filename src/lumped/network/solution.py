"""The solved network: any quantity as a transform, split by the excitation it comes from.

A watched quantity is a linear form of the unknowns (``s**order * (c^T x +
sum_j direct_j)``); with ``x_j = N_j / D`` from the solve, each input ``j``
gives a network function, times the input's transform.

Conventions for watched quantities:

* displacement / angle ``X = V/s``: measured from the position at ``t = 0``;
* acceleration ``A = s V - v(0-)``.  ``v(0-)`` is taken from the
  initial-condition part alone by the initial-value theorem
  (``lim_{s->oo} s V_ic(s)``), input by input, so a mass's initial velocity and
  a node's value fixed by other stored state are both handled; when that part
  holds an impulse (inconsistent initial conditions) nothing is subtracted;
* a coupling's through is the one sign convention applied to the port asked
  for: ``i_in`` for the input port, ``-n i_in`` (from ``output.positive`` to
  ``output.negative``) for the output port.

Examples
--------
>>> from lumped.language.parse import parse_text
>>> from lumped.network import assemble
>>> solution = assemble(parse_text("capacitor C at a 1 F, initially 2 V\\n"
...                                "resistor R at a 1 ohm\\n"))
>>> solution.response(solution.node_quantity("a")).contributions[0].label
'initial voltage of C'
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import sympy

from lumped.constants import s
from lumped.errors import ValidationError
from lumped.model import (
    REFERENCE_NODES,
    Coupling,
    Domain,
    Element,
    Kind,
    Netlist,
    Quantity,
    Role,
)
from lumped.network.rational import (
    as_expr,
    cancel,
    delay_factor,
    exact_entry,
    is_plain,
    poly,
    ratio,
)
from lumped.network.sources import Piece
from lumped.network.stamps import Plan
from lumped.network.transfer import TransferFunction, describe
from lumped.topology import Topology

_ZERO_STATE = ("source", "gravity")
_EMPTY: Mapping[int, sympy.Expr] = MappingProxyType({})


@dataclass(frozen=True)
class Contribution:
    """The part of a response due to one excitation.

    Attributes
    ----------
    label : str
        Readable description, e.g. ``"initial voltage of C1"``.
    element : str
        The element (or mass, for gravity and drops) the excitation belongs to.
    origin : str
        ``'source'``, ``'initial'``, ``'gravity'`` or ``'drop'``.
    weight : sympy.Expr
        A constant factor kept apart because it is irrational (``sqrt(2*g*h)``,
        ``cos(phi)``); ``1`` otherwise, in which case the value is folded into
        ``transform``.
    transform : sympy.Expr
        ``sum_k R_k(s) exp(-s T_k)`` with rational (or parameter) coefficients;
        a sine source's ``2*pi*f`` keeps its ``pi``.
    terms : tuple of (sympy.Expr, sympy.Expr)
        ``((R_k, T_k), ...)``, the same sum term by term.
    """

    label: str
    element: str
    origin: str
    weight: sympy.Expr
    transform: sympy.Expr
    terms: tuple[tuple[sympy.Expr, sympy.Expr], ...] = ()


@dataclass(frozen=True)
class Response:
    """The Laplace transform of one watched quantity.

    Attributes
    ----------
    quantity : Quantity
    transform : sympy.Expr
        ``sum_k R_k(s) exp(-s T_k)``; each ``R_k`` a ratio of polynomials in ``s``.
    unit : str
        SI unit of the quantity in time.
    zero_state, zero_input : sympy.Expr
        Parts due to sources and gravity, and to initial conditions and drops.
    contributions : tuple of Contribution
        ``sum(c.weight * c.transform) == transform``.
    terms : tuple of (sympy.Expr, sympy.Expr)
        ``((R_k, T_k), ...)`` with ``transform == sum R_k exp(-s T_k)``.
    """

    quantity: Quantity
    transform: sympy.Expr
    unit: str
    zero_state: sympy.Expr
    zero_input: sympy.Expr
    contributions: tuple[Contribution, ...]
    terms: tuple[tuple[sympy.Expr, sympy.Expr], ...] = ()


@dataclass(frozen=True)
class Form:
    """A quantity as ``s**order * (c^T x + sum_j direct_j)``.

    Attributes
    ----------
    coeffs : Mapping of int to sympy.Expr
        Unknown index -> polynomial in ``s``.
    direct : Mapping of int to sympy.Expr
        Input index -> polynomial in ``s`` (an across store's ``-C v0``).
    order : int
        ``+1``: times ``s`` (derivative); ``-1``: over ``s`` (integral).
    """

    coeffs: Mapping[int, sympy.Expr]
    direct: Mapping[int, sympy.Expr] = field(default_factory=lambda: _EMPTY)
    order: int = 0


def across(plan: Plan, positive: str, negative: str) -> Mapping[int, sympy.Expr]:
    """The across value from ``positive`` to ``negative`` as coefficients of the unknowns."""
    coeffs: dict[int, sympy.Expr] = {}
    for node, sign in ((positive, 1), (negative, -1)):
        k = plan.node(node)
        if k is not None:
            coeffs[k] = coeffs.get(k, 0) + sign
    return MappingProxyType({k: v for k, v in coeffs.items() if v != 0})


def network_function(
    denominator: sympy.Poly,
    numerators: tuple[tuple[sympy.Poly, ...], ...],
    form: Form,
    j: int,
) -> tuple[sympy.Poly, sympy.Poly]:
    """``s**order (c^T N_j / D + direct_j)`` as a cancelled ratio of polynomials in ``s``."""
    den = denominator
    num = poly(sympy.Integer(0))
    # Coefficients such as a damper's pi*0.004 are taken as the solve took them.
    for i, coeff in form.coeffs.items():
        nij = numerators[j][i]
        if not nij.is_zero:
            num = num + nij * poly(exact_entry(coeff))
    if j in form.direct:
        num = num + den * poly(exact_entry(form.direct[j]))
    if num.is_zero:
        return num, poly(sympy.Integer(1))
    if form.order == 1:
        num = num * poly(s)
    elif form.order == -1:
        den = den * poly(s)
    return cancel(num, den)


@dataclass(frozen=True)
class Solution:
    """The solved network: ``x_j = N_j / D`` for every input ``j``.

    Build it with :func:`lumped.network.assemble`.  ``notes`` holds remarks on
    the network (impulses at ``t = 0`` from initial conditions that break KVL
    or KCL, and choices made on the user's behalf).

    Attributes
    ----------
    plan : Plan
        The unknowns, rows and inputs the solve took.
    denominator : sympy.Poly
        ``D(s)``, shared by every unknown.
    numerators : tuple of tuple of sympy.Poly
        ``numerators[j][i]``: unknown ``i`` for input ``j``.
    notes : tuple of str
    """

    plan: Plan
    denominator: sympy.Poly
    numerators: tuple[tuple[sympy.Poly, ...], ...]
    notes: tuple[str, ...] = ()

    # ----- small public helpers

    @property
    def topology(self) -> Topology:
        """The validated network the solution is of."""
        return self.plan.topology

    @property
    def netlist(self) -> Netlist:
        """The netlist the solution is of."""
        return self.plan.topology.netlist

    @property
    def unknowns(self) -> tuple[tuple[str, str], ...]:
        """The unknowns in order: ``('node' | 'branch' | 'coupling', name)``."""
        return self.plan.unknowns

    def node_domain(self, node: str) -> Domain | None:
        """Domain of a node, inferred from what touches it (``None`` if unknown)."""
        return self.topology.node_domain(node)

    def node_quantity(self, node: str) -> Quantity:
        """The across quantity of ``node`` (voltage, velocity or angular velocity at it).

        Examples
        --------
        >>> import sympy
        >>> from lumped import model as m
        >>> from lumped.network import assemble
        >>> net = m.Netlist("ex", "", elements=(
        ...     m.Element("R1", m.Kind.RESISTOR, "a", "ground", sympy.Integer(1)),))
        >>> assemble(net).node_quantity("a").label
        'voltage at a'
        """
        domain = self.node_domain(node)
        if domain is None:
            raise ValidationError(f"there is no node named {node!r}")
        return Quantity(domain.across_kind, node, "at")

    # ----- responses

    def response(self, quantity: Quantity) -> Response:
        """The transform of ``quantity``, split by excitation.

        Parameters
        ----------
        quantity : Quantity
            What to watch (node across, element across or through, with
            displacement/angle and acceleration derived from velocities).

        Returns
        -------
        Response

        Examples
        --------
        >>> import sympy
        >>> from lumped import model as m
        >>> from lumped.network import assemble
        >>> net = m.Netlist("ex", "", elements=(
        ...     m.Element("C1", m.Kind.CAPACITOR, "a", "ground", sympy.Integer(1),
        ...               initial=sympy.Integer(5)),
        ...     m.Element("R1", m.Kind.RESISTOR, "a", "ground", sympy.Integer(2)),))
        >>> assemble(net).response(m.Quantity(m.QuantityKind.VOLTAGE, "a", "at")).transform
        5/(s + 1/2)
        """
        form = self._form(quantity)
        contributions: list[Contribution] = []
        by_delay: dict[sympy.Expr, tuple[sympy.Poly, sympy.Poly]] = {}
        weighted: list[tuple[sympy.Poly, sympy.Poly, sympy.Expr, sympy.Expr]] = []
        for j, inp in enumerate(self.plan.inputs):
            if not inp.pieces:
                continue
            hnum, hden = network_function(self.denominator, self.numerators, form, j)
            if hnum.is_zero:
                continue
            groups: dict[sympy.Expr, list[Piece]] = {}
            for piece in inp.pieces:
                key = sympy.Integer(1) if is_plain(piece.weight) else piece.weight
                groups.setdefault(key, []).append(piece)
            for weight, pieces in groups.items():
                delays: dict[sympy.Expr, sympy.Expr] = {}
                for piece in pieces:
                    shape = (
                        piece.shape
                        if weight != 1 or piece.weight == 1
                        else piece.shape * piece.weight
                    )
                    delays[piece.delay] = delays.get(piece.delay, sympy.Integer(0)) + shape
                parts = []
                for delay, shape in delays.items():
                    # A sine's 2 pi f or phase: the same 40-digit rationals the matrix
                    # takes, so the algebra stays over Q (fast, and exact from there on).
                    snum, sden = ratio(exact_entry(shape))
                    num, den = cancel(hnum * snum, hden * sden)
                    if form.order == 1 and inp.origin in ("initial", "drop") and delay == 0:
                        num, den = _minus_initial(num, den)
                    if num.is_zero:
                        continue
                    parts.append((num, den, delay))
                    if weight != 1:
                        # Irrational weights (a drop's sqrt(2 g h)) stay outside the
                        # polynomials: cancelling over such coefficients is very slow.
                        weighted.append((num, den, delay, weight))
                        continue
                    acc = by_delay.get(delay)
                    if acc is None:
                        by_delay[delay] = (num, den)
                    else:
                        by_delay[delay] = (acc[0] * den + num * acc[1], acc[1] * den)
                if not parts:
                    continue
                terms = tuple(
                    (as_expr(n_, d_), sympy.Integer(t_) if t_ == 0 else t_) for n_, d_, t_ in parts
                )
                transform = sympy.Add(*(r_ * delay_factor(t_) for r_, t_ in terms))
                label = inp.label if weight == 1 else f"{inp.label} (times {weight})"
                contributions.append(
                    Contribution(label, inp.element, inp.origin, weight, transform, terms)
                )
        if len(contributions) == 1 and contributions[0].weight == 1:
            # The same sum: skip rebuilding it.
            transform, total = contributions[0].transform, contributions[0].terms
        else:
            total_list = []
            for delay, (num, den) in by_delay.items():
                num, den = cancel(num, den)
                if not num.is_zero:
                    total_list.append(
                        (as_expr(num, den), sympy.Integer(delay) if delay == 0 else delay)
                    )
            for num, den, delay, weight in weighted:
                total_list.append(
                    (weight * as_expr(num, den), sympy.Integer(delay) if delay == 0 else delay)
                )
            total = tuple(total_list)
            transform = sympy.Add(*(r_ * delay_factor(t_) for r_, t_ in total))
        zero_state = sympy.Add(
            *(c.weight * c.transform for c in contributions if c.origin in _ZERO_STATE)
        )
        zero_input = sympy.Add(
            *(c.weight * c.transform for c in contributions if c.origin not in _ZERO_STATE)
        )
        return Response(
            quantity,
            transform,
            quantity.kind.unit,
            zero_state,
            zero_input,
            tuple(contributions),
            total,
        )

    # ----- quantities as linear forms

    def _form(self, quantity: Quantity) -> Form:
        kind = quantity.kind
        target = quantity.target
        element = self.netlist.element(target)
        coupling = self.netlist.coupling(target)
        domain = self.node_domain(target)
        wants_element = quantity.preposition in ("in", "through", "across") or (
            quantity.preposition == "of" and (element is not None or coupling is not None)
        )
        order = -kind.integral_order  # displacement: 1/s; acceleration: s
        if wants_element:
            if element is None and coupling is None:
                raise ValidationError(
                    f"there is no element named {target!r}",
                    quantity.location,
                    hint="name an element of the netlist",
                )
            if coupling is not None:
                return self._coupling_form(quantity, coupling, order)
            assert element is not None
            if element.domain is not kind.domain:
                raise ValidationError(
                    f"{element.name} is a {element.kind.word}: it has no {kind.word}",
                    quantity.location,
                    hint=f"ask for its {element.domain.across_kind.word} "
                    f"or {element.domain.through_kind.word}",
                )
            if kind.is_through:
                return self._through_form(element)
            return Form(across(self.plan, element.positive, element.negative), order=order)
        if domain is None:
            raise ValidationError(
                f"there is no node named {target!r}",
                quantity.location,
                hint="name a node of the netlist",
            )
        if kind.is_through:
            raise ValidationError(
                f"a {kind.word} flows in an element, not at a node",
                quantity.location,
                hint="write 'in <element>'",
            )
        if target not in REFERENCE_NODES and domain is not kind.domain:
            raise ValidationError(
                f"node {target} is {domain.value}: it has no {kind.word}",
                quantity.location,
                hint=f"ask for the {domain.across_kind.word} at {target}",
            )
        return Form(across(self.plan, target, REFERENCE_NODES[0]), order=order)

    def _through_form(self, element: Element) -> Form:
        name = element.name
        plan = self.plan
        if name in plan.element_rows:
            return Form(MappingProxyType({plan.element_rows[name]: sympy.Integer(1)}))
        if name in plan.admittance:
            c0, c1 = plan.admittance[name]
            coeffs = {k: v * (c0 + c1 * s)
                      for k, v in across(plan, element.positive, element.negative).items()}
            # Across store: I = s C V - C v0; the -C v0 belongs to each of its state inputs.
            direct = {j: -c1 for j, inp in enumerate(plan.inputs)
                      if inp.element == name and inp.origin in ("initial", "drop")}
            return Form(MappingProxyType(coeffs), MappingProxyType(direct))
        if element.kind.role is Role.THROUGH_SOURCE:
            return Form(_EMPTY, MappingProxyType({plan.source_inputs[name]: sympy.Integer(1)}))
        raise ValidationError(
            f"cannot take the {element.domain.through_kind.word} in {name}", element.location
        )

    def _coupling_form(self, quantity: Quantity, coupling: Coupling, order: int) -> Form:
        kind = quantity.kind
        use_input = coupling.kind.input_domain is kind.domain
        if not use_input and coupling.kind.output_domain is not kind.domain:
            raise ValidationError(
                f"{coupling.name} ({coupling.kind.word}) has no {kind.word}", quantity.location
            )
        port = coupling.input if use_input else coupling.output
        if kind.is_through:
            k = self.plan.element_rows[coupling.name]
            # Through from port.positive to port.negative (the one sign convention).
            return Form(MappingProxyType({k: sympy.Integer(1) if use_input else -coupling.ratio}))
        return Form(across(self.plan, port.positive, port.negative), order=order)

    # ----- transfer functions

    def transfer_function(self, source_name: str, quantity: Quantity) -> TransferFunction:
        """``H(s)`` from a source's waveform to ``quantity``, every other excitation off.

        Parameters
        ----------
        source_name : str
            A source element (for a displacement source, ``H`` is per unit of
            displacement).
        quantity : Quantity

        Returns
        -------
        TransferFunction

        Examples
        --------
        >>> import sympy
        >>> from lumped import model as m
        >>> from lumped.network import assemble
        >>> net = m.Netlist("ex", "", elements=(
        ...     m.Element("V1", m.Kind.VOLTAGE_SOURCE, "in", "ground", None),
        ...     m.Element("R1", m.Kind.RESISTOR, "in", "out", sympy.Integer(1)),
        ...     m.Element("C1", m.Kind.CAPACITOR, "out", "ground", sympy.Integer(1)),))
        >>> out = m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")
        >>> tf = assemble(net).transfer_function("V1", out)
        >>> tf.expr, tf.stability
        (1/(s + 1), 'stable')
        """
        if source_name not in self.plan.source_inputs:
            raise ValidationError(f"there is no source named {source_name!r}", quantity.location)
        j = self.plan.source_inputs[source_name]
        form = self._form(quantity)
        num, den = network_function(self.denominator, self.numerators, form, j)
        element = self.netlist.element(source_name)
        if element is not None and element.kind is Kind.DISPLACEMENT_SOURCE:
            num, den = cancel(num * poly(s), den)
        return describe(source_name, quantity, num, den)


def _minus_initial(num: sympy.Poly, den: sympy.Poly) -> tuple[sympy.Poly, sympy.Poly]:
    """``s V - v(0-)`` for an initial-condition part, ``v(0-) = lim_{s->oo} s V``.

    The initial-condition part alone starts from the stored state, so its
    value just after 0 is the value just before.  When that part is not
    strictly proper after multiplying by ``s`` (an impulse at 0: the initial
    conditions are inconsistent), it is left as it is.
    """
    if num.degree() != den.degree():
        return num, den
    v0 = num.LC() / den.LC()
    return cancel(num - den * v0, den)


__all__ = ["Contribution", "Form", "Response", "Solution", "across", "network_function"]
