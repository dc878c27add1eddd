"""The exact solve of the network pencil, and how responses share it.

Every solve here is checked in sympy's exact arithmetic, run in the test:
``A(s) N(s) == D(s) b(s)`` as polynomials over Q, with ``D`` a constant
multiple of sympy's ``Matrix.det``; closed forms are compared with
:func:`lumped.inversion.invert` on the same transform, and expressions with
sympy's ``Poly.as_expr``.
"""

from __future__ import annotations

import flint
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

import lumped
from lumped.algebra import roots
from lumped.constants import s
from lumped.inversion import invert, invert_ratios
from lumped.network import assemble
from lumped.network.rational import poly_expr
from lumped.network.solve import _NumericPencil

# --------------------------------------------------------------------------- helpers


def ladder(sections: int, initial: bool) -> str:
    """An RLC ladder: 1 V step, series 1 ohm + 1 uH, shunt 1 uF, 1 ohm load."""
    capacitor = ", initially 1 V" if initial else ""
    inductor = ", initially 0.1 A" if initial else ""
    lines = ["voltage source V from n0 to ground step 1 V"]
    for k in range(1, sections + 1):
        lines += [f"resistor R{k} from n{k - 1} to a{k} 1 ohm",
                  f"inductor L{k} from a{k} to n{k} 1 uH{inductor}",
                  f"capacitor C{k} from n{k} to ground 1 uF{capacitor}"]
    lines.append(f"resistor Rload from n{sections} to ground 1 ohm")
    return "\n".join(lines) + "\n"


def _entries(a0: list[list[int]], a1: list[list[int]]) -> list[dict[int, list[sympy.Expr]]]:
    n = len(a0)
    return [{j: [sympy.Integer(a0[i][j]), sympy.Integer(a1[i][j])] for j in range(n)
             if a0[i][j] or a1[i][j]} for i in range(n)]


def _singular(support: list[int]) -> Exception:
    return ValueError(f"singular {support}")


def _poly_in_s(p: flint.fmpq_poly | flint.fmpz_poly, sigma: sympy.Rational) -> sympy.Poly:
    """A polynomial in the solver's t = s / sigma, as a sympy polynomial in s."""
    coefficients = [sympy.Rational(int(c.p), int(c.q)) / sigma**k
                    for k, c in enumerate(flint.fmpq_poly(p).coeffs())]
    return sympy.Poly(list(reversed(coefficients)) or [0], s, domain=sympy.QQ)


def _solves(a0, a1, column, numerators, den) -> bool:
    """A(s) N(s) == D(s) b(s), exactly, in sympy's polynomial arithmetic."""
    n = len(a0)
    for r in range(n):
        lhs = sum((sympy.Poly(a0[r][j] + a1[r][j] * s, s, domain=sympy.QQ) * numerators[j]
                   for j in range(n)), sympy.Poly(0, s, domain=sympy.QQ))
        if lhs != den * sympy.Poly(column[r], s, domain=sympy.QQ):
            return False
    return True


pencils = st.integers(min_value=1, max_value=4).flatmap(lambda n: st.tuples(
    st.lists(st.lists(st.integers(-3, 3) | st.sampled_from([10**25, -(10**18), 7**30]),
                      min_size=n, max_size=n), min_size=n, max_size=n),
    st.lists(st.lists(st.integers(-2, 2), min_size=n, max_size=n), min_size=n, max_size=n),
    st.lists(st.lists(st.integers(-5, 5), min_size=3, max_size=3), min_size=n, max_size=n),
))


# --------------------------------------------------------------------------- the solve


@settings(max_examples=80, deadline=None)
@given(pencils)
def test_numeric_pencil_agrees_with_sympy_exact_solve(case) -> None:
    a0, a1, rhs = case
    n = len(a0)
    matrix = sympy.Matrix(n, n, lambda i, j: a0[i][j] + a1[i][j] * s)
    if sympy.expand(matrix.det()) == 0:
        with pytest.raises(ValueError, match="singular"):
            _NumericPencil(_entries(a0, a1), n, _singular)
        return
    pencil = _NumericPencil(_entries(a0, a1), n, _singular)
    sigma = pencil.sigma  # the solver's variable is t = s / sigma
    den = _poly_in_s(pencil.determinant(), sigma)
    # det A (sympy's) up to a constant factor: the rows were scaled to integers.
    reference = sympy.Poly(matrix.det(), s, domain=sympy.QQ)
    assert den * reference.LC() == reference * den.LC()
    # A right-hand side of degree 2 in s (the one a sine or a ramp brings), in t.
    column = [sympy.Integer(r[0]) + r[1] * s + r[2] * s**2 for r in rhs]
    in_t = [flint.fmpq_poly([int(r[0]), int(r[1] * sigma), int(r[2] * sigma**2)]) for r in rhs]
    solved = pencil.fold([dict(enumerate(in_t))])
    assert _solves(a0, a1, column, [_poly_in_s(solved.numerator(0, i), sigma)
                                    for i in range(n)], den)
    # One unknown for constant columns, through the series (I + y M)^-1.
    constants = [dict(enumerate(flint.fmpq_poly([r[k]]) for r in rhs)) for k in (0, 1)]
    rows = pencil.rows(list(range(n)), constants, [0, 1])
    for k in (0, 1):
        assert _solves(a0, a1, [r[k] for r in rhs],
                       [_poly_in_s(rows[i, k], sigma) for i in range(n)], den)


def test_a_pencil_singular_at_zero_is_solved_about_another_point() -> None:
    # A floating capacitor node: det A(0) = 0, so the solve moves to x0 = 1.
    solution = assemble(lumped.loads("current source I at a step 1 A\n"
                                     "capacitor C from a to ground 2 F\n"))
    assert solution.pencil._numeric.shift != 0
    # Charging a capacitor with a constant current (common practice): V = I / (C s^2).
    assert sympy.simplify(solution.response(solution.node_quantity("a")).transform
                          - 1 / (2 * s**2)) == 0


# --------------------------------------------------------------------------- sharing


def test_initial_conditions_are_one_right_hand_side_per_start_time() -> None:
    solution = assemble(lumped.loads(ladder(4, initial=True)))
    response = solution.response(solution.node_quantity("n4"))
    # Two folded right-hand sides: the source's and all the initial values'.
    assert len(solution._folds()) == 2
    # The split by excitation adds up to the same transform (sum of contributions).
    total = sum(c.weight * c.transform for c in response.contributions)
    assert sympy.cancel(total - response.transform) == 0
    assert {c.origin for c in response.contributions} == {"source", "initial"}
    assert sympy.cancel(response.zero_state + response.zero_input - response.transform) == 0
    assert len(response.contributions) == 1 + 8


def test_every_response_shares_the_characteristic_polynomial_and_its_roots() -> None:
    solution = assemble(lumped.loads(ladder(3, initial=True)))
    characteristic = sympy.Poly(solution.denominator.as_expr() * s, s)
    roots.certified_roots.cache_clear()
    nodes = [n for n in solution.netlist.nodes if n != "ground"]
    for node in nodes:
        response = solution.response(solution.node_quantity(node))
        for delay, numerator, denominator in response.ratios:
            den = sympy.Poly(list(reversed(denominator.coeffs())), s)
            # Each denominator divides s D(s): the poles are the network's (and the step's).
            assert characteristic.rem(den).is_zero
            # The same ratio the expression holds.
            num = sympy.Poly(list(reversed(numerator.coeffs())) or [0], s)
            assert sympy.cancel(num.as_expr() / den.as_expr()
                                - response.terms[0][0]) == 0 and delay == 0
        invert_ratios(response.transform, s, response.ratios)
    info = roots.certified_roots.cache_info()
    # One isolation of the roots for the whole network (the source node has none to find).
    assert info.misses == 1 and info.hits == len(nodes) - 2


def test_handing_on_ratios_inverts_as_the_expression_does() -> None:
    texts = [ladder(2, initial=True),
             "current source I at a pulse 1 A for 1 ms after 2 ms\nresistor R at a 1 ohm\n"
             "capacitor C at a 1 mF, initially 2 V\n",
             "mass m 2 kg, initially 3 m/s\nspring K from m to frame 100 N/m\n"
             "damper D from m to frame 3 N*s/m\nforce source F at m step 2 N\n"
             "watch acceleration of m, displacement of m, force in K\n"]
    for text in texts:
        solution = assemble(lumped.loads(text))
        netlist = solution.netlist
        quantities = ([w for w in netlist.watches] or
                      [solution.node_quantity(n) for n in netlist.nodes if n != "ground"])
        for quantity in quantities:
            response = solution.response(quantity)
            assert response.ratios is not None
            fast = invert_ratios(response.transform, s, response.ratios)
            slow = invert(response.transform, s)
            assert str(fast.expression) == str(slow.expression)
            assert [m.pole_precise for m in fast.modes] == [m.pole_precise for m in slow.modes]


# --------------------------------------------------------------------------- expressions


@settings(max_examples=200, deadline=None)
@given(st.lists(st.fractions(min_value=-10**40, max_value=10**40) | st.just(0) | st.just(1)
                | st.just(-1), min_size=1, max_size=12))
def test_polynomials_are_written_as_sympy_writes_them(coefficients) -> None:
    p = sympy.Poly([sympy.Rational(c.numerator, c.denominator) if hasattr(c, "numerator")
                    else sympy.Integer(c) for c in coefficients], s, domain=sympy.QQ)
    written, reference = poly_expr(p), p.as_expr()
    assert sympy.srepr(written) == sympy.srepr(reference)
    assert written == reference and hash(written) == hash(reference)


def test_reading_the_images_whole_gives_the_same_numerators(monkeypatch) -> None:
    # Past a few unknowns the Krylov images are read whole; the unknowns must not change.
    from lumped.network import solve as solve_module

    text = ladder(3, initial=True)
    nodes = [n for n in lumped.loads(text).nodes if n != "ground"]
    one_by_one = assemble(lumped.loads(text))
    expected = [one_by_one.response(one_by_one.node_quantity(n)).transform for n in nodes]
    monkeypatch.setattr(solve_module, "_BULK_LIFTS", 1)
    whole = assemble(lumped.loads(text))
    assert [whole.response(whole.node_quantity(n)).transform for n in nodes] == expected
    solves = {fold.solved for fold in whole._folds().values()}
    assert all(solved._entries is not None for solved in solves)
