"""A corpus of first-order linear ODEs, kept as data, for reference checks and the benchmark.

Every scenario is invented for these checks. Each case states the model twice, independently:

- as calcsheet input (equation text, units, parameter strings), turned into TOML by ``toml_text``;
- as a sympy equation built directly in Python with exact SI numbers converted by hand
  (``reference``), which is what ``sympy.dsolve`` and scipy's integrators are given.

The hand conversions use only unit definitions: 1 min = 60 s, 1 h = 3600 s, 1 L = 1e-3 m^3,
1 mg/L = 1e-3 kg/m^3, 1 g/L = 1 kg/m^3, and T[K] = T[degC] + 273.15 (facts of the SI, from memory).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from typing import Callable

import sympy as sp

R = sp.Rational


@dataclass(frozen=True)
class Case:
    """One ODE of the corpus; ``reference(t, y)`` returns the sympy Eq in SI (y = y(t))."""

    name: str
    kind: str  # what the case exercises, for reports
    scenario: str
    equation: str
    unknown: str
    variable: str
    parameters: dict[str, str]
    initial_at: str
    initial_value: str
    evaluate_at: tuple[str, ...]
    reference: Callable[[sp.Symbol, sp.Expr], sp.Eq]
    x0: sp.Expr  # initial abscissa, SI, exact
    y0: sp.Expr  # initial value, SI, exact
    samples: tuple[sp.Expr, ...]  # the evaluate_at points in SI, exact, converted by hand
    dsolve: bool = True  # False where sympy.dsolve is known to be too slow (reason given)
    dsolve_note: str = ""
    reach: tuple[str, ...] = field(default=())


def toml_text(case: Case) -> str:
    """The calcsheet input for ``case`` (json.dumps gives valid TOML basic strings)."""
    q = json.dumps
    lines = [
        f"# Reference corpus case {case.name}: {case.scenario}",
        "[sheet]",
        f"title = {q('Reference case ' + case.name)}",
        "[model]",
        f"equation = {q(case.equation)}",
        f"unknown = {q(case.unknown)}",
        f"variable = {q(case.variable)}",
        "[parameters]",
        *(f"{name} = {q(value)}" for name, value in case.parameters.items()),
        "[initial]",
        f"at = {q(case.initial_at)}",
        f"value = {q(case.initial_value)}",
        "[evaluate]",
        f"at = [{', '.join(q(a) for a in case.evaluate_at)}]",
    ]
    if case.reach:
        lines.append(f"reach = [{', '.join(q(r) for r in case.reach)}]")
    return "\n".join(lines) + "\n"


def _d(t, y):
    return sp.Derivative(y, t)


KELVIN = R(27315, 100)  # 0 degC in kelvin

CASES: tuple[Case, ...] = (
    Case(
        name="rc_step_charge",
        kind="constant coefficients, step forcing",
        scenario="timing capacitor of a relay delay charging from a 24 V rail",
        equation="R*C*dv/dt + v = V_s",
        unknown="v [V]",
        variable="t [ms]",
        parameters={"R": "68 kohm", "C": "10 uF", "V_s": "24 V"},
        initial_at="0 ms",
        initial_value="0 V",
        evaluate_at=("200 ms", "680 ms", "1500 ms", "3 s"),
        reference=lambda t, y: sp.Eq(68000 * R(10, 10**6) * _d(t, y) + y, 24),
        x0=sp.Integer(0),
        y0=sp.Integer(0),
        samples=(R(2, 10), R(68, 100), R(3, 2), sp.Integer(3)),
    ),
    Case(
        name="ozone_decay_late_start",
        kind="homogeneous, constant coefficient, initial point not at 0",
        scenario="dissolved ozone decaying in a contact tank after the generator trips at minute 5",
        equation="dc/dt = -k*c",
        unknown="c [mg/L]",
        variable="t [min]",
        parameters={"k": "0.12 1/min"},
        initial_at="5 min",
        initial_value="1.8 mg/L",
        evaluate_at=("10 min", "20 min", "45 min"),
        reference=lambda t, y: sp.Eq(_d(t, y), -R(12, 100 * 60) * y),
        x0=sp.Integer(300),
        y0=R(18, 10000),
        samples=(sp.Integer(600), sp.Integer(1200), sp.Integer(2700)),
    ),
    Case(
        name="kiln_ramp_probe",
        kind="constant coefficients, ramp forcing, degC",
        scenario="thermocouple in a kiln whose set-point ramps at 3 K/min",
        equation="tau*dT/dt + T = T_s + beta*t",
        unknown="T [degC]",
        variable="t [min]",
        parameters={"tau": "45 s", "T_s": "25 degC", "beta": "3 K/min"},
        initial_at="0 min",
        initial_value="25 degC",
        evaluate_at=("1 min", "5 min", "30 min"),
        reference=lambda t, y: sp.Eq(45 * _d(t, y) + y, (KELVIN + 25) + R(3, 60) * t),
        x0=sp.Integer(0),
        y0=KELVIN + 25,
        samples=(sp.Integer(60), sp.Integer(300), sp.Integer(1800)),
    ),
    Case(
        name="cart_quadratic_push",
        kind="constant coefficients, quadratic forcing",
        scenario="trolley with viscous wheel drag pushed by a force that builds up quadratically",
        equation="m*dv/dt + b*v = F_q*(t/t_r)^2",
        unknown="v [m/s]",
        variable="t [s]",
        parameters={"m": "80 kg", "b": "25 N*s/m", "F_q": "150 N", "t_r": "4 s"},
        initial_at="0 s",
        initial_value="0.5 m/s",
        evaluate_at=("1 s", "4 s", "10 s"),
        reference=lambda t, y: sp.Eq(80 * _d(t, y) + 25 * y, 150 * (t / 4) ** 2),
        x0=sp.Integer(0),
        y0=R(1, 2),
        samples=(sp.Integer(1), sp.Integer(4), sp.Integer(10)),
    ),
    Case(
        name="rl_decaying_source",
        kind="constant coefficients, exponential forcing",
        scenario="solenoid coil fed from a supply that sags exponentially after a fault",
        equation="L*di/dt + R*i = E*exp(-t/t_s)",
        unknown="i [A]",
        variable="t [ms]",
        parameters={"L": "0.5 H", "R": "10 ohm", "E": "24 V", "t_s": "200 ms"},
        initial_at="0 ms",
        initial_value="0 A",
        evaluate_at=("20 ms", "100 ms", "500 ms"),
        reference=lambda t, y: sp.Eq(R(1, 2) * _d(t, y) + 10 * y, 24 * sp.exp(-t / R(2, 10))),
        x0=sp.Integer(0),
        y0=sp.Integer(0),
        samples=(R(2, 100), R(1, 10), R(1, 2)),
    ),
    Case(
        name="probe_same_rate_decay",
        kind="forcing decaying at the natural rate (t*exp(-t/tau))",
        scenario="gas probe whose time constant equals the decay time of the gas temperature excess",
        equation="tau*dT/dt + T = T_g + D*exp(-t/tau)",
        unknown="T [K]",
        variable="t [s]",
        parameters={"tau": "8 s", "T_g": "300 K", "D": "40 K"},
        initial_at="0 s",
        initial_value="310 K",
        evaluate_at=("4 s", "8 s", "20 s", "40 s"),
        reference=lambda t, y: sp.Eq(8 * _d(t, y) + y, 300 + 40 * sp.exp(-t / 8)),
        x0=sp.Integer(0),
        y0=sp.Integer(310),
        samples=(sp.Integer(4), sp.Integer(8), sp.Integer(20), sp.Integer(40)),
    ),
    Case(
        name="probe_equal_rates_by_value",
        kind="natural-rate forcing decided by the stated values",
        scenario="probe lag tau and gas decay rate k stated separately, with k*tau = 1 exactly",
        equation="tau*dT/dt + T = T_g + D*exp(-k*t)",
        unknown="T [K]",
        variable="t [s]",
        parameters={"tau": "4 s", "k": "0.25 1/s", "T_g": "350 K", "D": "25 K"},
        initial_at="0 s",
        initial_value="350 K",
        evaluate_at=("2 s", "4 s", "12 s"),
        reference=lambda t, y: sp.Eq(4 * _d(t, y) + y, 350 + 25 * sp.exp(-t / 4)),
        x0=sp.Integer(0),
        y0=sp.Integer(350),
        samples=(sp.Integer(2), sp.Integer(4), sp.Integer(12)),
    ),
    Case(
        name="rc_filter_sine",
        kind="constant coefficients, sinusoidal forcing",
        scenario="RC anti-alias filter on a 50 Hz signal line, switched on at a zero crossing",
        equation="R*C*dv/dt + v = V_m*sin(2*pi*f*t)",
        unknown="v [V]",
        variable="t [ms]",
        parameters={"R": "1 kohm", "C": "2.2 uF", "V_m": "10 V", "f": "50 Hz"},
        initial_at="0 ms",
        initial_value="0 V",
        evaluate_at=("1 ms", "5 ms", "12 ms", "20 ms"),
        reference=lambda t, y: sp.Eq(1000 * R(22, 10**7) * _d(t, y) + y, 10 * sp.sin(2 * sp.pi * 50 * t)),
        x0=sp.Integer(0),
        y0=sp.Integer(0),
        samples=(R(1, 1000), R(5, 1000), R(12, 1000), R(20, 1000)),
    ),
    Case(
        name="room_daily_swing",
        kind="constant coefficients, cosine plus offset, hours and degC",
        scenario="unheated store room following a daily outdoor temperature swing",
        equation="tau*dT/dt + T = T_m + A_d*cos(2*pi*t/P_d)",
        unknown="T [degC]",
        variable="t [h]",
        parameters={"tau": "6 h", "T_m": "18 degC", "A_d": "7 K", "P_d": "24 h"},
        initial_at="0 h",
        initial_value="15 degC",
        evaluate_at=("6 h", "24 h", "48 h"),
        reference=lambda t, y: sp.Eq(21600 * _d(t, y) + y, (KELVIN + 18) + 7 * sp.cos(2 * sp.pi * t / 86400)),
        x0=sp.Integer(0),
        y0=KELVIN + 15,
        samples=(sp.Integer(21600), sp.Integer(86400), sp.Integer(172800)),
    ),
    Case(
        name="duct_swirl_radial",
        kind="varying coefficient, x*dy/dx + 2*y = k*x^2, start away from 0",
        scenario="demo model of a swirl velocity component growing along a flared passage",
        equation="r*dw/dr + 2*w = k*r^2",
        unknown="w [m/s]",
        variable="r [mm]",
        parameters={"k": "40 1/(m*s)"},
        initial_at="100 mm",
        initial_value="2 m/s",
        evaluate_at=("150 mm", "300 mm", "1 m"),
        reference=lambda r, y: sp.Eq(r * _d(r, y) + 2 * y, 40 * r**2),
        x0=R(1, 10),
        y0=sp.Integer(2),
        samples=(R(15, 100), R(3, 10), sp.Integer(1)),
    ),
    Case(
        name="brine_tank_filling",
        kind="varying coefficient 1/(a + b*t), growing volume",
        scenario="brine make-up tank filling faster than it is drawn, concentration form",
        equation="(V_0 + (q_in - q_out)*t)*dc/dt = q_in*(c_in - c)",
        unknown="c [g/L]",
        variable="t [min]",
        parameters={"V_0": "800 L", "q_in": "40 L/min", "q_out": "30 L/min", "c_in": "5 g/L"},
        initial_at="0 min",
        initial_value="0 g/L",
        evaluate_at=("10 min", "60 min", "3 h"),
        reference=lambda t, y: sp.Eq((R(8, 10) + R(10, 60000) * t) * _d(t, y), R(40, 60000) * (5 - y)),
        x0=sp.Integer(0),
        y0=sp.Integer(0),
        samples=(sp.Integer(600), sp.Integer(3600), sp.Integer(10800)),
    ),
    Case(
        name="sump_draining_tracer",
        kind="varying coefficient 1/(a - b*t), shrinking volume",
        scenario="tracer mass in a sump drawn down faster than it is fed (empties at 600 s)",
        equation="dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*t)",
        unknown="m [kg]",
        variable="t [s]",
        parameters={"q_in": "10 L/s", "q_out": "15 L/s", "c_in": "2 kg/m^3", "V_0": "3 m^3"},
        initial_at="0 s",
        initial_value="20 kg",
        evaluate_at=("60 s", "300 s", "500 s"),
        reference=lambda t, y: sp.Eq(_d(t, y), R(1, 100) * 2 - R(15, 1000) * y / (3 - R(5, 1000) * t)),
        x0=sp.Integer(0),
        y0=sp.Integer(20),
        samples=(sp.Integer(60), sp.Integer(300), sp.Integer(500)),
    ),
    Case(
        name="catalyst_ageing_decay",
        kind="homogeneous, varying coefficient linear in t",
        scenario="reactant held in a batch reactor whose rate constant grows as the catalyst activates",
        equation="dc/dt = -k_0*(1 + t/t_a)*c",
        unknown="c [mol/m^3]",
        variable="t [h]",
        parameters={"k_0": "0.2 1/h", "t_a": "10 h"},
        initial_at="0 h",
        initial_value="3 mol/m^3",
        evaluate_at=("5 h", "10 h", "24 h"),
        reference=lambda t, y: sp.Eq(_d(t, y), -R(2, 36000) * (1 + t / 36000) * y),
        x0=sp.Integer(0),
        y0=sp.Integer(3),
        samples=(sp.Integer(18000), sp.Integer(36000), sp.Integer(86400)),
    ),
    Case(
        name="charge_leak_growing",
        kind="varying coefficient 2*a*t, constant source (erfi closed form)",
        scenario="charge on an electrode fed at a steady rate, leaking through a film that ages linearly",
        equation="dq/dt + 2*a*t*q = s",
        unknown="q [C]",
        variable="t [s]",
        parameters={"a": "0.02 1/s^2", "s": "1.5 C/s"},
        initial_at="0 s",
        initial_value="0 C",
        evaluate_at=("2 s", "5 s", "10 s"),
        reference=lambda t, y: sp.Eq(_d(t, y) + 2 * R(2, 100) * t * y, R(3, 2)),
        x0=sp.Integer(0),
        y0=sp.Integer(0),
        samples=(sp.Integer(2), sp.Integer(5), sp.Integer(10)),
    ),
    Case(
        name="probe_gaussian_pulse",
        kind="constant coefficients, Gaussian forcing (erf closed form)",
        scenario="probe lag during a bell-shaped burst of hot gas",
        equation="tau*dT/dt + T = T_b + T_a*exp(-((t - t_p)/w)^2)",
        unknown="T [K]",
        variable="t [s]",
        parameters={"tau": "2 s", "T_b": "290 K", "T_a": "50 K", "t_p": "6 s", "w": "1.5 s"},
        initial_at="0 s",
        initial_value="290 K",
        evaluate_at=("3 s", "6 s", "8 s", "15 s"),
        reference=lambda t, y: sp.Eq(2 * _d(t, y) + y, 290 + 50 * sp.exp(-(((t - 6) / R(3, 2)) ** 2))),
        x0=sp.Integer(0),
        y0=sp.Integer(290),
        samples=(sp.Integer(3), sp.Integer(6), sp.Integer(8), sp.Integer(15)),
        dsolve=False,
        dsolve_note=(
            "sympy.dsolve (1.14) takes about 13 s here and returns an implicit form with y(t) "
            "inside an integral, which checkodesol rejects; checked against an mpmath quadrature "
            "of the variation-of-constants formula and scipy (Radau) instead"
        ),
    ),
    Case(
        name="culture_with_withdrawal",
        kind="negative p (growing natural response), dimensionless unknown",
        scenario="cell count in a culture growing while samples are withdrawn at a steady rate",
        equation="dN/dt = g*N - h_w",
        unknown="N [1]",
        variable="t [h]",
        parameters={"g": "0.3 1/h", "h_w": "50 1/h"},
        initial_at="0 h",
        initial_value="1000",
        evaluate_at=("1 h", "5 h", "10 h"),
        reference=lambda t, y: sp.Eq(_d(t, y), R(3, 36000) * y - R(50, 3600)),
        x0=sp.Integer(0),
        y0=sp.Integer(1000),
        samples=(sp.Integer(3600), sp.Integer(18000), sp.Integer(36000)),
    ),
    Case(
        name="valve_position_dither",
        kind="dimensionless unknown, step plus sinusoidal dither, rad/s",
        scenario="valve stem position (fraction of stroke) following a set-point with a small dither",
        equation="tau*dx/dt + x = x_s + a_d*sin(omega*t)",
        unknown="x [1]",
        variable="t [s]",
        parameters={"tau": "3.5 s", "x_s": "0.85", "a_d": "0.02", "omega": "2 rad/s"},
        initial_at="0 s",
        initial_value="0.15",
        evaluate_at=("1 s", "3.5 s", "10 s"),
        reference=lambda t, y: sp.Eq(R(7, 2) * _d(t, y) + y, R(85, 100) + R(2, 100) * sp.sin(2 * t)),
        x0=sp.Integer(0),
        y0=R(15, 100),
        samples=(sp.Integer(1), R(7, 2), sp.Integer(10)),
    ),
)


def by_name(name: str) -> Case:
    return next(c for c in CASES if c.name == name)
