"""The rotating_inertia kind: end to end, facts of the trade, the RL analogy, wrong units, a sinusoidal
torque, its starter."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.errors import CalcsheetError
from calcsheet.pipeline import render

from tests.kinds.helpers import build

RPM = 2 * math.pi / 60  # rad/s per rpm (one revolution is 2 pi rad; fact of units)


# A spindle spun up from rest by a steady torque, speed declared in rpm: J/b = 0.5/0.025 = 20 s,
# final speed T/b = 5/0.025 = 200 rad/s. Scenario invented for this test.
SPINDLE = """
[sheet]
title = "Spin-up of a lathe spindle"
[model]
kind = "rotating_inertia"
unknown = "omega [rpm]"
[parameters]
J = "0.5 kg*m^2"
b = "0.025 N*m*s/rad"
T_d = "5 N*m"
[initial]
value = "0 rpm"
[evaluate]
at = ["20 s", "40 s", "60 s", "100 s"]
"""


@pytest.fixture(scope="module")
def spindle(tmp_path_factory):
    return build(tmp_path_factory.mktemp("spindle"), "spindle", SPINDLE)


def test_spin_up_reaches_63_percent_of_final_speed_after_one_time_constant(spindle):
    # A shaft spun up from rest by a steady torque reaches 63.2 % of its final speed T/b after one
    # time constant J/b, and 86.5, 95.0, 99.3 % after 2, 3, 5 time constants (common practice, no source).
    numbers = spindle.derivation.numbers
    assert numbers.time_constant == pytest.approx(20.0, rel=1e-12)
    assert numbers.final_value == pytest.approx(200.0, rel=1e-12)  # T/b in rad/s (SI)
    percent = [100 * v.y / 200.0 for v in numbers.values]
    assert percent == pytest.approx([63.2, 86.5, 95.0, 99.3], abs=0.05)


def test_speed_in_rpm_is_converted_with_two_pi_per_revolution(spindle):
    # 200 rad/s = 200 * 60 / (2 pi) rpm = 1909.9 rpm (fact of units); the sheet states it in rpm.
    text = render(spindle.sheet, ("txt",))["txt"]
    assert f"{200.0 / RPM:.1f} rpm" == "1909.9 rpm"
    assert "1910 rpm" in text


def test_speed_declared_in_hertz_is_refused(tmp_path):
    text = SPINDLE.replace("omega [rpm]", "omega [Hz]").replace('value = "0 rpm"', 'value = "0 Hz"')
    with pytest.raises(CalcsheetError) as caught:
        build(tmp_path, "hertz", text)
    assert "model.unknown" in str(caught.value)


def test_analogy_with_the_series_rl_circuit(tmp_path):
    # Force-voltage (impedance) analogy: torque <-> voltage, speed <-> current, J <-> L, b <-> R, so
    # J dw/dt + b w = T and L di/dt + R i = V are the same equation in the same numbers
    # (common practice, no source).
    times = '["0.05 s", "0.1 s", "0.2 s", "0.5 s"]'
    rotating = build(
        tmp_path,
        "rotating",
        f"""
[sheet]
title = "Analogy check, rotating side"
[model]
kind = "rotating_inertia"
[parameters]
J = "2.0 kg*m^2"
b = "20 N*m*s/rad"
T_d = "4.0 N*m"
[initial]
value = "0.05 rad/s"
[evaluate]
at = {times}
""",
    )
    electrical = build(
        tmp_path,
        "electrical",
        f"""
[sheet]
title = "Analogy check, electrical side"
[model]
kind = "series_rl"
[parameters]
L = "2.0 H"
R = "20 ohm"
V_s = "4.0 V"
[initial]
value = "0.05 A"
[evaluate]
at = {times}
""",
    )
    a, e = rotating.derivation.numbers, electrical.derivation.numbers
    assert a.time_constant == pytest.approx(e.time_constant, rel=1e-12)
    assert a.final_value == pytest.approx(e.final_value, rel=1e-12)
    assert [v.y for v in a.values] == pytest.approx([v.y for v in e.values], rel=1e-12)
    assert rotating.derivation.passed and electrical.derivation.passed


SINE_INPUT = """
[sheet]
title = "Spindle under a pulsating drive torque"
[model]
kind = "rotating_inertia"
unknown = "omega [rpm]"
[parameters]
J = "0.8 kg*m^2"
b = "0.04 N*m*s/rad"
[forcing]
form = "sine"
amplitude = "12 N*m"
frequency = "0.05 Hz"
offset = "6 N*m"
[initial]
value = "100 rpm"
[evaluate]
at = ["3 s", "17 s", "40 s", "75 s"]
"""


def test_sinusoidal_torque_agrees_with_scipy_lsoda(tmp_path):
    # Reference: scipy.integrate.solve_ivp (LSODA) on J dw/dt + b w = T(t),
    # T = 6 + 12 sin(2 pi 0.05 t) N*m, written out here independently of calcsheet; 100 rpm start.
    built = build(tmp_path, "sine", SINE_INPUT)
    assert built.derivation.passed
    assert "T_d is a sinusoid" in built.derivation.model.kind.forcing

    def rate(t, w):
        return [(6.0 + 12.0 * math.sin(2 * math.pi * 0.05 * t) - 0.04 * w[0]) / 0.8]

    points = [v.at.si for v in built.derivation.numbers.values]
    reference = solve_ivp(
        rate, (0.0, max(points)), [100 * RPM], method="LSODA", t_eval=points, rtol=1e-10, atol=1e-12, max_step=0.05
    )
    assert reference.success
    derived = np.array([v.y for v in built.derivation.numbers.values])
    assert derived == pytest.approx(reference.y[0], rel=1e-5)
