"""The forcing drawn beside the response, points past the plotted range named in the caption, and the caution
when a forced response stays far below its input (a probe lagging a spike).

Outside references: scipy's solve_ivp integrates the same equation for the response's peak; the forcing's
values and peak are worked by hand from the stated forcing."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.derive.derivation import derive
from calcsheet.load.loader import load_model
from calcsheet.sheet.compose import compose
from calcsheet.sheet.figure import response_figure

ROOT = Path(__file__).resolve().parents[2]

# A probe (tau = 3 s) at 20 degC in a gas that starts at 100 degC and falls back to 20 degC with a 2 s time
# constant (invented). The gas's peak is 100 degC at t = 0; the reading's peak is far lower and later.
TAU, TAU_GAS, BASE, START = 3.0, 2.0, 293.15, 373.15
SENSOR = """
[sheet]
title = "Lagging probe (test)"
[model]
kind = "first_order_sensor"
[parameters]
tau = "3 s"
[forcing]
form = "exponential"
initial = "100 degC"
final = "20 degC"
time_constant = "2 s"
[initial]
value = "20 degC"
{extra}
"""


PLUNGE = """
[sheet]
title = "Plunged probe (test)"
[model]
kind = "first_order_sensor"
[parameters]
tau = "3 s"
T_m = "80 degC"
[initial]
value = "20 degC"
[evaluate]
reach = ["79 degC"]
[plot]
to = "10 s"
"""


def _derive(tmp_path, text, name="case"):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return derive(load_model(path))


@pytest.fixture(scope="module")
def lag(tmp_path_factory):
    return _derive(tmp_path_factory.mktemp("lag"), SENSOR.format(extra='[evaluate]\nat = ["5 s"]'))


def _gas(t):
    return BASE + (START - BASE) * math.exp(-t / TAU_GAS)


def test_the_response_peak_agrees_with_solve_ivp(lag):
    solved = solve_ivp(
        lambda t, y: [(_gas(t) - y[0]) / TAU],
        (0.0, 30.0),
        [BASE],
        method="DOP853",
        rtol=1e-11,
        atol=1e-9,
        dense_output=True,
    )
    grid = np.linspace(0.0, 30.0, 300001)
    values = solved.sol(grid)[0]
    peak_at, peak = grid[int(np.argmax(values))], float(np.max(values))
    found = lag.driving.response_largest
    assert found.value == pytest.approx(peak, abs=1e-6)  # the integrator was asked for 1e-11 relative
    assert found.at == pytest.approx(peak_at, abs=2e-3)  # a flat top: the abscissa is known less well
    # worked by hand: the gas's largest value is its start, 100 degC at t = 0
    assert (lag.driving.largest.at, lag.driving.largest.value) == (0.0, pytest.approx(START, abs=1e-9))


def test_the_caution_gives_both_peaks(lag):
    sheet = compose(lag)
    (note,) = [c for c in sheet.cautions if c.startswith("The input reached a higher value")]
    assert "peaks at 100 degC at t = 0 s" in note
    assert f"T peaks at {lag.driving.response_largest.value - 273.15:.2f} degC" in note


def test_a_response_that_keeps_up_gets_no_such_caution(tmp_path):
    # the same gas, a probe ten times faster: it covers more than 90 % of the gas's excursion
    fast = _derive(tmp_path, SENSOR.format(extra="").replace('tau = "3 s"', 'tau = "0.03 s"'), "fast")
    assert fast.driving.response_largest.value - BASE > 0.9 * (START - BASE)
    assert not any(c.startswith("The input reached") for c in compose(fast).cautions)


def test_the_sensor_plot_shows_the_input_against_the_reading(lag):
    figure = response_figure(lag)
    assert figure.forcing_label.startswith("input")
    for (x, value), (cx, _) in zip(figure.forcing, figure.curve):
        assert x == cx and value == pytest.approx(_gas(x) - 273.15, rel=1e-12)


def test_the_probe_demo_draws_its_gas_spike_and_a_bleed_down_draws_no_forcing():
    probe = derive(load_model(ROOT / "inputs" / "probe-lag-gas-spike.toml"))
    figure = response_figure(probe)
    # worked by hand from the input: T_b + T_pk/(1 + ((t - t_p)/w)^2), 40 degC + 70 K, t_p = 20 s, w = 5 s
    for x, value in figure.forcing:
        assert value == pytest.approx(40 + 70 / (1 + ((x - 20) / 5) ** 2), rel=1e-12)
    assert "thin purple line" in figure.caption
    bleed = response_figure(derive(load_model(ROOT / "inputs" / "bus-capacitor-bleed-down.toml")))
    assert bleed.forcing == () and "purple" not in bleed.caption  # a source of 0 V: nothing to draw


def test_points_past_the_plotted_range_are_named_in_the_caption(tmp_path):
    extra = '[evaluate]\nat = ["5 s", "40 s"]\nextremes = ["max 30 s .. 50 s"]\n[plot]\nto = "20 s"\n'
    figure = response_figure(_derive(tmp_path, SENSOR.format(extra=extra), "cut"))
    assert max(x for x, _ in figure.curve) == pytest.approx(20.0)
    assert figure.caption.endswith("Past the plotted range, in the tables only: T(40 s), the max of T.")
    # a plunge into 80 degC with tau = 3 s reaches 79 degC at 3 ln 60 = 12.28 s (by hand), past a plot to 10 s
    figure = response_figure(_derive(tmp_path, PLUNGE, "plunge"))
    assert figure.crossings == () and figure.caption.endswith("in the tables only: where T reaches 79 degC.")


def test_a_filling_tank_draws_no_forcing():
    # the tracer tank's outflow term q_out/V(t) changes as the tank fills: r/p there is a drifting quasi-steady
    # value, not an input, so nothing is drawn and no caution compares it
    tank = derive(load_model(ROOT / "inputs" / "equalisation-tank-tracer.toml"))
    assert tank.driving is None and response_figure(tank).forcing == ()
