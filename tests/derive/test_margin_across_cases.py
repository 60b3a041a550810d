"""A tolerance range that reaches, or leaves, the case its sheet's solution was chosen for: y' T_1 + y = Y e^(-t/T_2)
has the form t e^(-t/T)/T_1 only where T_1 = T_2, and (e^(-t/T_2) - e^(-t/T_1)) T_2/(T_2 - T_1) elsewhere. The
margin study must evaluate the form that holds at each point (integrating_factor.solution_at): it used to take
the stated case's formula to the corners (a wrong worst case on a PASS sheet) or stop on a division by zero.
References: scipy's solve_ivp on the equation as stated, and mpmath for the slope of the general form at
T_1 = T_2 (its limit, worked at 40 digits)."""

from __future__ import annotations

import math

import mpmath
import pytest
from scipy.integrate import solve_ivp

from calcsheet import api

SHEET = """
[sheet]
title = "Sensor lag behind a decaying source"

[model]
equation = "T_1*dy/dt + y = Y*exp(-t/T_2)"
unknown = "y [V]"
variable = "t [s]"

[parameters]
T_1 = {{ value = "{t1}", tolerance = "50 %" }}
T_2 = "1 s"
Y = "1 V"

[initial]
at = "0 s"
value = "0 V"

[evaluate]
at = ["3 s"]

[[criteria]]
text = "stays below 1 V"
check = "y(3 s) <= 1 V"
"""


def stated(t1: float, t: float = 3.0) -> float:
    """y(t) for T_2 = 1 s, Y = 1 V, y(0) = 0, by scipy on the equation as written."""
    found = solve_ivp(lambda x, y: (math.exp(-x) - y) / t1, (0.0, t), [0.0], method="DOP853", rtol=1e-12, atol=1e-14)
    return float(found.y[0, -1])


def record(t1: str) -> dict:
    return api.check(SHEET.format(t1=t1), name="lag.toml").record


def test_a_sheet_stated_at_equal_time_constants_takes_the_general_form_to_its_corners():
    r = record("1 s")
    worst = r["criteria"][0]["worst_case"]
    assert worst["corner"] == {"T_1": "max"}
    assert worst["value"]["value"] == pytest.approx(stated(1.5), rel=1e-9)  # the t e^(-t) form gave 0.2707 V
    (slope,) = [s for s in r["sensitivities"] if s["quantity"] == "y(3 s)"]
    general = lambda t1: (mpmath.e**-3 - mpmath.exp(-3 / t1)) / (1 - t1)  # noqa: E731
    with mpmath.workdps(40):  # mpmath's precision is global: set for this computation only
        by_hand = float(mpmath.diff(general, mpmath.mpf(1) + mpmath.mpf(10) ** -15))  # 1.5 e^-3, the limit at T_1 = 1
    assert slope["derivative"]["value"] == pytest.approx(by_hand, rel=1e-6)  # a central difference, step 1e-5


def test_a_range_that_reaches_equal_time_constants_is_evaluated_there():
    r = record("2 s")  # the low corner, T_1 = 1 s, is the case T_1 = T_2; it stopped the sheet before
    worst = r["criteria"][0]["worst_case"]
    (at,) = worst["corner"].values()  # y(3 s) peaks inside the range: the box was searched
    assert worst["method"] == "searched"
    assert worst["value"]["value"] == pytest.approx(stated(float(at)), rel=1e-9)
    assert worst["value"]["value"] >= max(stated(1.0), stated(2.0), stated(3.0))
    assert r["passed"]
