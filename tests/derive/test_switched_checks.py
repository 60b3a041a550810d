"""The checks of a switched response: continuity at a switch is taken from the previous interval's own
solution (so a wrong start value is caught, however it came about), and the switched integration
restarts at a forcing edge inside an interval and agrees with scipy."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import pytest
from scipy.integrate import solve_ivp

from calcsheet.derive import piecewise, verify
from calcsheet.derive.derivation import derive
from calcsheet.derive.piecewise import Joined, derive_piecewise, interval_model
from calcsheet.derive.switched_checks import check_continuity, check_switched_integration, particular_at
from calcsheet.model import Point
from calcsheet.pipeline import build_sheet
from calcsheet.load.loader import load_model
from calcsheet.source.units import registry
from calcsheet.sheet.check_words import method_words

# An RC network discharging from 1 V; at 10 ms its resistor changes, and a 5 V pulse from 14 ms to 23 ms
# drives it inside the second interval.
PULSE = """
[sheet]
title = "RC network with a resistor change and a pulse"
[model]
equation = "R*C*dv/dt + v = V_p*(step(t - t_a) - step(t - t_b))"
unknown = "v [V]"
variable = "t [ms]"
[parameters]
R = "1 kohm"
C = "10 uF"
V_p = "5 V"
t_a = "14 ms"
t_b = "23 ms"
[initial]
value = "1 V"
[evaluate]
at = ["5 ms", "12 ms", "16 ms", "30 ms", "45 ms"]
[[switch]]
at = "10 ms"
text = "resistor changed"
parameters = { R = "2.2 kohm" }
"""
C, V_P, T_A, T_B, T_SWITCH = 10e-6, 5.0, 0.014, 0.023, 0.010
POINTS = [0.005, 0.012, 0.016, 0.030, 0.045]


@pytest.fixture
def path(tmp_path: Path) -> Path:
    target = tmp_path / "pulse.toml"
    target.write_text(PULSE, encoding="utf-8")
    return target


def test_the_previous_solution_is_evaluated_on_its_own_at_the_switch(path):
    sd = build_sheet(path).derivation
    first = sd.intervals[0].derivation
    # No forcing before 14 ms: v = v0 exp(-t/(R C)) (RC discharge; common practice, no source).
    expected = math.exp(-T_SWITCH / (1000 * C))
    assert particular_at(first.model, first.solution, T_SWITCH) == pytest.approx(expected, rel=1e-14)
    assert check_continuity(sd.model, sd.intervals).passed


def test_a_wrong_start_value_fails_continuity(path):
    sd = build_sheet(path).derivation
    right = math.exp(-T_SWITCH / (1000 * C))
    wrong = right * (1 + 1e-6)
    start = Point(f"{wrong!r} V", registry().Quantity(wrong, "V"), wrong)
    second = derive(replace(interval_model(sd.model, 1, start), plot_to=None))
    intervals = (sd.intervals[0], replace(sd.intervals[1], derivation=second))
    check = check_continuity(sd.model, intervals)
    assert not check.passed
    # measured against |y| + 0.01 x the largest |y| so far, which is the initial 1 V
    assert check.measure == pytest.approx((wrong - right) / (right + 0.01 * 1.0), rel=1e-6)


class _Biased:
    """An evaluator that is off by a factor, everywhere: what it hands on at a switch is consistent with
    itself, so comparing its two sides of a switch could not notice."""

    def __init__(self, response, factor: float):
        self.response, self.factor, self.log = response, factor, response.log

    def __call__(self, x):
        return self.response(x) * self.factor

    def on_grid(self, grid):
        return self.response.on_grid(grid) * self.factor


def test_continuity_does_not_trust_the_evaluator_that_set_the_start_value(path, monkeypatch):
    real = piecewise.derive

    def biased_first_interval(model):
        d = real(model)
        return replace(d, response=_Biased(d.response, 1 + 1e-6)) if model.initial_at.si == 0 else d

    monkeypatch.setattr(piecewise, "derive", biased_first_interval)
    sd = derive_piecewise(load_model(path))
    before, after = sd.intervals
    # both sides of the switch, as that evaluator gives them, agree ...
    assert before.derivation.response(before.end) == pytest.approx(after.derivation.response(after.start), rel=1e-14)
    # ... but the previous interval's own solution does not
    assert not sd.verification.continuity.passed and not sd.passed


def _reference() -> dict[float, float]:
    """The switched circuit written out, integrated by scipy piece by piece between the switch and the pulse
    edges (each piece smooth), v carried across."""
    pieces = [
        (0.0, T_SWITCH, 1000.0, 0.0),
        (T_SWITCH, T_A, 2200.0, 0.0),
        (T_A, T_B, 2200.0, V_P),
        (T_B, 0.045, 2200.0, 0.0),
    ]
    state, found = 1.0, {}
    for a, b, R, V in pieces:
        wanted = [p for p in POINTS if a < p <= b]
        result = solve_ivp(
            lambda t, v: [(V - v[0]) / (R * C)],
            (a, b),
            [state],
            method="LSODA",
            t_eval=sorted(set(wanted) | {b}),
            rtol=1e-12,
            atol=1e-14,
        )
        found.update({float(t): float(v) for t, v in zip(result.t, result.y[0]) if t in wanted})
        state = float(result.y[0][-1])
    return found


def test_switched_integration_restarts_at_a_pulse_edge_and_agrees_with_scipy(path, monkeypatch):
    sd = build_sheet(path).derivation
    reference = _reference()
    for value in sd.numbers.values:
        assert value.y == pytest.approx(reference[value.at.si], rel=1e-9)

    spans = []
    real = verify.solve_ivp

    def recorded(f, span, *args, **kwargs):
        spans.append(tuple(float(s) for s in span))
        return real(f, span, *args, **kwargs)

    monkeypatch.setattr(verify, "solve_ivp", recorded)
    check, compared = check_switched_integration(sd.model, sd.intervals, Joined(sd.intervals), POINTS)
    assert check.passed and "restarted at every switch and at every jump of the forcing" in method_words(check)
    for edge in (T_SWITCH, T_A, T_B):  # no integration step straddles the switch or a pulse edge
        assert any(b == pytest.approx(edge, abs=1e-15) for _, b in spans)
        assert any(a == pytest.approx(edge, abs=1e-15) for a, _ in spans)
        assert not any(a < edge - 1e-15 and b > edge + 1e-15 for a, b in spans)
    assert [x for x, _, _ in compared] == POINTS
    for x, _, integrated in compared:
        assert integrated == pytest.approx(reference[x], rel=1e-8)
