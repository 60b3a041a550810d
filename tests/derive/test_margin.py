"""Design margin (derive/margin.py) against references outside it.

- sensitivities: central differences of scipy solve_ivp integrations of each Model's own equation;
- worst case: brute-force sampling of the tolerance box (>= 1,000 points) with the closed form evaluated by
  numpy, written here from the equation (common practice, no source), not taken from calcsheet;
- limiting values: brentq on scipy integrations, and the RC bleed-down R = t / (C ln(v0/v1)) derived by hand
  (from memory of the standard result: v = v0 exp(-t/(RC)), solved for R).

Tolerances follow from what each method was asked for: the integrations run at rtol 1e-11, the differences
take a step of 1e-4 of the value (truncation about 1e-8 relative), so agreement to 1e-6 relative is expected.
"""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import mpmath
import numpy as np
import pytest
from scipy import integrate, optimize

from calcsheet.derive.derivation import derive
from calcsheet.derive.margin import (
    BRACKETED,
    CORNERS,
    DIFFERENCE,
    DIFFERENCE_STEP,
    EVALUATION_PRECISION,
    FLAT,
    IMPLICIT,
    SOLVED,
    SYMBOLIC,
    find_margin,
)
from calcsheet.derive.piecewise import derive_piecewise
from calcsheet.load.loader import load_model

ROOT = Path(__file__).resolve().parents[2]
RTOL = 1e-6

RC = """
[sheet]
title = "Bleed-down with tolerances (test)"
[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = { value = "47 kohm", tolerance = "5 %" }
C = { value = "1000 uF", min = "900 uF", max = "1200 uF" }
[initial]
value = "400 V"
[evaluate]
at = ["30 s"]
reach = ["100 V"]
[[criteria]]
text = "bled down"
check = "v(60 s) <= 50 V"
[[criteria]]
text = "below 100 V soon"
check = "reach(100 V) <= 80 s"
"""


@pytest.fixture(scope="module")
def rc(tmp_path_factory):
    path = tmp_path_factory.mktemp("rc") / "rc.toml"
    path.write_text(RC)
    model = load_model(path)
    d = derive(model)
    return model, d, find_margin(d)


def rc_solution(R: float, C: float, v0: float = 400.0):
    """v(t) of R C dv/dt + v = 0 by scipy, with the time a level is first reached as an event."""
    return lambda t_end, level=None: integrate.solve_ivp(
        lambda t, v: -v / (R * C),
        (0.0, t_end),
        [v0],
        rtol=1e-11,
        atol=1e-12,
        dense_output=True,
        events=None if level is None else _level_event(level),
    )


def _level_event(level):
    event = lambda t, v: v[0] - level  # noqa: E731
    event.terminal = True
    return event


def _value(sol, t):
    return float(sol.sol(t)[0])


def _rc_quantity(name: str, R: float, C: float) -> float:
    solve = rc_solution(R, C)
    if name == "v(60 s)":
        return _value(solve(60.0), 60.0)
    if name == "v(30 s)":
        return _value(solve(30.0), 30.0)
    if name == "reach(100 V)":
        return float(solve(5000.0, 100.0).t_events[0][0])
    raise KeyError(name)


@pytest.mark.parametrize("quantity", ["v(60 s)", "v(30 s)", "reach(100 V)"])
@pytest.mark.parametrize("parameter", ["R", "C"])
def test_rc_symbolic_sensitivities_against_scipy_differences(rc, quantity, parameter):
    model, d, margin = rc
    q = next(
        i
        for i, probe in enumerate(margin.quantities)
        if probe.criterion.check.startswith(quantity) or _probe_name(probe, model) == quantity
    )
    s = next(s for s in margin.sensitivities if s.quantity == q and s.parameter == parameter)
    assert s.method in (SYMBOLIC, IMPLICIT)
    values = {p.name: p.si for p in model.parameters}
    h = 1e-4 * values[parameter]
    up, down = dict(values), dict(values)
    up[parameter] += h
    down[parameter] -= h
    reference = (_rc_quantity(quantity, up["R"], up["C"]) - _rc_quantity(quantity, down["R"], down["C"])) / (2 * h)
    assert s.derivative == pytest.approx(reference, rel=RTOL)


def _probe_name(probe, model) -> str:
    c = probe.criterion
    if probe.subject == "value":
        return f"v({c.argument.text})"
    if probe.subject == "reach":
        return f"reach({c.argument.text})"
    return probe.subject


def test_rc_worst_case_against_brute_force_sampling(rc):
    """The worst v(60 s) over a 40 x 40 grid of the box (1,600 points, corners included) by the closed form."""
    model, d, margin = rc
    R = np.linspace(47e3 * 0.95, 47e3 * 1.05, 40)
    C = np.linspace(900e-6, 1200e-6, 40)
    RR, CC = np.meshgrid(R, C)
    v60 = 400.0 * np.exp(-60.0 / (RR * CC))
    worst = margin.worst[0]
    assert worst.method == CORNERS
    assert worst.value == pytest.approx(float(v60.max()), rel=1e-9)
    assert dict(worst.corner) == {"R": "max", "C": "max"}
    assert not worst.passed and worst.margin == pytest.approx(50.0 - float(v60.max()), rel=1e-9)
    reach = np.log(400.0 / 100.0) * RR * CC  # t at v = 100 V: RC ln(v0/v1)
    assert margin.worst[1].value == pytest.approx(float(reach.max()), rel=1e-9)
    assert margin.worst[1].passed == (float(reach.max()) <= 80.0)


def test_rc_limiting_value_is_the_hand_derived_closed_form(rc):
    """R = t / (C ln(v0/v1)): from memory of the standard result."""
    model, d, margin = rc
    limits = {lv.parameter: lv for lv in margin.limits[0]}
    assert limits["R"].method == SOLVED
    assert limits["R"].value == pytest.approx(60.0 / (1000e-6 * math.log(400.0 / 50.0)), rel=1e-12)
    assert limits["C"].value == pytest.approx(60.0 / (47e3 * math.log(400.0 / 50.0)), rel=1e-12)
    assert limits["R"].equation is not None and limits["R"].direction == "fall"


def test_rc_limiting_value_against_bracketing_on_scipy(rc):
    model, d, margin = rc
    reference = optimize.brentq(lambda C: _rc_quantity("reach(100 V)", 47e3, C) - 80.0, 1e-4, 5e-3, xtol=1e-15)
    found = next(lv for lv in margin.limits[1] if lv.parameter == "C")
    assert found.value == pytest.approx(reference, rel=RTOL)


# ----------------------------------------------------------------------------- a kind, with a bracketed limit
@pytest.fixture(scope="module")
def flange():
    model = load_model(ROOT / "inputs" / "flange-cool-down.toml")
    d = derive(model)
    return model, d, find_margin(d)


def _flange_T(values: dict, t_end: float, T0: float) -> float:
    """rho V c_p dT/dt = -h A (T - T_inf), integrated by scipy (the lumped body's law, common practice)."""
    k = values["h"] * values["A"] / (values["rho"] * values["V"] * values["c_p"])
    sol = integrate.solve_ivp(lambda t, T: -k * (T - values["T_inf"]), (0.0, t_end), [T0], rtol=1e-11, atol=1e-10)
    return float(sol.y[0, -1])


def test_flange_limit_of_the_film_coefficient_against_bracketing_on_scipy(flange):
    model, d, margin = flange
    values = {p.name: p.si for p in model.parameters}
    T0 = model.initial_value.si
    k = next(i for i, c in enumerate(model.criteria) if c.check.startswith("T(45 min)"))
    reference = optimize.brentq(
        lambda h: _flange_T({**values, "h": h}, 45 * 60.0, T0) - (60 + 273.15), 5.0, 15.0, xtol=1e-12
    )
    found = next(lv for lv in margin.limits[k] if lv.parameter == "h")
    assert found.method == BRACKETED
    assert found.value == pytest.approx(reference, rel=RTOL)


def test_flange_worst_case_against_brute_force_sampling(flange):
    model, d, margin = flange
    values = {p.name: p.si for p in model.parameters}
    T0 = model.initial_value.si
    h = np.linspace(11.0, 20.0, 32)
    T_inf = np.linspace(values["T_inf"] - 5, values["T_inf"] + 5, 32)
    H, TI = np.meshgrid(h, T_inf)  # 1,024 points
    T45 = TI + (T0 - TI) * np.exp(-H * values["A"] / (values["rho"] * values["V"] * values["c_p"]) * 45 * 60.0)
    k = next(i for i, c in enumerate(model.criteria) if c.check.startswith("T(45 min)"))
    assert margin.worst[k].value == pytest.approx(float(T45.max()), rel=1e-9)
    assert not margin.worst[k].passed
    assert dict(margin.worst[k].corner) == {"h": "min", "T_inf": "max"}


def test_flange_sensitivities_against_scipy_differences(flange):
    model, d, margin = flange
    values = {p.name: p.si for p in model.parameters}
    T0 = model.initial_value.si
    q = next(i for i, p in enumerate(margin.quantities) if p.criterion.check.startswith("T(45 min)"))
    for name in ("h", "T_inf"):
        s = next(s for s in margin.sensitivities if s.quantity == q and s.parameter == name)
        step = 1e-4 * values[name]
        reference = (
            _flange_T({**values, name: values[name] + step}, 2700.0, T0)
            - _flange_T({**values, name: values[name] - step}, 2700.0, T0)
        ) / (2 * step)
        assert s.derivative == pytest.approx(reference, rel=RTOL)


# ----------------------------------------------------------------------------- a switched model
@pytest.fixture(scope="module")
def valve():
    model = load_model(ROOT / "inputs" / "valve-coil-economiser.toml")
    d = derive_piecewise(model)
    return model, d, find_margin(d)


def _coil_current(R1, L, V, R2, t_end, level=None):
    """L di/dt = V - R i, R switching from R1 to R2 at 120 ms: scipy, each interval on its own."""
    first = integrate.solve_ivp(
        lambda t, i: (V - R1 * i) / L,
        (0.0, 0.12),
        [0.0],
        rtol=1e-11,
        atol=1e-13,
        events=None if level is None else _level_event(level),
    )
    if level is not None and len(first.t_events[0]):
        return float(first.t_events[0][0])
    if level is not None:
        return math.inf
    if t_end <= 0.12:
        return float(first.y[0, -1])
    second = integrate.solve_ivp(lambda t, i: (V - R2 * i) / L, (0.12, t_end), [first.y[0, -1]], rtol=1e-11, atol=1e-13)
    return float(second.y[0, -1])


def test_switched_sensitivities_are_differences_across_the_switch_against_scipy(valve):
    model, d, margin = valve
    nominal = {"R": 20.0, "L": 0.8, "V_s": 24.0, "R@2": 80.0}
    q = next(i for i, p in enumerate(margin.quantities) if p.criterion.check.startswith("i(500 ms)"))
    for key in ("V_s", "R@2"):
        s = next(s for s in margin.sensitivities if s.quantity == q and s.parameter == key)
        assert s.method == DIFFERENCE
        step = 1e-4 * nominal[key]
        up, down = dict(nominal), dict(nominal)
        up[key] += step
        down[key] -= step
        reference = (
            _coil_current(up["R"], up["L"], up["V_s"], up["R@2"], 0.5)
            - _coil_current(down["R"], down["L"], down["V_s"], down["R@2"], 0.5)
        ) / (2 * step)
        assert s.derivative == pytest.approx(reference, rel=RTOL)


def test_switched_worst_case_against_brute_force_sampling(valve):
    """reach(0.9 A) over 4^4 x 4 = 1,024 points of the box: the hot, low-voltage side never pulls in."""
    model, d, margin = valve
    worst_reach, worst_hold = 0.0, 0.0
    for (
        R1,
        L,
        V,
        R2,
    ) in itertools.product(
        np.linspace(18, 26.3, 8), np.linspace(0.72, 0.88, 4), np.linspace(21.6, 26.4, 8), np.linspace(78, 86.3, 4)
    ):
        # i = V/R (1 - exp(-R t/L)) before the switch, then from i(120 ms) towards V/R2 (common practice)
        reach = math.inf if V / R1 <= 0.9 else -L / R1 * math.log(1 - 0.9 * R1 / V)
        worst_reach = max(worst_reach, reach if reach < 0.12 else math.inf)
        at_switch = V / R1 * (1 - math.exp(-R1 * 0.12 / L))
        worst_hold = max(worst_hold, V / R2 + (at_switch - V / R2) * math.exp(-R2 * 0.38 / L))
    assert worst_reach == math.inf
    assert margin.worst[0].value is None and not margin.worst[0].passed
    assert margin.worst[1].value == pytest.approx(worst_hold, rel=1e-9) and margin.worst[1].passed
    assert not margin.passed


RESISTOR_ENERGY = """
[sheet]
title = "Energy into a bleed resistor, with tolerances (test)"
[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = { value = "2.2 kohm", tolerance = "5 %" }
C = { value = "1100 uF" }
[initial]
value = "400 V"
[[derived]]
name = "P_R"
expression = "v^2/R"
unit = "W"
[[criteria]]
text = "energy of the whole discharge"
check = "integral(P_R, 0 s, 30 s) <= 500 J"
[[criteria]]
text = "energy of the first two seconds"
check = "integral(P_R, 0 s, 2 s) <= 500 J"
"""


def _normalised_energy_slope(T: float, R: float = 2200.0, C: float = 1100e-6) -> float:
    """(dE/dR) R / E for E = C v0^2/2 (1 - exp(-2T/(RC))), the energy into R over [0, T] (from memory of the
    standard result: P = v^2/R with v = v0 exp(-t/(RC)), integrated by hand), with mpmath at 30 digits."""
    with mpmath.workdps(30):  # mpmath's precision is global: set for this computation only
        a = 2 * mpmath.mpf(T) / (mpmath.mpf(R) * mpmath.mpf(C))
        return float(-a * mpmath.exp(-a) / (1 - mpmath.exp(-a)))


def test_a_central_difference_below_the_evaluations_precision_is_reported_as_flat(tmp_path):
    """Over 30 s the energy hardly depends on R (normalised slope about -4e-10): the two evaluations differ in
    their 15th digit, where rounding and quadrature error differ from machine to machine. Over 2 s the slope
    is real (about -0.39) and is measured as a central difference of relative error near 1e-10 / 1e-5."""
    path = tmp_path / "energy.toml"
    path.write_text(RESISTOR_ENERGY)
    d = derive(load_model(path))
    margin = find_margin(d)
    whole, first = (next(s for s in margin.sensitivities if s.quantity == q and s.parameter == "R") for q in (0, 1))
    assert abs(_normalised_energy_slope(30.0)) < EVALUATION_PRECISION / DIFFERENCE_STEP  # negligible in truth
    assert (whole.method, whole.derivative, whole.normalised) == (FLAT, 0.0, 0.0)
    assert first.method == DIFFERENCE
    assert first.normalised == pytest.approx(_normalised_energy_slope(2.0), rel=1e-4)
