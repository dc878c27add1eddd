"""The exact solve of the pencil ``A(s) = A0 + s A1``, once per right-hand side asked for.

A :class:`Pencil` holds the network matrix of a plan and solves ``A(s) x = b(s)``
exactly for the right-hand sides it is given: ``x = N(s) / D(s)`` with
``D = det A``, the network's one characteristic polynomial, shared by every
unknown and every right-hand side.  Rows are first scaled to integers, and
``s = sigma t`` measures frequency in a balanced unit; numeric results are
handed on in ``t`` (:attr:`Pencil.scale` is ``sigma``), where their integers
are short.

With numeric element values the solve goes modulo word-size primes
(python-flint's ``nmod_mat``).  At a point ``x0`` where ``A(x0)`` is
invertible, ``A(x0 + y) = A(x0) (I + y M)`` with ``M = A(x0)^-1 A1``, so
``det A`` follows from the characteristic polynomial of ``M``, and
``adj(A) b`` from the Krylov sequence of ``M`` (the Faddeev-LeVerrier
recursion, every unknown for a few right-hand sides) or from the series
``(I + y M)^-1 = sum (-y M)^k`` (one unknown for many right-hand sides): one
inversion and one characteristic polynomial per prime, shared by all, and one
product by ``M`` per degree.  The images are combined by the Chinese
remainder theorem over enough primes to exceed twice Hadamard's bound on the
coefficients (taken on ``|t| = 1``), which makes the result exact; each
unknown is lifted only when asked for.  With symbols the solve falls back to
sympy's fraction-free ``DomainMatrix.solve_den``.  A determinant that is
identically zero becomes a :class:`~lumped.errors.SolveError` naming the
elements of a null vector.
"""

from __future__ import annotations

import math
from array import array
from collections.abc import Callable, Mapping, Sequence

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

# A right-hand side for the numeric solve: equation row -> polynomial in t (s = sigma t).
Column = Mapping[int, flint.fmpq_poly]

# Bits added to Hadamard's bound: its logarithm is summed in floating point.
_BOUND_MARGIN = 8

# After this many unknowns lifted from one solve, its images are read whole.
_BULK_LIFTS = 16


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
    pencil = Pencil(plan)
    inputs = range(len(plan.inputs))
    if not pencil.numeric:
        return pencil.denominator, tuple(pencil.symbolic_numerators(j) for j in inputs)
    # Over the integer D(s) of `denominator`: a**d D(t) with sigma = a/b.
    factor = flint.fmpq(int(pencil.scale.p) ** pencil.degree)
    found = pencil.input_numerators(range(len(plan.unknowns)), inputs)
    numerators = []
    for j in inputs:
        column = []
        for i in range(len(plan.unknowns)):
            value = pencil.to_s(found[i, j]) * factor
            column.append(to_sympy_poly(value))
        numerators.append(tuple(column))
    return pencil.denominator, tuple(numerators)


class Pencil:
    """The network matrix ``A0 + s A1`` of a plan, and its exact solutions.

    Built once per network (the element values do not change when the
    excitations do); raises :class:`~lumped.errors.SolveError` when the
    equations have no unique solution.  A numeric pencil solves right-hand
    sides on demand (:meth:`fold`, :meth:`input_numerators`), in ``t`` with
    ``s = scale * t``; with free parameters every input column is solved at
    once, as the pencil is built.

    Parameters
    ----------
    plan : Plan
        From :func:`lumped.network.stamps.plan_equations`.

    Attributes
    ----------
    numeric : bool
        True when every entry of the matrix and of the input columns is a number.
    scale : sympy.Rational
        ``sigma`` in ``s = sigma t`` (numeric pencils).
    degree : int
        A bound on the degree of ``D`` (numeric pencils).

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> from lumped.network.stamps import plan_equations
    >>> from lumped.topology import validate
    >>> pencil = Pencil(plan_equations(validate(parse_text(
    ...     "capacitor C at a 1 F, initially 2 V\\nresistor R at a 1 ohm\\n"))))
    >>> pencil.denominator.as_expr()
    s + 1
    >>> solved = pencil.fold([{0: flint.fmpq_poly([3])}])
    >>> solved.numerator(0, 0), pencil.denominator_t()
    (3, x + 1)
    """

    def __init__(self, plan: Plan) -> None:
        self.plan = plan
        n = len(plan.unknowns)
        self.size = n
        # The one place where the network's numbers enter the algebra: an irrational
        # number (pi, sqrt(2)) becomes its rational at IRRATIONAL_DIGITS digits; an
        # entry holding a free parameter stays exact (the symbolic path keeps it).
        entries = [{j: [exact_entry(e[0]), exact_entry(e[1])] for j, e in row.items()}
                   for row in plan.rows]
        inputs = [{r: exact_entry(v) for r, v in inp.column.items()} for inp in plan.inputs]
        self.numeric = all(is_number(c) for row in entries for e in row.values() for c in e) and (
            all(is_number(v) for column in inputs for v in column.values()))
        self._denominator: sympy.Poly | None = None
        if not self.numeric:
            self._symbolic = _solve_symbolic_plan(plan, entries, inputs, n)
            self._denominator = self._symbolic[0]
            self.scale = sympy.Integer(1)
            self.degree = 0
            return
        self._numeric = _NumericPencil(entries, n, lambda support: _singular_error(plan, support))
        self.scale = self._numeric.sigma
        self.degree = self._numeric.degree
        self._inputs = [{r: flint.fmpq_poly([_fmpq(v)]) for r, v in column.items()}
                        for column in inputs]

    @property
    def denominator(self) -> sympy.Poly:
        """``D(s) = det A`` (up to a constant factor) in ``s``, with integer coefficients."""
        if self._denominator is None:
            self._denominator = _fmpz_to_poly(
                _unscale(self._numeric.determinant(), self.scale, self.degree))
        return self._denominator

    def denominator_t(self) -> flint.fmpq_poly:
        """``D`` in ``t`` (``s = scale * t``), integer coefficients (numeric pencils)."""
        return flint.fmpq_poly(self._numeric.determinant())

    def to_s(self, p: flint.fmpq_poly) -> flint.fmpq_poly:
        """A polynomial in ``t`` as one in ``s``: ``p(s / scale)``."""
        if self.scale == 1 or p.degree() <= 0:
            return p
        return p(flint.fmpq_poly([0, flint.fmpq(int(self.scale.q), int(self.scale.p))]))

    def to_t(self, p: flint.fmpq_poly) -> flint.fmpq_poly:
        """A polynomial in ``s`` as one in ``t``: ``p(scale * t)``."""
        if self.scale == 1 or p.degree() <= 0:
            return p
        return p(flint.fmpq_poly([0, _fmpq(self.scale)]))

    def fold(self, columns: Sequence[Column]) -> _Solved:
        """Solve ``A x = b`` for a few right-hand sides ``b(t)``, every unknown (numeric only).

        Parameters
        ----------
        columns : sequence of Mapping of int to flint.fmpq_poly
            Each right-hand side, equation row -> polynomial in ``t``.

        Returns
        -------
        _Solved
            ``numerator(g, i)`` is ``N`` with ``x_i = N / denominator_t()`` for column ``g``,
            lifted when first asked for.
        """
        return self._numeric.fold(columns)

    def input_numerators(
        self, unknowns: Sequence[int], inputs: Sequence[int] | range
    ) -> dict[tuple[int, int], flint.fmpq_poly]:
        """``N`` in ``t`` of each of ``unknowns`` for each of the plan's input columns.

        ``(i, j) -> N`` with ``x_i = N / denominator_t()`` for input ``j`` (numeric only).
        """
        inputs = list(inputs)
        return self._numeric.rows(list(unknowns), [self._inputs[j] for j in inputs], inputs)

    def symbolic_numerators(self, j: int) -> tuple[sympy.Poly, ...]:
        """Every unknown's numerator over :attr:`denominator` for input ``j`` (symbolic only)."""
        return self._symbolic[1][j]

    def static_solution(
        self, column: Mapping[int, sympy.Expr]
    ) -> tuple[sympy.Rational, ...] | None:
        """``A(0)^-1 b`` exactly, or ``None`` when ``A(0)`` is singular (numeric only)."""
        return self._numeric.static_solution(column)


# --------------------------------------------------------------------------- numeric pencils


def _fmpq(value: sympy.Expr) -> flint.fmpq:
    return flint.fmpq(int(value.p), int(value.q))


_PRIMES: list[int] = []


def _prime(k: int) -> int:
    """The ``k``-th prime below ``2**62`` (word-size moduli for nmod_mat)."""
    candidate = _PRIMES[-1] - 2 if _PRIMES else 2**62 - 1
    while len(_PRIMES) <= k:
        if flint.fmpz(candidate).is_prime():
            _PRIMES.append(candidate)
        candidate -= 2
    return _PRIMES[k]


class _Image:
    """The pencil modulo one prime ``p``, about the point ``t = x0`` (``y = t - x0``).

    ``inverse = A(x0)^-1``, ``krylov = A(x0)^-1 A1``, and ``det A(x0 + y) = det0 *
    det(I + y M)`` with ``det(I + y M)`` from the characteristic polynomial of ``M``.
    """

    def __init__(self, p: int, det0: int, inverse: flint.nmod_mat, krylov: flint.nmod_mat,
                 charpoly: list[int], degree: int) -> None:
        self.p = p
        self.det0 = det0
        self.inverse = inverse
        self.krylov = krylov
        n = len(charpoly) - 1
        # det(I + y M) = sum_j (-1)^j c_{n-j} y^j, for det(lambda I - M) = sum_k c_k lambda^k.
        self.normalised = [(charpoly[n - j] if j % 2 == 0 else -charpoly[n - j]) % p
                           if n - j >= 0 else 0 for j in range(degree + 1)]
        self.gamma = [charpoly[n - 1 - j] if j % 2 else (-charpoly[n - 1 - j]) % p
                      for j in range(min(degree, n))]

    def determinant(self) -> list[int]:
        """Coefficients (low to high, in ``y``) of ``det A(x0 + y)`` modulo ``p``."""
        return [self.det0 * c % self.p for c in self.normalised]


class _Crt:
    """Exact integers from their residues modulo the primes of some images."""

    def __init__(self, primes: list[int]) -> None:
        self.modulus = math.prod(primes)
        self.half = self.modulus // 2
        self.basis = []
        for p in primes:
            rest = self.modulus // p
            self.basis.append(rest * pow(rest, -1, p))

    def lift(self, residues: Sequence[Sequence[int]]) -> list[int]:
        """``residues[k][c]``: value ``c`` modulo prime ``k``; the symmetric lifts."""
        modulus, half, basis = self.modulus, self.half, self.basis
        out = []
        for values in zip(*residues, strict=True):
            x = sum(v * e for v, e in zip(values, basis, strict=True)) % modulus
            out.append(x - modulus if x > half else x)
        return out


class _NumericPencil:
    """A pencil with integer entries in ``t`` (``s = sigma t``), solved modulo primes."""

    def __init__(self, entries: list[dict[int, list[sympy.Expr]]], n: int,
                 singular: Callable[[list[int]], Exception]) -> None:
        self.n = n
        self.sigma = _balance(entries)
        self.row_factors: list[int] = []
        flat0 = [0] * (n * n)
        flat1 = [0] * (n * n)
        for i, row in enumerate(entries):
            scaled = {j: (e[0], e[1] * self.sigma) for j, e in row.items()}
            values = [c for e in scaled.values() for c in e]
            factor = math.lcm(*(int(v.q) for v in values)) if values else 1
            self.row_factors.append(factor)
            for j, (c0, c1) in scaled.items():
                flat0[i * n + j] = int(c0 * factor)
                flat1[i * n + j] = int(c1 * factor)
        self.degree = _degree_bound(entries, n)
        self.flat0, self.flat1 = flat0, flat1
        self.shift = _invertible_point(flat0, flat1, n, self.degree, singular)
        # A(x0 + y) = A0' + y A1: the matrices taken modulo each prime.
        shifted = [c0 + self.shift * c1 for c0, c1 in zip(flat0, flat1, strict=True)]
        self._a0 = flint.fmpz_mat(n, n, shifted) if n else None
        self._a1 = flint.fmpz_mat(n, n, flat1) if n else None
        # Hadamard's bound on |t - x0| = 1 (|a0' + y a1| <= |a0'| + |a1|), by rows and columns.
        self._rows = [0] * n
        self._columns = [0] * n
        for i, row in enumerate(entries):
            for j in row:
                size = abs(shifted[i * n + j]) + abs(flat1[i * n + j])
                self._rows[i] += size * size
                self._columns[j] += size * size
        self._row_bits = sum(math.log2(v) for v in self._rows if v) / 2
        self._column_bits = sum(math.log2(v) for v in self._columns if v) / 2
        self._smallest_column = min((v for v in self._columns if v), default=1)
        self._images: list[_Image | None] = []
        self._determinant: flint.fmpz_poly | None = None
        self._zero_matrix: flint.fmpq_mat | None = None

    # ----- primes

    def _new_image(self, p: int) -> _Image | None:
        n = self.n
        if n == 0:
            empty = flint.nmod_mat(0, 0, p)
            return _Image(p, 1, empty, empty, [1], self.degree)
        a0 = flint.nmod_mat(self._a0, p)
        det0 = int(a0.det())
        if det0 == 0:
            return None  # p divides det A(x0): skip this prime
        inverse = a0.inv()
        krylov = inverse * flint.nmod_mat(self._a1, p)
        charpoly = [int(c) for c in krylov.charpoly().coeffs()]
        return _Image(p, det0, inverse, krylov, charpoly, self.degree)

    def _images_for(self, bits: float) -> list[_Image]:
        """The first images whose primes multiply past ``2 * 2**bits``."""
        chosen: list[_Image] = []
        product = 1
        target = 1 << (math.ceil(bits) + _BOUND_MARGIN + 1)
        k = 0
        while product <= target:
            while len(self._images) <= k:
                self._images.append(self._new_image(_prime(len(self._images))))
            image = self._images[k]
            k += 1
            if image is not None:
                chosen.append(image)
                product *= image.p
        return chosen

    def _bits(self, column_sizes: Sequence[int] | None) -> float:
        """log2 of Hadamard's bound on ``det A`` or, with ``|b_i|``, on ``adj(A) b``."""
        if column_sizes is None:
            return min(self._row_bits, self._column_bits)
        rows = sum(math.log2(max(r + b * b, 1)) for r, b in zip(self._rows, column_sizes,
                                                                 strict=True)) / 2
        norm = sum(b * b for b in column_sizes)
        if norm == 0:
            return 0.0
        columns = self._column_bits + (math.log2(norm) - math.log2(self._smallest_column)) / 2
        return min(rows, columns)

    # ----- the determinant

    def determinant(self) -> flint.fmpz_poly:
        """``det A`` in ``t`` (integer coefficients)."""
        if self._determinant is None:
            images = self._images_for(self._bits(None))
            lifted = _Crt([im.p for im in images]).lift([im.determinant() for im in images])
            self._determinant = _unshift(flint.fmpz_poly(lifted), self.shift)
        return self._determinant

    # ----- right-hand sides

    def _prepare(self, columns: Sequence[Column]) -> tuple[list[list[flint.fmpz_poly]],
                                                           list[int], float]:
        """Columns in the solver's rows and variable ``y``, with integer coefficients.

        Returns the columns, the factor each was multiplied by, and the bound in bits.
        """
        n = self.n
        prepared: list[list[flint.fmpz_poly]] = []
        scales: list[int] = []
        bits = 0.0
        move = flint.fmpq_poly([self.shift, 1])
        for column in columns:
            polys = [flint.fmpq_poly([0])] * n
            for r, value in column.items():
                if self.shift and value.degree() > 0:
                    value = value(move)
                polys[r] = value * self.row_factors[r]
            common = math.lcm(*(int(q.denom()) for q in polys))
            scales.append(common)
            integral = [(q * common).numer() for q in polys]
            prepared.append(integral)
            sizes = [sum(abs(int(c)) for c in q.coeffs()) for q in integral]
            bits = max(bits, self._bits(sizes))
        return prepared, scales, bits

    def fold(self, columns: Sequence[Column]) -> _Solved:
        return _Solved(self, columns)

    def rows(self, unknowns: list[int], columns: Sequence[Column],
             names: Sequence[int]) -> dict[tuple[int, int], flint.fmpq_poly]:
        """Unknowns ``unknowns`` for constant columns, by ``(I + y M)^-1 = sum (-y M)^k``.

        ``e_i^T adj(I + y M) z = det(I + y M) * sum_k (-y)^k e_i^T M^k z`` to degree ``d``.
        """
        n, d = self.n, self.degree
        out: dict[tuple[int, int], flint.fmpq_poly] = {}
        if not columns or not unknowns:
            return out
        if n == 0:
            return {(i, j): flint.fmpq_poly([0]) for i in unknowns for j in names}
        prepared, scales, bits = self._prepare(columns)
        images = self._images_for(bits)
        m, u = len(columns), len(unknowns)
        residues: list[list[list[int]]] = []  # [prime][(i, g)] -> coefficients
        for image in images:
            p = image.p
            rhs = flint.nmod_mat(n, m, [int(prepared[g][i][0]) % p
                                        for i in range(n) for g in range(m)], p)
            z = image.inverse * rhs
            select = flint.nmod_mat(u, n, [1 if k == i else 0 for i in unknowns
                                           for k in range(n)], p)
            series: list[list[int]] = [[] for _ in range(u * m)]
            for k in range(d + 1):
                values = (select * z).entries()
                for index in range(u * m):
                    value = int(values[index])
                    series[index].append(value if k % 2 == 0 or value == 0 else p - value)
                if k < d:
                    select = select * image.krylov
            det_poly = flint.nmod_poly(image.normalised, p)
            block = []
            for index in range(u * m):
                product = det_poly.mul_low(flint.nmod_poly(series[index], p), d + 1)
                coefficients = [int(c) for c in product.coeffs()]
                coefficients += [0] * (d + 1 - len(coefficients))
                block.append([image.det0 * c % p for c in coefficients])
            residues.append(block)
        crt = _Crt([im.p for im in images])
        for a, i in enumerate(unknowns):
            for g, j in enumerate(names):
                index = a * m + g
                lifted = crt.lift([block[index] for block in residues])
                out[i, j] = self._to_t(flint.fmpz_poly(lifted), scales[g])
        return out

    def _to_t(self, numerator: flint.fmpz_poly, scale: int) -> flint.fmpq_poly:
        """A numerator in ``y`` back to ``t``, over ``det A`` in ``t``."""
        if numerator.is_zero():
            return flint.fmpq_poly([0])
        return flint.fmpq_poly(_unshift(numerator, self.shift)) / scale

    def static_solution(
        self, column: Mapping[int, sympy.Expr]
    ) -> tuple[sympy.Rational, ...] | None:
        n = self.n
        if self._zero_matrix is None:
            # A(0) with its rows scaled; the scaling leaves the solution unchanged.
            self._zero_matrix = flint.fmpq_mat(n, n, self.flat0)
        rhs = flint.fmpq_mat(n, 1, [_fmpq(exact_entry(column[i]) * self.row_factors[i])
                                    if i in column else 0 for i in range(n)])
        try:
            x = self._zero_matrix.solve(rhs)
        except ZeroDivisionError:
            return None
        return tuple(sympy.Rational(int(v.p), int(v.q)) for v in x.entries())


class _Solved:
    """A few right-hand sides solved for every unknown: the Krylov images, lifted on demand.

    With ``z = A(x0)^-1 b``: ``adj(I + y M) z = sum_j w_j y^j``, ``w_0 = z``,
    ``w_{j+1} = -M w_j + gamma_j z`` (``gamma_j`` from the characteristic polynomial).
    """

    def __init__(self, pencil: _NumericPencil, columns: Sequence[Column]) -> None:
        self.pencil = pencil
        n, d = pencil.n, pencil.degree
        self.count = len(columns)
        self._lifted: dict[tuple[int, int], flint.fmpq_poly] = {}
        self._lifts = 0
        self._entries: list[list[array]] | None = None
        if n == 0 or not columns:
            self._images: list[_Image] = []
            return
        prepared, self._scales, bits = pencil._prepare(columns)
        # One constant column per power of y in each right-hand side.
        self._powers = [max(max((q.degree() for q in column), default=0), 0) + 1
                        for column in prepared]
        constants: list[list[int]] = []
        self._first: list[int] = []
        for g, column in enumerate(prepared):
            self._first.append(len(constants))
            for power in range(self._powers[g]):
                constants.append([int(q[power]) for q in column])
        self._width = len(constants)
        self._images = pencil._images_for(bits)
        self._krylov: list[list[flint.nmod_mat]] = []
        for image in self._images:
            p = image.p
            rhs = flint.nmod_mat(n, self._width, [constants[c][i] % p for i in range(n)
                                                  for c in range(self._width)], p)
            z = image.inverse * rhs
            sequence = [z]
            w = z
            for j in range(d):
                w = z * image.gamma[j] - image.krylov * w
                sequence.append(w)
            self._krylov.append(sequence)
        self._crt = _Crt([im.p for im in self._images])

    def numerator(self, g: int, i: int) -> flint.fmpq_poly:
        """``N`` in ``t`` with ``x_i = N / det A`` for right-hand side ``g``."""
        key = (g, i)
        if key not in self._lifted:
            self._lifted[key] = self._lift(g, i)
        return self._lifted[key]

    def _lift(self, g: int, i: int) -> flint.fmpq_poly:
        if not self._images:
            return flint.fmpq_poly([0])
        d = self.pencil.degree
        count = self._powers[g]
        first = self._first[g]
        self._lifts += 1
        if self._lifts == _BULK_LIFTS:
            # Many unknowns wanted (every node): read each image once, as machine words.
            self._entries = [[array("Q", map(int, w.entries())) for w in sequence]
                             for sequence in self._krylov]
        residues = []
        for k, image in enumerate(self._images):
            p, det0 = image.p, image.det0
            coefficients = [0] * (d + count)
            for power in range(count):
                column = first + power
                if self._entries is not None:
                    index = i * self._width + column
                    for j, values in enumerate(self._entries[k]):
                        coefficients[j + power] += values[index]
                else:
                    for j, w in enumerate(self._krylov[k]):
                        coefficients[j + power] += int(w[i, column])
            residues.append([det0 * c % p for c in coefficients])
        lifted = self._crt.lift(residues)
        return self.pencil._to_t(flint.fmpz_poly(lifted), self._scales[g])


def _invertible_point(flat0: list[int], flat1: list[int], n: int, d: int,
                      singular: Callable[[list[int]], Exception]) -> int:
    """The first ``x0 >= 0`` with ``det A(x0) != 0``; raise when ``det A`` is identically zero.

    Tried modulo a word-size prime first (a nonzero image proves it); exactly over Z
    when every image vanishes.  A nonzero determinant of degree <= d has at most d
    integer roots, so d + 1 singular points prove it is zero.
    """
    if n == 0:
        return 0
    p = _prime(0)
    a0 = flint.nmod_mat(flint.fmpz_mat(n, n, flat0), p)
    a1 = flint.nmod_mat(flint.fmpz_mat(n, n, flat1), p)
    for x in range(d + 1):
        if (a0 + a1 * x if x else a0).det() != 0:
            return x
    for x in range(d + 1):
        a_mat = flint.fmpz_mat(n, n, [p0 + x * q for p0, q in zip(flat0, flat1, strict=True)])
        if a_mat.det() != 0:
            return x
    null, nullity = a_mat.nullspace()
    support = [i for i in range(n) if null[i, 0] != 0] if nullity else []
    raise singular(support)


def _unshift(p: flint.fmpz_poly, shift: int) -> flint.fmpz_poly:
    """``P(t - x0)`` from ``P(t')``, ``t' = t - x0``."""
    if not shift or p.degree() <= 0:
        return p
    return p(flint.fmpz_poly([-shift, 1]))


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


def to_sympy_poly(p: flint.fmpq_poly) -> sympy.Poly:
    """A python-flint rational polynomial as a ``sympy.Poly`` in ``s`` over QQ.

    Examples
    --------
    >>> to_sympy_poly(flint.fmpq_poly([1, flint.fmpq(1, 2)]))
    Poly(1/2*s + 1, s, domain='QQ')
    """
    coeffs = [sympy.Rational(int(c.p), int(c.q)) for c in p.coeffs()]
    return sympy.Poly.from_list(list(reversed(coeffs)) or [0], s, domain=sympy.QQ)


# --------------------------------------------------------------------------- symbolic pencils


def _solve_symbolic_plan(
    plan: Plan, entries: list[dict[int, list[sympy.Expr]]], inputs: list[dict[int, sympy.Expr]],
    n: int,
) -> tuple[sympy.Poly, list[tuple[sympy.Poly, ...]]]:
    rows, columns = _scaled_rows(entries, inputs)
    try:
        den_poly, num_polys = _solve_symbolic(rows, columns, n)
    except _SingularError as exc:
        raise _singular_error(plan, exc.support) from None
    return den_poly, [tuple(col) for col in num_polys]


class _SingularError(Exception):
    """det A is identically zero; carries a null vector's unknown indices."""

    def __init__(self, support: list[int]) -> None:
        super().__init__("singular")
        self.support = support


def _scaled_rows(
    rows: list[dict[int, list[sympy.Expr]]], inputs: list[dict[int, sympy.Expr]]
) -> tuple[list[dict[int, list[sympy.Expr]]], list[dict[int, sympy.Expr]]]:
    """Clear denominators row by row (the solution does not change)."""
    columns: list[dict[int, sympy.Expr]] = [dict() for _ in inputs]
    scaled_rows: list[dict[int, list[sympy.Expr]]] = []
    for r, row in enumerate(rows):
        values = [c for entry in row.values() for c in entry]
        values += [column[r] for column in inputs if r in column]
        if all(is_number(v) for v in values):
            factor: sympy.Expr = sympy.Integer(
                math.lcm(*(int(v.q) for v in values)) if values else 1
            )
        else:
            dens = [sympy.fraction(sympy.together(v))[1] for v in values]
            factor = sympy.lcm_list(dens) if dens else sympy.Integer(1)
        scaled_rows.append(
            {col: [sympy.expand(c * factor) for c in entry] for col, entry in row.items()}
        )
        for j, column in enumerate(inputs):
            if r in column:
                columns[j][r] = sympy.expand(column[r] * factor)
    return scaled_rows, columns


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
