"""Classification and each derivation step, on small models written for the tests."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import sympy as sp

from calcsheet.derive import budget
from calcsheet.derive.classify import classify
from calcsheet.derive.derivation import derive
from calcsheet.derive.integrating_factor import solve
from calcsheet.load.loader import load_model

TEMPLATE = """
[sheet]
title = "test"
[model]
equation = "{equation}"
unknown = "{unknown}"
variable = "{variable}"
[parameters]
{parameters}
[initial]
value = "{initial}"
[evaluate]
at = [{at}]
"""


def model(tmp_path: Path, equation, parameters="", unknown="y [m]", variable="t [s]", initial="1 m", at='"1 s"'):
    path = tmp_path / "m.toml"
    path.write_text(
        TEMPLATE.format(
            equation=equation, parameters=parameters, unknown=unknown, variable=variable, initial=initial, at=at
        ),
        encoding="utf-8",
    )
    return load_model(path)


def test_homogeneous_constant_coefficient(tmp_path):
    m = model(tmp_path, "tau*dy/dt + y = 0", 'tau = "2 s"')
    c = classify(m)
    tau = sp.Symbol("tau", positive=True)
    assert (c.homogeneous, c.constant_coefficients) == (True, True)
    assert sp.simplify(c.p - 1 / tau) == 0 and c.r == 0


def test_forced_varying_coefficient(tmp_path):
    m = model(tmp_path, "(L_0 + k*t)*dy/dt + q*y = q*Y_in", 'L_0 = "2 m*s"\nk = "1 m"\nq = "3 m"\nY_in = "4 m"')
    c = classify(m)
    assert not c.homogeneous and not c.constant_coefficients


def test_integrating_factor_and_split(tmp_path):
    m = model(tmp_path, "tau*dy/dt + y = Y_s", 'tau = "2 s"\nY_s = "5 m"')
    s = solve(m, classify(m))
    t = m.variable.symbol
    tau, Y_s = sp.symbols("tau Y_s", positive=True)
    assert sp.simplify(s.mu - sp.exp(t / tau)) == 0
    assert sp.simplify(s.forced - Y_s) == 0
    assert sp.simplify(s.natural - (s.y0 - Y_s) * sp.exp(-t / tau)) == 0
    assert sp.simplify(s.particular - s.natural - s.forced) == 0
    assert s.closed_form


def test_forcing_at_the_natural_rate_has_no_division_by_zero(tmp_path):
    # y' + y/tau = A e^(-t/tau)/tau: resonant forcing; the solution has the t e^(-t/tau) form.
    m = model(tmp_path, "tau*dy/dt + y = A*exp(-t/tau)", 'tau = "2 s"\nA = "3 m"')
    s = solve(m, classify(m))
    t = m.variable.symbol
    tau, A = sp.symbols("tau A", positive=True)
    assert sp.simplify(s.forced - A * t * sp.exp(-t / tau) / tau) == 0


def test_numbers_time_constant_final_value_and_reach(tmp_path):
    m = model(tmp_path, "tau*dy/dt + y = Y_s", 'tau = "2 s"\nY_s = "5 m"', initial="0 m", at='"2 s"')
    path = Path(m.path)
    path.write_text(path.read_text() + 'reach = ["2.5 m", "6 m"]\n')
    d = derive(load_model(path))
    assert d.numbers.time_constant == pytest.approx(2.0)
    assert d.numbers.final_value == pytest.approx(5.0)
    # common practice, no source: a first-order step response is at 1 - e^-1 = 63.2 % after one time constant
    assert d.numbers.values[0].y == pytest.approx(5.0 * (1 - math.exp(-1)), rel=1e-12)
    # half-way at t = tau ln 2 (common practice, no source)
    assert d.numbers.reach[0].x == pytest.approx(2.0 * math.log(2), rel=1e-10)
    assert d.numbers.reach[1].x is None and d.numbers.reach[1].code == "settles_short"  # 6 m is past the final 5 m
    assert d.verification.passed


def test_growing_response_has_no_time_constant(tmp_path):
    m = model(tmp_path, "tau*dy/dt = y", 'tau = "2 s"')
    d = derive(m)
    assert d.numbers.time_constant is None and d.numbers.final_value is None


def test_no_closed_form_uses_quadrature_and_still_verifies(tmp_path):
    m = model(tmp_path, "tau*dy/dt + y = Y*exp(-(t/w)^2)", 'tau = "1 s"\nY = "1 m"\nw = "1 s"', at='"1 s", "3 s"')
    d = derive(m)
    assert d.verification.passed
    # y' + y = exp(-t^2), y(0) = 1: y = e^-t (1 + (sqrt(pi)/2) e^(1/4) (erf(t - 1/2) + erf(1/2))).
    # erf via Python's math module (Abramowitz & Stegun 7.1 values), independent of sympy.
    for value in d.numbers.values:
        t = value.at.si
        exact = math.exp(-t) * (1 + math.sqrt(math.pi) / 2 * math.exp(0.25) * (math.erf(t - 0.5) + math.erf(0.5)))
        assert value.y == pytest.approx(exact, rel=1e-9)


def test_time_budget_falls_back_to_quadrature(tmp_path):
    # sympy caches what it integrated before in this process; a cached answer would take no CPU time at all
    sp.core.cache.clear_cache()
    # a squared sine: exp(t) sin(w t) alone is written down without sympy's integrator (derive/exp_sinusoid.py)
    m = model(tmp_path, "tau*dy/dt + y = Y*sin(w*t)^2", 'tau = "1 s"\nY = "1 m"\nw = "2 rad/s"', at='"2 s"')
    s = solve(m, classify(m), forcing_seconds=1e-4)
    assert not s.closed_form and s.fallback_codes == ("budget_exceeded",)


def test_budget_interrupts_a_long_step():
    def forever():
        while True:
            pass

    result, finished = budget.within(0.05, forever, "fallback")
    assert (result, finished) == ("fallback", False)


def test_a_budget_counts_this_process_s_cpu_time_not_the_wall_clock():
    """Time the process spends waiting (here asleep; on a loaded machine, behind other processes) takes nothing
    from a budget, so a sheet does not change with the machine's load: half a second asleep finishes inside a
    budget of a tenth of a second of CPU."""
    import time

    assert budget.within(0.1, lambda: time.sleep(0.5) or "finished", "fell back") == ("finished", True)


def test_an_inner_budget_does_not_cancel_the_outer_one():
    # The outer budget (0.2 s) must still interrupt the loop that follows a finished inner step.
    def inner_then_forever():
        budget.within(5.0, lambda: None, None)
        while True:
            pass

    assert budget.within(0.2, inner_then_forever, "outer fell back") == ("outer fell back", False)


def test_an_outer_budget_expiring_inside_an_inner_step_is_the_outer_one_s():
    # The inner step has a long budget of its own; the outer one runs out first and its within takes it.
    def forever():
        while True:
            pass

    def inner():
        return budget.within(30.0, forever, "inner fell back")

    assert budget.within(0.1, inner, "outer fell back") == ("outer fell back", False)


def test_a_budget_off_the_main_thread_is_refused_loudly():
    import threading

    caught = []
    worker = threading.Thread(target=lambda: caught.append(_raises(lambda: budget.within(1.0, lambda: 1, 0))))
    worker.start()
    worker.join()
    assert caught == [budget.BudgetUnavailable]


def _raises(thunk):
    try:
        thunk()
    except Exception as error:  # the type is the answer
        return type(error)
    return None


def test_a_point_decides_only_a_value_shown_away_from_zero():
    from calcsheet.derive.classify import _is_zero, nonzero_at_a_point

    t, a = sp.symbols("t a", positive=True)
    assert nonzero_at_a_point(a * sp.sin(t) + 1)
    # zero by an identity, with 15-digit coefficients: round-off is not taken for a value
    assert not nonzero_at_a_point(3.1 * sp.sin(t) ** 2 + 3.1 * sp.cos(t) ** 2 - 3.1)
    assert nonzero_at_a_point(1 / (t - sp.Rational(3, 7)))  # a pole at the first point: the second decides
    assert nonzero_at_a_point(sp.sqrt(t - 5))  # complex there, and not zero
    # the point never turns a zero into a non-zero: the identity still goes to simplify
    assert _is_zero(a * sp.sin(t) ** 2 + a * sp.cos(t) ** 2 - a)
    assert not _is_zero(a * sp.sin(t) - a)


def test_a_sine_forced_model_is_not_homogeneous_and_a_zero_source_is(tmp_path):
    m = model(tmp_path, "tau*dy/dt + y = Y*sin(w*t + q)", 'tau = "1 s"\nY = "1 m"\nw = "2 rad/s"\nq = "0.5"')
    assert not classify(m).homogeneous and not classify(m).homogeneous_with_values
    zero = model(tmp_path, "tau*dy/dt + y = Y*sin(w*t)", 'tau = "1 s"\nY = "0 m"\nw = "2 rad/s"')
    assert not classify(zero).homogeneous and classify(zero).homogeneous_with_values
