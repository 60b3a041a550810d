"""Kind mixing_tank: solute mass in a well-mixed tank, from the mass balance with a varying volume.

Scenarios are invented for these tests. Outside checks name their source beside the check.
"""

from __future__ import annotations

import json
import math

import pytest
from pathlib import Path

from calcsheet.kinds.base import INFO, INVALID, WARNING
from calcsheet.kinds.mixing_tank import KIND
from calcsheet.kinds.catalogue import starter_text  # what `calcsheet new` writes
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import worded

MINUTE = 60.0


def write(tmp_path, name: str, text: str):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


# A process tank drawn down faster than it is fed (invented): it runs empty at 15/(0.6 - 0.4) = 75 min.
DRAINING = """
[sheet]
title = "Rinse-water tank drawn down at the end of a shift (demo)"
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
[[criteria]]
text = "Less than 1 kg left after an hour"
check = "m(60 min) <= 1 kg"
"""


@pytest.fixture(scope="module")
def draining(tmp_path_factory):
    built = build_sheet(write(tmp_path_factory.mktemp("draining"), "draining", DRAINING))
    return built, render(built.sheet, ("txt", "json"))


@pytest.fixture(scope="module")
def starter(tmp_path_factory):
    built = build_sheet(write(tmp_path_factory.mktemp("starter"), "starter", starter_text(KIND.name)))
    return built, render(built.sheet, ("txt",))


def test_draining_tank_end_to_end(draining):
    built, out = draining
    assert KIND.law in out["txt"]
    assert "Model kind: Well-mixed tank (solute mass) (mixing_tank)" in out["txt"]
    record = json.loads(out["json"])
    assert record["verification"]["passed"] and record["passed"]
    assert record["kind"]["name"] == "mixing_tank" and record["kind"]["law"] == KIND.law
    assert built.derivation.verification.passed and built.derivation.passed
    # Outside check (common practice, no source: the textbook integration of the linear balance):
    # with c = m/V, V*dc/dt = q_in*(c_in - c), so c_in - c = (c_in - c_0)*(V/V_0)^(q_in/(q_out - q_in)).
    q_in, q_out, c_in, v_0, m_0 = 0.4 / MINUTE, 0.6 / MINUTE, 0.2, 15.0, 6.0
    for at_min, found in zip((30, 60), built.derivation.numbers.values):
        volume = v_0 - (q_out - q_in) * at_min * MINUTE
        c = c_in - (c_in - m_0 / v_0) * (volume / v_0) ** (q_in / (q_out - q_in))
        assert found.y == pytest.approx(c * volume, rel=1e-9)
    assert [v.y for v in built.derivation.numbers.values] == pytest.approx([2.448, 0.624], rel=1e-9)


def test_draining_tank_warns_it_empties_and_the_solution_stops(draining):
    built, out = draining
    (empty,) = [n for n in built.derivation.model.kind.notes if n.code == "tank_empties"]
    assert empty.severity == WARNING
    # The model stops holding where V(t) = 0: 15 m^3 / (0.2 m^3/min) = 75 min (arithmetic of the inputs).
    assert empty.values["at"] == pytest.approx(4500.0, rel=1e-12)
    assert (
        "WARNING: the tank empties at t = 4500 s (75 min) after the start, from V_0/(q_out - q_in); the "
        "solution stops there." in out["txt"]
    )
    assert built.derivation.numbers.valid_until == (pytest.approx(4500.0, rel=1e-6), "tank_runs_empty")
    assert built.derivation.numbers.span[1] <= 4500.0 * (1 + 1e-9)


def test_filling_tank_states_when_it_overflows():
    # 0.9 and 0.6 m^3/min into 12 m^3 of a 30 m^3 tank: (30 - 12)/(0.3/60) = 3600 s (arithmetic of the inputs).
    notes = KIND.checks({"q_in": 0.015, "q_out": 0.01, "c_in": 0.5, "V_0": 12.0, "V_max": 30.0})
    assert [n.code for n in notes] == ["tank_fills", "tank_overflows"]
    assert notes[1].severity == INFO and notes[1].values["at"] == pytest.approx(3600.0, rel=1e-12)
    law, overflow = worded(KIND.name, notes)
    assert law == (
        "Volume law: V(t) = V_0 + (q_in - q_out)*t = 12 m^3 + 0.005 m^3/s * t; the tank fills, "
        "so the coefficient of m varies with t."
    )
    assert "overflows at t = 3600 s (60 min) after the start, from (V_max - V_0)/(q_in - q_out)" in overflow
    # Hours where hours read better: 1 m^3/h net into 10 m^3 of space takes 10 h.
    notes = KIND.checks({"q_in": 2 / 3600, "q_out": 1 / 3600, "c_in": 0.5, "V_0": 5.0, "V_max": 15.0})
    assert "overflows at t = 36000 s (10 h) after the start" in worded(KIND.name, notes)[1]


def test_capacity_not_stated_or_steady_tank_gives_no_overflow_time():
    filling = KIND.checks({"q_in": 0.015, "q_out": 0.01, "c_in": 0.5, "V_0": 12.0, "V_max": 0.0})
    assert [n.code for n in filling] == ["tank_fills", "tank_capacity_not_stated"]
    steady = KIND.checks({"q_in": 0.05, "q_out": 0.05, "c_in": 0.5, "V_0": 12.0, "V_max": 30.0})
    assert [n.code for n in steady] == ["tank_volume_constant"]
    assert "the volume stays V_0 = 12 m^3" in worded(KIND.name, steady)[0]
    overfull = KIND.checks({"q_in": 0.05, "q_out": 0.01, "c_in": 0.5, "V_0": 40.0, "V_max": 30.0})
    assert [n.code for n in overfull if n.severity == INVALID] == ["tank_over_capacity"]


def test_constant_volume_reaches_two_percent_of_its_limit_at_130_4_min(tmp_path):
    # Boyce & DiPrima, Elementary Differential Equations, section 2.3 (from memory): dQ/dt = r/4 - r*Q/100,
    # Q(0) = 50, r = 3 per min, limit 25, within 2 % of the limit after 130.4 min. Restated here with the
    # same numbers in SI units: 100 m^3 tank, 0.25 kg/m^3 inflow, 3 m^3/min in and out, 50 kg at the start.
    path = write(
        tmp_path,
        "constant",
        """
[sheet]
title = "Constant-volume flush (demo)"
[model]
kind = "mixing_tank"
variable = "t [min]"
[parameters]
q_in = "3 m^3/min"
q_out = "3 m^3/min"
c_in = "0.25 kg/m^3"
V_0 = "100 m^3"
[initial]
value = "50 kg"
[evaluate]
reach = ["25.5 kg"]
at = ["1000 min"]  # 33 time constants: at the limit to 1e-12
""",
    )
    derivation = build_sheet(path).derivation
    assert derivation.passed
    assert derivation.numbers.values[0].y == pytest.approx(25.0, rel=1e-9)  # the limit
    assert derivation.numbers.reach[0].x / MINUTE == pytest.approx(130.4, abs=0.05)
    assert derivation.numbers.reach[0].x / MINUTE == pytest.approx(100 / 3 * math.log(50), rel=1e-6)


def test_capacity_used_by_the_checks_is_not_called_unused(starter):
    _, out = starter
    assert "not used in the equation: V_max" not in out["txt"]


def test_step_in_inflow_concentration_given_as_forcing(tmp_path):
    # Closed form (common practice, no source: the linear balance integrated piece by piece), tank filling from
    # 6 m^3 at 0.5 in / 0.2 out m^3/min, 3 kg at the start, c_in stepping from 0 to 1.5 kg/m^3 at 10 min.
    path = write(
        tmp_path,
        "step",
        """
[sheet]
title = "Dosing tank, dosing switched on after 10 minutes (demo)"
[model]
kind = "mixing_tank"
variable = "t [min]"
[parameters]
q_in = "0.5 m^3/min"
q_out = "0.2 m^3/min"
V_0 = "6 m^3"
[forcing]
form = "step"
after = "1.5 kg/m^3"
at = "10 min"
[initial]
value = "3 kg"
[evaluate]
at = ["5 min", "30 min"]
""",
    )
    exponent = 0.5 / 0.3

    def volume(t_min: float) -> float:
        return 6.0 + 0.3 * t_min

    def concentration(t_min: float) -> float:
        c_at_step = 0.5 * (volume(0) / volume(10)) ** exponent
        if t_min <= 10:
            return 0.5 * (volume(0) / volume(t_min)) ** exponent
        return 1.5 - (1.5 - c_at_step) * (volume(10) / volume(t_min)) ** exponent

    derivation = build_sheet(path).derivation
    assert derivation.passed
    for at_min, found in zip((5, 30), derivation.numbers.values):
        assert found.y == pytest.approx(concentration(at_min) * volume(at_min), rel=1e-8)


def test_overflow_inside_the_plotted_range_stops_plot_and_search(tmp_path):
    """V(t) = V_0 + (q_in - q_out) t reaches V_max at (V_max - V_0)/(q_in - q_out): 20 m^3 to 60 m^3 at
    0.4 m^3/min takes 100 min (arithmetic of the volume balance; common practice, no source)."""
    text = (Path(__file__).resolve().parents[2] / "inputs" / "equalisation-tank-tracer.toml").read_text()
    text = text.replace('to = "100 min"', 'to = "150 min"').replace(
        'at = ["30 min", "60 min", "90 min"]', 'at = ["30 min", "60 min", "90 min", "120 min"]'
    )
    path = tmp_path / "overflowing.toml"
    path.write_text(text, encoding="utf-8")
    built = build_sheet(path)
    numbers = built.derivation.numbers
    assert numbers.valid_until[0] == pytest.approx(6000.0)
    assert numbers.span[1] == pytest.approx(6000.0)
    record = render(built.sheet, ("txt",))["txt"]
    assert "The tank overflows at t = 100 min" in record and "Values past it (120 min) do not apply" in record


SWITCHED = """
[sheet]
title = "Tank whose inflow is cut back at 10 min (demo)"
[model]
kind = "mixing_tank"
variable = "t [min]"
[parameters]
q_in = "1 m^3/min"
q_out = "0.6 m^3/min"
c_in = "2 kg/m^3"
V_0 = "12 m^3"
[initial]
value = "3 kg"
[evaluate]
at = ["8 min", "15 min", "25 min"]
[[switch]]
at = "10 min"
text = "inflow cut back"
parameters = { q_in = "0.2 m^3/min" }
"""


def _governing_step(text: str, interval: int) -> str:
    start = text.index(f"== Interval {interval}, step 1: Governing equation and data ==")
    return text[start : text.index("== Interval", start + 1)]


def test_a_later_interval_writes_its_law_on_the_clock_started_at_the_switch(tmp_path):
    # After the switch the volume law runs from t_V = 10 min, where the volume is 12 + (1 - 0.6)*10 = 16 m^3;
    # it then drains at 0.4 m^3/min and empties 16/0.4 = 40 min later, at 50 min (arithmetic of the inputs).
    text = render(build_sheet(write(tmp_path, "switched", SWITCHED)).sheet, ("txt",))["txt"]
    first, second = _governing_step(text, 1), _governing_step(text, 2)
    assert "so V = V_0 + (q_in - q_out)*t   (volume balance)" in first
    assert "dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*t)" in first
    assert "t_V" not in first
    assert "so V = V_0 + (q_in - q_out)*(t - t_V)   (volume balance)" in second
    assert "dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*(t - t_V))" in second
    assert "*t)" not in second.replace("*(t - t_V))", "")  # every step of the later interval on the shifted clock
    assert (
        "Volume law: V(t) = V_0 + (q_in - q_out)*(t - t_V) = 16 m^3 - 0.006667 m^3/s * (t - t_V); the tank drains"
    ) in second
    assert "the tank empties at t = 3000 s (50 min), 2400 s (40 min) after t_V = 600 s (10 min)" in second
