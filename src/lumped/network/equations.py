"""Assembly and exact solution of the network equations in the Laplace domain.

One across/through formulation serves every domain (mobility analogy).  The
unknowns are the across value of every node other than the reference
(``ground`` and ``frame`` are one common datum) and the through value of every
element whose law is not an admittance (inductors, springs, across sources,
couplings, and resistors whose value is symbolic).  Every equation has
entries ``a0 + a1*s`` (modified nodal analysis), so the system ``A(s) x =
sum_j B_j U_j(s)`` is polynomial in ``s`` and in the free parameters.

Each independent excitation is one input ``j``: a source (its waveform
``U_j(s)``), an initial condition (a companion source), the weight of a mass,
a drop.  The system is solved once for every input column, exactly:
``x_j = N_j(s) / D(s)`` with ``D = det A``.  With numeric element values the
solve goes by evaluation at integer points and interpolation, using
python-flint's exact integer matrices; with symbols it uses sympy's
fraction-free ``DomainMatrix.solve_den``.

Companion sources (the initial conditions):

* across store (capacitor ``C``, mass, inertia): ``I = s C V - C v0``;
* through store (inductor ``L``): ``V = s L I - L i0``; spring ``k``:
  ``k V - s F = -F0`` (``F0`` the initial force), which keeps ``k`` in the
  numerator.

Conventions for watched quantities:

* displacement / angle ``X = V/s``: measured from the position at ``t = 0``;
* acceleration ``A = s V - v(0-)``.  ``v(0-)`` is taken from the
  initial-condition part alone by the initial-value theorem
  (``lim_{s->oo} s V_ic(s)``), input by input, so a mass's initial velocity and
  a node's value fixed by other stored state are both handled; when that part
  holds an impulse (inconsistent initial conditions) nothing is subtracted;
* a coupling's through is the one sign convention applied to the port asked
  for: ``i_in`` for the input port, ``-n i_in`` (from ``output.positive`` to
  ``output.negative``) for the output port;
* gravity from equilibrium: the static state under the weights alone
  (``lim_{s->0} s Y(s)`` for every store) is added to the written initial
  conditions, so the weights and that state cancel and the response is
  measured from equilibrium.

Examples
--------
>>> import sympy
>>> from lumped import model as m
>>> step = m.Waveform((m.WaveformTerm(m.Shape.STEP, sympy.Integer(1)),))
>>> net = m.Netlist("ex", "", elements=(
...     m.Element("V1", m.Kind.VOLTAGE_SOURCE, "in", "ground", None, waveform=step),
...     m.Element("R1", m.Kind.RESISTOR, "in", "out", sympy.Integer(1000)),
...     m.Element("C1", m.Kind.CAPACITOR, "out", "ground", sympy.Rational(1, 10**6)),
... ))
>>> assemble(net).response(m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")).transform
1000/(s**2 + 1000*s)
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace

import flint
import networkx as nx
import sympy
from sympy.polys.constructor import construct_domain
from sympy.polys.matrices import DomainMatrix
from sympy.polys.matrices.exceptions import DMNonInvertibleMatrixError

from lumped.algebra.exact import rationalise
from lumped.constants import STANDARD_GRAVITY, s
from lumped.errors import SolveError, ValidationError
from lumped.model import (
    FRAME,
    GROUND,
    REFERENCE_NODES,
    Coupling,
    Domain,
    Element,
    GravityStart,
    Kind,
    Netlist,
    Quantity,
    Role,
)
from lumped.network import sources as waveforms
from lumped.network.sources import Piece
from lumped.topology import DATUM as _DATUM  # the merged reference node of the graphs
from lumped.topology import falling_masses, joined_graph

_ORIGINS = ("source", "initial", "gravity", "drop")
_ZERO_STATE = ("source", "gravity")

# --------------------------------------------------------------------------- results


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
class SecondOrderFactor:
    """A quadratic factor ``a s^2 + b s + c`` of a denominator, as figures.

    ``natural_frequency = sqrt(c/a)`` (rad/s), ``damping_ratio = b / (2 sqrt(a c))``,
    ``quality_factor = sqrt(a c) / b`` (``oo`` when undamped).  Exact where the
    factor is exact, floating point where it comes from numeric roots.
    """

    natural_frequency: sympy.Expr
    damping_ratio: sympy.Expr
    quality_factor: sympy.Expr
    factor: sympy.Expr | None = None


@dataclass(frozen=True)
class TransferFunction:
    """``H(s) = quantity / source waveform`` with every other excitation off.

    Attributes
    ----------
    numerator, denominator : sympy.Poly
        In ``s``, without common factors; the denominator is monic when the
        coefficients are numbers.
    poles, zeros : tuple of sympy.Expr
        Exact where the factors over the rationals are of degree <= 2,
        otherwise floating-point complex numbers (certified enclosures'
        midpoints).  With symbolic coefficients: exact for degree <= 2, else
        empty.
    dc_gain : sympy.Expr or None
        ``H(0)``; ``None`` when ``H`` has a pole at ``s = 0`` (``dc_gain_note`` says so).
    second_order_factors : tuple of SecondOrderFactor
    stability : str
        ``'stable'``, ``'marginal'``, ``'unstable'``, or ``'undetermined'``
        (symbolic coefficients that do not settle the question).
    offending_poles : tuple of sympy.Expr
        Poles on or right of the imaginary axis.
    """

    source: str
    quantity: Quantity
    numerator: sympy.Poly
    denominator: sympy.Poly
    poles: tuple[sympy.Expr, ...]
    zeros: tuple[sympy.Expr, ...]
    dc_gain: sympy.Expr | None
    dc_gain_note: str
    second_order_factors: tuple[SecondOrderFactor, ...]
    stability: str
    offending_poles: tuple[sympy.Expr, ...]

    @property
    def expr(self) -> sympy.Expr:
        """``numerator / denominator`` as one expression."""
        return self.numerator.as_expr() / self.denominator.as_expr()


# --------------------------------------------------------------------------- assembly


@dataclass
class _Input:
    """One excitation: ``column * sum(pieces)``, ``column`` constant in ``s``."""

    label: str
    element: str
    origin: str
    column: dict[int, sympy.Expr]
    pieces: tuple[Piece, ...]


@dataclass
class _Form:
    """A watched quantity as ``s**order * (c^T x + sum_j direct_j)``."""

    coeffs: dict[int, sympy.Expr]  # unknown index -> polynomial in s
    direct: dict[int, sympy.Expr] = field(default_factory=dict)  # input index -> polynomial in s
    order: int = 0  # +1: times s (derivative), -1: over s (integral)


class _Builder:
    """Collects unknowns, stamps and inputs."""

    def __init__(self, netlist: Netlist) -> None:
        self.netlist = netlist
        self.unknowns: list[tuple[str, str]] = []
        self.index: dict[tuple[str, str], int] = {}
        self.rows: list[dict[int, list[sympy.Expr]]] = []
        self.inputs: list[_Input] = []
        for node in netlist.nodes:
            if node not in REFERENCE_NODES:
                self._unknown(("node", node))

    def _unknown(self, key: tuple[str, str]) -> int:
        k = len(self.unknowns)
        self.unknowns.append(key)
        self.index[key] = k
        self.rows.append({})
        return k

    def node(self, name: str) -> int | None:
        return None if name in REFERENCE_NODES else self.index[("node", name)]

    def add(self, row: int | None, col: int | None, c0: sympy.Expr = 0, c1: sympy.Expr = 0) -> None:
        if row is None or col is None:
            return
        entry = self.rows[row].setdefault(col, [sympy.Integer(0), sympy.Integer(0)])
        entry[0] += c0
        entry[1] += c1

    def admittance(self, a: int | None, b: int | None, c0: sympy.Expr, c1: sympy.Expr) -> None:
        self.add(a, a, c0, c1)
        self.add(b, b, c0, c1)
        self.add(a, b, -c0, -c1)
        self.add(b, a, -c0, -c1)

    def branch(self, key: tuple[str, str], a: int | None, b: int | None) -> int:
        """A through unknown flowing from ``a`` to ``b``; returns its index (also its row)."""
        k = self._unknown(key)
        self.add(a, k, 1)
        self.add(b, k, -1)
        return k

    def across_row(self, k: int, a: int | None, b: int | None, scale: sympy.Expr = 1) -> None:
        self.add(k, a, scale)
        self.add(k, b, -scale)

    def add_input(
        self,
        label: str,
        element: str,
        origin: str,
        column: dict[int | None, sympy.Expr],
        pieces: Iterable[Piece],
    ) -> int:
        clean = {
            row: sympy.Integer(value) if isinstance(value, int) else value
            for row, value in column.items()
            if row is not None and value != 0
        }
        self.inputs.append(_Input(label, element, origin, clean, tuple(pieces)))
        return len(self.inputs) - 1


def _is_number(value: sympy.Expr) -> bool:
    return bool(getattr(value, "is_Rational", False))


def _value(element: Element) -> sympy.Expr:
    if element.value is None:
        raise SolveError(f"element {element.name} ({element.kind.word}) has no value")
    value = sympy.Integer(element.value) if isinstance(element.value, int) else element.value
    if value.atoms(sympy.Float):
        raise SolveError(f"element {element.name} has an inexact (floating-point) value {value}")
    return value


def _source_pieces(element: Element) -> tuple[Piece, ...]:
    if element.waveform is None:
        return ()
    pieces = waveforms.waveform_pieces(element.waveform)
    if element.kind is Kind.DISPLACEMENT_SOURCE:
        # The unknowns are velocities: v = dx/dt, with x(0-) = 0, so V = s X.
        pieces = tuple(replace(p, shape=sympy.cancel(p.shape * s)) for p in pieces)
    return pieces


@dataclass
class _Plan:
    """What assemble found out about the network before solving."""

    builder: _Builder
    element_rows: dict[str, int]  # element/coupling name -> its through unknown
    admittance: dict[
        str, tuple[sympy.Expr, sympy.Expr]
    ]  # admittance elements -> (c0, c1) of their law
    store_inputs: dict[str, int]  # element -> its initial-condition input
    source_inputs: dict[str, int]
    equilibrium_inputs: dict[str, int]
    gravity_inputs: dict[str, int]
    drop_velocity: dict[str, sympy.Expr]
    gravity: sympy.Expr | None
    equilibrium: bool
    notes: list[str]


def _plan(netlist: Netlist) -> _Plan:
    b = _Builder(netlist)
    notes: list[str] = []
    element_rows: dict[str, int] = {}
    admittance: dict[str, tuple[sympy.Expr, sympy.Expr]] = {}
    store_inputs: dict[str, int] = {}
    source_inputs: dict[str, int] = {}
    equilibrium_inputs: dict[str, int] = {}
    gravity_inputs: dict[str, int] = {}

    gravity = netlist.gravity.acceleration if netlist.gravity is not None else None
    equilibrium = netlist.gravity is not None and netlist.gravity.start is GravityStart.EQUILIBRIUM
    drop_velocity: dict[str, sympy.Expr] = {}
    if netlist.drops:
        if gravity is None:
            gravity = STANDARD_GRAVITY
        if equilibrium:
            notes.append(
                "a drop starts with unloaded springs: gravity acts from t = 0, not from equilibrium"
            )
            equilibrium = False
        for drop in netlist.drops:
            mass = netlist.element(drop.mass)
            if mass is None or mass.kind is not Kind.MASS:
                raise SolveError(f"the drop names {drop.mass}, which is not a mass")
            # The whole assembly arrives at the contact speed; in free fall its
            # internal springs carry no weight, so they start as written (unstressed).
            for name in falling_masses(netlist, drop.mass):
                drop_velocity[name] = -sympy.sqrt(2 * gravity * drop.height)
                body = netlist.element(name)
                if body is not None and body.initial is not None and body.initial != 0:
                    notes.append(
                        f"the drop of {drop.mass} sets the initial velocity of {name}; "
                        "the written one is unused"
                    )

    def add_store_inputs(element: Element, column: dict, word: str) -> None:
        """The companion source of a store's initial value (or its drop velocity), and the
        column the equilibrium start fills in later."""
        name = element.name
        if name in drop_velocity:
            label, origin, start = f"drop of {name}", "drop", drop_velocity[name]
        elif element.initial is not None and element.initial != 0:
            label, origin, start = f"initial {word} of {name}", "initial", element.initial
        else:
            start = None
        if start is not None:
            store_inputs[name] = b.add_input(
                label, name, origin, column, [Piece(start, sympy.Integer(1), 0)]
            )
        if equilibrium:
            equilibrium_inputs[name] = b.add_input(
                f"equilibrium {word} of {name}", name, "initial", column, ()
            )

    for element in netlist.elements:
        a, c = b.node(element.positive), b.node(element.negative)
        role = element.kind.role
        name = element.name
        if role is Role.ACROSS_STORE:
            value = _value(element)
            admittance[name] = (sympy.Integer(0), value)
            b.admittance(a, c, 0, value)
            column = {a: value, c: -value}
            add_store_inputs(element, column, element.domain.across_kind.word)
        elif role is Role.THROUGH_STORE:
            value = _value(element)
            k = b.branch(("branch", name), a, c)
            element_rows[name] = k
            if element.kind is Kind.INDUCTOR:
                b.across_row(k, a, c)
                b.add(k, k, 0, -value)
                column = {k: -value}
            else:
                b.across_row(k, a, c, value)
                b.add(k, k, 0, -1)
                column = {k: sympy.Integer(-1)}
            add_store_inputs(element, column, element.domain.through_kind.word)
        elif role is Role.DISSIPATOR:
            value = _value(element)
            if element.kind is Kind.RESISTOR and (not _is_number(value) or value == 0):
                # V - R I = 0 keeps a symbolic R in the numerator (and allows R = 0).
                k = b.branch(("branch", name), a, c)
                element_rows[name] = k
                b.across_row(k, a, c)
                b.add(k, k, -value)
            else:
                g = 1 / value if element.kind is Kind.RESISTOR else value
                admittance[name] = (g, sympy.Integer(0))
                b.admittance(a, c, g, 0)
        elif role is Role.THROUGH_SOURCE:
            # Through from a to b: it leaves node a and is injected into node b.
            source_inputs[name] = b.add_input(
                f"{element.kind.word} {name}",
                name,
                "source",
                {a: -1, c: 1},
                _source_pieces(element),
            )
        elif role is Role.ACROSS_SOURCE:
            k = b.branch(("branch", name), a, c)
            element_rows[name] = k
            b.across_row(k, a, c)
            source_inputs[name] = b.add_input(
                f"{element.kind.word} {name}", name, "source", {k: 1}, _source_pieces(element)
            )

    for coupling in netlist.couplings:
        n = coupling.ratio
        p1, n1 = b.node(coupling.input.positive), b.node(coupling.input.negative)
        p2, n2 = b.node(coupling.output.positive), b.node(coupling.output.negative)
        k = b.branch(("coupling", coupling.name), p1, n1)
        element_rows[coupling.name] = k
        # The output port's through, from output.positive to output.negative, is -n i_in.
        b.add(p2, k, -n)
        b.add(n2, k, n)
        b.across_row(k, p1, n1)
        b.add(k, p2, -n)
        b.add(k, n2, n)

    if gravity is not None:
        for element in netlist.elements:
            if element.kind is Kind.MASS:
                mass = _value(element)
                a, c = b.node(element.positive), b.node(element.negative)
                gravity_inputs[element.name] = b.add_input(
                    f"weight of {element.name}",
                    element.name,
                    "gravity",
                    {a: -mass, c: mass},
                    [Piece(gravity, 1 / s, 0)],
                )
    return _Plan(
        b,
        element_rows,
        admittance,
        store_inputs,
        source_inputs,
        equilibrium_inputs,
        gravity_inputs,
        drop_velocity,
        gravity,
        equilibrium,
        notes,
    )


# --------------------------------------------------------------------------- solving


class _SingularError(Exception):
    """det A is identically zero; carries a null vector's unknown indices."""

    def __init__(self, support: list[int]) -> None:
        super().__init__("singular")
        self.support = support


def _scaled_rows(
    rows: list[dict[int, list[sympy.Expr]]], inputs: list[_Input]
) -> tuple[list[dict[int, list[sympy.Expr]]], list[dict[int, sympy.Expr]], bool]:
    """Clear denominators row by row (the solution does not change).

    Returns the scaled rows, the scaled input columns, and whether every
    coefficient is now an integer.
    """
    columns: list[dict[int, sympy.Expr]] = [dict() for _ in inputs]
    scaled_rows: list[dict[int, list[sympy.Expr]]] = []
    integral = True
    for r, row in enumerate(rows):
        values = [c for entry in row.values() for c in entry]
        values += [inp.column[r] for inp in inputs if r in inp.column]
        if all(_is_number(v) for v in values):
            factor: sympy.Expr = sympy.Integer(
                math.lcm(*(int(v.q) for v in values)) if values else 1
            )
        else:
            integral = False
            dens = [sympy.fraction(sympy.together(v))[1] for v in values]
            factor = sympy.lcm_list(dens) if dens else sympy.Integer(1)
        scaled_rows.append(
            {col: [sympy.expand(c * factor) for c in entry] for col, entry in row.items()}
        )
        for j, inp in enumerate(inputs):
            if r in inp.column:
                columns[j][r] = sympy.expand(inp.column[r] * factor)
    return scaled_rows, columns, integral


def _degree_bound(rows: list[dict[int, list[sympy.Expr]]], n: int) -> int:
    row_deg = [max((1 if e[1] != 0 else 0 for e in row.values()), default=0) for row in rows]
    col_deg = [0] * n
    for row in rows:
        for col, e in row.items():
            if e[1] != 0:
                col_deg[col] = 1
    return min(sum(row_deg), sum(col_deg))


def _balance(rows: list[dict[int, list[sympy.Expr]]]) -> sympy.Rational:
    """A frequency scale ``sigma`` (a power of ten) for ``s = sigma * t``.

    Element values in SI span many decades (nF next to kohm); measuring
    ``s`` in units of ``sigma`` brings ``a0`` and ``a1 * sigma`` to similar
    sizes, so the integers met while solving stay short.  Exactness does not
    depend on the choice.
    """
    logs = []
    for row in rows:
        c0 = max((abs(e[0]) for e in row.values()), default=0)
        c1 = max((abs(e[1]) for e in row.values()), default=0)
        if c0 != 0 and c1 != 0:
            logs.append(_log10(c0) - _log10(c1))
    if not logs:
        return sympy.Integer(1)
    return sympy.Integer(10) ** round(sum(logs) / len(logs))


def _rational(value: sympy.Expr) -> sympy.Expr:
    """A number, or an expression in s alone, with its irrational numbers as 40-digit
    rationals; expressions in parameters stay as they are."""
    if isinstance(value, int):
        return sympy.Integer(value)
    return rationalise(value) if value.free_symbols <= {s} else value


def _log10(value: sympy.Rational) -> float:
    """log10 of a positive rational of any size (a float quotient would overflow)."""
    return math.log10(int(value.p)) - math.log10(int(value.q))


_PRIMES: list[int] = []


def _prime(k: int) -> int:
    """The ``k``-th prime below ``2**62`` (word-size moduli for nmod_mat)."""
    candidate = _PRIMES[-1] - 2 if _PRIMES else 2**62 - 1
    while len(_PRIMES) <= k:
        if flint.fmpz(candidate).is_prime():
            _PRIMES.append(candidate)
        candidate -= 2
    return _PRIMES[k]


def _solve_numeric(
    rows: list[dict[int, list[sympy.Expr]]], columns: list[dict[int, sympy.Expr]], n: int
) -> tuple[flint.fmpz_poly, list[list[flint.fmpz_poly]]]:
    """Exact solve over Z[s]: ``A(s) N(s) = D(s) B`` with ``D = det A``.

    Multimodular: modulo word-size primes, ``det A`` and ``adj(A) B`` are found
    at ``d + 1`` points and interpolated (both have degree at most ``d``, the
    smaller of the row- and column-degree sums), then lifted by the Chinese
    remainder theorem until they stop changing; the lifted result is accepted
    only once ``A N == D B`` holds exactly over Z[s], which proves it.
    """
    m = len(columns)
    d = _degree_bound(rows, n)
    flat0 = [0] * (n * n)
    flat1 = [0] * (n * n)
    for i, row in enumerate(rows):
        for j, (c0, c1) in row.items():
            flat0[i * n + j] = int(c0)
            flat1[i * n + j] = int(c1)
    width = max(m, 1)
    rhs = [0] * (n * width)
    for j, col in enumerate(columns):
        for i, v in col.items():
            rhs[i * width + j] = int(v)
    _check_not_singular(flat0, flat1, n, d)

    size = d + 1
    residues: list[int] | None = None
    modulus = 1
    k = 0
    while True:
        p = _prime(k)
        k += 1
        image = _modular_image(flat0, flat1, rhs, n, m, d, p)
        if image is None:
            continue  # p divides the determinant's content: skip it
        if residues is None:
            lifted = [c if c <= p // 2 else c - p for c in image]
        else:
            inverse = pow(modulus, -1, p)
            lifted = []
            for r, c in zip(residues, image, strict=True):
                x = r + modulus * (((c - r) * inverse) % p)
                big = modulus * p
                lifted.append(x - big if x > big // 2 else x)
        stable = residues is not None and lifted == residues
        residues = lifted
        modulus *= p
        if stable:
            den = flint.fmpz_poly(residues[0:size])
            nums = [
                [
                    flint.fmpz_poly(residues[(1 + j * n + i) * size : (2 + j * n + i) * size])
                    for i in range(n)
                ]
                for j in range(m)
            ]
            if not den.is_zero() and _verify(rows, columns, den, nums, n):
                return den, nums
        if k > 10_000:
            raise RuntimeError("multimodular solve did not converge")  # pragma: no cover


def _check_not_singular(flat0: list[int], flat1: list[int], n: int, d: int) -> None:
    """Raise _SingularError when det A(s) is identically zero (exact, over Z).

    A nonzero determinant of degree <= d has at most d integer roots, so
    d + 1 singular points prove it is zero.
    """
    if n == 0:
        return
    for x in range(d + 1):
        a_mat = flint.fmpz_mat(n, n, [p + x * q for p, q in zip(flat0, flat1, strict=True)])
        if a_mat.det() != 0:
            return
    null, nullity = a_mat.nullspace()
    support = [i for i in range(n) if null[i, 0] != 0] if nullity else []
    raise _SingularError(support)


def _modular_image(
    flat0: list[int], flat1: list[int], rhs: list[int], n: int, m: int, d: int, p: int
) -> list[int] | None:
    """Coefficients (low to high) of det A and adj(A) B modulo ``p``, flattened."""
    size = d + 1
    width = max(m, 1)
    b_mat = flint.nmod_mat(n, width, [v % p for v in rhs], p) if n else None
    if n:
        # A(x) = A0 + x A1, formed by matrix arithmetic in C for each point.
        a0 = flint.nmod_mat(n, n, [v % p for v in flat0], p)
        a1 = flint.nmod_mat(n, n, [v % p for v in flat1], p)
    points: list[int] = []
    samples: list[list[int]] = []
    x = 0
    while len(points) < size:
        if x > 2 * size + 2:
            return None
        if n:
            a_mat = a0 + a1 * x if x else a0
            det = int(a_mat.det())
        else:
            det = 1
        if det:
            row = [det]
            if m and n:
                sol = a_mat.solve(b_mat)
                entries = [int(e) for e in sol.entries()]
                row.extend(entries[i * width + j] * det % p for j in range(m) for i in range(n))
            points.append(x)
            samples.append(row)
        x += 1
    vander = flint.nmod_mat(size, size, [pow(q, e, p) for q in points for e in range(size)], p)
    ys = flint.nmod_mat(size, len(samples[0]), [v for row in samples for v in row], p)
    coeffs = vander.solve(ys)
    entries = [int(e) for e in coeffs.entries()]
    cols = len(samples[0])
    # entries are row-major (power k, column c); return column-major blocks.
    return [entries[kk * cols + c] for c in range(cols) for kk in range(size)]


def _verify(
    rows: list[dict[int, list[sympy.Expr]]],
    columns: list[dict[int, sympy.Expr]],
    den: flint.fmpz_poly,
    nums: list[list[flint.fmpz_poly]],
    n: int,
) -> bool:
    """Exactly: ``A(s) N_j(s) == D(s) B_j`` for every column ``j``."""
    entries = [
        [(j, flint.fmpz_poly([int(c0), int(c1)])) for j, (c0, c1) in row.items()] for row in rows
    ]
    for j, col in enumerate(columns):
        x = nums[j]
        for i in range(n):
            lhs = flint.fmpz_poly([])
            for k, a in entries[i]:
                if not x[k].is_zero():
                    lhs += a * x[k]
            if lhs != den * int(col.get(i, 0)):
                return False
    return True


def _unscale(p: flint.fmpz_poly, sigma: sympy.Rational, d: int) -> flint.fmpz_poly:
    """Undo ``s = sigma t``: the integer polynomial ``a**d Q(s / sigma)``, ``sigma = a/b``.

    With ``sigma = a/b``, coefficient ``k`` becomes ``q_k b**k a**(d - k)``; the
    same factor ``a**d`` multiplies every polynomial, so ratios are unchanged.
    """
    if sigma == 1:
        return p
    a, b = int(sigma.p), int(sigma.q)
    return flint.fmpz_poly([int(c) * b**k * a ** (d - k) for k, c in enumerate(p.coeffs())])


def _fmpz_to_poly(p: flint.fmpz_poly) -> sympy.Poly:
    coeffs = [int(c) for c in p.coeffs()]
    return sympy.Poly.from_list(list(reversed(coeffs)) or [0], s, domain=sympy.ZZ)


def _solve_symbolic(
    rows: list[dict[int, list[sympy.Expr]]], columns: list[dict[int, sympy.Expr]], n: int
) -> tuple[sympy.Poly, list[list[sympy.Poly]]]:
    """Fraction-free solve over the polynomial ring in ``s`` and the parameters."""
    m = len(columns)
    entries = [[sympy.Integer(0)] * n for _ in range(n)]
    for i, row in enumerate(rows):
        for j, (c0, c1) in row.items():
            entries[i][j] = c0 + c1 * s
    rhs = [[sympy.Integer(0)] * max(m, 1) for _ in range(n)]
    for j, col in enumerate(columns):
        for i, v in col.items():
            rhs[i][j] = v
    flat = [e for row in entries for e in row] + [e for row in rhs for e in row]
    domain, elements = construct_domain([*flat, s])
    a_elems = elements[: n * n]
    b_elems = elements[n * n : n * n + n * max(m, 1)]
    a_mat = DomainMatrix([a_elems[i * n : (i + 1) * n] for i in range(n)], (n, n), domain)
    b_mat = DomainMatrix(
        [b_elems[i * max(m, 1) : (i + 1) * max(m, 1)] for i in range(n)], (n, max(m, 1)), domain
    )
    try:
        num, den = a_mat.solve_den(b_mat)
    except DMNonInvertibleMatrixError:
        raise _SingularError(_symbolic_null_support(entries, n)) from None
    den_poly = sympy.Poly(domain.to_sympy(den), s)
    if den_poly.is_zero:
        raise _SingularError(_symbolic_null_support(entries, n))
    rows_out = num.to_Matrix()
    nums = [[sympy.Poly(rows_out[i, j], s) for i in range(n)] for j in range(m)]
    return den_poly, nums


def _symbolic_null_support(entries: list[list[sympy.Expr]], n: int) -> list[int]:
    """Unknowns in a null vector, with the parameters set to arbitrary primes."""
    symbols = sorted({x for row in entries for e in row for x in e.free_symbols}, key=str)
    primes = [101, 103, 107, 109, 113, 127, 131, 137, 139, 149]
    values = {x: primes[i % len(primes)] + i for i, x in enumerate(symbols)}
    values[s] = 7
    mat = sympy.Matrix(n, n, lambda i, j: entries[i][j].subs(values))
    null = mat.nullspace()
    if not null:
        return []
    return [i for i in range(n) if null[0][i] != 0]


# --------------------------------------------------------------------------- rational functions


def _poly(expr: sympy.Expr) -> sympy.Poly:
    return sympy.Poly(expr, s)


def _ratio(expr: sympy.Expr) -> tuple[sympy.Poly, sympy.Poly]:
    num, den = sympy.fraction(sympy.together(expr))
    return _poly(num), _poly(den)


def _cancel(num: sympy.Poly, den: sympy.Poly) -> tuple[sympy.Poly, sympy.Poly]:
    """Remove common factors; monic denominator for numbers, positive leading sign otherwise."""
    if num.is_zero:
        return num, _poly(sympy.Integer(1))
    num, den = num.unify(den)
    if _numeric_irrational(den.domain):
        # Coefficients such as pi (a sine's 2 pi f) or sqrt(3): a gcd over an
        # expression domain costs seconds and changes nothing that matters, since
        # the inversion takes such numbers to exact rationals and cancels there.
        lc = den.LC()
        if lc.could_extract_minus_sign():
            num, den = -num, -den
        return num, den
    if den.domain.is_PolynomialRing:
        # A gcd over Z[s, params] is far cheaper than pseudo-remainders in s
        # over Z[params], which swell badly.
        others = list(den.domain.symbols)
        flat_num, flat_den = num.inject(), den.inject()
        c, flat_num, flat_den = flat_num.cancel(flat_den)
        flat_num = flat_num * c
        num = flat_num.reorder(s, *others).eject(*others)
        den = flat_den.reorder(s, *others).eject(*others)
    else:
        result = num.cancel(den)
        if len(result) == 3:
            c, num, den = result
            num = num * c
    if den.domain.is_ZZ or den.domain.is_QQ:
        num, den = num.to_field(), den.to_field()
        lc = den.LC()
        num, den = num.exquo_ground(lc), den.monic()
    else:
        lc = den.LC()
        if lc.could_extract_minus_sign():
            num, den = -num, -den
    return num, den


def _numeric_irrational(domain) -> bool:
    """True for a coefficient domain holding irrational numbers rather than parameters."""
    if domain.is_EX or domain.is_EXRAW:
        return True
    if domain.is_PolynomialRing or domain.is_FractionField:
        return not all(isinstance(g, sympy.Symbol) for g in domain.symbols)
    return False


def _rf_expr(num: sympy.Poly, den: sympy.Poly) -> sympy.Expr:
    if num.is_zero:
        return sympy.Integer(0)
    return num.as_expr() / den.as_expr()


def _is_plain(weight: sympy.Expr) -> bool:
    """True when ``weight`` is a rational function of symbols with rational coefficients."""
    weight = sympy.Integer(weight) if isinstance(weight, int) else weight
    if weight.is_Rational:
        return True
    domain, _ = construct_domain([weight])
    if domain.is_ZZ or domain.is_QQ:
        return True
    if domain.is_PolynomialRing or domain.is_FractionField:
        return all(isinstance(g, sympy.Symbol) for g in domain.symbols) and (
            domain.domain.is_ZZ or domain.domain.is_QQ
        )
    return False


def _delay_factor(delay: sympy.Expr) -> sympy.Expr:
    return sympy.Integer(1) if delay == 0 else sympy.exp(-s * delay)


# --------------------------------------------------------------------------- solution


class Solution:
    """The solved network: ``x_j = N_j / D`` for every input ``j``.

    Build it with :func:`assemble`.  ``notes`` holds remarks on the network
    (impulses at ``t = 0`` from initial conditions that break KVL or KCL, and
    choices made on the user's behalf).
    """

    def __init__(
        self, netlist: Netlist, plan: _Plan, den: sympy.Poly, nums: list[list[sympy.Poly]]
    ) -> None:
        self.netlist = netlist
        self._plan = plan
        self._b = plan.builder
        self.denominator = den
        self._nums = nums
        self._domains = _node_domains(netlist)
        self.notes: tuple[str, ...] = ()

    # ----- small public helpers

    @property
    def unknowns(self) -> tuple[tuple[str, str], ...]:
        """The unknowns in order: ``('node' | 'branch' | 'coupling', name)``."""
        return tuple(self._b.unknowns)

    def node_domain(self, node: str) -> Domain | None:
        """Domain of a node, inferred from what touches it (``None`` if unknown)."""
        return self._domains.get(node)

    def node_quantity(self, node: str) -> Quantity:
        """The across quantity of ``node`` (voltage, velocity or angular velocity at it).

        Examples
        --------
        >>> import sympy
        >>> from lumped import model as m
        >>> net = m.Netlist("ex", "", elements=(
        ...     m.Element("R1", m.Kind.RESISTOR, "a", "ground", sympy.Integer(1)),))
        >>> assemble(net).node_quantity("a").label
        'voltage at a'
        """
        domain = self._domains.get(node)
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
        for j, inp in enumerate(self._b.inputs):
            if not inp.pieces:
                continue
            hnum, hden = self._network_function(form, j)
            if hnum.is_zero:
                continue
            groups: dict[sympy.Expr, list[Piece]] = {}
            for piece in inp.pieces:
                key = sympy.Integer(1) if _is_plain(piece.weight) else piece.weight
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
                    snum, sden = _ratio(_rational(shape))
                    num, den = _cancel(hnum * snum, hden * sden)
                    if form.order == 1 and inp.origin in ("initial", "drop") and delay == 0:
                        num, den = self._minus_initial(num, den, inp)
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
                    (_rf_expr(n_, d_), sympy.Integer(t_) if t_ == 0 else t_) for n_, d_, t_ in parts
                )
                transform = sympy.Add(*(r_ * _delay_factor(t_) for r_, t_ in terms))
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
                num, den = _cancel(num, den)
                if not num.is_zero:
                    total_list.append(
                        (_rf_expr(num, den), sympy.Integer(delay) if delay == 0 else delay)
                    )
            for num, den, delay, weight in weighted:
                total_list.append(
                    (weight * _rf_expr(num, den), sympy.Integer(delay) if delay == 0 else delay)
                )
            total = tuple(total_list)
            transform = sympy.Add(*(r_ * _delay_factor(t_) for r_, t_ in total))
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

    def _minus_initial(
        self, num: sympy.Poly, den: sympy.Poly, inp: _Input
    ) -> tuple[sympy.Poly, sympy.Poly]:
        """``s V - v(0-)`` for an initial-condition part, ``v(0-) = lim_{s->oo} s V``.

        The initial-condition part alone starts from the stored state, so its
        value just after 0 is the value just before.  When that part is not
        strictly proper after multiplying by ``s`` (an impulse at 0: the
        initial conditions are inconsistent), it is left as it is.
        """
        if num.degree() != den.degree():
            return num, den
        v0 = num.LC() / den.LC()
        return _cancel(num - den * v0, den)

    def _network_function(self, form: _Form, j: int) -> tuple[sympy.Poly, sympy.Poly]:
        """``s**order (c^T N_j / D + direct_j)`` as a cancelled ratio."""
        den = self.denominator
        num = _poly(sympy.Integer(0))
        # Coefficients such as a damper's pi*0.004 are taken as the solve took them.
        for i, coeff in form.coeffs.items():
            nij = self._nums[j][i]
            if not nij.is_zero:
                num = num + nij * _poly(_rational(coeff))
        if j in form.direct:
            num = num + den * _poly(_rational(form.direct[j]))
        if num.is_zero:
            return num, _poly(sympy.Integer(1))
        if form.order == 1:
            num = num * _poly(s)
        elif form.order == -1:
            den = den * _poly(s)
        return _cancel(num, den)

    # ----- quantities as linear forms

    def _across(self, positive: str, negative: str) -> dict[int, sympy.Expr]:
        coeffs: dict[int, sympy.Expr] = {}
        for node, sign in ((positive, 1), (negative, -1)):
            k = self._b.node(node)
            if k is not None:
                coeffs[k] = coeffs.get(k, 0) + sign
        return {k: v for k, v in coeffs.items() if v != 0}

    def _form(self, quantity: Quantity) -> _Form:
        kind = quantity.kind
        target = quantity.target
        element = self.netlist.element(target)
        coupling = self.netlist.coupling(target)
        is_node = target in self._domains
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
            return _Form(self._across(element.positive, element.negative), order=order)
        if not is_node:
            raise ValidationError(
                f"there is no node named {target!r}",
                quantity.location,
                hint="name a node of the netlist",
            )
        domain = self._domains[target]
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
        return _Form(self._across(target, REFERENCE_NODES[0]), order=order)

    def _through_form(self, element: Element) -> _Form:
        name = element.name
        plan = self._plan
        if name in plan.element_rows:
            return _Form({plan.element_rows[name]: sympy.Integer(1)})
        if name in plan.admittance:
            c0, c1 = plan.admittance[name]
            across = self._across(element.positive, element.negative)
            form = _Form({k: v * (c0 + c1 * s) for k, v in across.items()})
            # Across store: I = s C V - C v0; the -C v0 belongs to each of its state inputs.
            for j, inp in enumerate(self._b.inputs):
                if inp.element == name and inp.origin in ("initial", "drop"):
                    form.direct[j] = -c1
            return form
        if element.kind.role is Role.THROUGH_SOURCE:
            return _Form({}, {plan.source_inputs[name]: sympy.Integer(1)})
        raise ValidationError(
            f"cannot take the {element.domain.through_kind.word} in {name}", element.location
        )

    def _coupling_form(self, quantity: Quantity, coupling: Coupling, order: int) -> _Form:
        kind = quantity.kind
        use_input = coupling.kind.input_domain is kind.domain
        if not use_input and coupling.kind.output_domain is not kind.domain:
            raise ValidationError(
                f"{coupling.name} ({coupling.kind.word}) has no {kind.word}", quantity.location
            )
        port = coupling.input if use_input else coupling.output
        if kind.is_through:
            k = self._plan.element_rows[coupling.name]
            # Through from port.positive to port.negative (the one sign convention).
            return _Form({k: sympy.Integer(1) if use_input else -coupling.ratio})
        return _Form(self._across(port.positive, port.negative), order=order)

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
        >>> net = m.Netlist("ex", "", elements=(
        ...     m.Element("V1", m.Kind.VOLTAGE_SOURCE, "in", "ground", None),
        ...     m.Element("R1", m.Kind.RESISTOR, "in", "out", sympy.Integer(1)),
        ...     m.Element("C1", m.Kind.CAPACITOR, "out", "ground", sympy.Integer(1)),))
        >>> out = m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")
        >>> tf = assemble(net).transfer_function("V1", out)
        >>> tf.expr, tf.stability
        (1/(s + 1), 'stable')
        """
        if source_name not in self._plan.source_inputs:
            raise ValidationError(f"there is no source named {source_name!r}", quantity.location)
        j = self._plan.source_inputs[source_name]
        form = self._form(quantity)
        num, den = self._network_function(form, j)
        element = self.netlist.element(source_name)
        if element is not None and element.kind is Kind.DISPLACEMENT_SOURCE:
            num, den = _cancel(num * _poly(s), den)
        return _analyse(source_name, quantity, num, den)


def _node_domains(netlist: Netlist) -> dict[str, Domain]:
    domains: dict[str, Domain] = {}
    for element in netlist.elements:
        for node in (element.positive, element.negative):
            if node not in REFERENCE_NODES:
                domains.setdefault(node, element.domain)
    for coupling in netlist.couplings:
        for port, domain in (
            (coupling.input, coupling.kind.input_domain),
            (coupling.output, coupling.kind.output_domain),
        ):
            for node in (port.positive, port.negative):
                if node not in REFERENCE_NODES:
                    domains.setdefault(node, domain)
    domains[GROUND] = Domain.ELECTRICAL
    domains[FRAME] = Domain.TRANSLATIONAL
    return domains


# --------------------------------------------------------------------------- analysis of H(s)


def _numeric_poly(p: sympy.Poly) -> bool:
    return p.domain.is_ZZ or p.domain.is_QQ


def _q(c: flint.fmpq | flint.fmpz) -> sympy.Rational:
    if hasattr(c, "q"):
        return sympy.Rational(int(c.p), int(c.q))
    return sympy.Integer(int(c))


def _to_fmpq_poly(p: sympy.Poly) -> flint.fmpq_poly:
    coeffs = [sympy.Rational(c) for c in reversed(p.all_coeffs())]
    return flint.fmpq_poly([flint.fmpq(int(c.p), int(c.q)) for c in coeffs])


def _roots_numeric(p: sympy.Poly) -> list[tuple[sympy.Expr, int, flint.fmpq_poly | None]]:
    """Roots with multiplicity: exact for factors of degree <= 2, floats otherwise."""
    if p.degree() <= 0:
        return []
    out: list[tuple[sympy.Expr, int, flint.fmpq_poly | None]] = []
    _, factors = _to_fmpq_poly(p).factor()
    for f, mult in factors:
        coeffs = [_q(c) for c in f.coeffs()]
        if f.degree() <= 2:
            expr_f = sum(c * s**k for k, c in enumerate(coeffs))
            for root in sympy.roots(sympy.Poly(expr_f, s), multiple=True):
                out.append((root, mult, None))
        else:
            for ball, _ in f.complex_roots():
                value = sympy.Float(float(ball.real.mid())) + sympy.I * sympy.Float(
                    float(ball.imag.mid())
                )
                out.append((value, mult, f))
    return out


def _imaginary_axis_roots(f: flint.fmpq_poly) -> bool:
    """Exactly: does ``f`` vanish somewhere on the imaginary axis?"""
    y = sympy.Symbol("y", real=True)
    coeffs = [_q(c) for c in f.coeffs()]
    value = sympy.expand(sum(c * (sympy.I * y) ** k for k, c in enumerate(coeffs)))
    re, im = sympy.Poly(sympy.re(value), y), sympy.Poly(sympy.im(value), y)
    common = sympy.gcd(re, im)
    return common.degree() > 0 and common.count_roots() > 0


def _real_sign(root: sympy.Expr, factor: flint.fmpq_poly | None) -> int:
    """Sign of the real part; exact for exact roots, decided exactly on the axis otherwise."""
    re = sympy.re(root)
    if factor is None:
        return int(sympy.sign(re))
    if abs(float(re)) > 1e-9 * max(1.0, abs(complex(root))):
        return 1 if float(re) > 0 else -1
    return 0 if _imaginary_axis_roots(factor) else (1 if float(re) > 0 else -1)


def _analyse(source: str, quantity: Quantity, num: sympy.Poly, den: sympy.Poly) -> TransferFunction:
    zero_order = 0
    coeffs = den.all_coeffs()
    while len(coeffs) > 1 and coeffs[-1] == 0:
        coeffs.pop()
        zero_order += 1
    if zero_order:
        dc_gain, note = None, f"H(s) has a pole of order {zero_order} at s = 0: no finite DC gain"
    else:
        dc_gain, note = sympy.simplify(num.eval(0) / den.eval(0)), ""  # Poly.eval: H(0)
    numeric = _numeric_poly(den) and _numeric_poly(num)
    factors: list[SecondOrderFactor] = []
    if numeric:
        pole_info = _roots_numeric(den)
        zero_info = _roots_numeric(num) if not num.is_zero else []
        poles = tuple(r for r, mult, _ in pole_info for _ in range(mult))
        zeros = tuple(r for r, mult, _ in zero_info for _ in range(mult))
        offending: list[sympy.Expr] = []
        unstable = False
        for root, mult, factor in pole_info:
            sign = _real_sign(root, factor)
            if sign > 0 or (sign == 0 and mult > 1):
                unstable = True
            if sign >= 0:
                offending.extend([root] * mult)
        stability = "unstable" if unstable else ("marginal" if offending else "stable")
        _, flint_factors = _to_fmpq_poly(den).factor() if den.degree() > 0 else (None, [])
        for f, _ in flint_factors:
            coeffs_f = [_q(c) for c in f.coeffs()]
            if f.degree() == 2:
                factors.append(_quadratic(coeffs_f[2], coeffs_f[1], coeffs_f[0]))
        for root, _, factor in pole_info:
            if factor is not None and float(sympy.im(root)) > 0:
                wn = abs(complex(root))
                zeta = -float(sympy.re(root)) / wn
                q = sympy.oo if zeta == 0 else sympy.Float(1 / (2 * zeta))
                factors.append(SecondOrderFactor(sympy.Float(wn), sympy.Float(zeta), q, None))
    else:
        poles = tuple(sympy.roots(den, multiple=True)) if den.degree() <= 2 else ()
        zeros = tuple(sympy.roots(num, multiple=True)) if 0 < num.degree() <= 2 else ()
        _, flist = sympy.factor_list(den.as_expr(), s)
        for f, _ in flist:
            fp = sympy.Poly(f, s)
            if fp.degree() == 2:
                a2, a1, a0 = fp.all_coeffs()
                factors.append(_quadratic(a2, a1, a0))
        stability, offending = _symbolic_stability(den, zero_order)
    return TransferFunction(
        source,
        quantity,
        num,
        den,
        poles,
        zeros,
        dc_gain,
        note,
        tuple(factors),
        stability,
        tuple(offending),
    )


def _quadratic(a: sympy.Expr, b: sympy.Expr, c: sympy.Expr) -> SecondOrderFactor:
    wn = sympy.sqrt(c / a)
    zeta = b / (2 * sympy.sqrt(a * c))
    q = sympy.oo if b == 0 else sympy.sqrt(a * c) / b
    return SecondOrderFactor(
        sympy.simplify(wn),
        sympy.simplify(zeta),
        sympy.simplify(q),
        sympy.expand(a * s**2 + b * s + c),
    )


def _symbolic_stability(den: sympy.Poly, zero_order: int) -> tuple[str, tuple[sympy.Expr, ...]]:
    """Routh-Hurwitz on ``den / s**zero_order`` with the parameters' assumptions."""
    coeffs = den.all_coeffs()[: len(den.all_coeffs()) - zero_order]
    if coeffs[0].could_extract_minus_sign():
        coeffs = [-c for c in coeffs]
    degree = len(coeffs) - 1
    offending = tuple([sympy.Integer(0)] * zero_order)
    if zero_order > 1:
        return "unstable", offending
    minors = []
    for k in range(1, degree + 1):
        mat = sympy.Matrix(
            k,
            k,
            lambda i, j: (
                coeffs[2 * j - i + 1] if 0 <= 2 * j - i + 1 <= degree else sympy.Integer(0)
            ),
        )
        minors.append(sympy.factor(mat.det()))
    signs = [sympy.simplify(c).is_positive for c in coeffs] + [m_.is_positive for m_ in minors]
    if all(signs):
        return ("marginal" if zero_order else "stable"), offending
    if any(sympy.simplify(x).is_negative for x in list(coeffs) + minors):
        return "unstable", offending
    return "undetermined", offending


# --------------------------------------------------------------------------- checks


def _graph_nodes(name: str) -> str:
    return _DATUM if name in REFERENCE_NODES else name


def _structural_errors(netlist: Netlist) -> None:
    """Raise SolveError for loops of across sources and nodes with no path to the reference."""
    across = nx.MultiGraph()
    for element in netlist.elements:
        if element.kind.role is Role.ACROSS_SOURCE:
            a, b = _graph_nodes(element.positive), _graph_nodes(element.negative)
            if a == b:
                raise SolveError(
                    f"{element.kind.word} {element.name} is shorted: both ends are the same node"
                )
            if across.has_node(a) and across.has_node(b) and nx.has_path(across, a, b):
                path = nx.shortest_path(across, a, b)
                names = [element.name] + [
                    next(iter(across.get_edge_data(u, v).values()))["name"]
                    for u, v in itertools.pairwise(path)
                ]
                raise SolveError(
                    "across sources "
                    + ", ".join(sorted(names))
                    + " form a loop: their values cannot all hold"
                )
            across.add_edge(a, b, name=element.name)
    held = nx.MultiGraph()
    held.add_node(_DATUM)
    through_sources: dict[str, list[str]] = {}
    for element in netlist.elements:
        a, b = _graph_nodes(element.positive), _graph_nodes(element.negative)
        held.add_node(a)
        held.add_node(b)
        if element.kind.role is Role.THROUGH_SOURCE:
            through_sources.setdefault(a, []).append(element.name)
            through_sources.setdefault(b, []).append(element.name)
        else:
            held.add_edge(a, b)
    for coupling in netlist.couplings:
        for port in (coupling.input, coupling.output):
            held.add_edge(_graph_nodes(port.positive), _graph_nodes(port.negative))
    for component in nx.connected_components(held):
        if _DATUM in component:
            continue
        nodes = sorted(component)
        feeders = sorted({x for node in nodes for x in through_sources.get(node, [])})
        where = "node " + nodes[0] if len(nodes) == 1 else "nodes " + ", ".join(nodes)
        if feeders:
            raise SolveError(
                f"{where} reach the reference only through the through sources "
                f"{', '.join(feeders)}: "
                "nothing fixes their across values (add a path to ground/frame)"
                if len(nodes) > 1
                else f"{where} is fed only by the through source(s) {', '.join(feeders)}: "
                "nothing fixes its across value (add a path to ground/frame)"
            )
        raise SolveError(
            f"{where} have no path to the reference (ground/frame): "
            "nothing fixes their across values"
        )


def _initial_notes(netlist: Netlist, plan: _Plan, extra: dict[str, sympy.Expr]) -> list[str]:
    """KVL loops of across stores/sources and KCL cut-sets of through stores/sources.

    Initial values that break them are legal but make impulses at t = 0.
    ``extra`` adds equilibrium initial values on top of the written ones.
    """
    notes: list[str] = []

    def initial(element: Element) -> sympy.Expr | None:
        if element.kind.is_source:
            if element.waveform is None:
                return sympy.Integer(0)
            if element.kind is Kind.DISPLACEMENT_SOURCE:
                return None  # a displacement that jumps is a velocity impulse: expected
            return waveforms.initial_value(element.waveform)
        if element.name in plan.drop_velocity:
            return plan.drop_velocity[element.name]
        value = element.initial if element.initial is not None else sympy.Integer(0)
        return value + extra.get(element.name, 0)

    # KVL: spanning forest with potentials over across stores and across sources.
    edges = [
        e
        for e in netlist.elements
        if e.kind.role in (Role.ACROSS_STORE, Role.ACROSS_SOURCE) and initial(e) is not None
    ]
    graph = nx.MultiGraph()
    for e in edges:
        graph.add_edge(
            _graph_nodes(e.positive), _graph_nodes(e.negative), name=e.name, value=initial(e)
        )
    for component in nx.connected_components(graph):
        root = _DATUM if _DATUM in component else sorted(component)[0]
        potential = {root: sympy.Integer(0)}
        parent: dict[str, tuple[str, str]] = {}
        queue = [root]
        while queue:
            u = queue.pop(0)
            for v, keyed in graph[u].items():
                for data in keyed.values():
                    if v in potential:
                        continue
                    e = netlist.element(data["name"])
                    assert e is not None
                    # phi(positive) - phi(negative) = value along the tree.
                    sign = 1 if _graph_nodes(e.positive) == u else -1
                    potential[v] = potential[u] - sign * data["value"]
                    parent[v] = (u, data["name"])
                    queue.append(v)
        tree = {name for _, name in parent.values()}
        # Only this component's edges: stores need not touch the reference, so the
        # graph may hold several groups, each with its own potentials.
        for _, _, data in graph.subgraph(component).edges(data=True):
            if data["name"] in tree:
                continue
            e = netlist.element(data["name"])
            assert e is not None
            a, b = _graph_nodes(e.positive), _graph_nodes(e.negative)
            if sympy.simplify(potential[a] - potential[b] - data["value"]) != 0:
                loop = {data["name"]} | (_tree_path(parent, a) ^ _tree_path(parent, b))
                domain = e.domain
                notes.append(
                    f"the initial {domain.across_kind.word}s of "
                    + ", ".join(sorted(loop))
                    + " do not add up around their loop (KVL): the stores share them at once, "
                    f"with an impulse of {domain.through_kind.word} at t = 0"
                )

    # KCL: super-nodes joined by everything but through stores and through sources.
    joined = joined_graph(netlist, without=(Role.THROUGH_STORE, Role.THROUGH_SOURCE),
                          couplings_join_ports=False)
    for component in nx.connected_components(joined):
        if _DATUM in component:
            continue
        total = sympy.Integer(0)
        crossing: list[str] = []
        unknown = False
        for e in netlist.elements:
            if e.kind.role not in (Role.THROUGH_STORE, Role.THROUGH_SOURCE):
                continue
            a_in = _graph_nodes(e.positive) in component
            b_in = _graph_nodes(e.negative) in component
            if a_in == b_in:
                continue
            value = initial(e)
            if value is None:
                unknown = True
                continue
            crossing.append(e.name)
            total += value if a_in else -value
        if crossing and not unknown and sympy.simplify(total) != 0:
            domain = netlist.element(crossing[0]).domain
            notes.append(
                f"the initial {domain.through_kind.word}s of "
                + ", ".join(sorted(crossing))
                + " do not balance (KCL) at "
                + ", ".join(sorted(component))
                + f": expect an impulse of {domain.across_kind.word} at t = 0"
            )
    return notes


def _tree_path(parent: dict[str, tuple[str, str]], node: str) -> set[str]:
    names: set[str] = set()
    while node in parent:
        node, name = parent[node]
        names.add(name)
    return names


def _singular_message(plan: _Plan, support: Sequence[int]) -> str:
    b = plan.builder
    names: set[str] = set()
    nodes = {key[1] for i, key in enumerate(b.unknowns) if i in support and key[0] == "node"}
    for i in support:
        kind, name = b.unknowns[i]
        if kind != "node":
            names.add(name)
    for element in b.netlist.elements:
        if element.positive in nodes or element.negative in nodes:
            names.add(element.name)
    for coupling in b.netlist.couplings:
        ends = {
            coupling.input.positive,
            coupling.input.negative,
            coupling.output.positive,
            coupling.output.negative,
        }
        if ends & nodes:
            names.add(coupling.name)
    involved = ", ".join(sorted(names)) if names else "the whole network"
    return f"the network equations have no unique solution; elements involved: {involved}"


# --------------------------------------------------------------------------- entry point


def _solve(plan: _Plan) -> tuple[sympy.Poly, list[list[sympy.Poly]]]:
    b = plan.builder
    n = len(b.unknowns)
    # The one place where the network's numbers enter the algebra: an irrational
    # number (pi, sqrt(2)) becomes its rational at IRRATIONAL_DIGITS digits; an
    # entry holding a free parameter stays exact (the symbolic path keeps it).
    entries = [{j: [_rational(e[0]), _rational(e[1])] for j, e in row.items()}
               for row in b.rows]
    inputs = [replace(inp, column={r: _rational(v) for r, v in inp.column.items()})
              for inp in b.inputs]
    numeric = all(_is_number(c) for row in entries for e in row.values() for c in e)
    sigma = _balance(entries) if numeric else sympy.Integer(1)
    scaled = [{j: [e[0], e[1] * sigma] for j, e in row.items()} for row in entries]
    rows, columns, integral = _scaled_rows(scaled, inputs)
    try:
        if integral:
            den, nums = _solve_numeric(rows, columns, n)
            d = _degree_bound(rows, n)
            return _fmpz_to_poly(_unscale(den, sigma, d)), [
                [_fmpz_to_poly(_unscale(p, sigma, d)) for p in col] for col in nums
            ]
        return _solve_symbolic(rows, columns, n)
    except _SingularError as exc:
        raise SolveError(_singular_message(plan, exc.support)) from None


def _static_values(solution: Solution, plan: _Plan) -> dict[str, sympy.Expr]:
    """Each store's value at rest under gravity alone: ``lim_{s->0} s Y(s)``.

    Raises SolveError naming every mass with no static support (it keeps
    moving under its weight).
    """
    netlist = solution.netlist
    gravity = plan.gravity
    assert gravity is not None

    def static(form: _Form) -> sympy.Expr | None:
        total = sympy.Integer(0)
        for j in plan.gravity_inputs.values():
            num, den = solution._network_function(form, j)
            if num.is_zero:
                continue
            if den.eval(0) == 0:  # Poly.eval is polynomial evaluation, not Python's eval
                return None
            total += num.eval(0) / den.eval(0)  # Poly.eval at s = 0 (the static limit)
        return sympy.simplify(total * gravity)

    unsupported = []
    for element in netlist.elements:
        if element.kind is Kind.MASS:
            v = static(_Form(solution._across(element.positive, element.negative)))
            if v is None or v != 0:
                unsupported.append(element.name)
    if unsupported:
        raise SolveError(
            "no static support for mass "
            + ", ".join(unsupported)
            + ": under its weight it keeps moving, so there is "
            "no equilibrium to start from (support it with a spring, or start unloaded)"
        )
    values: dict[str, sympy.Expr] = {}
    for name in plan.equilibrium_inputs:
        element = netlist.element(name)
        assert element is not None
        if element.kind.role is Role.THROUGH_STORE:
            form = _Form({plan.element_rows[name]: sympy.Integer(1)})
        else:
            form = _Form(solution._across(element.positive, element.negative))
        value = static(form)
        if value is None:
            raise SolveError(
                f"{name} has no static value under gravity: there is no equilibrium to start from"
            )
        values[name] = value
    return values


def assemble(netlist: Netlist) -> Solution:
    """Build the s-domain equations of ``netlist`` and solve them exactly.

    Parameters
    ----------
    netlist : Netlist
        Exact SI values; free parameters as sympy symbols.

    Returns
    -------
    Solution
        Ask it for :meth:`Solution.response` and :meth:`Solution.transfer_function`.

    Raises
    ------
    SolveError
        When the equations have no unique solution (a loop of across
        sources, a node held only by through sources, ...); the message names
        the elements.

    Examples
    --------
    >>> import sympy
    >>> from lumped import model as m
    >>> net = m.Netlist("ex", "", elements=(
    ...     m.Element("L1", m.Kind.INDUCTOR, "a", "ground", sympy.Integer(2),
    ...               initial=sympy.Integer(3)),
    ...     m.Element("R1", m.Kind.RESISTOR, "a", "ground", sympy.Integer(4)),))
    >>> assemble(net).response(m.Quantity(m.QuantityKind.CURRENT, "L1", "in")).transform
    3/(s + 2)
    """
    _structural_errors(netlist)
    plan = _plan(netlist)
    den, nums = _solve(plan)
    solution = Solution(netlist, plan, den, nums)
    notes = list(plan.notes)
    extra: dict[str, sympy.Expr] = {}
    if plan.equilibrium:
        extra = _static_values(solution, plan)
        for name, value in extra.items():
            j = plan.equilibrium_inputs[name]
            if value != 0:
                plan.builder.inputs[j].pieces = (Piece(value, sympy.Integer(1), sympy.Integer(0)),)
            element = netlist.element(name)
            if (
                element is not None
                and element.initial is not None
                and element.initial != 0
                and value != 0
            ):
                notes.append(
                    f"the initial value written for {name} is taken on top of its equilibrium value"
                )
    notes.extend(_initial_notes(netlist, plan, extra))
    solution.notes = tuple(notes)
    return solution


__all__ = [
    "Contribution",
    "Response",
    "SecondOrderFactor",
    "Solution",
    "TransferFunction",
    "assemble",
    "s",
]
