"""Laplace transforms of source waveforms.

Every waveform term is zero before its delay ``T`` and is transformed as a
shape started at ``t = T``, i.e. its transform is ``F(s) * exp(-s*T)``.
The transforms, with ``u`` the unit step and ``tau = t - T``:

==============  ====================================  ==============================
shape           time function (for ``tau >= 0``)       transform, before ``exp(-sT)``
==============  ====================================  ==============================
constant, step  ``A``                                  ``A/s``
ramp            ``A*tau`` (``A`` is the slope)         ``A/s**2``
impulse         ``A*delta(tau)`` (``A`` is the area)   ``A``
pulse           ``A`` for ``0 <= tau < D``             ``A*(1 - exp(-s*D))/s``
sine            ``A*sin(w*tau + phi)``, ``w = 2*pi*f`` ``A*(w*cos(phi) + s*sin(phi))/(s**2 + w**2)``
exponential     ``A*exp(-tau/tc)``                     ``A/(s + 1/tc)``
half-sine       ``A*sin(pi*tau/D)`` for ``tau < D``    ``A*(pi/D)*(1 + exp(-s*D))/(s**2 + w**2)``,
                                                       ``w = pi/D``
==============  ====================================  ==============================

The angular frequency ``2*pi*f`` is kept exact with ``sympy.pi``, so the
sine and half-sine shapes have ``pi`` in their coefficients.

A transform is also available as :class:`Piece` objects: ``weight * shape(s) *
exp(-s*delay)``, where ``shape`` is a ratio of polynomials in ``s`` and the
constant ``weight`` collects what need not be rational (an amplitude times
``cos(phi)``, for instance).  The solver keeps such weights apart so that the
network functions it multiplies them with stay rational.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from lumped.constants import s
from lumped.model import Shape, Waveform, WaveformTerm


@dataclass(frozen=True)
class Piece:
    """One piece of a transform: ``weight * shape * exp(-s*delay)``.

    Attributes
    ----------
    weight : sympy.Expr
        A constant (free of ``s``), possibly irrational.
    shape : sympy.Expr
        A ratio of polynomials in ``s``.
    delay : sympy.Expr
        The time ``T >= 0`` the piece starts at.
    """

    weight: sympy.Expr
    shape: sympy.Expr
    delay: sympy.Expr

    def expr(self) -> sympy.Expr:
        """Return ``weight * shape * exp(-s*delay)`` as one expression."""
        return self.weight * self.shape * _delay_factor(self.delay)


def _delay_factor(delay: sympy.Expr) -> sympy.Expr:
    return sympy.Integer(1) if delay == 0 else sympy.exp(-s * delay)


def _require(term: WaveformTerm, value: sympy.Expr | None, what: str) -> sympy.Expr:
    if value is None:
        raise ValueError(f"a {term.shape.value} waveform needs a {what}")
    return value


def term_pieces(term: WaveformTerm) -> tuple[Piece, ...]:
    """Split one waveform term's transform into pieces.

    Parameters
    ----------
    term : WaveformTerm
        The term (SI magnitudes).

    Returns
    -------
    tuple of Piece
        Their sum (see :meth:`Piece.expr`) is the term's transform.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Shape, WaveformTerm
    >>> pieces = term_pieces(WaveformTerm(Shape.PULSE, sympy.Integer(3), duration=sympy.Integer(2)))
    >>> [(p.weight, p.shape, p.delay) for p in pieces]
    [(3, 1/s, 0), (-3, 1/s, 2)]
    """
    amp = term.amplitude
    delay = term.delay
    shape = term.shape
    if shape in (Shape.CONSTANT, Shape.STEP):
        return (Piece(amp, 1 / s, delay),)
    if shape is Shape.RAMP:
        return (Piece(amp, 1 / s**2, delay),)
    if shape is Shape.IMPULSE:
        return (Piece(amp, sympy.Integer(1), delay),)
    if shape is Shape.PULSE:
        width = _require(term, term.duration, "duration")
        return (Piece(amp, 1 / s, delay), Piece(-amp, 1 / s, delay + width))
    if shape is Shape.SINE:
        freq = _require(term, term.frequency, "frequency")
        omega = 2 * sympy.pi * freq
        denominator = s**2 + omega**2
        pieces = []
        # sin(w t + phi) = cos(phi) sin(w t) + sin(phi) cos(w t); the two weights
        # may be irrational while the two shapes are not (apart from pi in w).
        cos_weight = amp * sympy.cos(term.phase)
        sin_weight = amp * sympy.sin(term.phase)
        if cos_weight != 0:
            pieces.append(Piece(cos_weight, omega / denominator, delay))
        if sin_weight != 0:
            pieces.append(Piece(sin_weight, s / denominator, delay))
        return tuple(pieces)
    if shape is Shape.EXPONENTIAL:
        tc = _require(term, term.time_constant, "time constant")
        return (Piece(amp, 1 / (s + 1 / tc), delay),)
    if shape is Shape.HALF_SINE:
        width = _require(term, term.duration, "duration")
        omega = sympy.pi / width
        lobe = omega / (s**2 + omega**2)
        # The second copy, started one half period later, cancels the first
        # from t = T + D on, leaving a single lobe.
        return (Piece(amp, lobe, delay), Piece(amp, lobe, delay + width))
    raise ValueError(f"unknown waveform shape {shape!r}")


def waveform_pieces(waveform: Waveform) -> tuple[Piece, ...]:
    """Return the pieces of every term of ``waveform``, in order.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Shape, Waveform, WaveformTerm
    >>> w = Waveform((WaveformTerm(Shape.STEP, sympy.Integer(5)),
    ...               WaveformTerm(Shape.STEP, sympy.Integer(-5), delay=sympy.Integer(1))))
    >>> len(waveform_pieces(w))
    2
    """
    return tuple(piece for term in waveform.terms for piece in term_pieces(term))


def laplace_term(term: WaveformTerm) -> sympy.Expr:
    """Return the Laplace transform of one waveform term as an expression in ``s``.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Shape, WaveformTerm
    >>> laplace_term(WaveformTerm(Shape.STEP, sympy.Integer(2), delay=sympy.Integer(3)))
    2*exp(-3*s)/s
    """
    return sympy.Add(*(piece.expr() for piece in term_pieces(term)))


def laplace(waveform: Waveform) -> sympy.Expr:
    """Return the Laplace transform of a whole waveform as an expression in ``s``.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Shape, Waveform, WaveformTerm
    >>> laplace(Waveform((WaveformTerm(Shape.RAMP, sympy.Integer(4)),)))
    4/s**2
    """
    return sympy.Add(*(piece.expr() for piece in waveform_pieces(waveform)))


def initial_value(waveform: Waveform) -> sympy.Expr | None:
    """Return the waveform's value just after ``t = 0`` (``None`` for an impulse at 0).

    Only terms that start at ``t = 0`` contribute; ramps and half-sines start
    from zero.

    Examples
    --------
    >>> import sympy
    >>> from lumped.model import Shape, Waveform, WaveformTerm
    >>> initial_value(Waveform((WaveformTerm(Shape.STEP, sympy.Integer(7)),)))
    7
    """
    total = sympy.Integer(0)
    for term in waveform.terms:
        if term.delay != 0:
            continue
        if term.shape is Shape.IMPULSE:
            return None
        if term.shape in (Shape.CONSTANT, Shape.STEP, Shape.EXPONENTIAL):
            total += term.amplitude
        elif term.shape is Shape.PULSE:
            if term.duration is not None and term.duration != 0:
                total += term.amplitude
        elif term.shape is Shape.SINE:
            total += term.amplitude * sympy.sin(term.phase)
    return total


__all__ = ["Piece", "initial_value", "laplace", "laplace_term", "term_pieces", "waveform_pieces"]
