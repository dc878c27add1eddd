"""The solved network: any quantity as a transform, split by the excitation it comes from.

A watched quantity is a linear form of the unknowns (``s**order * (c^T x +
sum_j direct_j)``).  Every excitation of one kind (sources and weights; initial
conditions and drops) that starts at the same time is folded into one
right-hand side, so a quantity's transform comes from one exact solve per
start time, over the network's one characteristic polynomial ``D(s)``; the
split by excitation (:attr:`Response.contributions`) is worked out when it is
asked for, input by input (``x_j = N_j / D``).

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

import functools
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

import flint
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
    rational,
    sum_of_powers,
)
from lumped.network.solve import Pencil, to_sympy_poly
from lumped.network.stamps import Plan
from lumped.network.transfer import TransferFunction, describe
from lumped.topology import Topology

_ZERO_STATE = ("source", "gravity")
_EMPTY: Mapping[int, sympy.Expr] = MappingProxyType({})

# A ratio of polynomials in s: python-flint's for numbers, sympy's with parameters.
Ratio = tuple[Any, Any]


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


def _nothing() -> tuple:
    return ()


def _no_sides() -> tuple[sympy.Expr, sympy.Expr]:
    return sympy.Integer(0), sympy.Integer(0)


@dataclass(frozen=True)
class Response:
    """The Laplace transform of one watched quantity.

    The split of the transform by excitation is worked out the first time it
    is read (it takes one solve per excitation, where the transform took one
    per start time).

    Attributes
    ----------
    quantity : Quantity
    transform : sympy.Expr
        ``sum_k R_k(s) exp(-s T_k)``; each ``R_k`` a ratio of polynomials in ``s``.
    unit : str
        SI unit of the quantity in time.
    terms : tuple of (sympy.Expr, sympy.Expr)
        ``((R_k, T_k), ...)`` with ``transform == sum R_k exp(-s T_k)``.
    ratios : tuple of (sympy.Expr, flint.fmpq_poly, flint.fmpq_poly) or None
        ``((T_k, N_k, D_k), ...)``: the same terms as python-flint polynomials in
        ``s`` (``D_k`` monic, each a divisor of the network's characteristic
        polynomial times the sources' denominators), when every coefficient is
        rational; ``None`` otherwise.
    zero_state, zero_input : sympy.Expr
        Parts due to sources and gravity, and to initial conditions and drops;
        each a sum over start times of one ratio.
    contributions : tuple of Contribution
        One per excitation (and irrational weight), ``sum(c.weight * c.transform) ==
        transform``.
    """

    quantity: Quantity
    transform: sympy.Expr
    unit: str
    terms: tuple[tuple[sympy.Expr, sympy.Expr], ...] = ()
    ratios: tuple[tuple[sympy.Expr, Any, Any], ...] | None = field(
        default=None, repr=False, compare=False)
    # Worked out when first read: the parts by side, and the split by excitation.
    _by_side: Callable[[], tuple[sympy.Expr, sympy.Expr]] = field(
        default=_no_sides, repr=False, compare=False)
    _by_excitation: Callable[[], tuple[Contribution, ...]] = field(
        default=_nothing, repr=False, compare=False)

    @functools.cached_property
    def _sides(self) -> tuple[sympy.Expr, sympy.Expr]:
        return self._by_side()

    @property
    def zero_state(self) -> sympy.Expr:
        """The part due to sources and gravity."""
        return self._sides[0]

    @property
    def zero_input(self) -> sympy.Expr:
        """The part due to initial conditions and drops."""
        return self._sides[1]

    @functools.cached_property
    def contributions(self) -> tuple[Contribution, ...]:
        """The transform split by excitation (and irrational weight)."""
        return tuple(self._by_excitation())


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
    return _sympy_function(denominator, numerators[j], form, j)


def _sympy_function(
    denominator: sympy.Poly, numerators: tuple[sympy.Poly, ...], form: Form, j: int
) -> tuple[sympy.Poly, sympy.Poly]:
    den = denominator
    num = poly(sympy.Integer(0))
    # Coefficients such as a damper's pi*0.004 are taken as the solve took them.
    for i, coeff in form.coeffs.items():
        nij = numerators[i]
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


# --------------------------------------------------------------------------- ratios over Q


def _flint(value: sympy.Expr) -> flint.fmpq_poly:
    """A polynomial in ``s`` with rational coefficients (an exact entry) as ``fmpq_poly``."""
    if value.is_Rational:
        return flint.fmpq_poly([flint.fmpq(int(value.p), int(value.q))])
    coeffs = sympy.Poly(value, s).all_coeffs()
    return flint.fmpq_poly([flint.fmpq(int(c.p), int(c.q)) for c in reversed(coeffs)])


def _flint_ratio(shape: sympy.Expr) -> Ratio | None:
    """An exact shape as a python-flint ratio, or None when it holds parameters."""
    if shape.free_symbols - {s}:
        return None
    num, den = ratio(shape)
    num, den = _flint(num.as_expr()), _flint(den.as_expr())
    # A monic denominator: the least common multiple of several is then free of constants.
    lead = den[den.degree()]
    return num / lead, den / lead


def _flint_cancel(num: flint.fmpq_poly, den: flint.fmpq_poly) -> Ratio:
    """Without common factors, monic denominator: :func:`cancel` over Q, in python-flint."""
    if num.is_zero():
        return num, flint.fmpq_poly([1])
    common = num.gcd(den)
    if common.degree() > 0:
        num, den = num // common, den // common
    lead = den[den.degree()]
    return num / lead, den / lead


def _flint_expr(p: flint.fmpq_poly) -> sympy.Expr:
    """A polynomial in ``s`` as sympy's ``Poly.as_expr`` writes it."""
    return sum_of_powers([(k, rational(int(c.p), int(c.q)))
                          for k, c in enumerate(p.coeffs()) if c != 0])


def _is_flint(pair: Ratio) -> bool:
    return isinstance(pair[0], flint.fmpq_poly)


def _is_zero(pair: Ratio) -> bool:
    return pair[0].is_zero() if _is_flint(pair) else pair[0].is_zero


def _add(pairs: list[Ratio], in_s: Callable[[Ratio], Ratio]) -> Ratio | None:
    """The sum of ratios over their least common denominator, cancelled; None when zero.

    ``in_s`` takes a python-flint ratio (in ``t``) to sympy's (in ``s``) when both meet.
    """
    pairs = [p for p in pairs if not _is_zero(p)]
    if not pairs:
        return None
    if len(pairs) == 1:
        return pairs[0]
    if all(_is_flint(p) for p in pairs):
        num, den = pairs[0]
        for n2, d2 in pairs[1:]:
            common = den.gcd(d2)
            left, right = den // common, d2 // common
            num, den = num * right + n2 * left, left * d2
        num, den = _flint_cancel(num, den)
    else:
        num, den = in_s(pairs[0])
        for pair in pairs[1:]:
            n2, d2 = in_s(pair)
            num, n2 = num.unify(n2)
            den, d2 = den.unify(d2)
            common = _poly_gcd(den, d2)
            if common is None:
                # Irrational coefficients among parameters: no gcd to take (see cancel).
                num, den = num * d2 + n2 * den, den * d2
            else:
                left, right = den.exquo(common), d2.exquo(common)
                num, den = num * right + n2 * left, left * d2
        num, den = cancel(num, den)
    return None if _is_zero((num, den)) else (num, den)


def _poly_gcd(a: sympy.Poly, b: sympy.Poly) -> sympy.Poly | None:
    a, b = a.unify(b)
    domain = a.domain
    if domain.is_EX or domain.is_EXRAW:
        return None
    if domain.is_PolynomialRing:
        if not all(isinstance(g, sympy.Symbol) for g in domain.symbols):
            return None
        others = list(domain.symbols)
        common = a.inject().gcd(b.inject())
        return common.reorder(s, *others).eject(*others)
    if domain.is_FractionField and not all(isinstance(g, sympy.Symbol) for g in domain.symbols):
        return None
    return a.gcd(b)


def _minus_initial(num: Any, den: Any) -> Ratio:
    """``s V - v(0-)`` for an initial-condition part, ``v(0-) = lim_{s->oo} s V``.

    The initial-condition part alone starts from the stored state, so its
    value just after 0 is the value just before.  When that part is not
    strictly proper after multiplying by ``s`` (an impulse at 0: the initial
    conditions are inconsistent), it is left as it is.
    """
    if isinstance(num, flint.fmpq_poly):
        if num.degree() != den.degree():
            return num, den
        v0 = num[num.degree()] / den[den.degree()]
        return _flint_cancel(num - den * v0, den)
    if num.degree() != den.degree():
        return num, den
    v0 = num.LC() / den.LC()
    return cancel(num - den * v0, den)


def _delay(delay: sympy.Expr | int) -> sympy.Expr:
    return sympy.Integer(delay) if delay == 0 else delay


@dataclass(frozen=True)
class _Part:
    """One input's transform at one start time and with one weight.

    ``shape`` is exact (irrational numbers as rationals), with a plain weight
    folded in; ``numeric`` is the same ratio in python-flint, in ``t`` with a
    monic denominator, when it holds no parameters.
    """

    j: int
    weight: sympy.Expr
    delay: sympy.Expr
    shape: sympy.Expr
    numeric: Ratio | None
    side: int  # 0: zero state (sources, gravity); 1: zero input (initial values, drops)


@dataclass(frozen=True)
class _Fold:
    """The inputs of one kind that start together, solved as one right-hand side.

    Unknown ``i`` is ``solved.numerator(index, i) / (D common)`` in ``t``, ``common``
    the least common multiple of the parts' shape denominators.
    """

    parts: tuple[_Part, ...]
    common: flint.fmpq_poly
    solved: Any
    index: int


@dataclass(frozen=True)
class Solution:
    """The solved network: ``x = N / D`` for any excitation, ``D`` shared by all.

    Build it with :func:`lumped.network.assemble`.  ``notes`` holds remarks on
    the network (impulses at ``t = 0`` from initial conditions that break KVL
    or KCL, and choices made on the user's behalf).  Solves are made when a
    response asks for them and kept (one per start time for every response,
    one per input for transfer functions and the split by excitation).

    Attributes
    ----------
    plan : Plan
        The unknowns, rows and inputs the solve took.
    pencil : Pencil
        The network matrix and its exact solutions.
    notes : tuple of str
    """

    plan: Plan
    pencil: Pencil = field(repr=False, compare=False)
    notes: tuple[str, ...] = ()
    _cache: dict = field(init=False, default_factory=dict, repr=False, compare=False)

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

    @property
    def denominator(self) -> sympy.Poly:
        """``D(s)``, the characteristic polynomial shared by every unknown (up to a constant)."""
        return self.pencil.denominator

    @property
    def numerators(self) -> tuple[tuple[sympy.Poly, ...], ...]:
        """``numerators[j][i]``: unknown ``i`` for input ``j`` is ``N_ji / D`` (solved on use)."""
        inputs = range(len(self.plan.inputs))
        if not self.pencil.numeric:
            return tuple(self.pencil.symbolic_numerators(j) for j in inputs)
        # Over the integer D(s) of `denominator`: a**d D(t) with scale = a/b.
        factor = flint.fmpq(int(self.pencil.scale.p) ** self.pencil.degree)
        unknowns = range(len(self.plan.unknowns))
        found = self._input_numerators(unknowns, inputs)
        return tuple(tuple(to_sympy_poly(self.pencil.to_s(found[i, j]) * factor)
                           for i in unknowns) for j in inputs)

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
        parts = self._parts()
        folds = self._folds() if self.pencil.numeric else {}

        def folded(part: _Part) -> bool:
            # Acceleration subtracts v(0-) input by input from the initial part.
            return (part.weight == 1 and part.numeric is not None
                    and (part.side, part.delay) in folds
                    and not (form.order == 1 and part.side == 1 and part.delay == 0))

        single = [p for p in parts if not folded(p)]
        functions = self._functions(form, {p.j for p in single})
        # Plain parts, by start time and side; weighted ones, input by input.
        plain: dict[sympy.Expr, tuple[list[Ratio], list[Ratio]]] = {}
        weighted: dict[tuple[int, sympy.Expr], list[tuple[Ratio, sympy.Expr]]] = {}
        done: set[tuple[int, sympy.Expr]] = set()
        for part in parts:
            if part.weight == 1:
                sums = plain.setdefault(part.delay, ([], []))
            if folded(part):
                key = (part.side, part.delay)
                if key not in done:
                    done.add(key)
                    pair = self._fold_ratio(folds[key], form)
                    if pair is not None:
                        sums[part.side].append(pair)
                continue
            pair = self._part_ratio(part, form, functions[part.j])
            if pair is None:
                continue
            if part.weight == 1:
                sums[part.side].append(pair)
            else:
                weighted.setdefault((part.j, part.weight), []).append((pair, part.delay))
        totals: list[tuple[sympy.Expr, sympy.Expr]] = []
        ratios: list[tuple[sympy.Expr, Any, Any]] | None = [] if not weighted else None
        side_totals: dict[sympy.Expr, tuple[Ratio | None, Ratio | None]] = {}
        for delay, (state, initial) in plain.items():
            state_sum, initial_sum = _add(state, self._in_s), _add(initial, self._in_s)
            side_totals[delay] = (state_sum, initial_sum)
            both = [p for p in (state_sum, initial_sum) if p is not None]
            total = _add(both, self._in_s) if len(both) > 1 else (both[0] if both else None)
            if total is not None:
                totals.append((self._expr(total), _delay(delay)))
                if ratios is not None and _is_flint(total):
                    ratios.append((_delay(delay), *self._flint_in_s(total)))
                else:
                    ratios = None
        weighted_terms: list[tuple[int, sympy.Expr, list[tuple[sympy.Expr, sympy.Expr]]]] = []
        for (j, weight), pairs in weighted.items():
            exprs = [(self._expr(pair), _delay(delay)) for pair, delay in pairs]
            weighted_terms.append((j, weight, exprs))
            totals.extend((weight * expr, delay) for expr, delay in exprs)
        transform = sympy.Add(*(r_ * delay_factor(t_) for r_, t_ in totals))
        if ratios == []:
            # Nothing reaches the quantity: zero, as the inversion reads ``0``.
            ratios = [(sympy.Integer(0), flint.fmpq_poly([0]), flint.fmpq_poly([1]))]
        inputs = self.plan.inputs

        def sides() -> tuple[sympy.Expr, sympy.Expr]:
            out = []
            for side in (0, 1):
                terms = [self._expr(pair) * delay_factor(_delay(delay))
                         for delay, pairs in side_totals.items()
                         if (pair := pairs[side]) is not None]
                for j, weight, exprs in weighted_terms:
                    if (inputs[j].origin in _ZERO_STATE) == (side == 0):
                        terms.append(weight * sympy.Add(*(r_ * delay_factor(t_)
                                                          for r_, t_ in exprs)))
                out.append(sympy.Add(*terms))
            return out[0], out[1]

        return Response(quantity, transform, quantity.kind.unit, tuple(totals),
                        None if ratios is None else tuple(ratios), sides,
                        functools.partial(self._contributions, form))

    def _contributions(self, form: Form) -> tuple[Contribution, ...]:
        """The response split by excitation (and irrational weight), input by input."""
        parts = self._parts()
        functions = self._functions(form, {p.j for p in parts})
        contributions: list[Contribution] = []
        groups: dict[tuple[int, sympy.Expr], list[tuple[Ratio, sympy.Expr]]] = {}
        for part in parts:
            pair = self._part_ratio(part, form, functions[part.j])
            pairs = groups.setdefault((part.j, part.weight), [])
            if pair is not None:
                pairs.append((pair, part.delay))
        for (j, weight), pairs in groups.items():
            if not pairs:
                continue
            inp = self.plan.inputs[j]
            terms = tuple((self._expr(pair), _delay(delay)) for pair, delay in pairs)
            transform = sympy.Add(*(r_ * delay_factor(t_) for r_, t_ in terms))
            label = inp.label if weight == 1 else f"{inp.label} (times {weight})"
            contributions.append(
                Contribution(label, inp.element, inp.origin, weight, transform, terms))
        return tuple(contributions)

    def static_value(self, form: Form, inputs: Iterable[int]) -> sympy.Expr | None:
        """``lim_{s->0}`` of the quantity's network functions from ``inputs``, added up.

        ``None`` when one of them has a pole at ``s = 0`` (no static value).

        Examples
        --------
        >>> from lumped.language.parse import parse_text
        >>> from lumped.network import assemble
        >>> solution = assemble(parse_text("current source I at a step 1 A\\n"
        ...                                "resistor R at a 3 ohm\\n"))
        >>> solution.static_value(Form(across(solution.plan, "a", "ground")),
        ...                       solution.plan.source_inputs.values())
        3
        """
        inputs = list(inputs)
        plan = self.plan
        if self.pencil.numeric and form.order == 0 and not form.direct and inputs:
            # One solve of A(0) x = sum_j b_j serves every store asked about.
            solved = self._cache.setdefault("static", {})
            key = tuple(inputs)
            if key not in solved:
                column: dict[int, sympy.Expr] = {}
                for j in inputs:
                    for r, v in plan.inputs[j].column.items():
                        column[r] = column.get(r, 0) + v
                solved[key] = self.pencil.static_solution(column)
            values = solved[key]
            if values is not None:
                # A(0) is invertible: no network function has a pole at 0, and the
                # sum of their values at 0 is the value of their sum.
                return sympy.Add(*(exact_entry(coeff).subs(s, 0) * values[i]
                                   for i, coeff in form.coeffs.items()))
        functions = self._functions(form, set(inputs))
        total = sympy.Integer(0)
        for j in inputs:
            num, den = self._in_s(functions[j])
            if num.is_zero:
                continue
            if den.eval(0) == 0:  # Poly.eval is polynomial evaluation, not Python's eval
                return None
            total += num.eval(0) / den.eval(0)  # Poly.eval at s = 0 (the static limit)
        return total

    # ----- solves, kept

    def _input_numerators(
        self, unknowns: Iterable[int], inputs: Iterable[int]
    ) -> dict[tuple[int, int], flint.fmpq_poly]:
        """``(i, j) ->`` unknown ``i``'s numerator in ``t`` for input ``j`` (numeric; kept)."""
        known: dict[tuple[int, int], flint.fmpq_poly] = self._cache.setdefault("inputs", {})
        unknowns, inputs = list(unknowns), list(inputs)
        missing_inputs = [j for j in inputs if any((i, j) not in known for i in unknowns)]
        if missing_inputs:
            missing = [i for i in unknowns if any((i, j) not in known for j in missing_inputs)]
            known.update(self.pencil.input_numerators(missing, missing_inputs))
        return known

    def _functions(self, form: Form, inputs: set[int]) -> dict[int, Ratio]:
        """``s**order (c^T N_j / D + direct_j)`` for each input ``j``, cancelled.

        In ``t`` with python-flint for a numeric pencil, in ``s`` with sympy otherwise.
        """
        order = sorted(inputs)
        if not self.pencil.numeric:
            den = self.pencil.denominator
            return {j: _sympy_function(den, self.pencil.symbolic_numerators(j), form, j)
                    for j in order}
        den = self._denominator_t()
        coeffs = self._coeffs_t(form)
        numerators = self._input_numerators(coeffs, order)
        out = {}
        for j in order:
            num = flint.fmpq_poly([0])
            for i, coeff in coeffs.items():
                if not numerators[i, j].is_zero():
                    num += numerators[i, j] * coeff
            if j in form.direct:
                num += den * self._to_t(form.direct[j])
            out[j] = self._finish(num, den, form)
        return out

    def _finish(self, num: flint.fmpq_poly, den: flint.fmpq_poly, form: Form) -> Ratio:
        if num.is_zero():
            return num, flint.fmpq_poly([1])
        if form.order == 1:
            num = num * self._s_in_t()
        elif form.order == -1:
            den = den * self._s_in_t()
        return _flint_cancel(num, den)

    # ----- python-flint in t, sympy in s

    def _denominator_t(self) -> flint.fmpq_poly:
        if "denominator" not in self._cache:
            self._cache["denominator"] = self.pencil.denominator_t()
        return self._cache["denominator"]

    def _s_in_t(self) -> flint.fmpq_poly:
        """``s`` as a polynomial in ``t``."""
        scale = self.pencil.scale
        return flint.fmpq_poly([0, flint.fmpq(int(scale.p), int(scale.q))])

    def _to_t(self, value: sympy.Expr | int) -> flint.fmpq_poly:
        """An exact polynomial in ``s`` with rational coefficients, in ``t``."""
        return self.pencil.to_t(_flint(exact_entry(value)))

    def _coeffs_t(self, form: Form) -> dict[int, flint.fmpq_poly]:
        return {i: self._to_t(c) for i, c in form.coeffs.items()}

    def _in_s(self, pair: Ratio) -> tuple[sympy.Poly, sympy.Poly]:
        """A ratio as sympy polynomials in ``s``, denominator monic for numbers."""
        if not _is_flint(pair):
            return pair
        if pair[0].is_zero():
            return poly(sympy.Integer(0)), poly(sympy.Integer(1))
        num, den = self._flint_in_s(pair)
        return to_sympy_poly(num), to_sympy_poly(den)

    def _expr(self, pair: Ratio) -> sympy.Expr:
        """A ratio as one expression in ``s`` (as :func:`as_expr` writes it)."""
        if not _is_flint(pair):
            return as_expr(*pair)
        num, den = self._flint_in_s(pair)
        if num.is_zero():
            return sympy.Integer(0)
        # Most quantities of one network share their denominator: write it once.
        written: list[tuple[flint.fmpq_poly, sympy.Expr]] = self._cache.setdefault(
            "denominators", [])
        found = next((expr for known, expr in written if known == den), None)
        if found is None:
            found = _flint_expr(den)
            written.append((den, found))
        return _flint_expr(num) / found

    def _flint_in_s(self, pair: Ratio) -> Ratio:
        """A python-flint ratio in ``t`` as one in ``s``, denominator monic."""
        num, den = pair
        if num.is_zero():
            return num, flint.fmpq_poly([1])
        num, den = self.pencil.to_s(num), self.pencil.to_s(den)
        lead = den[den.degree()]
        return num / lead, den / lead

    def _part_ratio(self, part: _Part, form: Form, function: Ratio) -> Ratio | None:
        """One input's part: its network function times its shape, cancelled; None if zero."""
        if _is_zero(function):
            return None
        if part.numeric is not None and _is_flint(function):
            num, den = _flint_cancel(function[0] * part.numeric[0], function[1] * part.numeric[1])
        else:
            hnum, hden = self._in_s(function)
            snum, sden = ratio(part.shape)
            num, den = cancel(hnum * snum, hden * sden)
        if form.order == 1 and self.plan.inputs[part.j].origin in ("initial", "drop") \
                and part.delay == 0:
            num, den = _minus_initial(num, den)
        return None if _is_zero((num, den)) else (num, den)

    def _parts(self) -> tuple[_Part, ...]:
        """Every input's transform by weight and start time, in the inputs' order."""
        if "parts" in self._cache:
            return self._cache["parts"]
        parts: list[_Part] = []
        for j, inp in enumerate(self.plan.inputs):
            if not inp.pieces:
                continue
            groups: dict[sympy.Expr, list] = {}
            for piece in inp.pieces:
                key = sympy.Integer(1) if is_plain(piece.weight) else piece.weight
                groups.setdefault(key, []).append(piece)
            side = 0 if inp.origin in _ZERO_STATE else 1
            for weight, pieces in groups.items():
                delays: dict[sympy.Expr, sympy.Expr] = {}
                for piece in pieces:
                    shape = (
                        piece.shape
                        if weight != 1 or piece.weight == 1
                        else piece.shape * piece.weight
                    )
                    delays[piece.delay] = delays.get(piece.delay, sympy.Integer(0)) + shape
                for delay, shape in delays.items():
                    # A sine's 2 pi f or phase: the same 40-digit rationals the matrix
                    # takes, so the algebra stays over Q (fast, and exact from there on).
                    exact = exact_entry(shape)
                    numeric = self._shape_t(exact) if self.pencil.numeric else None
                    parts.append(_Part(j, weight, delay, exact, numeric, side))
        self._cache["parts"] = tuple(parts)
        return self._cache["parts"]

    def _shape_t(self, shape: sympy.Expr) -> Ratio | None:
        """A shape without parameters in ``t``, with a monic denominator."""
        pair = _flint_ratio(shape)
        if pair is None:
            return None
        num, den = self.pencil.to_t(pair[0]), self.pencil.to_t(pair[1])
        lead = den[den.degree()]
        return num / lead, den / lead

    def _folds(self) -> dict[tuple[int, sympy.Expr], _Fold]:
        """The plain numeric parts of one side that start together, each solved as one column."""
        if "folds" in self._cache:
            return self._cache["folds"]
        members: dict[tuple[int, sympy.Expr], list[_Part]] = {}
        for part in self._parts():
            if part.weight == 1 and part.numeric is not None:
                members.setdefault((part.side, part.delay), []).append(part)
        columns = []
        commons = []
        for group in members.values():
            common = flint.fmpq_poly([1])
            for part in group:
                den = part.numeric[1]
                common = common * (den // common.gcd(den))
            column: dict[int, flint.fmpq_poly] = {}
            for part in group:
                factor = part.numeric[0] * (common // part.numeric[1])
                for r, value in self.plan.inputs[part.j].column.items():
                    entry = self._to_t(value) * factor
                    column[r] = column[r] + entry if r in column else entry
            columns.append(column)
            commons.append(common)
        solved = self.pencil.fold(columns)
        folds = {key: _Fold(tuple(group), common, solved, index)
                 for index, ((key, group), common)
                 in enumerate(zip(members.items(), commons, strict=True))}
        self._cache["folds"] = folds
        return folds

    def _fold_ratio(self, fold: _Fold, form: Form) -> Ratio | None:
        """A quantity's part from one folded right-hand side, cancelled; None when zero."""
        den = self._denominator_t()
        num = flint.fmpq_poly([0])
        for i, coeff in self._coeffs_t(form).items():
            numerator = fold.solved.numerator(fold.index, i)
            if not numerator.is_zero():
                num += numerator * coeff
        direct = flint.fmpq_poly([0])
        for part in fold.parts:
            if part.j in form.direct:
                direct += (self._to_t(form.direct[part.j]) * part.numeric[0]
                           * (fold.common // part.numeric[1]))
        if not direct.is_zero():
            num += den * direct
        if num.is_zero():
            return None
        pair = self._finish(num, den * fold.common, form)
        return None if _is_zero(pair) else pair

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
        num, den = self._in_s(self._functions(form, {j})[j])
        element = self.netlist.element(source_name)
        if element is not None and element.kind is Kind.DISPLACEMENT_SOURCE:
            num, den = cancel(num * poly(s), den)
        return describe(source_name, quantity, num, den)


__all__ = ["Contribution", "Form", "Response", "Solution", "across", "network_function"]
