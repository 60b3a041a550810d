"""The series_rc kind against sympy.dsolve: the closed form the sheet derives, and its numbers."""

from __future__ import annotations

import math

import pytest
import sympy as sp

from tests.kinds.helpers import build

# A hold-up capacitor charged from 2 V through a resistor (invented figures): tau = R C = 4.7 s.
CHARGING = """
[sheet]
title = "Hold-up capacitor charging (test)"
[model]
kind = "series_rc"
[parameters]
R = "10 kohm"
C = "470 uF"
V_s = "24 V"
[initial]
value = "2 V"
[evaluate]
at = ["1 s", "4.7 s", "10 s", "30 s"]
reach = ["20 V"]
"""


def _by_name(expr: sp.Expr) -> sp.Expr:
    """The same expression over plain symbols, so it compares with one built here by name."""
    return expr.subs({s: sp.Symbol(s.name) for s in expr.free_symbols})


def _dsolve_charging() -> sp.Expr:
    """Reference: sympy.dsolve on R*C*dv/dt + v = V_s with v(0) = v_0, written out here with sympy's own
    symbols, independently of the kind's text and of calcsheet's derivation."""
    t, R, C, V_s, v_0 = sp.symbols("t R C V_s v_0")
    v = sp.Function("v")
    solution = sp.dsolve(sp.Eq(R * C * v(t).diff(t) + v(t), V_s), v(t), ics={v(0): v_0})
    return solution.rhs


@pytest.fixture(scope="module")
def charging(tmp_path_factory):
    return build(tmp_path_factory.mktemp("rc"), "charging", CHARGING).derivation


def test_particular_solution_is_the_one_dsolve_gives(charging):
    assert charging.passed
    ours = _by_name(charging.solution.particular)
    assert sp.simplify(ours - _dsolve_charging()) == 0


def test_values_time_constant_and_level_agree_with_dsolve(charging):
    reference = _dsolve_charging().subs({"R": 10e3, "C": 470e-6, "V_s": 24.0, "v_0": 2.0})
    for value in charging.numbers.values:
        expected = float(reference.subs("t", value.at.si))
        assert value.y == pytest.approx(expected, rel=1e-12)
    assert charging.numbers.time_constant == pytest.approx(4.7, rel=1e-12)
    assert charging.numbers.final_value == pytest.approx(24.0, rel=1e-12)
    # 20 V is reached where 24 - 22 exp(-t/4.7) = 20: t = 4.7 ln(22/4) (solved by hand from the same form)
    (reach,) = charging.numbers.reach
    assert reach.x == pytest.approx(4.7 * math.log(22 / 4), rel=1e-9)


def test_discharge_with_the_default_source_decays_from_its_initial_voltage(tmp_path):
    # With V_s left out the kind's default 0 V applies: v = v_0 exp(-t/(R C)) (dsolve above with V_s = 0).
    built = build(tmp_path, "discharge", CHARGING.replace('V_s = "24 V"\n', "").replace('reach = ["20 V"]', ""))
    reference = _dsolve_charging().subs({"R": 10e3, "C": 470e-6, "V_s": 0, "v_0": 2.0})
    for value in built.derivation.numbers.values:
        assert value.y == pytest.approx(float(reference.subs("t", value.at.si)), rel=1e-12)
    assert built.derivation.numbers.final_value == pytest.approx(0.0, abs=1e-15)
