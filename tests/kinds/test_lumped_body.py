"""The lumped_body kind against outside figures: closed forms, a textbook bead, the Biot limit, ambient ramps."""

from __future__ import annotations

import math

import pytest

from calcsheet.kinds.base import INFO, INVALID
from calcsheet.kinds.lumped_body import KIND
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import worded

# A steel block with a heater pad in still air (invented for these tests).
BLOCK = {
    "rho": "7850 kg/m^3",
    "c_p": "460 J/(kg*K)",
    "V": "1.0e-4 m^3",
    "A": "0.016 m^2",
    "h": "25 W/(m^2*K)",
    "k": "45 W/(m*K)",
    "T_inf": "20 degC",
    "Q": "10 W",
}


def write_input(
    tmp_path, name: str, parameters: dict, initial: str, evaluate: str = "", forcing: str = "", extra: str = ""
) -> object:
    lines = "\n".join(f'{key} = "{value}"' for key, value in parameters.items())
    text = (
        f'[sheet]\ntitle = "{name} (test)"\n\n[model]\nkind = "lumped_body"\n\n[parameters]\n{lines}\n\n'
        f'{forcing}\n[initial]\nvalue = "{initial}"\n\n[evaluate]\n{evaluate}\n{extra}'
    )
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def sphere(diameter: float) -> dict:
    """Volume and surface of a sphere, written here so the kind gets plain numbers."""
    return {"V": f"{math.pi * diameter**3 / 6!r} m^3", "A": f"{math.pi * diameter**2!r} m^2"}


@pytest.fixture(scope="module")
def block(tmp_path_factory):
    path = write_input(
        tmp_path_factory.mktemp("block"),
        "block",
        BLOCK,
        "20 degC",
        'at = ["10 min", "30 min"]\nreach = ["40 degC"]',
        extra='[[criteria]]\ncheck = "final_value <= 60 degC"\n',
    )
    built = build_sheet(path)
    return built, render(built.sheet, ("txt", "json"))


def test_block_against_its_closed_form(block):
    # The lumped body with a constant heat input settles at T_inf + Q/(h*A) with tau = rho*c_p*V/(h*A)
    # (common practice, no source; the closed form of the energy balance, worked out here).
    built, _ = block
    h_a, capacity = 25 * 0.016, 7850 * 460 * 1.0e-4
    tau = capacity / h_a
    assert built.derivation.numbers.time_constant == pytest.approx(tau, rel=1e-9)
    settled = 293.15 + 10 / h_a
    assert built.derivation.numbers.final_value == pytest.approx(settled, rel=1e-9)
    for value, seconds in zip(built.derivation.numbers.values, (600, 1800)):
        assert value.y == pytest.approx(settled - (settled - 293.15) * math.exp(-seconds / tau), rel=1e-9)


def test_thermocouple_bead_time_constant(tmp_path):
    # Source: Lienhard & Lienhard, A Heat Transfer Textbook, 3rd ed., Example 1.4 (thermocouple bead):
    # D = 1 mm, c = 180 J/(kg K), h = 250 W/(m^2 K), rho = 9300 kg/m^3 give tau = 1.116 s, and the bead
    # is within 95 % of the change after three time constants. Part read in the source, part from memory.
    # Gas 120 degC, bead start 20 degC and k = 20 W/(m K) (only for the Biot note) are chosen here.
    parameters = {
        "rho": "9300 kg/m^3",
        "c_p": "180 J/(kg*K)",
        **sphere(1e-3),
        "h": "250 W/(m^2*K)",
        "k": "20 W/(m*K)",
        "T_inf": "120 degC",
    }
    path = write_input(tmp_path, "bead", parameters, "20 degC", 'at = ["3.348 s"]')
    derivation = build_sheet(path).derivation
    assert derivation.numbers.time_constant == pytest.approx(1.116, abs=0.0005)
    (value,) = derivation.numbers.values
    assert (value.y - 293.15) / 100 >= 0.95
    assert all(note.severity == INFO for note in derivation.model.kind.notes)
    assert derivation.passed


def test_biot_note_and_limit():
    # Lumped analysis is acceptable for Bi = h*Lc/k <= 0.1 with Lc = V/A (standard heat-transfer texts, e.g.
    # Incropera et al., Fundamentals of Heat and Mass Transfer, section on the lumped capacitance method;
    # Cengel, Heat and Mass Transfer, chapter on transient conduction). Common practice; criterion from memory.
    base = {"V": 1e-3, "A": 0.1, "k": 10.0}  # Lc = 0.01 m
    (note,) = KIND.checks({**base, "h": 99.0})  # Bi = 0.099
    assert note.severity == INFO and note.values["biot"] == pytest.approx(0.099, rel=1e-12)
    (words,) = worded(KIND.name, (note,))
    assert "Bi = h*Lc/k = 0.099" in words and "Lc = V/A = 0.01 m" in words
    notes = KIND.checks({**base, "h": 101.0})  # Bi = 0.101
    assert [n.severity for n in notes] == [INFO, INVALID]
    words = worded(KIND.name, notes)
    assert "Bi = h*Lc/k = 0.101" in words[0] and "not valid" in words[1] and "transient conduction" in words[1]


def test_biot_warning_reaches_the_sheet(tmp_path):
    # A 100 mm steel cube quenched in water, h = 2000 W/(m^2 K) (invented): Lc = V/A = 0.1/6 m, Bi = 0.74,
    # well above the lumped limit of 0.1 (common practice; criterion from memory).
    parameters = {**BLOCK, "V": "1.0e-3 m^3", "A": "0.06 m^2", "h": "2000 W/(m^2*K)", "T_inf": "30 degC"}
    del parameters["Q"]
    path = write_input(tmp_path, "quench", parameters, "850 degC", 'at = ["1 min"]')
    built = build_sheet(path)
    (not_valid,) = built.derivation.model.kind.not_valid
    assert not_valid.values["biot"] == pytest.approx(2000 * (1e-3 / 0.06) / 45, rel=1e-12)
    assert not built.derivation.passed  # the model does not hold here
    text = render(built.sheet, ("txt",))["txt"]
    assert "WARNING: Model not valid for this case: Bi = 0.7407 exceeds 0.1" in text
    assert "OUTCOME: The model is not valid for this case: Bi = 0.7407 exceeds 0.1" in text


def ramp_lagged(seconds: float, start: float, rate: float, tau: float) -> float:
    """A first-order body that starts at the ambient and follows a ramp of it: it lags by rate*tau once
    settled, T = T_inf(t) - rate*tau*(1 - exp(-t/tau)) (common practice, no source; worked out here)."""
    return start + rate * seconds - rate * tau * (1 - math.exp(-seconds / tau))


RAMP_PARAMETERS = {key: value for key, value in BLOCK.items() if key not in ("T_inf", "Q")}
RAMP_TAU = 7850 * 460 * 1.0e-4 / (25 * 0.016)


def test_ambient_ramp_given_as_expression(tmp_path):
    # The oven air rises at 2 K/min from 20 degC (invented); T_inf as an expression forcing.
    parameters = {**RAMP_PARAMETERS, "T_inf_0": "20 degC", "T_inf_rate": "2 degC/min"}
    forcing = '[forcing]\nform = "expression"\nexpression = "T_inf_0 + T_inf_rate*t"\n'
    path = write_input(tmp_path, "oven_expression", parameters, "20 degC", 'at = ["10 min", "1 h"]', forcing)
    derivation = build_sheet(path).derivation
    for value, seconds in zip(derivation.numbers.values, (600, 3600)):
        assert value.y == pytest.approx(ramp_lagged(seconds, 293.15, 2 / 60, RAMP_TAU), rel=1e-9)
    assert derivation.passed


def test_ambient_ramp_given_as_ramp_form(tmp_path):
    # Same oven as above, with the ramp form of [forcing].
    forcing = '[forcing]\nform = "ramp"\nstart = "20 degC"\nrate = "2 degC/min"\n'
    path = write_input(tmp_path, "oven_ramp", RAMP_PARAMETERS, "20 degC", 'at = ["10 min", "1 h"]', forcing)
    derivation = build_sheet(path).derivation
    for value, seconds in zip(derivation.numbers.values, (600, 3600)):
        assert value.y == pytest.approx(ramp_lagged(seconds, 293.15, 2 / 60, RAMP_TAU), rel=1e-9)


def test_conductivity_is_not_reported_unused(block):
    _, rendered = block
    assert "not used in the equation: k" not in rendered["txt"]
