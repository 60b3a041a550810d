"""Kind orifice_tank: continuity with Torricelli outflow C_d a_o sqrt(2 g h), linearised about a level.

Scenarios are invented for these tests. Outside references beside each check:
- steady level h = (q_in / (C_d a_o sqrt(2 g)))^2: outflow equals inflow (common practice, no source);
- linearised time constant tau = 2 A sqrt(h0) / k with k = C_d a_o sqrt(2 g) (textbook result of process
  dynamics for a tank with a square-root outflow; from memory);
- the non-linear level at a point, against our own scipy integration (LSODA) of the kind's equation.
"""

from __future__ import annotations

import math

import pytest
from scipy.integrate import solve_ivp

from calcsheet.pipeline import build_sheet

from tests.kinds.helpers import findings

G = 9.80665  # standard gravity (from memory)
SUMP = """[sheet]
title = "Pump sump level (invented)"
[model]
kind = "orifice_tank"
unknown = "h [m]"
variable = "t [s]"
[parameters]
A = "6 m^2"
a_o = "0.008 m^2"
C_d = "0.6"
q_in = "{q_in}"
H = "{H}"
[linearise]
about = "steady state"
[initial]
value = "1.3 m"
[evaluate]
at = ["300 s"]
"""


def built(tmp_path, q_in="0.02 m^3/s", H="3 m"):
    path = tmp_path / "sump.toml"
    path.write_text(SUMP.format(q_in=q_in, H=H), encoding="utf-8")
    return build_sheet(path)


def test_steady_level_and_time_constant(tmp_path):
    d = built(tmp_path).derivation
    k = 0.6 * 0.008 * math.sqrt(2 * G)
    h0 = (0.02 / k) ** 2
    assert d.linearisation.point.si == pytest.approx(h0, rel=1e-12)
    assert d.numbers.time_constant == pytest.approx(2 * 6 * math.sqrt(h0) / k, rel=1e-12)


def test_non_linear_level_against_our_own_integration(tmp_path):
    d = built(tmp_path).derivation
    k = 0.6 * 0.008 * math.sqrt(2 * G)
    ours = solve_ivp(
        lambda t, h: [(0.02 - k * math.sqrt(h[0])) / 6], (0, 300), [1.3], method="LSODA", rtol=1e-12, atol=1e-14
    ).y[0][-1]
    ((at, _, non_linear, _),) = d.accuracy.rows
    assert at == 300 and non_linear == pytest.approx(ours, rel=1e-8)


def test_overflow_is_warned(tmp_path):
    b = built(tmp_path, q_in="0.05 m^3/s", H="2 m")  # steady level (0.05/k)^2 = 11.1 m, above 2 m
    assert any("overflows before it settles" in text for text in findings(b))


def test_no_inflow_steady_state_at_zero_is_refused_naming_the_term(tmp_path):
    from calcsheet.errors import ModelRefused

    with pytest.raises(ModelRefused, match=r"term '.*sqrt\(.*h.*\)' is not differentiable at h = 0 m"):
        built(tmp_path, q_in="0 m^3/s")
