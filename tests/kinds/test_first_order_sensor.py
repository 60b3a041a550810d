"""The first_order_sensor kind against outside figures: step and sine responses, the gain, the probe's units."""

from __future__ import annotations

import math

import numpy as np
import pytest

from calcsheet.errors import CalcsheetError
from calcsheet.kinds.base import INFO, INVALID, WARNING
from calcsheet.kinds.first_order_sensor import KIND
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import findings, worded


def write_input(
    tmp_path, name: str, parameters: dict, initial: str, evaluate: str = "", forcing: str = "", extra: str = ""
):
    lines = "\n".join(f'{key} = "{value}"' for key, value in parameters.items())
    text = (
        f'[sheet]\ntitle = "{name} (test)"\n\n[model]\nkind = "first_order_sensor"\n\n[parameters]\n{lines}\n\n'
        f'{forcing}\n[initial]\nvalue = "{initial}"\n\n[evaluate]\n{evaluate}\n{extra}'
    )
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


# A probe at 20 degC plunged into a 120 degC bath (invented): a 100 K step, tau = 2 s.
@pytest.fixture(scope="module")
def plunge(tmp_path_factory):
    path = write_input(
        tmp_path_factory.mktemp("plunge"),
        "plunge",
        {"tau": "2 s", "T_m": "120 degC"},
        "20 degC",
        'at = ["2 s", "4 s", "6 s", "10 s"]\nreach = ["70 degC", "110 degC"]',
        extra='[[criteria]]\ncheck = "reach(110 degC) <= 5 s"\n',
    )
    built = build_sheet(path)
    return built, render(built.sheet, ("txt", "json"))


def test_step_response_fractions(plunge):
    # Step response of a first-order instrument at t/tau = 1, 2, 3, 5: 63.2, 86.5, 95.0, 99.3 % of the step
    # (common practice, no source).
    built, _ = plunge
    assert built.derivation.numbers.time_constant == pytest.approx(2.0, rel=1e-12)
    percent = [100 * (value.y - 293.15) / 100 for value in built.derivation.numbers.values]
    assert percent == pytest.approx([63.2, 86.5, 95.0, 99.3], abs=0.05)


def test_response_times_t50_and_t90(plunge):
    # Response times of a first-order sensor: t50 = 0.693 tau, t90 = 2.303 tau (common practice, no source).
    built, _ = plunge
    t50, t90 = (reach.x / 2.0 for reach in built.derivation.numbers.reach)
    assert t50 == pytest.approx(0.693, abs=0.0005)
    assert t90 == pytest.approx(2.303, abs=0.0005)
    # the sheet's note states the same times for tau = 2 s
    assert "Step response times: t50 = ln 2 * tau = 1.386 s, t90 = ln 10 * tau = 4.605 s." in findings(built)


# Sinusoidal medium temperature: tau = 0.2 s, f = 20 Hz, 5 K amplitude about 50 degC (amplitude and mean
# invented; they do not change the ratio).
TAU, FREQUENCY, AMPLITUDE, MEAN = 0.2, 20.0, 5.0, 323.15
LATE = [3.0 + i * 0.0005 for i in range(200)]  # two periods, 15 time constants after the start


@pytest.fixture(scope="module")
def sine(tmp_path_factory):
    forcing = (
        f'[forcing]\nform = "sine"\namplitude = "{AMPLITUDE:g} K"\nfrequency = "{FREQUENCY:g} Hz"\noffset = "50 degC"\n'
    )
    at = ", ".join(f'"{t:.4f} s"' for t in LATE)
    path = write_input(
        tmp_path_factory.mktemp("sine"), "sine", {"tau": f"{TAU:g} s"}, "50 degC", f"at = [{at}]", forcing
    )
    return build_sheet(path).derivation


def steady_fit(derivation) -> tuple[float, float]:
    """Amplitude ratio and phase lag (degrees) of the sheet's values late in time, by least squares on
    y - mean = a*sin(w t) + b*cos(w t); the transient has decayed to exp(-15) of its start."""
    omega = 2 * math.pi * FREQUENCY
    times = np.array([value.at.si for value in derivation.numbers.values])
    ys = np.array([value.y for value in derivation.numbers.values]) - MEAN
    (a, b), *_ = np.linalg.lstsq(np.column_stack([np.sin(omega * times), np.cos(omega * times)]), ys, rcond=None)
    return math.hypot(a, b) / AMPLITUDE, -math.degrees(math.atan2(b, a))


def test_sine_amplitude_ratio_and_phase_lag(sine):
    # Source: a university mechanical-measurements course's notes, first-order instrument with sinusoidal
    # input, tau = 0.2 s, f = 20 Hz: amplitude ratio about 0.04 (0.0398), phase lag 87.7 deg. Read in the
    # source. Also the frequency response of a first-order lag, 1/sqrt(1 + (w tau)^2) and atan(w tau)
    # (common practice, no source).
    ratio, lag = steady_fit(sine)
    assert ratio == pytest.approx(0.0398, abs=0.00005)
    assert lag == pytest.approx(87.7, abs=0.05)
    omega_tau = 2 * math.pi * FREQUENCY * TAU
    assert ratio == pytest.approx(1 / math.sqrt(1 + omega_tau**2), rel=1e-6)
    assert lag == pytest.approx(math.degrees(math.atan(omega_tau)), abs=1e-4)
    assert sine.passed


def test_sheet_steady_figures_agree_with_its_response(sine):
    # The sheet states the steady sinusoidal figures from the formula; the response it derived must show them.
    ratio, lag = steady_fit(sine)
    assert sine.numbers.sine is not None
    assert sine.numbers.sine.amplitude_ratio == pytest.approx(ratio, rel=1e-6)
    assert sine.numbers.sine.phase_lag_deg == pytest.approx(lag, abs=1e-4)


def test_sine_peak_over_the_last_periods(sine):
    # The same amplitude ratio read as the peak of the reading over two late periods (200 samples, so the
    # peak is missed by at most 1.8 deg of phase: a relative error below 5e-4).
    peak = max(abs(value.y - MEAN) for value in sine.numbers.values)
    omega_tau = 2 * math.pi * FREQUENCY * TAU
    assert peak / AMPLITUDE == pytest.approx(1 / math.sqrt(1 + omega_tau**2), rel=5e-4)


def test_gain_other_than_one_is_warned():
    # A probe that reads its medium has K = 1 (common practice, no source); anything else is worth a look.
    (_, gain) = KIND.checks({"tau": 2.0, "K": 0.98})
    assert gain.severity == WARNING and gain.values == {"K": 0.98}
    assert worded(KIND.name, (gain,))[0].startswith("K = 0.98 multiplies the absolute temperature")
    assert [n.severity for n in KIND.checks({"tau": 2.0, "K": 1.0})] == [INFO]
    assert [n.severity for n in KIND.checks({"tau": 0.0, "K": 1.0})] == [INVALID]


def test_constant_of_integration_does_not_take_the_gain_name(plunge):
    built, _ = plunge
    names = {parameter.name for parameter in built.derivation.model.parameters}
    assert "K" in names
    assert built.derivation.solution.constant.name not in names


def test_gain_scales_a_step_forcing(tmp_path):
    # tau*dT/dt + T = K*T_m settles at K*T_m (common practice, no source); K = 0.5 only to make it visible.
    forcing = '[forcing]\nform = "step"\nbefore = "20 degC"\nafter = "120 degC"\nat = "1 s"\n'
    path = write_input(tmp_path, "gain_step", {"tau": "2 s", "K": "0.5"}, "20 degC", 'at = ["60 s"]', forcing)
    derivation = build_sheet(path).derivation
    assert derivation.numbers.values[0].y == pytest.approx(0.5 * 393.15, rel=1e-9)


def test_gain_must_be_dimensionless(tmp_path):
    path = write_input(tmp_path, "wrong_gain", {"tau": "5 s", "K": "1 s", "T_m": "80 degC"}, "20 degC")
    with pytest.raises(CalcsheetError) as caught:
        build_sheet(path)
    message = str(caught.value)
    assert str(path) in message and "parameters.K" in message and "first_order_sensor" in message
    assert "dimensionless" in message
