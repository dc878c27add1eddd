"""Laplace transforms of source waveforms.

References: the transform's definition, integrated numerically with mpmath.quad
(general-purpose library), and sympy.laplace_transform of the time function.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy

from lumped.model import Shape, Waveform, WaveformTerm
from lumped.network.sources import initial_value, laplace, laplace_term, s, term_pieces

t = sympy.Symbol("t", positive=True)
R = sympy.Rational


def _time_function(term: WaveformTerm) -> sympy.Expr:
    """The waveform written directly in t, zero before the delay (hand-written)."""
    tau = t - term.delay
    on = sympy.Heaviside(tau)
    a = term.amplitude
    if term.shape in (Shape.STEP, Shape.CONSTANT):
        return a * on
    if term.shape is Shape.RAMP:
        return a * tau * on
    if term.shape is Shape.PULSE:
        return a * (on - sympy.Heaviside(tau - term.duration))
    if term.shape is Shape.SINE:
        return a * sympy.sin(2 * sympy.pi * term.frequency * tau + term.phase) * on
    if term.shape is Shape.EXPONENTIAL:
        return a * sympy.exp(-tau / term.time_constant) * on
    if term.shape is Shape.HALF_SINE:
        return (
            a
            * sympy.sin(sympy.pi * tau / term.duration)
            * (on - sympy.Heaviside(tau - term.duration))
        )
    raise AssertionError(term.shape)


def _quad_transform(term: WaveformTerm, s_value: float) -> float:
    """The defining integral of the Laplace transform, by mpmath quadrature."""
    f = sympy.lambdify(t, _time_function(term).rewrite(sympy.Piecewise), "mpmath")
    start = float(term.delay)
    breaks = [start]
    if term.duration is not None:
        breaks.append(start + float(term.duration))
    if term.frequency is not None:
        # Oscillating integrand: integrate half period by half period, up to where
        # e^{-st} is below 1e-26, so the quadrature error stays far below the tolerance.
        half = 1 / (2 * float(term.frequency))
        stop = start + 60 / s_value
        breaks = [start + k * half for k in range(int((stop - start) / half) + 2)]
    else:
        breaks.append(mpmath.inf)
    return float(mpmath.quad(lambda x: f(x) * mpmath.e ** (-s_value * x), breaks))


TERMS = [
    pytest.param(WaveformTerm(Shape.STEP, R(5), delay=R(1, 2)), id="step-delayed"),
    pytest.param(WaveformTerm(Shape.CONSTANT, R(-3)), id="constant"),
    pytest.param(WaveformTerm(Shape.RAMP, R(7), delay=R(1, 4)), id="ramp-delayed"),
    pytest.param(WaveformTerm(Shape.PULSE, R(2), delay=R(1, 3), duration=R(3, 2)), id="pulse"),
    pytest.param(
        WaveformTerm(Shape.SINE, R(3), frequency=R(1, 2), phase=sympy.pi / 6), id="sine-phase"
    ),
    pytest.param(WaveformTerm(Shape.SINE, R(1), frequency=R(2), delay=R(1, 5)), id="sine-delayed"),
    pytest.param(
        WaveformTerm(Shape.EXPONENTIAL, R(4), delay=R(1), time_constant=R(1, 3)), id="exponential"
    ),
    pytest.param(WaveformTerm(Shape.HALF_SINE, R(6), delay=R(1, 2), duration=R(2)), id="half-sine"),
]


@pytest.mark.parametrize("term", TERMS)
@pytest.mark.parametrize("s_value", [0.7, 2.5])
def test_transform_matches_the_defining_integral(term: WaveformTerm, s_value: float) -> None:
    # Reference: L{f}(s) = integral_0^oo f(t) e^{-st} dt, evaluated by mpmath.quad.
    ours = complex(laplace_term(term).subs(s, s_value).evalf(30))
    assert ours.imag == pytest.approx(0, abs=1e-12)
    assert ours.real == pytest.approx(_quad_transform(term, s_value), rel=1e-9, abs=1e-12)


@pytest.mark.parametrize(
    "term",
    [
        WaveformTerm(Shape.STEP, R(5), delay=R(2)),
        WaveformTerm(Shape.RAMP, R(3)),
        WaveformTerm(Shape.EXPONENTIAL, R(2), time_constant=R(1, 5)),
        WaveformTerm(Shape.SINE, R(1), frequency=R(3)),
    ],
    ids=["step", "ramp", "exponential", "sine"],
)
def test_transform_matches_sympy_laplace_transform(term: WaveformTerm) -> None:
    # Reference: sympy.laplace_transform of the hand-written time function.
    expected = sympy.laplace_transform(_time_function(term), t, s, noconds=True)
    assert sympy.simplify(laplace_term(term) - expected) == 0


def test_impulse_is_its_area_and_delay_shifts() -> None:
    # Table of Laplace transforms (from memory): L{A delta(t - T)} = A e^{-sT}.
    assert laplace_term(WaveformTerm(Shape.IMPULSE, R(3), delay=R(2))) == 3 * sympy.exp(-2 * s)
    assert laplace_term(WaveformTerm(Shape.IMPULSE, R(3))) == 3


def test_sine_keeps_pi_exact_and_weights_apart() -> None:
    term = WaveformTerm(Shape.SINE, R(2), frequency=R(50), phase=sympy.pi / 4)
    pieces = term_pieces(term)
    assert len(pieces) == 2
    for piece in pieces:
        # cos(pi/4) = sin(pi/4) = sqrt(2)/2 sits in the weight, not in the shape.
        assert piece.weight == sympy.sqrt(2)
        assert not piece.shape.atoms(sympy.Pow) & {sympy.sqrt(2)}
        assert sympy.pi in piece.shape.atoms(sympy.NumberSymbol)
    omega = 100 * sympy.pi
    expected = (
        2 * (omega * sympy.cos(sympy.pi / 4) + s * sympy.sin(sympy.pi / 4)) / (s**2 + omega**2)
    )
    assert sympy.simplify(laplace_term(term) - expected) == 0


def test_waveform_sums_terms() -> None:
    wave = Waveform((WaveformTerm(Shape.STEP, R(1)), WaveformTerm(Shape.STEP, R(-1), delay=R(3))))
    assert sympy.simplify(laplace(wave) - (1 - sympy.exp(-3 * s)) / s) == 0


def test_symbolic_amplitude_stays_a_symbol() -> None:
    amp = sympy.Symbol("A", positive=True)
    width = sympy.Symbol("D", positive=True)
    got = laplace_term(WaveformTerm(Shape.PULSE, amp, duration=width))
    assert sympy.simplify(got - amp * (1 - sympy.exp(-s * width)) / s) == 0


def test_missing_duration_is_an_error() -> None:
    with pytest.raises(ValueError, match="duration"):
        term_pieces(WaveformTerm(Shape.PULSE, R(1)))


def test_initial_value() -> None:
    wave = Waveform(
        (
            WaveformTerm(Shape.STEP, R(2)),
            WaveformTerm(Shape.STEP, R(10), delay=R(1)),  # not yet started at 0+
            WaveformTerm(Shape.SINE, R(4), frequency=R(1), phase=sympy.pi / 2),
            WaveformTerm(Shape.RAMP, R(9)),  # starts from zero
        )
    )
    assert initial_value(wave) == 6
    assert initial_value(Waveform((WaveformTerm(Shape.IMPULSE, R(1)),))) is None
