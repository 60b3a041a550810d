"""The mass_with_drag kind: end to end, terminal speed, wrong units, a force pulse, its starter."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.pipeline import render

from tests.kinds.helpers import build


# A sled on a guide rail pulled by a constant 45 N against a viscous damper of 30 N*s/m, speed
# declared in km/h: m/c = 0.4 s, F/c = 1.5 m/s = 5.4 km/h. Scenario invented for this test.
SLED = """
[sheet]
title = "Sled on a guide rail pulled against a damper"
[model]
kind = "mass_with_drag"
unknown = "u [km/h]"
[parameters]
m = "12 kg"
c = "30 N*s/m"
F = "45 N"
[initial]
value = "0 km/h"
[evaluate]
at = ["0.4 s", "2 s"]
reach = ["4.86 km/h"]
"""


@pytest.fixture(scope="module")
def sled(tmp_path_factory):
    return build(tmp_path_factory.mktemp("sled"), "sled", SLED)


def test_terminal_speed_is_force_over_drag_coefficient(sled):
    # Terminal speed of a mass with linear drag under a constant force: F/c, reached when the drag
    # balances the force (Newton's second law with du/dt = 0; common practice, no source).
    # Time constant m/c (common practice, no source). 1.5 m/s = 5.4 km/h (fact of units).
    numbers = sled.derivation.numbers
    assert numbers.final_value == pytest.approx(45.0 / 30.0, rel=1e-12)
    assert numbers.time_constant == pytest.approx(12.0 / 30.0, rel=1e-12)
    # From rest: 63.2 % of the terminal speed after one time constant, and 90 % (4.86 km/h) after
    # tau ln 10 = 2.303 tau (common practice, no source).
    one_tau, _ = numbers.values
    assert one_tau.y / 1.5 == pytest.approx(0.632, abs=0.0005)
    (ninety,) = numbers.reach
    assert ninety.x / 0.4 == pytest.approx(2.303, abs=0.0005)
    assert "5.4 km/h" in render(sled.sheet, ("txt",))["txt"]


PULSE_START, PULSE_WIDTH = 0.1, 0.3
PULSE_INPUT = """
[sheet]
title = "Carriage kicked by a 0.3 s push of 100 N"
[model]
kind = "mass_with_drag"
[parameters]
m = "40 kg"
c = "200 N*s/m"
[forcing]
form = "pulse"
height = "100 N"
start = "0.1 s"
width = "0.3 s"
[initial]
value = "0 m/s"
[evaluate]
at = ["0.05 s", "0.2 s", "0.4 s", "0.6 s", "1 s"]
"""


def test_force_pulse_agrees_with_scipy_lsoda(tmp_path):
    # Reference: scipy.integrate.solve_ivp (LSODA) on m du/dt + c u = F(t), F a 100 N pulse from
    # 0.1 s to 0.4 s, written out here independently of calcsheet.
    built = build(tmp_path, "pulse", PULSE_INPUT)
    assert built.derivation.passed
    assert "F is a rectangular pulse" in built.derivation.model.kind.forcing

    def rate(t, u):
        push = 100.0 if PULSE_START <= t < PULSE_START + PULSE_WIDTH else 0.0
        return [(push - 200.0 * u[0]) / 40.0]

    points = [v.at.si for v in built.derivation.numbers.values]
    reference = solve_ivp(
        rate, (0.0, max(points)), [0.0], method="LSODA", t_eval=points, rtol=1e-10, atol=1e-13, max_step=1e-3
    )
    assert reference.success
    derived = np.array([v.y for v in built.derivation.numbers.values])
    assert derived == pytest.approx(reference.y[0], rel=1e-5, abs=1e-10)
    # At rest before the push; at its end 0.5 (1 - e^-1.5) m/s, then a free decay with m/c = 0.2 s
    # (common practice, no source).
    assert derived[0] == 0.0
    end_of_push = 0.5 * (1 - math.exp(-PULSE_WIDTH / 0.2))
    assert derived[2] == pytest.approx(end_of_push, rel=1e-9)
    assert derived[4] == pytest.approx(end_of_push * math.exp(-(1.0 - 0.4) / 0.2), rel=1e-9)
