"""The series_rl kind: end to end, against a published solution, wrong units, a step source, its starter."""

from __future__ import annotations

import json
import math
import tomllib

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from calcsheet.errors import CalcsheetError
from calcsheet.kinds import kind_named
from calcsheet.kinds.series_rl import KIND
from calcsheet.pipeline import build_sheet, render


def build(directory, name: str, text: str):
    path = directory / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return build_sheet(path)


def starter_input(kind) -> str:
    """What `calcsheet new` writes: the kind's starter plus [model], [parameters], [initial]."""
    parameters = "\n".join(f'{slot.name} = "{slot.example}"' for slot in kind.slots)
    return (f'{kind.starter}\n[model]\nkind = "{kind.name}"\n\n[parameters]\n{parameters}\n\n'
            f'[initial]\nvalue = "{kind.unknown.example}"\n')


# A coil switched onto a battery; the figures are those of the published solution cited below.
COIL = """
[sheet]
title = "Coil switched onto a battery"
[model]
kind = "series_rl"
[parameters]
L = "2.0 H"
R = "20 ohm"
V_s = "4.0 V"
[initial]
value = "0 A"
[evaluate]
at = ["0.2 s"]
"""


@pytest.fixture(scope="module")
def coil(tmp_path_factory):
    return build(tmp_path_factory.mktemp("rl"), "coil", COIL)


def test_kind_is_found_by_its_module_name():
    assert kind_named("series_rl") is KIND
    assert KIND.name == "series_rl" and KIND.source == "V_s"
    assert "\n" not in KIND.summary


def test_end_to_end_sheet_states_the_law_and_passes(coil):
    rendered = render(coil.sheet, ("txt", "json"))
    text = rendered["txt"]
    assert "Series RL circuit (series_rl)" in text
    assert f"Governing law: {KIND.law}." in text
    assert "Kirchhoff's voltage law" in text
    assert "L*di/dt + R*i = V_s" in text
    assert "Verification passed." in text
    record = json.loads(rendered["json"])
    assert record["passed"] is True
    assert record["verification"]["passed"] is True
    assert record["model"]["equation"] == "L*di/dt + R*i = V_s"
    assert coil.derivation.passed


def test_coil_on_a_battery_matches_the_published_solution(coil):
    # Source: a physics exercise collection, chapter on inductance, solution published online
    # (read in a published solution): L = 2.0 H, R = 20 ohm, E = 4.0 V; tau = 0.1 s, i(0.2 s) = 0.1729 A.
    numbers = coil.derivation.numbers
    assert numbers.time_constant == pytest.approx(0.1, rel=1e-12)
    (value,) = numbers.values
    assert value.y == pytest.approx(0.1729, abs=5e-5)
    # Steady current E/R = 0.2 A (Ohm's law once di/dt = 0; common practice, no source).
    assert numbers.final_value == pytest.approx(0.2, rel=1e-12)


def test_no_resistance_gives_a_ramp_and_a_warning(tmp_path):
    # With R = 0 the coil alone takes the source voltage: di/dt = V/L, i = V t / L
    # (inductor law v = L di/dt; common practice, no source): 4 V / 2 H * 0.2 s = 0.4 A.
    built = build(tmp_path, "no_r", COIL.replace('R = "20 ohm"', 'R = "0 ohm"'))
    (value,) = built.derivation.numbers.values
    assert value.y == pytest.approx(0.4, rel=1e-9)
    assert built.derivation.numbers.time_constant is None
    text = render(built.sheet, ("txt",))["txt"]
    assert "WARNING: R = 0: with no resistance" in text


def test_checks_are_quiet_for_an_ordinary_coil():
    assert KIND.checks({"R": 120.0, "L": 0.6, "V_s": 24.0}) == ()
    assert KIND.checks({"R": 120.0, "L": 0.6, "V_s_amp": 24.0}) == ()  # V_s replaced by a forcing
    (note,) = KIND.checks({"R": -5.0, "L": 0.6})
    assert note.startswith("WARNING: R is negative")



def test_zero_inductance_is_refused_as_an_input_error(tmp_path):
    with pytest.raises(CalcsheetError):
        build(tmp_path, "no_l", COIL.replace('L = "2.0 H"', 'L = "0 H"'))

@pytest.mark.parametrize("slot, wrong, expected_unit", [
    ("L", "2 F", "H"),  # capacitance given for the inductance
    ("R", "20 S", "ohm"),  # a conductance given for the resistance
])
def test_wrong_dimension_names_file_slot_kind_and_unit(tmp_path, slot, wrong, expected_unit):
    path = tmp_path / "wrong_unit.toml"
    line = next(line for line in COIL.splitlines() if line.startswith(f"{slot} = "))
    path.write_text(COIL.replace(line, f'{slot} = "{wrong}"'), encoding="utf-8")
    with pytest.raises(CalcsheetError) as caught:
        build_sheet(path)
    message = str(caught.value)
    assert str(path) in message
    assert f"parameters.{slot}" in message
    assert "series_rl" in message
    assert f"dimension of {expected_unit} " in message


STEP_AT = 0.05
STEP_INPUT = """
[sheet]
title = "Coil fed through a contact that closes at 50 ms"
[model]
kind = "series_rl"
[parameters]
L = "2.0 H"
R = "20 ohm"
[forcing]
form = "step"
after = "4.0 V"
at = "50 ms"
[initial]
value = "0 A"
[evaluate]
at = ["30 ms", "0.1 s", "0.15 s", "0.4 s"]
"""


def test_step_source_agrees_with_scipy_lsoda(tmp_path):
    # Reference: scipy.integrate.solve_ivp (LSODA) on L di/dt + R i = V(t), V a 4 V step at 50 ms,
    # written out here independently of calcsheet.
    built = build(tmp_path, "rl_step", STEP_INPUT)
    assert built.derivation.passed
    assert "V_s is a step" in built.derivation.model.kind.forcing

    def rate(t, i):
        return [((4.0 if t >= STEP_AT else 0.0) - 20.0 * i[0]) / 2.0]

    points = [v.at.si for v in built.derivation.numbers.values]
    reference = solve_ivp(rate, (0.0, max(points)), [0.0], method="LSODA", t_eval=points,
                          rtol=1e-10, atol=1e-13, max_step=1e-3)
    assert reference.success
    derived = np.array([v.y for v in built.derivation.numbers.values])
    assert derived == pytest.approx(reference.y[0], rel=1e-5, abs=1e-10)
    # Before the contact closes nothing flows; afterwards the rise has tau = L/R = 0.1 s
    # (common practice, no source).
    assert derived[0] == 0.0
    assert derived[1] == pytest.approx(0.2 * (1 - math.exp(-(0.1 - STEP_AT) / 0.1)), rel=1e-9)


def test_starter_builds_with_all_criteria_passing(tmp_path):
    starter = tomllib.loads(KIND.starter)
    assert not {"model", "parameters", "initial"} & set(starter)
    assert starter["criteria"]
    built = build(tmp_path, "starter", starter_input(KIND))
    verdicts = built.derivation.numbers.verdicts
    assert len(verdicts) == len(starter["criteria"])
    assert all(v.passed for v in verdicts)
    assert built.derivation.passed
    assert built.derivation.model.kind.notes == ()
