"""The analysis stage: which figures describe the network, windows, defaults."""

from __future__ import annotations

import math

import pytest

from lumped.analysis import analyse
from lumped.api import loads


def test_dominant_pair_is_the_networks_not_the_sine_sources() -> None:
    # Series RLC (from memory): wn = 1/sqrt(L C), zeta = (R/2) sqrt(C/L); the 50 Hz drive
    # brings poles at +-j 2 pi 50 that describe the source, not the network.
    r, inductance, c = 2.0, 10e-3, 100e-6
    text = (
        "voltage source V at in sine 10 V at 50 Hz\n"
        f"resistor R from in to out {r} ohm\n"
        f"inductor L from out to mid {inductance} H\n"
        f"capacitor C from mid to ground {c} F\n"
        "watch voltage at mid\nwindow 100 ms\n"
    )
    figures = analyse(loads(text)).result("voltage at mid").figures
    assert figures.natural_frequency == pytest.approx(1 / math.sqrt(inductance * c), rel=1e-9)
    assert figures.damping_ratio == pytest.approx(r / 2 * math.sqrt(c / inductance), rel=1e-9)


def test_window_is_chosen_from_the_slowest_time_constant_when_not_given() -> None:
    # RC (common practice): tau = R C = 1 ms; the tool looks six time constants ahead.
    text = ("voltage source V at a step 1 V\nresistor R from a to b 1 kohm\n"
            "capacitor C from b to ground 1 uF\nwatch voltage at b\n")
    analysis = analyse(loads(text))
    assert analysis.window_chosen
    assert analysis.stop == pytest.approx(6e-3, rel=1e-9)


def test_without_watch_lines_every_node_is_reported() -> None:
    text = ("voltage source V at a step 1 V\nresistor R from a to b 1 kohm\n"
            "capacitor C from b to ground 1 uF\n")
    labels = {r.quantity.label for r in analyse(loads(text)).results}
    assert labels == {"voltage at a", "voltage at b"}
