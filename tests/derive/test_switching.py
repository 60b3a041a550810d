"""Switched models: intervals joined by continuity, checked against scipy on the switched system."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from scipy.integrate import solve_ivp

from calcsheet.errors import CalcsheetError
from calcsheet.pipeline import build_sheet, render

ROOT = Path(__file__).resolve().parents[2]

RAW = """
[sheet]
title = "switched test"
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
[evaluate]
at = [{at}]
{switches}
"""

SWITCHES = """
[[switch]]
at = "0.04 s"
text = "series resistor added"
parameters = {{ R = "25 ohm" }}
[[switch]]
at = "0.1 s"
text = "supply removed"
parameters = {{ R = "25 ohm", V_s = "0 V" }}
"""


def write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "switched.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_piecewise_solution_agrees_with_scipy_on_the_switched_system(tmp_path):
    points = [0.02, 0.039, 0.041, 0.07, 0.099, 0.101, 0.15, 0.3]
    path = write(tmp_path, RAW.format(at=", ".join(f'"{p} s"' for p in points), switches=SWITCHES.format()))
    d = build_sheet(path).derivation
    assert d.passed

    def slope(t, i):  # the switched circuit written directly, one right-hand side for all time
        R = 10.0 if t < 0.04 else 25.0
        V = 12.0 if t < 0.1 else 0.0
        return [(V - R * i[0]) / 0.5]

    reference = solve_ivp(slope, (0, 0.3), [0.0], method="LSODA", t_eval=points, rtol=1e-11, atol=1e-14, max_step=1e-4)
    for value, expected in zip(d.numbers.values, reference.y[0]):
        assert value.y == pytest.approx(expected, rel=1e-6)


def test_closed_form_across_a_switch(tmp_path):
    # i rises as (V/R1)(1 - e^(-R1 t/L)) until t1, then relaxes towards V/R2 with tau = L/R2
    # (first-order step response on each interval; common practice, no source).
    text = RAW.format(at='"0.06 s"', switches='[[switch]]\nat = "0.04 s"\nparameters = { R = "25 ohm" }\n')
    d = build_sheet(write(tmp_path, text)).derivation
    i1 = 12 / 10 * (1 - math.exp(-10 * 0.04 / 0.5))
    expected = 12 / 25 + (i1 - 12 / 25) * math.exp(-25 * 0.02 / 0.5)
    assert d.numbers.values[0].y == pytest.approx(expected, rel=1e-10)
    assert d.intervals[1].derivation.model.initial_value.si == pytest.approx(i1, rel=1e-12)


def test_sheet_shows_each_interval_and_the_results_across(tmp_path):
    path = write(tmp_path, RAW.format(at='"0.2 s"', switches=SWITCHES.format()))
    text = render(build_sheet(path).sheet, ("txt",))["txt"]
    for fragment in (
        "Intervals and switches",
        "Interval 1, step 4: Integrating factor",
        "Interval 3, step 6: Initial condition",
        "supply removed",
        "Results across the switches",
        "continuity at the switches",
        "switched integration",
    ):
        assert fragment in text


@pytest.mark.parametrize(
    "switches, key, fragment",
    [
        ('[[switch]]\nat = "0 s"\nparameters = { R = "20 ohm" }\n', "switch[1].at", "must come after"),
        ('[[switch]]\nat = "1 s"\nparameters = { R = "20 A" }\n', "switch[1].model.equation", "dimension"),
        ('[[switch]]\nat = "1 s"\nparameters = "R = 20 ohm"\n', "switch[1].parameters", "table"),
        ('[[switch]]\nat = "1 s"\nforcing = { form = "constant", value = "3 V" }\n', "switch[1].forcing", "model kind"),
        ('[[switch]]\nat = "1 s"\nwhen = "later"\n', "switch[1].when", "unknown key"),
        ('[switch]\nat = "1 s"\n', "switch", "[[switch]]"),
    ],
)
def test_switch_errors_name_the_switch(tmp_path, switches, key, fragment):
    path = write(tmp_path, RAW.format(at='"0.2 s"', switches=switches))
    with pytest.raises(CalcsheetError) as info:
        build_sheet(path)
    message = str(info.value)
    assert message.startswith(f"{path}: {key}") and fragment in message and "\n" not in message


def test_demo_with_an_economy_resistor_passes_at_nominal_and_says_it_fails_at_worst_case():
    # The demo states a hot winding and a supply 10 % low (tests/end_to_end/demo_verdicts.py): at nominal
    # both criteria pass and the switched response verifies; at worst case the pull-in is not reached in time.
    built = build_sheet(ROOT / "inputs" / "valve-coil-economiser.toml")
    d = built.derivation
    assert len(d.intervals) == 2 and d.verification.passed
    assert all(v.status == "pass" for v in d.numbers.verdicts)
    assert not d.passed


def test_record_v2_gives_each_interval_with_the_parameters_in_force(tmp_path):
    path = write(tmp_path, RAW.format(at='"0.02 s", "0.3 s"', switches=SWITCHES.format()))
    record = build_sheet(path).sheet.record
    assert record["format"] == "calcsheet-record" and record["version"] == 2
    assert not {"solution", "classification", "time_constant", "final_value", "values"} & set(record)
    intervals = record["intervals"]
    assert [(i["from"]["value"], i["to"] and i["to"]["value"]) for i in intervals] == [
        (0.0, 0.04),
        (0.04, 0.1),
        (0.1, None),
    ]
    assert [i["switch"] for i in intervals] == [None, "series resistor added", "supply removed"]
    in_force = [{p["name"]: (p["si"], p["changed"]) for p in i["parameters"]} for i in intervals]
    assert in_force[0] == {"L": (0.5, False), "R": (10.0, False), "V_s": (12.0, False)}
    assert in_force[1] == {"L": (0.5, False), "R": (25.0, True), "V_s": (12.0, False)}
    # the third switch restates R = 25 ohm: in force, not changed
    assert in_force[2] == {"L": (0.5, False), "R": (25.0, False), "V_s": (0.0, True)}
    # tau = L/R and the final value V_s/R of each interval (first-order RL circuit; common practice, no source)
    assert [i["time_constant"]["value"] for i in intervals] == pytest.approx([0.05, 0.02, 0.02], rel=1e-9)
    assert [i["final_value"]["value"] for i in intervals] == pytest.approx([1.2, 0.48, 0.0], abs=1e-12)
    # each interval starts where the one before ends: 1.2 A (1 - exp(-10 x 0.04 / 0.5)) at the first switch
    assert intervals[1]["initial"]["value"] == pytest.approx(1.2 * (1 - math.exp(-0.8)), rel=1e-3)
    assert all(i["solution"]["closed_form"] and i["verification"]["passed"] for i in intervals)
    across = record["across"]
    assert [v["at"]["value"] for v in across["values"]] == [0.02, 0.3]
    assert [c["name"] for c in across["verification"]["checks"]] == [
        "each interval",
        "continuity at the switches",
        "switched integration",
    ]
    assert across["verification"]["passed"] and record["passed"]
