"""Kind mixing_tank_concentration: concentration in a well-mixed tank whose volume may change.

Scenarios are invented for these tests. Outside checks name their source beside the check.
"""

from __future__ import annotations

import json
import math

import pytest

from calcsheet.kinds.base import INFO, WARNING
from calcsheet.kinds.mixing_tank_concentration import KIND
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import findings, worded

MINUTE = 60.0


def write(tmp_path, name: str, text: str):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


# A dosing tank filled from 6 m^3 while it is drawn off (invented); the same tank in both kinds.
FILLING_FLOWS = """
q_in = "0.5 m^3/min"
q_out = "0.2 m^3/min"
c_in = "1.5 kg/m^3"
V_0 = "6 m^3"
V_max = "25 m^3"
"""
AT = (5.0, 20.0, 45.0)  # min


def filling_input(kind: str, unknown: str, initial: str) -> str:
    return f"""
[sheet]
title = "Dosing tank topped up while in service (demo)"
[model]
kind = "{kind}"
unknown = "{unknown}"
variable = "t [min]"
[parameters]
{FILLING_FLOWS}
[initial]
value = "{initial}"
[evaluate]
at = [{", ".join(f'"{a:g} min"' for a in AT)}]
"""


@pytest.fixture(scope="module")
def filling(tmp_path_factory):
    folder = tmp_path_factory.mktemp("filling")
    concentration = build_sheet(
        write(folder, "concentration", filling_input("mixing_tank_concentration", "c [kg/m^3]", "0.5 kg/m^3"))
    )
    return concentration, render(concentration.sheet, ("txt", "json"))


def test_filling_tank_end_to_end(filling):
    built, out = filling
    assert KIND.law in out["txt"]
    assert "(V_0 + (q_in - q_out)*t)*dc/dt = q_in*(c_in - c)" in out["txt"]
    record = json.loads(out["json"])
    assert record["verification"]["passed"] and record["passed"]
    assert record["kind"]["name"] == "mixing_tank_concentration" and record["kind"]["law"] == KIND.law
    assert built.derivation.passed
    # Outside check (common practice, no source: the textbook integration of the linear balance):
    # c_in - c = (c_in - c_0)*(V_0/V)^(q_in/(q_in - q_out)).
    q_in, q_out, c_in, v_0, c_0 = 0.5 / MINUTE, 0.2 / MINUTE, 1.5, 6.0, 0.5
    for at_min, found in zip(AT, built.derivation.numbers.values):
        volume = v_0 + (q_in - q_out) * at_min * MINUTE
        assert found.y == pytest.approx(c_in - (c_in - c_0) * (v_0 / volume) ** (q_in / (q_in - q_out)), rel=1e-9)


def test_mass_equals_concentration_times_volume(filling, tmp_path):
    # Identity of the mass balance (common practice, no source): m(t) = c(t)*V(t) with V = V_0 + (q_in - q_out)*t,
    # the same tank stated once by its solute mass and once by its concentration (m_0 = 0.5 kg/m^3 * 6 m^3 = 3 kg).
    concentration, _ = filling
    mass = build_sheet(write(tmp_path, "mass", filling_input("mixing_tank", "m [kg]", "3 kg"))).derivation
    assert mass.passed
    for at_min, m, c in zip(AT, mass.numbers.values, concentration.derivation.numbers.values):
        volume = 6.0 + (0.5 - 0.2) * at_min
        assert m.y == pytest.approx(c.y * volume, rel=1e-9)


def test_notes_give_the_volume_law_and_the_overflow_time(filling):
    notes = filling[0].derivation.model.kind.notes
    assert [n.code for n in notes] == ["tank_fills", "tank_overflows"]
    assert all(n.severity == INFO for n in notes)
    # (25 - 6) m^3 / (0.3 m^3/min) = 63.33 min = 3800 s (arithmetic of the inputs).
    assert notes[1].values["at"] == pytest.approx(3800.0, rel=1e-12)
    law, overflow = findings(filling[0])
    assert law.startswith("Volume law: V(t) = V_0 + (q_in - q_out)*t = 6 m^3 + 0.005 m^3/s * t")
    assert "overflows at t = 3800 s (63.33 min) after the start" in overflow


def test_draining_tank_warns_when_it_empties():
    # 2 m^3 left, 0.5 m^3/h net outflow: empty after 4 h = 14400 s (arithmetic of the inputs).
    notes = KIND.checks({"q_in": 0.5 / 3600, "q_out": 1.0 / 3600, "c_in": 0.1, "V_0": 2.0, "V_max": 0.0})
    (empty,) = [n for n in notes if n.code == "tank_empties"]
    assert empty.severity == WARNING and empty.values["at"] == pytest.approx(14400.0, rel=1e-12)
    words = worded(KIND.name, notes)
    assert "the tank empties at t = 14400 s (4 h) after the start" in words[-1]
    assert "coefficient of c varies" in words[0]


def test_constant_volume_reaches_two_percent_of_its_limit_at_130_4_min(tmp_path):
    # Boyce & DiPrima, Elementary Differential Equations, section 2.3 (from memory): dQ/dt = r/4 - r*Q/100,
    # Q(0) = 50, r = 3 per min, limit 25, within 2 % of the limit after 130.4 min. Restated with the same
    # numbers in SI units as a concentration: 100 m^3 tank, 0.25 kg/m^3 inflow, 3 m^3/min in and out,
    # 50 kg / 100 m^3 = 0.5 kg/m^3 at the start; 2 % above the limit 0.25 kg/m^3 is 0.255 kg/m^3.
    path = write(
        tmp_path,
        "constant",
        """
[sheet]
title = "Constant-volume flush (demo)"
[model]
kind = "mixing_tank_concentration"
variable = "t [min]"
[parameters]
q_in = "3 m^3/min"
q_out = "3 m^3/min"
c_in = "0.25 kg/m^3"
V_0 = "100 m^3"
[initial]
value = "0.5 kg/m^3"
[evaluate]
reach = ["0.255 kg/m^3"]
at = ["1000 min"]  # 33 time constants: at the limit to 1e-12
""",
    )
    derivation = build_sheet(path).derivation
    assert derivation.passed
    assert derivation.numbers.values[0].y == pytest.approx(0.25, rel=1e-9)  # the limit
    assert derivation.numbers.reach[0].x / MINUTE == pytest.approx(130.4, abs=0.05)
    assert derivation.numbers.reach[0].x / MINUTE == pytest.approx(100 / 3 * math.log(50), rel=1e-6)


def step_forced_concentration(at_min: float) -> float:
    """Closed form (common practice, no source: the linear balance integrated piece by piece) for the
    filling tank above with c_in stepping from 0 to 1.5 kg/m^3 at 10 min: on each piece with constant c_in,
    c_in - c falls as (V_start/V)^(q_in/(q_in - q_out)); here q_in/(q_in - q_out) = 0.5/0.3."""
    exponent = 0.5 / 0.3

    def volume(t: float) -> float:
        return 6.0 + 0.3 * t

    c_at_step = 0.5 * (volume(0) / volume(10)) ** exponent
    if at_min <= 10:
        return 0.5 * (volume(0) / volume(at_min)) ** exponent
    return 1.5 - (1.5 - c_at_step) * (volume(10) / volume(at_min)) ** exponent


def test_step_in_inflow_concentration_given_as_forcing(tmp_path):
    text = (
        filling_input("mixing_tank_concentration", "c [kg/m^3]", "0.5 kg/m^3").replace('c_in = "1.5 kg/m^3"\n', "")
        + '\n[forcing]\nform = "step"\nafter = "1.5 kg/m^3"\nat = "10 min"\n'
    )
    derivation = build_sheet(write(tmp_path, "step", text)).derivation
    assert derivation.passed
    for at_min, found in zip(AT, derivation.numbers.values):
        assert found.y == pytest.approx(step_forced_concentration(at_min), rel=1e-8)
