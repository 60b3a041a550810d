"""Extremes over windows and conditions over windows (derive/extremes.py), against outside references.

Scenarios (invented): a thermocouple in a duct sees a hot-air pulse; a sensor follows a sinusoidal
supply temperature; a filter capacitor charges from a supply. Each reference is named beside its check.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from scipy import integrate, optimize

from calcsheet.cli import main
from calcsheet.derive.derivation import derive
from calcsheet.derive.extremes import FINAL_VALUE, FORCING_JUMP, STATIONARY, WINDOW_END
from calcsheet.errors import CalcsheetError, ErrorList
from calcsheet.load.loader import load_model


def build(tmp_path: Path, equation: str, parameters: dict, unknown: str, initial: str, extra: str = ""):
    lines = [
        '[sheet]\ntitle = "extremes"\n',
        f'[model]\nequation = "{equation}"\nunknown = "{unknown}"\nvariable = "t [s]"\n',
        "[parameters]",
    ]
    lines += [f'{name} = "{value}"' for name, value in parameters.items()]
    lines += [f'\n[initial]\nat = "0 s"\nvalue = "{initial}"\n', extra]
    path = tmp_path / "input.toml"
    path.write_text("\n".join(lines), encoding="utf-8")
    return path


# ------------------------------------------------------------------ a lag driven by a rectangular pulse
PULSE = {"tau": "5 s", "H": "30 K", "a": "2 s", "w": "4 s"}
PULSE_EQUATION = "tau*dT/dt + T = H*(step(t - a) - step(t - a - w))"


def test_a_lag_driven_by_a_pulse_peaks_at_the_pulse_end(tmp_path):
    """From rest, a first-order lag driven by a pulse of height H and width w peaks at the pulse's end at
    y_peak = H (1 - exp(-w/tau)): the standard first-order step response stopped at t = w, after which the
    response only decays (from memory of the standard result)."""
    path = build(tmp_path, PULSE_EQUATION, PULSE, "T [K]", "0 K", '[evaluate]\nextremes = ["max", "min 0 s .. 10 s"]\n')
    d = derive(load_model(path))
    largest, smallest = d.numbers.extremes
    assert largest.value == pytest.approx(30 * (1 - math.exp(-4 / 5)), rel=1e-10)
    assert largest.at == pytest.approx(6.0, rel=1e-12)
    assert largest.method == FORCING_JUMP  # dT/dt is not zero there: it jumps from positive to negative
    assert largest.stationary == () and largest.solved  # sympy solved dT/dt = 0 on each stretch: no root
    # from rest the response is never below 0 (it only rises while the pulse is on, then decays towards 0)
    assert smallest.value == pytest.approx(0.0, abs=1e-12) and smallest.method == WINDOW_END


# ------------------------------------------------------------------ a lag driven by a sine
SINE = {"tau": "4 s", "A": "12 K", "f": "0.05 Hz", "T_m": "50 K"}
SINE_EQUATION = "tau*dT/dt + T = T_m + A*sin(2*pi*f*t)"


def _scipy_max(start: float, end: float, T0: float) -> tuple[float, float]:
    """The largest value over [start, end] of the Model's own equation, integrated by scipy solve_ivp and the
    dense output's peak refined by scipy minimize_scalar: independent of the derivation."""
    tau, A, f, T_m = 4.0, 12.0, 0.05, 50.0
    solution = integrate.solve_ivp(
        lambda t, T: (T_m + A * math.sin(2 * math.pi * f * t) - T) / tau,
        (0.0, end),
        [T0],
        method="DOP853",
        rtol=1e-12,
        atol=1e-12,
        dense_output=True,
    )
    grid = np.linspace(start, end, 20001)
    values = solution.sol(grid)[0]
    k = int(np.argmax(values))
    if k in (0, len(grid) - 1):
        return float(values[k]), float(grid[k])
    refined = optimize.minimize_scalar(
        lambda t: -solution.sol(t)[0], bounds=(grid[k - 1], grid[k + 1]), method="bounded", options={"xatol": 1e-10}
    )
    return float(-refined.fun), float(refined.x)


def test_a_sine_driven_lag_peaks_where_scipy_finds_it(tmp_path):
    path = build(tmp_path, SINE_EQUATION, SINE, "T [K]", "50 K", '[evaluate]\nextremes = ["max 0 s .. 40 s"]\n')
    d = derive(load_model(path))
    (peak,) = d.numbers.extremes
    value, at = _scipy_max(0.0, 40.0, 50.0)
    # DOP853 asked for rtol 1e-12: the values agree far inside 1e-8; a peak's place is fixed only to about the
    # square root of that relative error times the period (20 s)
    assert peak.value == pytest.approx(value, rel=1e-8)
    assert peak.at == pytest.approx(at, abs=1e-3)
    assert peak.method == STATIONARY


def test_a_window_ending_before_the_peak_takes_its_end(tmp_path):
    path = build(tmp_path, SINE_EQUATION, SINE, "T [K]", "50 K", '[evaluate]\nextremes = ["max 0 s .. 5 s"]\n')
    (early,) = derive(load_model(path)).numbers.extremes
    value, at = _scipy_max(0.0, 5.0, 50.0)  # still rising at 5 s: scipy's largest sample is the window's end
    assert at == 5.0 and early.at == 5.0 and early.method == WINDOW_END
    assert early.value == pytest.approx(value, rel=1e-8)


# ------------------------------------------------------------------ conditions over a window
CHARGE = {"R": "10 kohm", "C": "100 uF", "V_s": "10 V"}  # tau = R C = 1 s
CHARGE_EQUATION = "R*C*dv/dt + v = V_s"


def _verdicts(tmp_path, *checks):
    criteria = "".join(f'[[criteria]]\ncheck = "{check}"\n' for check in checks)
    return derive(load_model(build(tmp_path, CHARGE_EQUATION, CHARGE, "v [V]", "0 V", criteria))).numbers.verdicts


def test_a_condition_over_a_window_passes_or_fails_on_its_extreme(tmp_path):
    """A capacitor charging from 0 through R reaches V_s (1 - 1/e) = 0.632 V_s after one time constant
    (common practice, no source): over 0 .. 1 s its largest value is 6.321 V, at the window's end."""
    passes, fails = _verdicts(tmp_path, "v <= 6.4 V for t in 0 s .. 1 s", "v <= 6.3 V for t in 0 s .. 1 s")
    assert passes.actual == pytest.approx(10 * (1 - math.exp(-1)), rel=1e-12)
    assert passes.extreme.at == pytest.approx(1.0) and passes.extreme.method == WINDOW_END
    assert (passes.status, fails.status) == ("pass", "fail")


def test_an_open_window_is_decided_by_the_final_value(tmp_path):
    """The charging capacitor rises monotonically towards V_s = 10 V (common practice, no source): for every
    t >= 2 s it stays below 10 V but comes as near as one likes, so "v <= 9.99 V for t >= 2 s" fails on the
    final value, and its smallest value over t >= 2 s is at 2 s, 10 (1 - exp(-2)) V."""
    upper, lower = _verdicts(tmp_path, "v <= 9.99 V for t >= 2 s", "v >= 8.6 V for t >= 2 s")
    assert upper.extreme.method == FINAL_VALUE and upper.actual == pytest.approx(10.0, rel=1e-12)
    assert upper.status == "fail"
    assert lower.actual == pytest.approx(10 * (1 - math.exp(-2)), rel=1e-12) and lower.status == "pass"


def test_max_over_a_window_as_a_criterion_subject(tmp_path):
    (verdict,) = _verdicts(tmp_path, "max(v, 0 s, 3 s) <= 9.6 V")
    assert verdict.actual == pytest.approx(10 * (1 - math.exp(-3)), rel=1e-12)  # as above, at t = 3 tau
    assert verdict.status == "pass"


# ------------------------------------------------------------------ the loader's errors
BAD = [
    ("max(T, 0 s) <= 5 K", "criteria[1].check", "max(T, 0 s, 60 s)"),
    ("max(x) <= 5 K", "criteria[1].check", "max(T)"),
    ("max(T, 0 K, 5 K) <= 5 K", "criteria[1].check", "dimension"),
    ("max <= 5 K", "criteria[1].check", "needs an argument"),
    ("T <= 9 K for t in 5 s .. 2 s", "criteria[1].check", "end after it starts"),
    ("T <= 9 K for q in 0 s .. 5 s", "criteria[1].check", "for t in 0 s .. 10 min"),
    ("T <= 9 K for t in 0 K .. 5 K", "criteria[1].check", "dimension"),
    ("T(1 s) <= 9 K for t >= 1 s", "criteria[1].check", "compares T itself"),
    ("T <= 9 K for t >= -1 s", "criteria[1].check", "before the initial point"),
]
BAD_EXTREMES = [
    ('["maximum"]', "evaluate.extremes[1]", "must read"),
    ('["max", "min 0 V .. 5 V"]', "evaluate.extremes[2]", "dimension"),
    ('["max from"]', "evaluate.extremes[1]", "must read"),
    ("[3]", "evaluate.extremes[1]", "must read"),
]


def _error(tmp_path, extra) -> CalcsheetError:
    path = build(tmp_path, PULSE_EQUATION, PULSE, "T [K]", "0 K", extra)
    with pytest.raises(CalcsheetError) as caught:
        load_model(path)
    error = caught.value
    return error.errors[0] if isinstance(error, ErrorList) else error


@pytest.mark.parametrize("check, key, words", BAD, ids=[b[0] for b in BAD])
def test_a_bad_window_in_a_criterion_is_named_by_its_key(tmp_path, check, key, words):
    error = _error(tmp_path, f'[[criteria]]\ncheck = "{check}"\n')
    assert error.key == key and words in str(error)


@pytest.mark.parametrize("extremes, key, words", BAD_EXTREMES, ids=[b[0] for b in BAD_EXTREMES])
def test_a_bad_extreme_request_is_named_by_its_key(tmp_path, extremes, key, words):
    error = _error(tmp_path, f"[evaluate]\nextremes = {extremes}\n")
    assert error.key == key and words in str(error)


def test_a_window_in_the_wrong_unit_is_one_line_and_exit_2(tmp_path):
    path = build(tmp_path, PULSE_EQUATION, PULSE, "T [K]", "0 K", '[evaluate]\nextremes = ["max 0 K .. 5 K"]\n')
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "evaluate.extremes[1]" in lines[0] and str(path) in lines[0]
