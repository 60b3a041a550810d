"""Parameters and criterion limits written as expressions ("4 * 550 uF", "R*C", "T_amb + 8.8 K"), and cited limits.

Values are checked against pint computing the same quantity on its own registry (never calcsheet's), with its own
offset-unit rules: a difference of two degC readings is a delta_degC, and a reading plus a delta_degC is a reading.
The cooling law T = T_amb + (T_0 - T_amb) exp(-t/tau) of a lumped body is common practice, no source.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import pint
import pytest
from click.testing import CliRunner

from calcsheet.cli import main
from calcsheet.load.loader import load_model
from calcsheet.pipeline import build_sheet, render

PINT = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
Q = PINT.Quantity


def cooling(parameters: str, checks: str = "") -> str:
    return (
        '[sheet]\ntitle = "Part cooling in a warm room"\n'
        '[model]\nequation = "tau*dT/dt + T = T_amb"\nunknown = "T [degC]"\nvariable = "t [min]"\n'
        f"[parameters]\n{parameters}\n"
        '[initial]\nvalue = "80 degC"\n'
        f"{checks}"
    )


def write(tmp_path: Path, text: str, name: str = "input.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def parameter(tmp_path, text, name):
    return next(p for p in load_model(write(tmp_path, text)).parameters if p.name == name)


def refused(tmp_path: Path, text: str, key: str, *fragments: str) -> str:
    """Refused with exit 2 in one line 'file: key: message' holding every fragment."""
    path = write(tmp_path, text)
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2, result.output
    shown = result.output.strip()
    assert "Traceback" not in shown
    assert len(shown.splitlines()) == 1, shown
    assert shown.startswith(f"{path}: {key}: "), shown
    for fragment in fragments:
        assert fragment in shown, shown
    return shown


# ----------------------------------------------------------------- values against pint
@pytest.mark.parametrize(
    "lines, name, reference",
    [
        (['C = "4 * 550 uF"'], "C", 4 * Q(550, "uF")),
        (['R = "4.7 kohm"', 'C = "2200 uF"', 'k = "R*C"'], "k", Q(4.7, "kohm") * Q(2200, "uF")),
        (['T_s = "40 degC"', 'dT = "T_s - T_amb"'], "dT", Q(40, "degC") - Q(35, "degC")),
        (['T_lim = "T_amb + 8.8 K"'], "T_lim", Q(35, "degC") + Q(8.8, "delta_degC")),
        (['T_lim = "T_amb + 8.8 delta_degC"'], "T_lim", Q(35, "degC") + Q(8.8, "delta_degC")),
        (['hA = "15 W/(m^2*K) * 0.42 m^2"'], "hA", Q(15, "W/(m^2*K)") * Q(0.42, "m^2")),
        (['q = "1.2 m^3/min / 2 + 5 L/s"'], "q", Q(1.2, "m^3/min") / 2 + Q(5, "L/s")),
        (['w = "2*pi*50 Hz"'], "w", 2 * math.pi * Q(50, "Hz")),
        (['v = "sqrt(2) * 230 V"'], "v", math.sqrt(2) * Q(230, "V")),
    ],
)
def test_a_parameter_written_as_an_expression_has_the_value_pint_gives(tmp_path, lines, name, reference):
    text = cooling("\n".join(['T_amb = "35 degC"', 'tau = "6.4 min"', *lines]))
    found = parameter(tmp_path, text, name)
    expected = reference.to_base_units().magnitude  # kelvin for a reading, as the mathematics uses
    assert found.si == pytest.approx(expected, rel=1e-12)
    assert found.quantity.to_base_units().magnitude == pytest.approx(expected, rel=1e-9)  # as shown, 4 figures


def test_a_mean_of_two_readings_is_a_reading(tmp_path):
    text = cooling('T_amb = "35 degC"\ntau = "6.4 min"\nT_1 = "20 degC"\nT_2 = "30 degC"\nT_m = "(T_1 + T_2)/2"')
    found = parameter(tmp_path, text, "T_m")
    mean = (Q(20, "degC").to("K") + Q(30, "degC").to("K")) / 2
    assert found.si == pytest.approx(mean.magnitude, rel=1e-12)
    assert found.text == "25 degC"


def test_the_sheet_shows_each_worked_value_as_a_hand_check_line(tmp_path):
    text = cooling('T_amb = "35 degC"\nR_th = "2 K/W"\nC_th = "4 * 48 J/K"\ntau = "R_th*C_th"')
    record = render(build_sheet(write(tmp_path, text)).sheet, ("txt",))["txt"]
    assert "C_th = 4 × 48 J/K = 192 J/K" in record
    assert "tau = R_th × C_th = 2 K/W × 192 J/K = 384 s" in record
    assert "worked out from R_th*C_th" in record


def test_a_set_base_value_flows_into_the_values_worked_out_from_it(tmp_path):
    text = cooling('T_amb = "35 degC"\nR_th = "2 K/W"\nC_th = "192 J/K"\ntau = "R_th*C_th"')
    model = load_model(write(tmp_path, text), (("R_th", "3 K/W"),))
    tau = next(p for p in model.parameters if p.name == "tau")
    assert tau.si == pytest.approx((Q(3, "K/W") * Q(192, "J/K")).to("s").magnitude, rel=1e-12)


# ------------------------------------------------------------ the ambient that changed
STORY_CHECKS = (
    '[[criteria]]\ntext = "tied to the ambient"\ncheck = "T(10 min) >= T_amb + 8.8 K"\nbasis = "common practice"\n'
    '[[criteria]]\ntext = "worked out by hand for 35 degC"\ncheck = "T(10 min) >= 43.8 degC"\n'
)


def _verdicts(tmp_path, ambient: str):
    text = cooling(f'T_amb = "{ambient}"\ntau = "6.4 min"', STORY_CHECKS)
    built = build_sheet(write(tmp_path, text, f"story-{ambient.split()[0]}.toml"))
    return built.derivation.numbers.verdicts


@pytest.mark.parametrize("ambient_c, holds", [(35.0, True), (40.0, False)])
def test_a_limit_written_from_the_ambient_follows_it_where_a_hand_worked_one_does_not(tmp_path, ambient_c, holds):
    tied, by_hand = _verdicts(tmp_path, f"{ambient_c:g} degC")
    # the cooling law by hand (common practice, no source): T = T_amb + (T_0 - T_amb) exp(-t/tau)
    expected_c = ambient_c + (80 - ambient_c) * math.exp(-10 / 6.4)
    assert tied.actual - 273.15 == pytest.approx(expected_c, rel=1e-9)
    assert tied.criterion.limit.si == pytest.approx((Q(ambient_c, "degC") + Q(8.8, "delta_degC")).to("K").magnitude)
    assert tied.passed is holds  # 80 - T_amb times exp(-10/6.4) = 0.2096 against 8.8 K: 9.43 K, then 8.38 K
    assert by_hand.passed is True  # the hand-worked limit of 43.8 degC never notices the warmer room


def test_the_criteria_table_shows_the_limits_expression_value_and_source_in_every_record(tmp_path):
    cited = STORY_CHECKS.replace('basis = "common practice"', 'source = "client specification §4.2"')
    text = cooling('T_amb = "35 degC"\ntau = "6.4 min"', cited)
    sheet = build_sheet(write(tmp_path, text)).sheet
    out = render(sheet, ("txt", "json", "html"))
    row = next(line for line in out["txt"].splitlines() if line.strip().startswith("tied to the ambient |"))
    assert "T(10 min) >= T_amb + 8.8 K, where T_amb + 8.8 K = 43.8 degC" in row
    assert "client specification §4.2" in row
    by_hand = next(line for line in out["txt"].splitlines() if "worked out by hand for 35 degC |" in line)
    assert "no source given" in by_hand
    criteria = json.loads(out["json"])["criteria"]
    assert criteria[0]["source"] == "client specification §4.2" and criteria[0]["basis"] is None
    assert criteria[0]["limit"] == {"value": {"value": 43.8, "unit": "degC"}, "expression": "T_amb + 8.8 K"}
    assert criteria[1]["source"] is None and criteria[1]["limit"]["expression"] is None
    assert "client specification §4.2" in out["html"] and "no source given" in out["html"]


def test_a_basis_is_shown_as_a_basis(tmp_path):
    text = cooling('T_amb = "35 degC"\ntau = "6.4 min"', STORY_CHECKS)
    out = render(build_sheet(write(tmp_path, text)).sheet, ("txt", "json"))
    assert "basis: common practice" in out["txt"]
    assert json.loads(out["json"])["criteria"][0]["basis"] == "common practice"


# -------------------------------------------------------------------------- the margin
def test_a_value_worked_out_from_a_toleranced_one_moves_with_it_in_the_margin(tmp_path):
    """tau = R_th*C_th with R_th ± 10 %: d tau/d R_th = C_th (the chain rule), and the worst case of T(10 min) is
    the cooling law by hand at the corner where tau is largest."""
    text = cooling(
        'T_amb = "35 degC"\nR_th = { value = "2 K/W", tolerance = "10 %" }\nC_th = "192 J/K"\ntau = "R_th*C_th"',
        '[[criteria]]\ncheck = "T(10 min) <= 60 degC"\n',
    )
    margin = build_sheet(write(tmp_path, text)).derivation.margin
    tau_probe = next(i for i, p in enumerate(margin.quantities) if p.subject == "time_constant")
    found = next(s for s in margin.sensitivities if s.quantity == tau_probe and s.parameter == "R_th")
    assert found.derivative == pytest.approx(192.0, rel=1e-9)  # s per K/W: C_th in J/K
    worst = margin.worst[0]
    tau_high = 2.2 * 192.0  # s
    expected = 35 + (80 - 35) * math.exp(-600 / tau_high)
    assert worst.value - 273.15 == pytest.approx(expected, rel=1e-9)


def test_a_limit_from_a_toleranced_ambient_moves_with_it_in_the_worst_case(tmp_path):
    text = cooling(
        'T_amb = { value = "35 degC", tolerance = "2 K" }\ntau = "6.4 min"',
        '[[criteria]]\ncheck = "T(10 min) >= T_amb + 8.8 K"\n',
    )
    built = build_sheet(write(tmp_path, text))
    worst = built.derivation.margin.worst[0]
    # T - T_amb = (80 degC - T_amb) exp(-10/6.4): smallest at the warmest ambient, 37 degC
    rise = (80 - 37) * math.exp(-10 / 6.4)
    assert worst.limit == pytest.approx(Q(45.8, "degC").to("K").magnitude)
    assert worst.margin == pytest.approx(rise - 8.8, rel=1e-9)
    limiting = built.derivation.margin.limits[0][0]
    assert limiting.value - 273.15 == pytest.approx(80 - 8.8 * math.exp(10 / 6.4), rel=1e-6)


# ------------------------------------------------------------------------------ errors
@pytest.mark.parametrize(
    "parameters, key, fragments",
    [
        ('T_amb = "35 degC"\ntau = "a*2"\na = "b + 1 min"\nb = "tau"', "parameters.a", ("a -> b -> tau -> a",)),
        ('T_amb = "35 degC"\ntau = "tau*2"', "parameters.tau", ("in a circle: tau -> tau",)),
        ('T_amb = "35 degC"\nR = "2 K/W"\ntau = "R + 4 min"', "parameters.tau", ("term '4 min'", "term 'R'")),
        ('T_amb = "35 degC"\ntau = "6 min * x"', "parameters.tau", ("'x' is not a parameter",)),
        ('T_amb = "35 degC"\nn = "3"\ntau = "2 n"', "parameters.tau", ("write a product with '*' (2*n)",)),
        ('T_amb = "35 degC"\ntau = "T/1 K * 1 min"', "parameters.tau", ("in terms of the unknown or the variable",)),
        ('T_amb = "35 degC"\ntau = "6 min +"', "parameters.tau", ("expected a number, a name or '('",)),
        ('T_amb = "35 degC"\ntau = "6 min * 2 kohmm"', "parameters.tau", ("unknown unit 'kohmm'",)),
        (
            'T_amb = "35 degC"\nT_s = "T_amb + 8.8 degC"\ntau = "6 min"',
            "parameters.T_s",
            ("neither a temperature nor a temperature difference", '"8.8 K"'),
        ),
        (
            'T_amb = "35 degC"\ntau = { value = "2 * 3 min", tolerance = "5 %" }',
            "parameters.tau.tolerance",
            ("takes its range from the parameters it uses",),
        ),
        (
            'T_amb = "35 degC"\nx = "2 kohm"\ntau = "6 min * sqrt(x - 3 kohm)/sqrt(1 kohm)"',
            "parameters.tau",
            ("has no finite real value",),
        ),
    ],
)
def test_a_wrong_parameter_expression_is_one_line_with_its_key(tmp_path, parameters, key, fragments):
    refused(tmp_path, cooling(parameters), key, *fragments)


@pytest.mark.parametrize(
    "criterion, key, fragments",
    [
        ('check = "T(10 min) >= T_amb * 2 min"', "criteria[1].check", ("has dimension", "T is in degC")),
        ('check = "T(10 min) >= T_amb - 30 degC"', "criteria[1].check", ("is a temperature difference",)),
        ('check = "T(10 min) >= T_x + 8 K"', "criteria[1].check", ("'T_x' is not a parameter",)),
        ('check = "T(10 min) >= 40 degC"\nsource = "x"\nbasis = "y"', "criteria[1].basis", ("either source",)),
        ('check = "T(10 min) >= 40 degC"\nsource = ""', "criteria[1].source", ("must not be empty",)),
        ('check = "T(10 min) >= 40 degC"\nbasis = 3', "criteria[1].basis", ("must be text in quotes",)),
    ],
)
def test_a_wrong_limit_or_citation_is_one_line_with_its_key(tmp_path, criterion, key, fragments):
    text = cooling('T_amb = "35 degC"\ntau = "6.4 min"', f"[[criteria]]\n{criterion}\n")
    refused(tmp_path, text, key, *fragments)


def test_a_kind_slot_written_as_an_expression_is_checked_against_its_dimension(tmp_path):
    text = (
        '[sheet]\ntitle = "Bank"\n[model]\nkind = "series_rc"\nunknown = "v [V]"\nvariable = "t [s]"\n'
        '[parameters]\nR = "4.7 kohm"\nn = "4"\nC = "n * 550 uV"\nV_s = "0 V"\n[initial]\nvalue = "680 V"\n'
    )
    refused(tmp_path, text, "parameters.C", "kind series_rc expects C")
    fine = text.replace("550 uV", "550 uF")
    assert next(p for p in load_model(write(tmp_path, fine)).parameters if p.name == "C").si == pytest.approx(
        (4 * Q(550, "uF")).to("F").magnitude, rel=1e-12
    )


def test_a_switch_value_written_from_others_is_worked_out_in_its_interval(tmp_path):
    text = (
        '[sheet]\ntitle = "Coil"\n[model]\nkind = "series_rl"\nunknown = "i [A]"\nvariable = "t [ms]"\n'
        '[parameters]\nR_w = "20 ohm"\nR_e = "60 ohm"\nR = "R_w"\nL = "0.8 H"\nV_s = "24 V"\n'
        '[initial]\nvalue = "0 A"\n'
        '[[switch]]\nat = "120 ms"\nparameters = { R = "R_w + R_e" }\n'
    )
    model = load_model(write(tmp_path, text))
    after = next(p for p in model.switches[0].law.parameters if p.name == "R")
    assert after.si == pytest.approx((Q(20, "ohm") + Q(60, "ohm")).to("ohm").magnitude)
    assert after.expression == "R_w + R_e"


def test_garbage_is_still_reported_as_a_value_not_an_expression(tmp_path):
    refused(tmp_path, cooling('T_amb = "35 degC"\ntau = "print(1); 6 min"'), "parameters.tau", "not a number")


def test_a_forcing_value_written_from_a_parameter_is_worked_out(tmp_path):
    text = (
        '[sheet]\ntitle = "Step"\n[model]\nkind = "series_rc"\nunknown = "v [V]"\nvariable = "t [s]"\n'
        '[parameters]\nR = "1 kohm"\nC = "100 uF"\nV_nom = "24 V"\n'
        '[forcing]\nform = "step"\nafter = "V_nom * 1.1"\nat = "0.5 s"\n[initial]\nvalue = "0 V"\n'
    )
    model = load_model(write(tmp_path, text))
    after = next(p for p in model.parameters if p.name == "V_s_after")
    assert after.si == pytest.approx((Q(24, "V") * 1.1).to("V").magnitude, rel=1e-12)
    assert "V_nom" not in model.unused_parameters
