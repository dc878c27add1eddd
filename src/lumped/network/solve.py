"""The exact solve of the pencil ``A(s) = A0 + s A1`` for every input column.

The system ``A(s) x = sum_j B_j U_j(s)`` is solved once for every input
column, exactly: ``x_j = N_j(s) / D(s)`` with ``D = det A``.  Rows are first
scaled to integers (and ``s`` to a balanced frequency unit).  With numeric
element values the solve goes by evaluation at integer points and
interpolation modulo word-size primes (python-flint's ``nmod_mat``), lifted by
the Chinese remainder theorem and accepted only once ``A N == D B`` holds
exactly over Z[s].  With symbols it falls back to sympy's fraction-free
``DomainMatrix.solve_den``.  A determinant that is identically zero becomes a
:class:`~lumped.errors.SolveError` naming the elements of a null vector.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import flint
import sympy
from sympy.polys.constructor import construct_domain
from sympy.polys.matrices import DomainMatrix
from sympy.polys.matrices.exceptions import DMNonInvertibleMatrixError

from lumped.constants import s
from lumped.errors import SolveError
from lumped.network.rational import exact_entry, is_number
from lumped.network.stamps import Plan
from lumped.topology import solve_error


def solve(plan: Plan) -> tuple[sympy.Poly, tuple[tuple[sympy.Poly, ...], ...]]:
    """Solve the planned equations exactly for every input column.

    Parameters
    ----------
    plan : Plan
        From :func:`lumped.network.stamps.plan_equations`.

    Returns
    -------
    denominator : sympy.Poly
        ``D(s) = det A`` (up to a constant factor), in ``s``.
    numerators : tuple of tuple of sympy.Poly
        ``numerators[j][i]``: unknown ``i`` for input ``j`` is ``N_ji / D``.

    Raises
    ------
    SolveError
        When ``det A`` is identically zero; it names the elements of a null
        vector and points at the first.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> from lumped.network.stamps import plan_equations
    >>> from lumped.topology import validate
    >>> plan = plan_equations(validate(parse_text("capacitor C at a 1 F, initially 2 V\\n"
    ...                                           "resistor R at a 1 ohm\\n")))
    >>> den, nums = solve(plan)
    >>> den.as_expr(), nums[0][0].as_expr()
    (s + 1, 1)
    """
    n = len(plan.unknowns)
    # The one place where the network's numbers enter the algebra: an irrational
    # number (pi, sqrt(2)) becomes its rational at IRRATIONAL_DIGITS digits; an
    # entry holding a free parameter stays exact (the symbolic path keeps it).
    entries = [{j: [exact_entry(e[0]), exact_entry(e[1])] for j, e in row.items()}
               for row in plan.rows]
    inputs = [{r: exact_entry(v) for r, v in inp.column.items()} for inp in plan.inputs]
    numeric = all(is_number(c) for row in entries for e in row.values() for c in e)
    sigma = _balance(entries) if numeric else sympy.Integer(1)
    scaled = [{j: [e[0], e[1] * sigma] for j, e in row.items()} for row in entries]
    rows, columns, integral = _scaled_rows(scaled, inputs)
    try:
        if integral:
            den, nums = _solve_numeric(rows, columns, n)
            d = _degree_bound(rows, n)
            return _fmpz_to_poly(_unscale(den, sigma, d)), tuple(
                tuple(_fmpz_to_poly(_unscale(p, sigma, d)) for p in col) for col in nums
            )
        den_poly, num_polys = _solve_symbolic(rows, columns, n)
        return den_poly, tuple(tuple(col) for col in num_polys)
    except _SingularError as exc:
        raise _singular_error(plan, exc.support) from None


# --------------------------------------------------------------------------- helpers


class _SingularError(Exception):
    """det A is identically zero; carries a null vector's unknown indices."""

    def __init__(self, support: list[int]) -> None:
        super().__init__("singular")
        self.support = support


def _scaled_rows(
    rows: list[dict[int, list[sympy.Expr]]], inputs: list[dict[int, sympy.Expr]]
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
        values += [column[r] for column in inputs if r in column]
        if all(is_number(v) for v in values):
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
        for j, column in enumerate(inputs):
            if r in column:
                columns[j][r] = sympy.expand(column[r] * factor)
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


def _singular_error(plan: Plan, support: Sequence[int]) -> SolveError:
    netlist = plan.netlist
    names: set[str] = set()
    nodes = {key[1] for i, key in enumerate(plan.unknowns) if i in support and key[0] == "node"}
    for i in support:
        kind, name = plan.unknowns[i]
        if kind != "node":
            names.add(name)
    for element in netlist.elements:
        if element.positive in nodes or element.negative in nodes:
            names.add(element.name)
    for coupling in netlist.couplings:
        ends = {
            coupling.input.positive,
            coupling.input.negative,
            coupling.output.positive,
            coupling.output.negative,
        }
        if ends & nodes:
            names.add(coupling.name)
    involved = ", ".join(sorted(names)) if names else "the whole network"
    return solve_error(
        netlist,
        f"the network equations have no unique solution; elements involved: {involved}",
        sorted(names),
    )
