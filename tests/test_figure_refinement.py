"""The refinement of extremes and crossings: vectorised, few evaluations, exact roots.

Expected roots come from functions whose roots are known in closed form (the
zeros of sine and cosine; the second-order step response's peak time
pi/wd and overshoot exp(-zeta pi / sqrt(1 - zeta^2)), from memory), never
from the code under test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import sympy

from lumped.figures import compute_figures
from lumped.figures.sampling import _Brackets, _solve_brackets
from lumped.inversion import invert

s = sympy.Symbol("s")
R = sympy.Rational


class CountedSine:
    """sin(w t) and its derivatives, counting the calls and the times asked for."""

    def __init__(self, omega: float) -> None:
        self.omega = omega
        self.calls = 0
        self.times = 0

    def __call__(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        self.calls += 1
        self.times += np.asarray(times).size
        # d^n/dt^n sin(wt) = w^n sin(wt + n pi/2)
        return self.omega**derivative * np.sin(self.omega * times + derivative * math.pi / 2)


def test_crossings_and_stationary_points_are_solved_together():
    omega = 2 * math.pi * 50.0
    sine = CountedSine(omega)
    grid = np.linspace(0.0, 0.2, 1601)  # ten periods, 160 points each
    x, dx = sine(grid), sine(grid, 1)
    # sign changes of sin(wt) - 0.5 (crossings) and of its slope (crests and troughs)
    g = x - 0.5
    rising = np.nonzero((g[:-1] < 0) & (g[1:] > 0))[0]
    turning = np.nonzero(dx[:-1] * dx[1:] < 0)[0]
    a = np.concatenate((grid[rising], grid[turning]))
    b = np.concatenate((grid[rising + 1], grid[turning + 1]))
    fa = np.concatenate((g[rising], dx[turning]))
    fb = np.concatenate((g[rising + 1], dx[turning + 1]))
    order = np.concatenate((np.zeros(rising.size, int), np.ones(turning.size, int)))
    level = np.concatenate((np.full(rising.size, 0.5), np.zeros(turning.size)))
    sine.calls = sine.times = 0
    roots = _solve_brackets(sine, _Brackets(a, b, fa, fb, order, level, np.ones(a.size)))
    # sin(wt) = 1/2 rising at wt = pi/6 + 2 k pi; sin' = 0 at wt = pi/2 + k pi
    k_cross = np.arange(rising.size)
    k_turn = np.arange(turning.size)
    expected = np.concatenate(
        ((math.pi / 6 + 2 * math.pi * k_cross) / omega, (math.pi / 2 + math.pi * k_turn) / omega)
    )
    assert rising.size == 10 and turning.size == 20
    np.testing.assert_allclose(roots, expected, rtol=2e-15, atol=0)
    # 30 brackets, a handful of passes of at most three calls each: never one per root
    assert sine.calls <= 18
    assert sine.times <= 10 * 3 * a.size


def test_a_bracket_without_a_sign_change_gives_the_end_nearer_zero():
    sine = CountedSine(1.0)
    # the grid says the slope changes sign in [pi/2, 2], but the end at pi/2 is the root
    a, b = np.array([math.pi / 2]), np.array([2.0])
    roots = _solve_brackets(
        sine, _Brackets(a, b, np.array([0.0]), np.array([-0.9]), np.array([1]),
                        np.array([0.0]), np.array([1.0]))
    )
    assert roots[0] == pytest.approx(math.pi / 2, rel=1e-15)


class Counted:
    """A time response whose evaluations are counted."""

    def __init__(self, response) -> None:
        self.modes, self.impulses = response.modes, response.impulses
        self._response = response
        self.calls = 0

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        self.calls += 1
        return self._response.evaluate(times, derivative)


@pytest.mark.parametrize("zeta", [R(1, 1000), R(1, 5), R(7, 10)])
def test_second_order_figures_take_a_few_array_evaluations(zeta):
    omega = 2 * sympy.pi * 50
    response = Counted(invert(omega**2 / (s * (s**2 + 2 * zeta * omega * s + omega**2)), s))
    figures = compute_figures(response, 0.0, 4.0)
    z, wn = float(zeta), float(omega)
    wd = wn * math.sqrt(1 - z * z)
    # second-order step response: peak at pi/wd, overshoot exp(-zeta pi/sqrt(1-zeta^2))
    # (from memory)
    assert figures.peak.time == pytest.approx(math.pi / wd, rel=1e-12)
    assert figures.overshoot == pytest.approx(math.exp(-z * math.pi / math.sqrt(1 - z * z)),
                                              rel=1e-12)
    # the grid (value and slope) plus two vectorised refinements, whatever the ringing
    assert response.calls <= 24
