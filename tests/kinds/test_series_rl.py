"""The series_rl kind: end to end, against a published solution, wrong units, a step source, its starter."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.errors import CalcsheetError
from calcsheet.pipeline import render

from tests.kinds.helpers import build


# A coil switched onto a battery; the figures are those of the published solution cited below.
COIL = """
[sheet]
title = "Coil switched onto a battery"
[model]
kind = "series_rl"
[parameters]
L = "2.0 H"
R = "20 ohm"
V_s = "4.0 V"
[initial]
value = "0 A"
[evaluate]
at = ["0.2 s"]
"""


@pytest.fixture(scope="module")
def coil(tmp_path_factory):
    return build(tmp_path_factory.mktemp("rl"), "coil", COIL)


def test_coil_on_a_battery_matches_the_published_solution(coil):
    # Source: a physics exercise collection, chapter on inductance, solution published online
    # (read in a published solution): L = 2.0 H, R = 20 ohm, E = 4.0 V; tau = 0.1 s, i(0.2 s) = 0.1729 A.
    numbers = coil.derivation.numbers
    assert numbers.time_constant == pytest.approx(0.1, rel=1e-12)
    (value,) = numbers.values
    assert value.y == pytest.approx(0.1729, abs=5e-5)
    # Steady current E/R = 0.2 A (Ohm's law once di/dt = 0; common practice, no source).
    assert numbers.final_value == pytest.approx(0.2, rel=1e-12)


def test_no_resistance_gives_a_ramp_and_a_warning(tmp_path):
    # With R = 0 the coil alone takes the source voltage: di/dt = V/L, i = V t / L
    # (inductor law v = L di/dt; common practice, no source): 4 V / 2 H * 0.2 s = 0.4 A.
    built = build(tmp_path, "no_r", COIL.replace('R = "20 ohm"', 'R = "0 ohm"'))
    (value,) = built.derivation.numbers.values
    assert value.y == pytest.approx(0.4, rel=1e-9)
    assert built.derivation.numbers.time_constant is None
    text = render(built.sheet, ("txt",))["txt"]
    assert "WARNING: R = 0: with no resistance" in text


def test_zero_inductance_is_refused_as_an_input_error(tmp_path):
    with pytest.raises(CalcsheetError):
        build(tmp_path, "no_l", COIL.replace('L = "2.0 H"', 'L = "0 H"'))


STEP_AT = 0.05
STEP_INPUT = """
[sheet]
title = "Coil fed through a contact that closes at 50 ms"
[model]
kind = "series_rl"
[parameters]
L = "2.0 H"
R = "20 ohm"
[forcing]
form = "step"
after = "4.0 V"
at = "50 ms"
[initial]
value = "0 A"
[evaluate]
at = ["30 ms", "0.1 s", "0.15 s", "0.4 s"]
"""


def test_step_source_agrees_with_scipy_lsoda(tmp_path):
    # Reference: scipy.integrate.solve_ivp (LSODA) on L di/dt + R i = V(t), V a 4 V step at 50 ms,
    # written out here independently of calcsheet.
    built = build(tmp_path, "rl_step", STEP_INPUT)
    assert built.derivation.passed
    assert "V_s is a step" in built.derivation.model.kind.forcing

    def rate(t, i):
        return [((4.0 if t >= STEP_AT else 0.0) - 20.0 * i[0]) / 2.0]

    points = [v.at.si for v in built.derivation.numbers.values]
    reference = solve_ivp(
        rate, (0.0, max(points)), [0.0], method="LSODA", t_eval=points, rtol=1e-10, atol=1e-13, max_step=1e-3
    )
    assert reference.success
    derived = np.array([v.y for v in built.derivation.numbers.values])
    assert derived == pytest.approx(reference.y[0], rel=1e-5, abs=1e-10)
    # Before the contact closes nothing flows; afterwards the rise has tau = L/R = 0.1 s
    # (common practice, no source).
    assert derived[0] == 0.0
    assert derived[1] == pytest.approx(0.2 * (1 - math.exp(-(0.1 - STEP_AT) / 0.1)), rel=1e-9)
