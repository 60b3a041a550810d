"""Switched models carry over what is in force: parameters set at earlier switches and the states a
kind's law holds besides the unknown (a tank's volume). Each is checked against scipy integrating the
switched system written out by hand, with every state as a state variable."""

from __future__ import annotations

from pathlib import Path

import pytest
from scipy.integrate import solve_ivp

from calcsheet.errors import CalcsheetError
from calcsheet.pipeline import build_sheet, render

BODY = """
[sheet]
title = "heated part, heater off, then a fan"
[model]
kind = "lumped_body"
unknown = "T [degC]"
variable = "t [s]"
[parameters]
rho = "2700 kg/m^3"
c_p = "900 J/(kg*K)"
V = "1e-4 m^3"
A = "0.02 m^2"
h = "15 W/(m^2*K)"
k = "200 W/(m*K)"
T_inf = "20 degC"
Q = "20 W"
[initial]
value = "20 degC"
[evaluate]
at = ["200 s", "400 s", "700 s", "1200 s"]
[[switch]]
at = "300 s"
text = "heater off"
parameters = { Q = "0 W" }
[[switch]]
at = "600 s"
text = "fan on"
parameters = { h = "40 W/(m^2*K)" }
"""

TANK = """
[sheet]
title = "tank whose inflow is cut"
[model]
kind = "mixing_tank"
unknown = "m [kg]"
variable = "t [min]"
[parameters]
q_in = "1 m^3/min"
q_out = "0.6 m^3/min"
c_in = "2 kg/m^3"
V_0 = "12 m^3"
[initial]
at = "{start}"
value = "3 kg"
[evaluate]
at = ["8 min", "15 min", "25 min", "40 min"]
[[switch]]
at = "10 min"
text = "inflow cut"
parameters = {{ q_in = "0.2 m^3/min" }}
"""


def write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "switched.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_each_switch_starts_from_the_parameters_in_force_before_it(tmp_path):
    # Three intervals, each switch changing a different parameter: the heater stays off after the fan starts.
    d = build_sheet(write(tmp_path, BODY)).derivation
    capacity = 2700 * 900 * 1e-4

    def slope(t, state):  # rho c_p V dT/dt = Q - h A (T - T_inf), the switched values written out
        Q = 20.0 if t < 300 else 0.0
        h = 15.0 if t < 600 else 40.0
        return [(Q - h * 0.02 * (state[0] - 293.15)) / capacity]

    points = [200.0, 400.0, 700.0, 1200.0]
    reference = solve_ivp(
        slope, (0, 1200), [293.15], method="LSODA", t_eval=points, rtol=1e-11, atol=1e-11, max_step=1.0
    )
    for value, expected in zip(d.numbers.values, reference.y[0]):
        assert value.y == pytest.approx(expected, rel=1e-7)
    third = {p.name: p.si for p in d.intervals[2].derivation.model.parameters}
    assert third["Q"] == 0.0 and third["h"] == 40.0


@pytest.mark.parametrize("start", ["0 min", "5 min"])
def test_a_tank_volume_carries_over_the_switch(tmp_path, start):
    # V_0 is the volume at the initial point; at the switch the next interval starts from the volume reached.
    t0 = float(start.split()[0]) * 60
    d = build_sheet(write(tmp_path, TANK.format(start=start))).derivation

    def slope(t, state):  # volume and solute mass as two states: dV/dt = q_in - q_out, dm/dt = q_in c_in - q_out m/V
        q_in, q_out = (1 / 60 if t < 600 else 0.2 / 60), 0.6 / 60
        volume, mass = state
        return [q_in - q_out, q_in * 2.0 - q_out * mass / volume]

    points = [480.0, 900.0, 1500.0, 2400.0]
    reference = solve_ivp(
        slope, (t0, 2400), [12.0, 3.0], method="LSODA", t_eval=points, rtol=1e-11, atol=1e-12, max_step=5.0
    )
    for value, expected in zip(d.numbers.values, reference.y[1]):
        assert value.y == pytest.approx(expected, rel=1e-7)
    carried = {p.name: p.si for p in d.intervals[1].derivation.model.parameters}
    assert carried["V_0"] == pytest.approx(12.0 + 0.4 / 60 * (600 - t0), rel=1e-12)
    # the tank then drains at 0.4 m^3/min: it empties V_0/(0.4 m^3/min) after the switch
    limit = d.intervals[1].derivation.numbers.valid_until
    assert limit[0] == pytest.approx(600 + carried["V_0"] / (0.4 / 60), rel=1e-12)
    text = render(build_sheet(write(tmp_path, TANK.format(start=start))).sheet, ("txt",))["txt"]
    assert f"V_0 at the switch = {carried['V_0']:.6g} m^3" in text


@pytest.mark.parametrize(
    "switch, key, fragment",
    [
        ('parameters = { Rx = "80 ohm" }', "switch[1].parameters.Rx", "is not a parameter"),
        ("parameters = { R = 80 }", "switch[1].parameters.R", "text with its unit"),
        ('parameters = { R = "80 V" }', "switch[1].", "dimension"),
    ],
)
def test_a_switch_names_only_parameters_of_the_model(tmp_path, switch, key, fragment):
    text = f"""
[sheet]
title = "t"
[model]
equation = "L*di/dt + R*i = V_s"
unknown = "i [A]"
variable = "t [s]"
[parameters]
L = "0.5 H"
R = "10 ohm"
V_s = "12 V"
[initial]
value = "0 A"
[[switch]]
at = "0.1 s"
{switch}
"""
    path = write(tmp_path, text)
    with pytest.raises(CalcsheetError) as info:
        build_sheet(path)
    message = str(info.value)
    assert f"{path}: {key}" in message and fragment in message


def test_a_kind_parameter_error_inside_a_switch_is_keyed_from_the_switch(tmp_path):
    text = BODY.replace('parameters = { Q = "0 W" }', 'parameters = { Q = "0 kg" }')
    with pytest.raises(CalcsheetError) as info:
        build_sheet(write(tmp_path, text))
    assert ": switch[1].parameters.Q: " in str(info.value)


def test_a_carried_state_cannot_be_set_at_a_switch(tmp_path):
    text = TANK.format(start="0 min").replace('{ q_in = "0.2 m^3/min" }', '{ V_0 = "3 m^3" }')
    with pytest.raises(CalcsheetError) as info:
        build_sheet(write(tmp_path, text))
    assert "switch[1].parameters.V_0" in str(info.value) and "carried over" in str(info.value)


def test_record_v2_holds_the_parameters_in_force_in_each_of_three_intervals(tmp_path):
    record = build_sheet(write(tmp_path, BODY)).sheet.record
    assert record["version"] == 2
    intervals = record["intervals"]
    assert [(i["from"]["value"], i["to"] and i["to"]["value"]) for i in intervals] == [
        (0.0, 300.0),
        (300.0, 600.0),
        (600.0, None),
    ]
    in_force = [{p["name"]: p for p in i["parameters"]} for i in intervals]
    assert (in_force[1]["Q"]["value"], in_force[1]["Q"]["changed"]) == ("0 W", True)
    assert (in_force[1]["h"]["si"], in_force[1]["h"]["changed"]) == (15.0, False)
    # the heater stays off after the fan starts: Q = 0 W in force, unchanged, in the third interval
    assert (in_force[2]["Q"]["value"], in_force[2]["Q"]["changed"]) == ("0 W", False)
    assert (in_force[2]["h"]["si"], in_force[2]["h"]["changed"]) == (40.0, True)
    assert not any(p["changed"] or p["carried"] for p in in_force[0].values())
    # tau = rho c_p V / (h A) and the final value T_inf + Q / (h A) of a lumped body (Newton's law of
    # cooling with a heat input; common practice, no source)
    capacity = 2700 * 900 * 1e-4
    taus = [capacity / (15 * 0.02), capacity / (15 * 0.02), capacity / (40 * 0.02)]
    assert [i["time_constant"]["value"] for i in intervals] == pytest.approx(taus, rel=1e-3)
    assert [i["final_value"]["value"] for i in intervals] == pytest.approx([20 + 20 / 0.3, 20, 20], rel=1e-3)
    assert [v["at"]["value"] for v in record["across"]["values"]] == [200.0, 400.0, 700.0, 1200.0]
    assert record["across"]["verification"]["passed"]


def test_record_v2_marks_a_tank_volume_as_carried(tmp_path):
    record = build_sheet(write(tmp_path, TANK.format(start="0 min"))).sheet.record
    second = {p["name"]: p for p in record["intervals"][1]["parameters"]}
    assert second["V_0"]["carried"] and second["V_0"]["changed"]
    assert second["V_0"]["si"] == pytest.approx(12.0 + 0.4 * 10, rel=1e-9)  # 0.4 m^3/min net inflow for 10 min
    assert second["q_in"]["changed"] and not second["q_in"]["carried"]
    assert not second["q_out"]["changed"]
