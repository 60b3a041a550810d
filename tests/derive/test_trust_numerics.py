"""Numerics and verdicts that must hold on any machine: each test names the class of input it covers.

Scenarios are invented for these tests. Expected values come from scipy, mpmath or sympy computed
here independently of calcsheet, from the arithmetic of the inputs, or are marked common practice.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import mpmath
import numpy as np
import pytest
from scipy import integrate, optimize

from calcsheet.derive.derivation import derive
from calcsheet.derive.numbers import APPROACHES_FINAL, MODEL_STOPS, MOVES_AWAY, first_crossing
from calcsheet.derive.verify import AGREEMENT, ATOL_SHARE, difference_measure
from calcsheet.errors import ModelRefused
from calcsheet.pipeline import build_sheet, render
from calcsheet.load.loader import load_model
from calcsheet.sheet.check_words import detail_words, method_words

ROOT = Path(__file__).resolve().parents[2]
COMMAND = str(Path(sys.executable).parent / "calcsheet")  # the installed command line


def write(tmp_path: Path, text: str, name: str = "case") -> Path:
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def free(
    equation: str,
    parameters: str,
    initial: str,
    at: str = '"1 s"',
    extra: str = "",
    unknown: str = "y [1]",
    variable: str = "t [s]",
    initial_at: str = "0 s",
) -> str:
    return f"""
[sheet]
title = "test case"
[model]
equation = "{equation}"
unknown = "{unknown}"
variable = "{variable}"
[parameters]
{parameters}
[initial]
at = "{initial_at}"
value = "{initial}"
[evaluate]
at = [{at}]
{extra}
"""


def derived(tmp_path, text):
    return derive(load_model(write(tmp_path, text)))


# --------------------------------------------------------------- class: error measure at a zero of y
def test_error_measure_is_the_mixed_norm_the_integrator_controls():
    # Common practice, no source (the error norm of ODE solvers, as in scipy's solve_ivp: rtol*|y| + atol).
    # Round-off of 2.6e-15 at the instant a 6 kg tank runs dry (y = 5.9e-16): against the old floor of
    # 1e-9 x size it read as 4e-7 to 2e-5 depending on the last bits; against |y| + 0.01 x size it is 4e-14.
    compared = [(4500.0, 5.88e-16, 3.2e-15)]
    measure = difference_measure(compared, [6.0])
    assert measure == pytest.approx((3.2e-15 - 5.88e-16) / (3.2e-15 + ATOL_SHARE * 6.0))
    assert measure < 1e-12 < AGREEMENT
    # 29 time constants out a decaying response is 2.5e-13 of its start: a difference of 1e-3 of its own
    # value is 2.5e-16 of its size and agrees; a wrong value of the response's own size does not.
    size, far = 6.0, 6.0 * math.exp(-29)
    assert difference_measure([(29.0, far * 1.001, far)], [size]) < AGREEMENT
    assert difference_measure([(1.0, 2.0, 1.0)], [size]) > AGREEMENT
    assert difference_measure([(1.0, math.nan, 1.0)], [size]) == math.inf


DRAINING = """
[sheet]
title = "Rinse-water tank drawn down (test)"
[model]
kind = "mixing_tank"
variable = "t [min]"
[parameters]
q_in = "0.4 m^3/min"
q_out = "0.6 m^3/min"
c_in = "0.2 kg/m^3"
V_0 = "15 m^3"
[initial]
value = "6 kg"
[evaluate]
at = ["30 min", "60 min"]
"""


def test_singular_point_at_the_validity_limit_is_found_and_not_checked(tmp_path):
    # Arithmetic of the inputs: V = 0 at V_0/(q_out - q_in) = 15/(0.2/60) = 4500 s, where the tank runs empty
    # and p = q_out/V has its pole; the check points stop before it.
    d = derived(tmp_path, DRAINING)
    assert d.numbers.domain_end == pytest.approx(4500.0, rel=1e-9)
    assert d.numbers.valid_until[0] == pytest.approx(4500.0, rel=1e-9)
    assert all(x < 4500.0 for x, _, _ in d.verification.compared)
    assert d.verification.passed and d.passed
    assert "against |y| + 0.01" in detail_words(d.verification.integration)


# --------------------------------------------------------------- class: removable singularities (0/0)
def test_sinc_forcing_at_its_removable_point(tmp_path):
    # tau y' + y = sin(w t)/(w t), y(0) = 0: y(t) = integral_0^t exp(-(t - s)/tau) sinc(s)/tau ds, by scipy
    # quad with numpy's sinc (defined at 0), independently of calcsheet.
    tau, w = 2.0, 3.0
    d = derived(
        tmp_path, free("tau*dy/dt + y = sin(w*t)/(w*t)", 'tau = "2 s"\nw = "3 rad/s"', "0", '"0 s", "1 s", "5 s"')
    )
    assert d.verification.passed
    for value in d.numbers.values:
        t = value.at.si
        expected = (
            integrate.quad(
                lambda s: math.exp(-(t - s) / tau) * np.sinc(w * s / math.pi) / tau, 0, t, epsabs=0, epsrel=1e-13
            )[0]
            if t > 0
            else 0.0
        )
        assert value.y == pytest.approx(expected, rel=1e-9, abs=1e-15)


def test_removable_singularity_in_a_closed_form_constant(tmp_path):
    # tau y' + y = T (1 - exp(-t/T))/t; the forcing tends to 1 at t = 0. Oracle: mpmath quad of the
    # convolution integral, with the forcing written as its series-safe form -T expm1(-t/T)/t.
    tau, T = 2.0, 3.0
    d = derived(tmp_path, free("tau*dy/dt + y = T*(1 - exp(-t/T))/t", 'tau = "2 s"\nT = "3 s"', "0", '"1 s", "5 s"'))
    assert d.verification.integration.passed
    for value in d.numbers.values:
        t = value.at.si
        expected = mpmath.quad(lambda s: mpmath.exp(-(t - s) / tau) * (-T * mpmath.expm1(-s / T) / s) / tau, [0, t])
        assert value.y == pytest.approx(float(expected), rel=1e-9)


@pytest.mark.parametrize("tau", [2.0, 10.0])  # the forcing's own time constant T = 3 s below and above tau
def test_an_antiderivative_with_no_value_at_the_initial_point_gives_no_nan_on_the_sheet(tmp_path, tau):
    # The antiderivative sympy finds, T (Ei(t/tau) - Ei(t (1/tau - 1/T)))/tau, is infinite at t = 0 term by
    # term; the constant of integration must not be taken from it there (the sheet once printed K = nan).
    # Oracle: mpmath quad of the convolution integral, as in the test above.
    T = 3.0
    path = write(
        tmp_path, free("tau*dy/dt + y = T*(1 - exp(-t/T))/t", f'tau = "{tau} s"\nT = "{T} s"', "0.5", '"1 s", "20 s"')
    )
    built = build_sheet(path)
    text = render(built.sheet, ("txt",))["txt"]
    assert "nan" not in text.lower().replace("nanosecond", "")
    assert built.derivation.verification.passed and built.derivation.solution.open_terms
    assert built.derivation.solution.fallback_codes == ("antiderivative_not_finite_at_start",)
    for value in built.derivation.numbers.values:
        t = value.at.si
        forced = mpmath.quad(lambda s: mpmath.exp(-(t - s) / tau) * (-T * mpmath.expm1(-s / T) / s) / tau, [0, t])
        assert value.y == pytest.approx(0.5 * math.exp(-t / tau) + float(forced), rel=1e-9)


# ------------------------------------------------------------ class: a response past the floating-point range
@pytest.mark.parametrize(
    "kind_input",
    [
        free("dy/dt = k*y", 'k = "1e3 1/s"', "1", '"1 s", "10 s"'),
        # a lumped body with a negative film coefficient heats without bound (found by the check campaign)
        None,
    ],
)
def test_a_response_that_overflows_before_a_point_asked_about_is_refused(tmp_path, kind_input):
    from calcsheet.kinds.catalogue import starter_text

    text = kind_input or starter_text("lumped_body").replace('value = "25 W/(m^2*K)"', 'value = "-1.5e10 W/(m^2*K)"')
    assert "-1.5e10" in text or kind_input
    result = subprocess.run([COMMAND, "check", str(write(tmp_path, text))], capture_output=True, text=True)
    assert result.returncode == 2, result.stderr
    assert "floating-point range" in result.stderr and "internal error" not in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1


def test_an_overflow_past_every_point_asked_about_only_ends_the_level_search(tmp_path):
    # y = exp(1000 t) passes 1.7e308 near t = ln(1.7e308)/1000 = 0.7097 s (arithmetic of the input); the
    # value at 0.5 s is exp(500); 1e29 is reached at ln(1e29)/1000; -5 is never reached, and the search
    # says it stopped where the response left the floating-point range.
    d = derived(tmp_path, free("dy/dt = k*y", 'k = "1e3 1/s"', "1", '"0.5 s"', extra='reach = ["1e29", "-5"]'))
    assert d.numbers.values[0].y == pytest.approx(math.exp(500), rel=1e-12)
    assert d.numbers.reach[0].x == pytest.approx(math.log(1e29) / 1000, rel=1e-9)
    assert d.numbers.reach[1].x is None and d.numbers.reach[1].code == "overflows"
    assert d.numbers.reach[1].stop == pytest.approx(math.log(1.7e308) / 1000, rel=1e-5)


def test_forcing_with_no_finite_limit_at_the_initial_point_is_refused(tmp_path):
    with pytest.raises(ModelRefused) as caught:
        derived(tmp_path, free("tau*dy/dt + y = T/t", 'tau = "2 s"\nT = "1 s"', "0"))
    assert "initial point" in str(caught.value) and caught.value.exit_code == 2


# --------------------------------------------------------------- class: zero divisors, complex or infinite p
@pytest.mark.parametrize(
    "equation, parameters, name",
    [
        ("dv/dt + v/(R*C) = 0", 'R = "0 ohm"\nC = "1 uF"', "R"),  # p = zoo
        ("tau*dy/dt + y = sin(t/L)", 'tau = "2 s"\nL = "0 s"', "L"),  # a zero length scale: sin(zoo*t)
    ],
)
def test_zero_divisor_is_refused_naming_the_parameter(tmp_path, equation, parameters, name):
    unknown = "v [V]" if "dv" in equation else "y [1]"
    with pytest.raises(ModelRefused) as caught:
        derived(tmp_path, free(equation, parameters, "1 V" if "dv" in equation else "0", unknown=unknown))
    assert caught.value.key == f"parameters.{name}"
    assert f"{name} = 0 makes the equation singular" in caught.value.message


# --------------------------------------------------------------- class: a huge span over the time constant
def test_nanosecond_time_constant_seen_over_an_hour_uses_a_stiff_method(tmp_path):
    # tau y' + y = 1 + t/T, y(0) = 0: y = 1 + (t - tau)/T - (1 - tau/T) exp(-t/tau) (common practice, no
    # source: the first-order lag of a ramp). The span is 3.6e12 time constants.
    tau, T, t = 1e-9, 10.0, 3600.0
    d = derived(tmp_path, free("tau*dy/dt + y = 1 + t/T", 'tau = "1 ns"\nT = "10 s"', "0", '"1 h"'))
    method = method_words(d.verification.integration)
    assert "Radau" in method and "e+12 natural scales" in method
    assert d.verification.passed
    assert d.numbers.values[0].y == pytest.approx(1 + (t - tau) / T, rel=1e-12)


# --------------------------------------------------------------- class: forcing jumps (step and pulse edges)
def test_integration_restarts_at_the_edges_of_a_pulse(tmp_path):
    # tau y' + y = A on [t1, t2), y(0) = 0 (common practice, no source: the lag's response to a pulse).
    tau, t1, t2 = 2.0, 1.0, 1.7
    d = derived(
        tmp_path,
        free(
            "tau*dy/dt + y = A*step(t - t1) - A*step(t - t2)",
            'tau = "2 s"\nA = "1"\nt1 = "1 s"\nt2 = "1.7 s"',
            "0",
            '"1.5 s", "3 s", "60 s"',
        ),
    )
    assert "restarted at each jump of the forcing" in method_words(d.verification.integration)
    assert d.verification.passed

    def exact(t):
        if t < t1:
            return 0.0
        rise = 1 - math.exp(-(min(t, t2) - t1) / tau)
        return rise if t < t2 else rise * math.exp(-(t - t2) / tau)

    for value in d.numbers.values:
        assert value.y == pytest.approx(exact(value.at.si), rel=1e-9, abs=1e-300)


# --------------------------------------------------------------- class: a growing solution, cancelling slope
def test_growing_solution_keeps_the_coefficient_of_its_slope(tmp_path):
    # tau y' = y, y(0) = 1e20: y = 1e20 exp(t/tau). F(t, y, 1) - F(t, y, 0) = (tau - y) - (-y) is 0 in
    # doubles at y = 1e20, which divided by zero; the slope is taken as -(b y + c)/a instead.
    d = derived(tmp_path, free("tau*dy/dt = y", 'tau = "2 s"', "1e20", '"10 s", "60 s"'))
    assert d.verification.passed
    assert [v.y for v in d.numbers.values] == pytest.approx([1e20 * math.exp(5), 1e20 * math.exp(30)], rel=1e-12)


# --------------------------------------------------------------- class: levels (the reach rule)
def test_a_level_equal_to_the_initial_value_is_not_reached_at_the_initial_point(tmp_path):
    # 0.1 is the initial value and a double that mpmath and numpy may place on either side of y(0).
    text = free("tau*dy/dt + y = 0.3", 'tau = "2 s"', "0.1", extra='reach = ["0.1", "0.3", "0.2"]')
    reach = derived(tmp_path, text).numbers.reach
    assert reach[0].x is None and reach[0].code == MOVES_AWAY
    # the final value, which the response only approaches, is not reached either
    assert reach[1].x is None and reach[1].code == APPROACHES_FINAL
    # y = 0.3 - 0.2 exp(-t/2) = 0.2 at t = 2 ln 2 (common practice, no source)
    assert reach[2].x == pytest.approx(2 * math.log(2), rel=1e-12)


def test_a_response_that_starts_on_a_level_reaches_it_when_it_comes_back_across(tmp_path):
    # tau y' + y = sin(w t), y(0) = 0: the response leaves 0 and crosses it again later; the crossing is
    # found by scipy's brentq on the closed form y = (sin wt - wt cos wt ... ) written here from
    # y = (sin(wt) - w tau cos(wt) + w tau exp(-t/tau)) / (1 + (w tau)^2) (common practice, no source).
    tau, w = 1.0, 2.0
    d = derived(tmp_path, free("tau*dy/dt + y = sin(w*t)", 'tau = "1 s"\nw = "2 rad/s"', "0", extra='reach = ["0"]'))

    def y(t):
        return (math.sin(w * t) - w * tau * math.cos(w * t) + w * tau * math.exp(-t / tau)) / (1 + (w * tau) ** 2)

    first_return = optimize.brentq(y, 1.0, 2.5, xtol=1e-15)
    assert d.numbers.reach[0].x == pytest.approx(first_return, rel=1e-10)
    assert d.numbers.reach[0].x > 0


def test_first_crossing_never_returns_a_point_on_the_level_without_a_crossing():
    grid = np.linspace(0.0, 10.0, 11)
    flat = np.full(11, 0.25)
    assert first_crossing(0.25, lambda s: 0.25, grid, flat) is None
    assert first_crossing(0.25, lambda s: 0.25, grid[:1], flat[:1]) is None  # one point: no crossing
    rising = 0.25 + 0.1 * grid
    assert first_crossing(0.25, lambda s: 0.25 + 0.1 * s, grid, rising) is None  # leaves and never returns


# --------------------------------------------------------------- class: verdicts that hide a broken model
LUMPED = """
[sheet]
title = "Thick block (test)"
[model]
kind = "lumped_body"
unknown = "T [degC]"
variable = "t [min]"
[parameters]
rho = "7850 kg/m^3"
V = "1e-2 m^3"
c_p = "490 J/(kg*K)"
h = "200 W/(m^2*K)"
A = "0.1 m^2"
k = "45 W/(m*K)"
T_inf = "22 degC"
[initial]
value = "480 degC"
[[criteria]]
text = "Cool enough after 100 min"
check = "T(100 min) <= 400 degC"
"""


def test_a_model_that_fails_its_validity_check_cannot_pass(tmp_path):
    # Bi = h (V/A)/k = 200 * 0.1 / 45 = 0.444 > 0.1 (lumped-capacitance limit, common practice; from memory).
    built = build_sheet(write(tmp_path, LUMPED))
    d = built.derivation
    assert not d.passed
    (verdict,) = d.numbers.verdicts
    assert verdict.status == "not assessed" and verdict.code == "model_not_valid" and not verdict.passed
    record = json.loads(render(built.sheet, ("json",))["json"])
    assert record["passed"] is False and record["kind"]["valid"] is False
    assert record["criteria"][0]["status"] == "not assessed"
    assert record["criteria"][0]["not_assessed_because"] == "model_not_valid"
    assert any(
        f["severity"] == "invalid" and f["code"] == "lumped_body.biot_exceeded" for f in record["kind"]["findings"]
    )
    text = render(built.sheet, ("txt",))["txt"]
    assert "The model is not valid for this case" in text and "The criterion passes" not in text
    assert "not assessed (model not valid)" in text
    result = subprocess.run([COMMAND, "check", str(tmp_path / "case.toml")], capture_output=True, text=True, cwd=ROOT)
    assert result.returncode == 1, result.stderr


OVERFLOWING = """
[sheet]
title = "Dosing tank topped up (test)"
[model]
kind = "mixing_tank_concentration"
unknown = "c [kg/m^3]"
variable = "t [min]"
[parameters]
q_in = "0.5 m^3/min"
q_out = "0.2 m^3/min"
c_in = "1.5 kg/m^3"
V_0 = "6 m^3"
V_max = "25 m^3"
[initial]
value = "0.5 kg/m^3"
[evaluate]
at = ["20 min", "2 h"]
reach = ["1.45 kg/m^3"]
[[criteria]]
text = "Concentration at 2 h"
check = "c(2 h) <= 1.6 kg/m^3"
[[criteria]]
text = "Dosing level soon"
check = "reach(1.45 kg/m^3) <= 30 min"
[[criteria]]
text = "Dosing level late"
check = "reach(1.45 kg/m^3) >= 100 min"
"""


def test_points_past_the_validity_limit_are_marked_and_not_assessed(tmp_path):
    # Overflow at (25 - 6)/(0.3/60) = 3800 s = 63.3 min (arithmetic of the inputs). c = 1.5 - (6/V)^(5/3)
    # (the balance integrated, common practice) is 1.407 kg/m^3 at the overflow: 1.45 is not reached first.
    built = build_sheet(write(tmp_path, OVERFLOWING))
    num = built.derivation.numbers
    assert [v.applies for v in num.values] == [True, False]
    assert num.reach[0].x is None and num.reach[0].code == MODEL_STOPS
    assert num.reach[0].stop == pytest.approx(3800.0, rel=1e-9)
    at_2h, soon, late = num.verdicts
    assert at_2h.status == "not assessed" and at_2h.code == "past_validity_limit"
    assert soon.status == "fail"  # not reached by 63 min, so not by 30 min either
    assert late.status == "not assessed"  # it may be reached after the model stops holding
    assert not built.derivation.passed
    text = render(built.sheet, ("txt",))["txt"]
    assert "past the validity limit: does not apply" in text
    assert "where the model stops holding (the tank overflows)" in text
    assert "settles at its final value" not in text


# --------------------------------------------------------------- class: quadrature error as a bound
def test_quadrature_error_estimate_is_a_power_of_ten_bound(tmp_path):
    built = build_sheet(
        write(tmp_path, free("tau*dy/dt + y = sin(w*t)/(w*t)", 'tau = "2 s"\nw = "3 rad/s"', "0", '"5 s"'))
    )
    assert built.derivation.quadrature is not None
    record = json.loads(render(built.sheet, ("json",))["json"])
    estimate = record["solution"]["quadrature"]["largest_error_estimate"]
    assert estimate == "0" or (estimate.startswith("below 1e") and float(estimate.split()[-1]) > 0)
    text = render(built.sheet, ("txt",))["txt"]
    assert f"Largest error estimate over every evaluation made for this sheet: {estimate}" in text


# --------------------------------------------------------------- class: warnings leaking to the user
@pytest.mark.parametrize(
    "equation, parameters",
    [
        ("tau*dy/dt + y = sin(w*t)/(w*t)", 'tau = "2 s"\nw = "3 rad/s"'),  # QUADPACK round-off warnings
        ("tau*dy/dt + y = 1 + t/T", 'tau = "1 ns"\nT = "10 s"'),  # overflow warnings of an explicit integrator
    ],
)
def test_no_numeric_warning_reaches_the_terminal(tmp_path, equation, parameters):
    path = write(tmp_path, free(equation, parameters, "0", '"1 h"' if "ns" in parameters else '"5 s"'))
    result = subprocess.run([COMMAND, "check", str(path)], capture_output=True, text=True, cwd=ROOT)
    assert result.returncode == 0, result.stdout + result.stderr
    assert "PASS" in result.stdout
    assert result.stderr == "" and len(result.stdout.splitlines()) == 1
