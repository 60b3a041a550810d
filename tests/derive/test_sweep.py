"""A sweep of one parameter (derive/sweep.py) against outside references: closed forms evaluated with mpmath
and scipy's solve_ivp on the model's own equation, for a free equation, a kind and a switched model."""

from __future__ import annotations

import math
from pathlib import Path

import mpmath
import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.derive.derivation import derive
from calcsheet.derive.piecewise import derive_piecewise
from calcsheet.derive.sweep import REFINED, family_indices, find_sweep, sweep_values
from calcsheet.load.loader import load_for_sweep, read_subject

ROOT = Path(__file__).resolve().parents[2]

RC = """
[sheet]
title = "Bleed-down (test)"
[model]
equation = "R*C*dv/dt + v = V_s"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = "4.7 kohm"
C = "2200 uF"
V_s = "0 V"
[initial]
value = "680 V"
[[criteria]]
text = "bled down"
check = "v(60 s) <= 50 V"
[[criteria]]
text = "quick"
check = "reach(50 V) <= 60 s"
"""


def _swept(path, vary, steps=9, log=False, of=(), family=0):
    model, found = load_for_sweep(path, (), vary, log)
    asked = tuple(read_subject(model, text, "--of") for text in of)
    derivation = derive_piecewise(model) if model.switches else derive(model)
    return model, find_sweep(derivation, found.name, found.low, found.high, steps, log, asked, family=family)


@pytest.fixture
def rc(tmp_path):
    path = tmp_path / "rc.toml"
    path.write_text(RC, encoding="utf-8")
    return path


def test_points_are_evenly_spaced_with_both_ends():
    assert sweep_values(1.0, 3.0, 3, False) == (1.0, 2.0, 3.0)
    log = sweep_values(1e3, 1e5, 3, True)
    assert log[0] == pytest.approx(1e3, rel=1e-15) and log[1] == pytest.approx(1e4, rel=1e-14)
    assert log[2] == pytest.approx(1e5, rel=1e-15)
    assert family_indices(25, 5) == (0, 6, 12, 18, 24)
    assert family_indices(3, 5) == (0, 1, 2)


def test_rc_values_match_the_closed_form(rc):
    # v(t) = V0 exp(-t/(R C)); the time to fall to v1 is R C ln(V0/v1) (common practice, no source)
    _, sweep = _swept(rc, ("R", "1 kohm", "100 kohm"), steps=9, log=True)
    C, V0 = mpmath.mpf("2200e-6"), mpmath.mpf(680)
    for R, (v60, reach) in zip(sweep.values, sweep.table):
        tau = mpmath.mpf(R) * C
        assert v60 == pytest.approx(float(V0 * mpmath.exp(-60 / tau)), rel=1e-9, abs=1e-12)
        assert reach == pytest.approx(float(tau * mpmath.log(V0 / 50)), rel=1e-9)


def test_rc_verdict_flips_at_the_limiting_value(rc):
    # v(60 s) = 50 V where R = 60 s / (C ln(680/50)): both criteria change there, holding below it
    _, sweep = _swept(rc, ("R", "1 kohm", "100 kohm"), steps=9, log=True)
    expected = float(60 / (mpmath.mpf("2200e-6") * mpmath.log(mpmath.mpf(680) / 50)))
    assert [f.criterion for f in sweep.flips] == [0, 1]
    for flip in sweep.flips:
        assert flip.method == REFINED and flip.holds == "below"
        assert flip.between[0] < expected < flip.between[1]
        # Brent's method was asked for 1e-12 relative in R; the quantities it compares are good to ~1e-12
        assert flip.value == pytest.approx(expected, rel=1e-8)
    below = [s for R, s in zip(sweep.values, sweep.statuses) if R < expected]
    above = [s for R, s in zip(sweep.values, sweep.statuses) if R > expected]
    assert all(s == ("pass", "pass") for s in below) and all(s == ("fail", "fail") for s in above)


def test_a_range_across_zero_is_solved_for_every_sign(rc):
    # the loader gives V_s a real (not positive) symbol once the sweep's range crosses zero: v(t) for a
    # constant source, V_s + (V0 - V_s) exp(-t/(R C)) (common practice, no source), at negative V_s too
    _, sweep = _swept(rc, ("V_s", "-100 V", "100 V"), steps=5, of=("v(10 s)",))
    tau = 4.7e3 * 2200e-6
    for Vs, row in zip(sweep.values, sweep.table):
        assert row[0] == pytest.approx(Vs + (680 - Vs) * math.exp(-10 / tau), rel=1e-9)


def test_family_curves_follow_the_closed_form(rc):
    _, sweep = _swept(rc, ("R", "1 kohm", "10 kohm"), steps=4, family=5)
    assert [c.value for c in sweep.family] == list(sweep.values)  # fewer points than 5: every one
    for curve in sweep.family:
        tau = curve.value * 2200e-6
        for t, v in curve.points[::40]:
            assert v == pytest.approx(680 * math.exp(-t / tau), rel=1e-9, abs=1e-9)
        assert curve.points[-1][0] >= 60.0  # the plot reaches the criteria's instant


def test_lumped_body_against_solve_ivp():
    # the flange demo's kind: rho V c_p dT/dt = -h A (T - T_inf), integrated by scipy at each h
    path = ROOT / "inputs" / "flange-cool-down.toml"
    model, sweep = _swept(path, ("h", "5 W/(m^2*K)", "40 W/(m^2*K)"), steps=5, of=("T(45 min)", "max(T, 30 min, 2 h)"))
    rho, V, c_p, A, T_inf = 7850.0, 1.53e-3, 490.0, 0.42, 295.15
    for h, (T45, largest) in zip(sweep.values, sweep.table):
        done = solve_ivp(
            lambda t, T: [-h * A * (T[0] - T_inf) / (rho * V * c_p)],
            (0.0, 7200.0),
            [480 + 273.15],
            method="DOP853",
            rtol=1e-11,
            atol=1e-9,
            dense_output=True,
        )
        assert T45 == pytest.approx(done.sol(2700.0)[0], rel=1e-7)
        assert largest == pytest.approx(done.sol(1800.0)[0], rel=1e-7)  # cooling: the window's start


def test_switched_coil_against_solve_ivp():
    # the valve coil demo: L di/dt + R i = V_s with R = 20 ohm to 120 ms, then 80 ohm; reach(0.9 A) in the
    # first interval is (L/R) ln(V/(V - 0.9 R)), and it stops holding 100 ms at L = 0.1 R / ln(V/(V - 0.9 R))
    path = ROOT / "inputs" / "valve-coil-economiser.toml"
    _, sweep = _swept(path, ("L", "0.2 H", "2 H"), steps=7)
    V = 24.0
    for L, (reach, i500) in zip(sweep.values, sweep.table):
        resistance = lambda t: 20.0 if t < 0.12 else 80.0  # noqa: E731
        first = solve_ivp(lambda t, i: [(V - 20.0 * i[0]) / L], (0, 0.12), [0.0], rtol=1e-11, atol=1e-13)
        second = solve_ivp(
            lambda t, i: [(V - resistance(t) * i[0]) / L], (0.12, 0.5), [first.y[0, -1]], rtol=1e-11, atol=1e-13
        )
        assert i500 == pytest.approx(second.y[0, -1], rel=1e-7)
        if V / 20.0 * (1 - math.exp(-20.0 * 0.12 / L)) < 0.9:
            assert reach is None  # the pull-in level is never reached before the economy resistor
        else:
            assert reach == pytest.approx(L / 20.0 * math.log(V / (V - 0.9 * 20.0)), rel=1e-9)
    (flip,) = sweep.flips
    assert flip.criterion == 0 and flip.holds == "below"
    assert flip.value == pytest.approx(0.1 * 20.0 / math.log(V / (V - 0.9 * 20.0)), rel=1e-8)
    assert all(s[1] == "pass" for s in sweep.statuses)


def test_no_flip_where_a_criterion_holds_throughout(rc):
    _, sweep = _swept(rc, ("R", "1 kohm", "5 kohm"), steps=3)
    assert sweep.flips == () and all(s == ("pass", "pass") for s in sweep.statuses)


def test_sweeping_twice_gives_the_same_facts(rc):
    first = _swept(rc, ("R", "1 kohm", "100 kohm"), steps=6, log=True)[1]
    second = _swept(rc, ("R", "1 kohm", "100 kohm"), steps=6, log=True)[1]
    assert first == second
    assert np.all(np.diff(first.values) > 0)
