"""The closed form of a response: its result types and its rendering to sympy.

:func:`lumped.inversion.invert` hands on a :class:`TimeResponse`: the
certified modes (one per distinct pole per delay group), the impulses of the
improper parts, the closed form in ``t`` (built on first use from the pieces
the residue stage leaves) and one fast numeric evaluator
(:mod:`lumped.inversion.evaluator`) that figures, plots and outputs share.

The default time symbol is ``sympy.Symbol("t", real=True)``.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import sympy
from sympy.core.parameters import distribute

from lumped.constants import t
from lumped.errors import ParametersNeeded
from lumped.inversion.evaluator import _Evaluator, _NumericGroup

#: Default time symbol used when ``invert`` is called without ``t``.
DEFAULT_T = t


# ---------------------------------------------------------------------------
# public result types
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Impulse:
    """A Dirac impulse ``weight * delta^(order)(t - delay)``.

    Attributes
    ----------
    order : int
        0 for delta, 1 for its first derivative, and so on.
    weight : sympy.Expr
        Exact weight.
    delay : sympy.Expr
        Exact delay (time of the impulse).
    """

    order: int
    weight: sympy.Expr
    delay: sympy.Expr


@dataclass(frozen=True)
class Mode:
    """One distinct pole of one delay group and its time-domain coefficients.

    The pole contributes ``sum_k c_k (t-T)^k/k! exp(p (t-T))`` for ``t >= T``;
    a conjugate pair (``is_pair``) is stored once, with the upper-half-plane
    pole, and contributes twice the real part of that sum.

    Attributes
    ----------
    pole : complex
        Pole in float precision.
    pole_exact : sympy.Expr or None
        Exact pole when the denominator factor has degree <= 2.
    multiplicity : int
        Multiplicity ``m`` of the pole.
    coefficients : tuple of complex
        ``c_0 .. c_{m-1}`` in float precision.
    delay : float
        Delay ``T`` of the group.
    delay_exact : sympy.Expr
        Exact delay.
    is_pair : bool
        True for a conjugate pair.
    pole_precise : mpmath.mpc
        Pole to the requested digits.
    coefficients_precise : tuple of mpmath.mpc
        Coefficients to the requested digits.
    coefficients_exact : tuple of sympy.Expr or None
        Exact coefficients for exact poles.
    """

    pole: complex
    pole_exact: sympy.Expr | None
    multiplicity: int
    coefficients: tuple[complex, ...]
    delay: float
    delay_exact: sympy.Expr
    is_pair: bool
    pole_precise: Any = field(default=None, repr=False, compare=False)
    coefficients_precise: tuple[Any, ...] = field(default=(), repr=False, compare=False)
    coefficients_exact: tuple[sympy.Expr, ...] | None = field(
        default=None, repr=False, compare=False
    )

    @property
    def time_constant(self) -> float | None:
        """``-1/Re(p)``, or None when ``Re(p) == 0``."""
        if self.pole.real == 0:
            return None
        return -1.0 / self.pole.real

    @property
    def natural_frequency(self) -> float:
        """``|p|`` in rad/s."""
        return abs(self.pole)

    @property
    def damping_ratio(self) -> float | None:
        """``-Re(p)/|p|``, or None for a pole at the origin."""
        magnitude = abs(self.pole)
        if magnitude == 0:
            return None
        return -self.pole.real / magnitude + 0.0  # + 0.0: a pole on the axis gives 0, not -0

    @property
    def ringing_frequency(self) -> float:
        """``Im(p)`` in rad/s (0 for a real pole)."""
        return self.pole.imag


# ---------------------------------------------------------------------------
# internal pieces of a closed form (rendered to sympy on demand)
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class _Piece:
    """``exp(sigma*tau) * sum_k tau^k/k! * (a_k F(w tau) + b_k G(w tau))``.

    kind "real": only ``a_k``; kind "osc": F, G = cos, sin; kind "hyp":
    F, G = cosh, sinh.
    """

    kind: str
    sigma: sympy.Expr
    freq: sympy.Expr
    a: tuple[sympy.Expr, ...]
    b: tuple[sympy.Expr, ...]


@dataclass(frozen=True)
class _Cases:
    """Discriminant-dependent forms of one symbolic quadratic factor."""

    branches: tuple[tuple[Any, tuple[_Piece, ...]], ...]


@dataclass(frozen=True)
class _Group:
    delay: sympy.Expr
    items: tuple[Any, ...]  # _Piece or _Cases
    impulses: tuple[Impulse, ...]
    modes: tuple[Mode, ...]
    symbolic: bool


def _render_piece(piece: _Piece, tau: sympy.Expr, phase_form: bool) -> sympy.Expr:
    powers = [tau**k / sympy.factorial(k) for k in range(len(piece.a))]
    growth = sympy.exp(piece.sigma * tau)
    if piece.kind == "real":
        return growth * sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
    arg = piece.freq * tau
    if piece.kind == "hyp":
        cos_part = sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
        sin_part = sympy.Add(*[b * w for b, w in zip(piece.b, powers, strict=True)])
        return growth * (cos_part * sympy.cosh(arg) + sin_part * sympy.sinh(arg))
    if phase_form:
        # a cos x + b sin x = M cos(x + phi) with M cos(phi) = a, M sin(phi) = -b
        terms = []
        for a, b, w in zip(piece.a, piece.b, powers, strict=True):
            magnitude = sympy.sqrt(a**2 + b**2)
            phase = sympy.atan2(-b, a)
            # unevaluated so that sympy does not turn cos(x - pi/2) into sin(x)
            terms.append(w * magnitude * sympy.cos(arg + phase, evaluate=False))
        return growth * sympy.Add(*terms)
    cos_part = sympy.Add(*[a * w for a, w in zip(piece.a, powers, strict=True)])
    sin_part = sympy.Add(*[b * w for b, w in zip(piece.b, powers, strict=True)])
    return growth * (cos_part * sympy.cos(arg) + sin_part * sympy.sin(arg))


def _render_group(group: _Group, t: sympy.Symbol, phase_form: bool) -> sympy.Expr:
    if group.delay == 0:
        return _render_shifted(group, t, phase_form)
    # Keep (t - T) whole: distributed, exp(p*(t - T)) would become exp(-p*T)*exp(p*t),
    # whose first factor overflows floating point for long delays.
    with distribute(False):
        return _render_shifted(group, t, phase_form)


def _render_shifted(group: _Group, t: sympy.Symbol, phase_form: bool) -> sympy.Expr:
    tau = t - group.delay
    parts = []
    for item in group.items:
        if isinstance(item, _Piece):
            parts.append(_render_piece(item, tau, phase_form))
        else:
            parts.append(
                sympy.Piecewise(
                    *[
                        (sympy.Add(*[_render_piece(p, tau, phase_form) for p in pieces]), cond)
                        for cond, pieces in item.branches
                    ]
                )
            )
    smooth = sympy.Add(*parts)
    if group.delay != 0:
        smooth = smooth * sympy.Heaviside(tau)
    deltas = [
        imp.weight * (sympy.DiracDelta(tau) if imp.order == 0 else sympy.DiracDelta(tau, imp.order))
        for imp in group.impulses
    ]
    return smooth + sympy.Add(*deltas)

# ---------------------------------------------------------------------------
# TimeResponse
# ---------------------------------------------------------------------------

_REPR_WIDTH = 72  # characters of the closed form a repr shows


@dataclass(frozen=True)
class TimeResponse:
    """Closed-form time response ``x(t)``, valid for ``t >= 0``.

    Attributes
    ----------
    expression : sympy.Expr
        Closed form in ``t`` (cos/sin form), impulses as ``DiracDelta``.
    modes : tuple of Mode
        One per distinct pole per delay group (empty when parameters are
        symbolic in a denominator: the forms then live in ``expression``).
    impulses : tuple of Impulse
        Impulses from the improper parts.
    parameters : frozenset of sympy.Symbol
        Free symbols other than ``t`` and ``s``.
    transform : sympy.Expr
        The transform that was inverted.
    s : sympy.Symbol
        Laplace variable.
    t : sympy.Symbol
        Time symbol.
    digits : int
        Significant digits of numeric results.
    rounded : bool
        True when irrational numbers in the transform were taken as rationals of
        :data:`lumped.algebra.exact.IRRATIONAL_DIGITS` significant digits.
    """

    modes: tuple[Mode, ...]
    impulses: tuple[Impulse, ...]
    parameters: frozenset
    transform: sympy.Expr
    s: sympy.Symbol
    t: sympy.Symbol
    digits: int = 30
    rounded: bool = False
    _groups: tuple[_Group, ...] = field(default=(), repr=False, compare=False)
    _numeric: tuple[_NumericGroup, ...] | None = field(default=None, repr=False, compare=False)
    _restore: tuple = field(default=(), repr=False, compare=False)

    @functools.cached_property
    def expression(self) -> sympy.Expr:
        """The closed form, built on first use: numbers alone never need it."""
        return self._restored(sympy.Add(*[_render_group(g, self.t, False)
                                          for g in self._groups]))

    def _restored(self, expr: sympy.Expr) -> sympy.Expr:
        return expr.xreplace(dict(self._restore)) if self._restore else expr

    def __repr__(self) -> str:
        """A short summary: the closed form (shortened), the modes, the parameters.

        Examples
        --------
        >>> import sympy
        >>> from lumped.inversion import invert
        >>> s = sympy.Symbol("s")
        >>> invert(1 / (s * (s + 2)), s)
        TimeResponse(x(t) = 1/2 - exp(-2*t)/2; 2 modes, 0 impulses; no parameters)
        """
        text = str(self.expression)
        if len(text) > _REPR_WIDTH:
            text = text[: _REPR_WIDTH - 3] + "..."
        modes = f"{len(self.modes)} mode{'' if len(self.modes) == 1 else 's'}"
        impulses = f"{len(self.impulses)} impulse{'' if len(self.impulses) == 1 else 's'}"
        names = ", ".join(sorted(str(p) for p in self.parameters))
        parameters = f"parameters {names}" if names else "no parameters"
        return f"TimeResponse(x({self.t}) = {text}; {modes}, {impulses}; {parameters})"

    def _repr_latex_(self) -> str:
        """The closed form as LaTeX, for notebooks.

        Examples
        --------
        >>> import sympy
        >>> from lumped.inversion import invert
        >>> invert(1 / (sympy.Symbol("s") + 1), sympy.Symbol("s"))._repr_latex_()
        '$e^{- t}$'
        """
        return f"${sympy.latex(self.expression)}$"

    def amplitude_phase(self) -> sympy.Expr:
        """Closed form with each damped sinusoid as ``M e^{sigma t} cos(w t + phi)``.

        Returns
        -------
        sympy.Expr

        Examples
        --------
        >>> import sympy
        >>> from lumped.inversion import invert
        >>> s = sympy.Symbol("s")
        >>> r = invert(1 / (s**2 + 2*s + 5), s)
        >>> r.amplitude_phase()
        exp(-t)*cos(2*t - pi/2)/2
        """
        return self._restored(sympy.Add(*[_render_group(g, self.t, True)
                                          for g in self._groups]))

    def substitute(self, values: dict) -> TimeResponse:
        """Give parameters values and invert again.

        Parameters
        ----------
        values : dict
            Maps parameter symbols to numbers (floats are made exact rationals).

        Returns
        -------
        TimeResponse

        Examples
        --------
        >>> import sympy
        >>> from lumped.inversion import invert
        >>> s, a = sympy.symbols("s a", positive=True)
        >>> invert(1 / (s + a), s).substitute({a: 2}).expression
        exp(-2*t)
        """
        # invert builds TimeResponse, so it is looked up when called
        from lumped.inversion.inverse import _exact_number, invert

        exact = {k: _exact_number(v) for k, v in values.items()}
        return invert(self.transform.subs(exact), self.s, t=self.t, digits=self.digits)

    @functools.cached_property
    def _evaluator(self) -> _Evaluator | None:
        """The response's one numeric evaluator, built on first use and kept."""
        if self._numeric is None:
            return None
        return _Evaluator(self._numeric, self.digits)

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        """Evaluate ``x(t)`` or its ``derivative``-th time derivative in float64.

        Impulses are excluded; each delayed group is zero before its delay and
        is differentiated as a smooth shifted term (no deltas at the jump).
        A uniformly spaced ascending ``times`` array takes a path built on
        matrix products; other arrays use grid tables plus a short Taylor sum
        per sample, a few times slower.  The coefficients of each derivative
        order are formed once per response, in the precision of the modes.

        Parameters
        ----------
        times : numpy.ndarray
            Sample times.
        derivative : int, optional
            Order of the time derivative (default 0).

        Returns
        -------
        numpy.ndarray
            Same shape as ``times``.

        Raises
        ------
        ParametersNeeded
            If the response still has free parameters.

        Examples
        --------
        >>> import numpy as np, sympy
        >>> from lumped.inversion import invert
        >>> s = sympy.Symbol("s")
        >>> invert(1 / (s + 1), s).evaluate(np.array([0.0, 1.0]))
        array([1.        , 0.36787944])
        """
        evaluator = self._evaluator
        if evaluator is None:
            raise ParametersNeeded(self.parameters, "numbers need values")
        return evaluator(times, derivative)
