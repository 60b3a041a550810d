"""The pipe_temperature kind: end to end, against the exponential profile and the log-mean relation."""

from __future__ import annotations

import math

import pytest

from calcsheet.pipeline import build_sheet, render

# Hot water in an insulated line through a cold hall (invented for these tests).
LINE = {"m_dot": "0.8 kg/s", "c_p": "4190 J/(kg*K)", "U": "2.5 W/(m^2*K)", "P": "0.5 m", "T_s": "5 degC"}
M_DOT, C_P, U, P, T_S, T_IN = 0.8, 4190.0, 2.5, 0.5, 278.15, 363.15  # SI, kelvin
LENGTHS = (100.0, 400.0, 1200.0)


def write_input(tmp_path, name: str, parameters: dict, initial: str, evaluate: str = "", extra: str = ""):
    lines = "\n".join(f'{key} = "{value}"' for key, value in parameters.items())
    text = (
        f'[sheet]\ntitle = "{name} (test)"\n\n[model]\nkind = "pipe_temperature"\n\n[parameters]\n{lines}\n\n'
        f'[initial]\nvalue = "{initial}"\n\n[evaluate]\n{evaluate}\n{extra}'
    )
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def line(tmp_path_factory):
    at = ", ".join(f'"{length:g} m"' for length in LENGTHS)
    path = write_input(
        tmp_path_factory.mktemp("line"),
        "line",
        LINE,
        "90 degC",
        f"at = [{at}]",
        '[[criteria]]\ncheck = "T(400 m) >= 75 degC"\n',
    )
    built = build_sheet(path)
    return built, render(built.sheet, ("txt", "json"))


def test_difference_decays_exponentially_along_the_pipe(line):
    # Constant surface temperature: dT(x)/dT(0) = exp(-U*P*x/(m_dot*c_p)) (standard heat-transfer texts,
    # internal flow with constant surface temperature; common practice, from memory).
    built, _ = line
    assert built.derivation.numbers.time_constant == pytest.approx(M_DOT * C_P / (U * P), rel=1e-9)
    for value, x in zip(built.derivation.numbers.values, LENGTHS):
        ratio = (value.y - T_S) / (T_IN - T_S)
        assert ratio == pytest.approx(math.exp(-U * P * x / (M_DOT * C_P)), rel=1e-9)


@pytest.mark.parametrize("index", range(len(LENGTHS)))
def test_log_mean_temperature_difference(line, index):
    # Heat given up by the fluid over a length L equals U*P*L times the log-mean temperature difference,
    # m_dot*c_p*(T_in - T_out) = U*P*L*dT_lm, dT_lm = (dT_in - dT_out)/ln(dT_in/dT_out)
    # (standard heat-transfer texts, constant surface temperature; common practice, from memory).
    # A self-consistency check of the sheet's outlet value against that independent identity.
    built, _ = line
    length, t_out = LENGTHS[index], built.derivation.numbers.values[index].y
    d_in, d_out = T_IN - T_S, t_out - T_S
    log_mean = (d_in - d_out) / math.log(d_in / d_out)
    assert M_DOT * C_P * (T_IN - t_out) == pytest.approx(U * P * length * log_mean, rel=1e-9)


def test_fluid_heated_by_warmer_surroundings(tmp_path):
    # Cold water through a warm plant room (invented): the same exponential law holds with the sign of
    # the difference reversed (common practice, from memory).
    parameters = {**LINE, "T_s": "30 degC"}
    path = write_input(tmp_path, "warmed", parameters, "10 degC", 'reach = ["20 degC"]')
    derivation = build_sheet(path).derivation
    (reach,) = derivation.numbers.reach
    assert reach.x == pytest.approx(M_DOT * C_P / (U * P) * math.log(20 / 10), rel=1e-9)
    assert derivation.passed
