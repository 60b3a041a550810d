"""--set what-ifs end to end, and every new bad input (tolerances, ranges, --set) as one line with exit 2."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main

ROOT = Path(__file__).resolve().parents[2]
BUS = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"

BASE = """
[sheet]
title = "Ranges (test)"
[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = {R}
C = "1000 uF"
[initial]
value = "400 V"
[[criteria]]
text = "bled down"
check = "v(60 s) <= 50 V"
"""

THERMAL = """
[sheet]
title = "Temperature range (test)"
[model]
kind = "lumped_body"
unknown = "T [degC]"
variable = "t [min]"
[parameters]
rho = "7850 kg/m^3"
V = "1e-3 m^3"
c_p = "490 J/(kg*K)"
h = "15 W/(m^2*K)"
A = "0.4 m^2"
k = "50 W/(m*K)"
T_inf = {T}
[initial]
value = "400 degC"
"""


def _run(args):
    return CliRunner().invoke(main, args)


@pytest.mark.parametrize(
    "entry, key, words",
    [
        ('{ value = "47 kohm", tolerance = "5 V" }', "parameters.R.tolerance", "neither a per cent"),
        (
            '{ value = "47 kohm", min = "50 kohm", max = "40 kohm" }',
            "parameters.R",
            "min (50 kohm) is greater than max",
        ),
        ('{ value = "47 kohm", min = "48 kohm", max = "60 kohm" }', "parameters.R.min", "outside its range"),
        ('{ value = "47 kohm", max = "40 kohm" }', "parameters.R.max", "outside its range"),
        (
            '{ value = "47 kohm", tolerance = "5 %", min = "40 kohm" }',
            "parameters.R",
            "either a tolerance or min and max",
        ),
        ('{ value = "47 kohm", tolerance = "-5 %" }', "parameters.R.tolerance", "negative"),
        ('{ value = "47 kohm", min = "40 V" }', "parameters.R.min", "has dimension"),
        ('{ value = "47 kohm", spread = "5 %" }', "parameters.R", "unknown key 'spread'"),
    ],
)
def test_bad_range_is_one_line_naming_file_and_key(tmp_path, entry, key, words):
    path = tmp_path / "bad.toml"
    path.write_text(BASE.replace("{R}", entry))
    result = _run(["check", str(path)])
    assert result.exit_code == 2
    assert result.output.count("\n") == 1 and result.output.startswith(f"{path}: {key}: ") and words in result.output


def test_a_per_cent_of_a_celsius_temperature_is_refused_and_a_difference_is_read_in_kelvin(tmp_path):
    path = tmp_path / "t.toml"
    path.write_text(THERMAL.replace("{T}", '{ value = "22 degC", tolerance = "10 %" }'))
    result = _run(["check", str(path)])
    assert result.exit_code == 2 and "parameters.T_inf.tolerance: a per cent of a temperature" in result.output
    from calcsheet.load.loader import load_model

    for written in ('"5 K"', '"5 degC"', '"5 delta_degC"'):
        path.write_text(THERMAL.replace("{T}", f'{{ value = "22 degC", tolerance = {written} }}'))
        p = next(p for p in load_model(path).parameters if p.name == "T_inf")
        assert (p.low, p.high) == pytest.approx((295.15 - 5, 295.15 + 5), abs=1e-9)  # a difference, not 278.15 K


@pytest.mark.parametrize(
    "assignment, key, words",
    [
        ("X=5 kohm", "--set X", "is not a parameter of this model"),
        ("R=5 V", "--set R", "has dimension"),
        ("R", "--set", "is not NAME=VALUE"),
        ("R=five", "--set R", "is not a number"),
    ],
)
def test_bad_set_is_one_line_with_exit_2(tmp_path, assignment, key, words):
    result = _run(["build", str(BUS), "--out", str(tmp_path), "--set", assignment])
    assert result.exit_code == 2, result.output
    assert result.output.count("\n") == 1 and f"{key}: " in result.output and words in result.output
    assert not list(tmp_path.iterdir())


def test_set_builds_a_what_if_beside_never_over_the_issued_sheet(tmp_path):
    """R = 5.1 kohm instead of 4.7 kohm: tau = R C = 11.22 s, v(60 s) = 680 exp(-60/11.22) V (common practice,
    no source), against 50 V; the outputs are <stem>.whatif.* with a banner and the overrides recorded."""
    result = _run(["build", str(BUS), "--out", str(tmp_path), "--set", "R=5.1 kohm", "--format", "json,txt"])
    assert result.exit_code in (0, 1), result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "bus-capacitor-bleed-down.whatif.json",
        "bus-capacitor-bleed-down.whatif.txt",
    ]
    record = json.loads((tmp_path / "bus-capacitor-bleed-down.whatif.json").read_text())
    assert record["overrides"] == {"R": {"value": "5.1 kohm", "was": "4.7 kohm"}}
    found = next(c for c in record["criteria"] if c["check"] == "v(60 s) <= 50 V")["found"]
    assert found["value"] == pytest.approx(680 * math.exp(-60 / (5.1e3 * 2200e-6)), rel=1e-8)
    text = (tmp_path / "bus-capacitor-bleed-down.whatif.txt").read_text()
    assert "What-if: R = 5.1 kohm (input: 4.7 kohm); not the issued design." in text
    check = _run(["check", str(BUS), "--set", "R=5.1 kohm"])
    assert check.exit_code == result.exit_code


def test_set_of_a_kind_slot_left_to_its_default(tmp_path):
    result = _run(["check", str(BUS), "--set", "V_s=10 V"])
    assert result.exit_code in (0, 1) and result.output.count("\n") == 1


def test_a_range_with_a_failing_corner_makes_the_sheet_fail(tmp_path):
    """v(60 s) with R = 20 kohm +-50 % and C = 1000 uF: 400 exp(-3) = 19.9 V at nominal, 400 exp(-2) = 54.1 V
    > 50 V at R = 30 kohm; 400 exp(-60/(R C)) <= 50 V needs R <= 60 / (1 mF ln 8) = 28.85 kohm (from memory
    of the standard result)."""
    path = tmp_path / "r.toml"
    path.write_text(BASE.replace("{R}", '{ value = "20 kohm", tolerance = "50 %" }'))
    result = _run(["build", str(path), "--out", str(tmp_path), "--format", "json"])
    assert result.exit_code == 1 and "FAIL at worst case" in result.output
    record = json.loads((tmp_path / "r.json").read_text())
    criterion = record["criteria"][0]
    assert criterion["passed"] is True and criterion["worst_case"]["verdict"] == "fail"
    assert criterion["worst_case"]["corner"] == {"R": "max"}
    assert criterion["worst_case"]["value"]["value"] == pytest.approx(400 * math.exp(-60 / (30e3 * 1e-3)), rel=1e-8)
    limit = criterion["limiting_values"][0]
    assert limit["value"] == {"value": pytest.approx(60 / (1e-3 * math.log(8)) / 1e3, rel=1e-9), "unit": "kohm"}
    assert record["tolerances"][0]["max"] == {"value": 30.0, "unit": "kohm"}
    assert record["passed"] is False
