"""Forcing forms, the steady sinusoidal figures, and the kinds/new commands."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from scipy.integrate import solve_ivp

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError
from calcsheet.kinds import KIND_MODULES
from calcsheet.pipeline import build_sheet

RC = """
[sheet]
title = "forcing test"
[model]
kind = "series_rc"
[parameters]
R = "10 kohm"
C = "{C}"
[initial]
value = "1 V"
[evaluate]
at = [{at}]
[forcing]
{forcing}
"""

# Each form and the source it should produce, as a plain function of t (SI), for scipy.
FORMS = {
    "step": ('form = "step"\nbefore = "2 V"\nafter = "12 V"\nat = "0.3 s"', lambda t: 2 + 10 * (t >= 0.3)),
    "ramp": ('form = "ramp"\nstart = "1 V"\nrate = "3 V/s"\nfrom = "0.2 s"', lambda t: 1 + 3 * (t - 0.2) * (t >= 0.2)),
    "sine": (
        'form = "sine"\namplitude = "5 V"\nfrequency = "0.5 Hz"\nphase = "30 deg"\noffset = "1 V"',
        lambda t: 1 + 5 * math.sin(2 * math.pi * 0.5 * t + math.radians(30)),
    ),
    "exponential": (
        'form = "exponential"\ninitial = "10 V"\nfinal = "2 V"\ntime_constant = "0.4 s"',
        lambda t: 2 + 8 * math.exp(-t / 0.4),
    ),
    "pulse": (
        'form = "pulse"\nheight = "9 V"\nstart = "0.25 s"\nwidth = "0.5 s"',
        lambda t: 9 * ((t >= 0.25) and (t < 0.75)),
    ),
    "constant": ('form = "constant"\nvalue = "7 V"', lambda t: 7.0),
    "expression": ('form = "expression"\nexpression = "V_0*(1 - exp(-t/T_r))"', lambda t: 6 * (1 - math.exp(-t / 0.2))),
}


def write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "case.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize("form", sorted(FORMS))
def test_each_form_agrees_with_an_independent_integration(tmp_path, form):
    forcing, source = FORMS[form]
    points = [0.1, 0.5, 0.9, 1.6]
    text = RC.format(C="100 uF", at=", ".join(f'"{p} s"' for p in points), forcing=forcing)
    if form == "expression":  # an expression's own values are ordinary parameters
        text = text.replace('C = "100 uF"', 'C = "100 uF"\nV_0 = "6 V"\nT_r = "0.2 s"')
    d = build_sheet(write(tmp_path, text)).derivation
    assert d.verification.passed
    tau = 1.0  # 10 kohm * 100 uF
    result = solve_ivp(
        lambda t, v: [(source(t) - v[0]) / tau],
        (0, 1.6),
        [1.0],
        method="LSODA",
        t_eval=points,
        rtol=1e-10,
        atol=1e-12,
        max_step=0.005,
    )
    for value, expected in zip(d.numbers.values, result.y[0]):
        assert value.y == pytest.approx(expected, rel=1e-5, abs=1e-6)


def test_sinusoid_steady_state_figures(tmp_path):
    # tau = 0.2 s and f = 20 Hz: amplitude ratio 0.03976 and phase lag 87.7 degrees
    # (a university mechanical-measurements course's notes on first-order instruments; read in the source).
    forcing = 'form = "sine"\namplitude = "1 V"\nfrequency = "20 Hz"'
    path = write(tmp_path, RC.format(C="20 uF", at='"1 s"', forcing=forcing))
    sine = build_sheet(path).derivation.numbers.sine
    assert sine.amplitude_ratio == pytest.approx(0.03976, abs=5e-5)
    assert sine.phase_lag_deg == pytest.approx(87.7, abs=0.05)
    # the transient falls below 1 % after tau ln 100 = 4.6 tau (common practice, no source)
    assert sine.settled_after == pytest.approx(0.2 * math.log(100))


def test_steady_state_amplitude_is_seen_in_the_solution(tmp_path):
    forcing = 'form = "sine"\namplitude = "1 V"\nfrequency = "2 Hz"'
    late = np.linspace(8.0, 8.5, 26)  # one period, long after the transient (tau = 0.2 s)
    path = write(
        tmp_path,
        RC.format(C="20 uF", at=", ".join(f'"{t:.3f} s"' for t in late), forcing=forcing).replace(
            'value = "1 V"', 'value = "0 V"'
        ),
    )
    d = build_sheet(path).derivation
    swing = max(v.y for v in d.numbers.values)
    assert swing == pytest.approx(d.numbers.sine.amplitude_ratio, rel=2e-3)


@pytest.mark.parametrize(
    "forcing, key, fragment",
    [
        ('form = "sine"\namplitude = "5 V"\nfrequency = "3 rad/s"', "forcing.frequency", "cycles"),
        ('form = "step"\nbefore = "0 V"\nat = "1 s"', "forcing.after", "needs 'after'"),
        ('form = "wobble"', "forcing.form", "unknown form 'wobble'"),
        ('form = "step"\nafter = "3 A"\nat = "1 s"', "forcing.after", "dimension of V"),
        (
            'form = "pulse"\nheight = "3 V"\nstart = "1 s"\nwidth = "2 s"\nlength = "1 s"',
            "forcing.length",
            "unknown key",
        ),
        ('form = "expression"\nexpression = "__import__(\'os\')"', "forcing.expression", "unexpected character"),
    ],
)
def test_forcing_errors_name_the_key(tmp_path, forcing, key, fragment):
    path = write(tmp_path, RC.format(C="100 uF", at='"1 s"', forcing=forcing))
    with pytest.raises(CalcsheetError) as info:
        build_sheet(path)
    message = str(info.value)
    assert message.startswith(f"{path}: {key}: ") and fragment in message and "\n" not in message


def test_forcing_and_source_parameter_together_is_refused(tmp_path):
    text = RC.format(C="100 uF", at='"1 s"', forcing='form = "constant"\nvalue = "7 V"')
    path = write(tmp_path, text.replace('C = "100 uF"', 'C = "100 uF"\nV_s = "3 V"'))
    with pytest.raises(CalcsheetError, match="parameters.V_s: V_s is given by"):
        build_sheet(path)


def test_forcing_without_a_kind_is_refused(tmp_path):
    text = RC.format(C="100 uF", at='"1 s"', forcing='form = "constant"\nvalue = "7 V"')
    text = text.replace('kind = "series_rc"', 'equation = "R*C*dv/dt + v = 0"\nunknown = "v [V]"\nvariable = "t [s]"')
    with pytest.raises(CalcsheetError, match="forcing: a \\[forcing\\] table goes with a model kind"):
        build_sheet(write(tmp_path, text))


def test_kinds_lists_every_kind_one_line_each():
    result = CliRunner().invoke(main, ["kinds"])
    assert result.exit_code == 0
    lines = result.output.strip().splitlines()
    assert len(lines) == len(KIND_MODULES)
    assert [line.split()[0] for line in lines] == list(KIND_MODULES)


def test_unknown_kind_is_a_one_line_error():
    result = CliRunner().invoke(main, ["kinds", "nosuch"])
    assert result.exit_code == 2 and "unknown kind 'nosuch'" in result.output


def test_new_does_not_overwrite(tmp_path):
    target = tmp_path / "mine.toml"
    target.write_text("keep me")
    result = CliRunner().invoke(main, ["new", "series_rc", str(target)])
    assert result.exit_code == 2 and target.read_text() == "keep me"
