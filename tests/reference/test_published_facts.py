"""calcsheet's numbers checked against facts from outside the project, each with its source.

Labels say how far each figure is confirmed: "common practice, no source" for facts of the trade,
"read in the source" or "read in a published solution" where the worked figures were read there,
and the edition is stated as unconfirmed where it is.
"""

from __future__ import annotations

import math

import pint
import pytest

from calcsheet.derive.derivation import Derivation, derive
from calcsheet.load.loader import load_model

UREG = pint.UnitRegistry()  # the outside reference for temperature conversions


def derive_text(tmp_path, name: str, text: str) -> Derivation:
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return derive(load_model(path))


def lumped_sphere_input(
    title: str, diameter: float, rho: str, c_p: str, h: str, gas: str, start: str, levels: list[str]
) -> str:
    """rho*c_p*V*dT/dt = -h*A*(T - T_inf), with V and A of a sphere worked out here."""
    volume = math.pi * diameter**3 / 6
    area = math.pi * diameter**2
    return f"""
[sheet]
title = "{title}"
[model]
equation = "rho*c_p*V*dT/dt = -h*A*(T - T_inf)"
unknown = "T [degC]"
variable = "t [s]"
[parameters]
rho = "{rho}"
c_p = "{c_p}"
V = "{volume!r} m^3"
A = "{area!r} m^2"
h = "{h}"
T_inf = "{gas}"
[initial]
at = "0 s"
value = "{start}"
[evaluate]
reach = [{", ".join(f'"{level}"' for level in levels)}]
"""


# ----------------------------------------------------------------- first-order lag, step input
LAG_INPUT = """
[sheet]
title = "Pressure transmitter following a step in line pressure (demo)"
[model]
equation = "tau*dp/dt + p = p_s"
unknown = "p [bar]"
variable = "t [s]"
[parameters]
tau = "0.8 s"
p_s = "10 bar"
[initial]
at = "0 s"
value = "0 bar"
[evaluate]
at = ["0.8 s", "1.6 s", "2.4 s", "4 s"]
reach = ["5 bar", "9 bar"]
"""


@pytest.fixture(scope="module")
def lag(tmp_path_factory) -> Derivation:
    return derive_text(tmp_path_factory.mktemp("lag"), "lag", LAG_INPUT)


def test_step_response_fractions(lag):
    # Step response of a first-order lag at t/tau = 1, 2, 3, 5: 63.2, 86.5, 95.0, 99.3 %
    # (common practice, no source).
    assert lag.numbers.time_constant == pytest.approx(0.8, rel=1e-12)
    final = 10e5  # 10 bar in Pa
    percent = [100 * v.y / final for v in lag.numbers.values]
    assert percent == pytest.approx([63.2, 86.5, 95.0, 99.3], abs=0.05)


def test_response_times_t50_t90(lag):
    # Response times of a first-order sensor: t50 = 0.693 tau, t90 = 2.303 tau
    # (common practice, no source).
    t50, t90 = (r.x / 0.8 for r in lag.numbers.reach)
    assert t50 == pytest.approx(0.693, abs=0.0005)
    assert t90 == pytest.approx(2.303, abs=0.0005)


# ----------------------------------------------------------------- lumped bodies
def test_thermocouple_junction_time_constant_and_99_percent_time(tmp_path):
    # Source: Çengel, Heat and Mass Transfer, Example 4-1 (thermocouple junction in a gas stream):
    # D = 1 mm, k = 35 W/(m K), rho = 8500 kg/m^3, c_p = 320 J/(kg K), h = 210 W/(m^2 K);
    # tau = 2.159 s, 99 % of the initial difference after about 10 s (9.94 s).
    # Figures from a copy of the worked solution; edition unconfirmed.
    # Gas 200 degC and junction start 20 degC are chosen here: 99 % of the 180 K rise is 198.2 degC.
    diameter, k, h = 1e-3, 35.0, 210.0
    biot = h * (diameter / 6) / k
    assert biot < 0.1  # lumped analysis applies for Bi <= 0.1 (common practice, no source)
    text = lumped_sphere_input(
        "Thermocouple junction in a gas stream",
        diameter,
        "8500 kg/m^3",
        "320 J/(kg*K)",
        "210 W/(m^2*K)",
        "200 degC",
        "20 degC",
        ["198.2 degC"],
    )
    derivation = derive_text(tmp_path, "junction", text)
    assert derivation.numbers.time_constant == pytest.approx(2.159, abs=0.0005)
    (reach,) = derivation.numbers.reach
    assert reach.x == pytest.approx(9.94, abs=0.005)
    assert round(reach.x) == 10
    assert derivation.passed


def test_steel_ball_cooling_in_air(tmp_path):
    # Source: a published national engineering entrance-exam question in heat transfer; figures read
    # in the source. Steel ball D = 60 mm, 1030 degC to 430 degC in 30 degC air, h = 20 W/(m^2 K),
    # rho = 7800 kg/m^3, c = 600 J/(kg K): tau = 2340 s, time about 2144 s.
    text = lumped_sphere_input(
        "Steel ball cooling in still air",
        0.060,
        "7800 kg/m^3",
        "600 J/(kg*K)",
        "20 W/(m^2*K)",
        "30 degC",
        "1030 degC",
        ["430 degC"],
    )
    derivation = derive_text(tmp_path, "ball", text)
    assert derivation.numbers.time_constant == pytest.approx(2340, rel=1e-3)
    (reach,) = derivation.numbers.reach
    assert reach.x == pytest.approx(2144, abs=1.0)
    assert derivation.passed


# ----------------------------------------------------------------- RL circuit
def test_rl_circuit_step(tmp_path):
    # Source: a physics exercise collection, chapter on inductance, solution published online
    # (read in a published solution): L = 2.0 H, R = 20 ohm, E = 4.0 V; tau = 0.1 s, i(0.2 s) = 0.1729 A.
    text = """
[sheet]
title = "Coil switched onto a battery"
[model]
equation = "L*di/dt + R*i = E"
unknown = "i [A]"
variable = "t [s]"
[parameters]
L = "2.0 H"
R = "20 ohm"
E = "4.0 V"
[initial]
at = "0 s"
value = "0 A"
[evaluate]
at = ["0.2 s"]
"""
    derivation = derive_text(tmp_path, "rl", text)
    assert derivation.numbers.time_constant == pytest.approx(0.1, rel=1e-12)
    (value,) = derivation.numbers.values
    assert value.y == pytest.approx(0.1729, abs=5e-5)
    assert derivation.numbers.final_value == pytest.approx(0.2, rel=1e-12)


# ----------------------------------------------------------------- temperature scales
COOLING = """
[sheet]
title = "Billet cooling on a rack, stated in {unit}"
[model]
equation = "m*c*dT/dt = -h*A*(T - T_a)"
unknown = "T [{unit}]"
variable = "t [min]"
[parameters]
m = "35 kg"
c = "460 J/(kg*K)"
h = "12 W/(m^2*K)"
A = "0.9 m^2"
T_a = "{ambient}"
[initial]
at = "0 min"
value = "{start}"
[evaluate]
at = ["10 min", "1 h", "3 h"]
reach = [{levels}]
"""
CELSIUS = {"ambient": 25.0, "start": 350.0, "levels": [100.0, 40.0]}


def cooling_text(unit: str) -> str:
    """The same billet in degC, K or degF; pint converts the temperatures (facts of units)."""

    def stated(celsius: float) -> str:
        return f"{UREG.Quantity(celsius, 'degC').to(unit).magnitude!r} {unit}"

    return COOLING.format(
        unit=unit,
        ambient=stated(CELSIUS["ambient"]),
        start=stated(CELSIUS["start"]),
        levels=", ".join(f'"{stated(c)}"' for c in CELSIUS["levels"]),
    )


@pytest.fixture(scope="module")
def billets(tmp_path_factory) -> dict[str, Derivation]:
    directory = tmp_path_factory.mktemp("billet")
    return {unit: derive_text(directory, unit, cooling_text(unit)) for unit in ("degC", "K", "degF")}


@pytest.mark.parametrize("unit", ["K", "degF"])
def test_temperature_scale_does_not_change_the_answer(billets, unit):
    # Facts of units: an absolute temperature in degC, K or degF is one state; times do not depend on
    # the scale (pint as reference for the conversions).
    base, other = billets["degC"].numbers, billets[unit].numbers
    assert other.time_constant == pytest.approx(base.time_constant, rel=1e-12)
    assert [v.y for v in other.values] == pytest.approx([v.y for v in base.values], rel=1e-12)
    assert [r.x for r in other.reach] == pytest.approx([r.x for r in base.reach], rel=1e-9)
    assert other.final_value == pytest.approx(base.final_value, rel=1e-12)


def test_celsius_values_against_the_lumped_formula(billets):
    # Newton cooling, T = T_a + (T_0 - T_a) exp(-t/tau), tau = m c/(h A), works in degC because only
    # differences enter (common practice, no source); pint turns calcsheet's kelvin back into degC.
    numbers = billets["degC"].numbers
    tau = 35 * 460 / (12 * 0.9)
    assert numbers.time_constant == pytest.approx(tau, rel=1e-12)
    for value, minutes in zip(numbers.values, (10, 60, 180)):
        celsius = UREG.Quantity(value.y, "K").to("degC").magnitude
        assert celsius == pytest.approx(25 + 325 * math.exp(-minutes * 60 / tau), rel=1e-12)
    for reach, level in zip(numbers.reach, CELSIUS["levels"]):
        assert reach.x == pytest.approx(tau * math.log(325 / (level - 25)), rel=1e-9)
