"""The input side of issue 7: each class of malformed, hostile or trap input, refused in one line
per problem, naming the file and the key, with exit 2 and never a traceback.

Scenarios are invented. Physics claims: R*C is a time constant and R = 0 leaves no derivative term
in the standard form (common practice, no source); 20 degC + 15 degC taken in kelvin is
293.15 K + 288.15 K = 581.3 K = 308.15 degC (SI Brochure, 9th ed., definition of the Celsius
temperature; from memory); pint's default registry reads "k" as Boltzmann's constant, "c" as
the speed of light, "e" as the elementary charge, "R" as the molar gas constant, "g" as gram,
"h" as hour and "G" as gauss (pint's definition files, checked against the installed pint by
the tests below).
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError, InputError, ModelRefused
from calcsheet.source import units
from calcsheet.load.loader import ErrorList, load_model

FREE = """\
[sheet]
title = "Snubber bleed-down (demo)"
{sheet}
[model]
equation = "{equation}"
unknown = "{unknown}"
variable = "t [s]"

[parameters]
{parameters}

[initial]
value = "{initial}"
{extra}
"""

KIND = """\
[sheet]
title = "Timing capacitor (demo)"
{sheet}
[model]
kind = "{kind}"
{model}
[parameters]
{parameters}

[initial]
value = "{initial}"
{extra}
"""


def free(
    equation="R*C*dv/dt + v = 0",
    parameters='R = "10 kohm"\nC = "100 uF"',
    unknown="v [V]",
    initial="5 V",
    sheet="",
    extra="",
):
    return FREE.format(
        equation=equation, parameters=parameters, unknown=unknown, initial=initial, sheet=sheet, extra=extra
    )


def kind(parameters='R = "10 kohm"\nC = "100 uF"', kind="series_rc", model="", initial="0 V", sheet="", extra=""):
    return KIND.format(kind=kind, model=model, parameters=parameters, initial=initial, sheet=sheet, extra=extra)


def write(tmp_path: Path, text: str, name: str = "input.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def refused(tmp_path: Path, text: str, key: str, *fragments: str, kind=CalcsheetError) -> CalcsheetError:
    """Load ``text``; it must be refused in one line 'file: key: message' holding every fragment."""
    path = write(tmp_path, text)
    with pytest.raises(kind) as info:
        load_model(path)
    shown = str(info.value)
    assert "\n" not in shown, shown
    assert shown.startswith(f"{path}: {key}: "), shown
    for fragment in fragments:
        assert fragment in shown, shown
    return info.value


# ------------------------------------------------------- class: several independent mistakes
def test_three_independent_mistakes_are_all_reported_one_per_line_with_exit_2(tmp_path):
    text = free(sheet='date = "2024-13-45"', initial="2 A", extra='[[criteria]]\ncheck = "v(1 s) <= 3 kg"\n')
    path = write(tmp_path, text)
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    lines = result.output.strip().splitlines()
    assert len(lines) == 3, result.output
    assert lines[0].startswith(f"{path}: sheet.date: '2024-13-45' is not a date")
    assert lines[1].startswith(f"{path}: initial.value: '2 A' has dimension [current]")
    assert lines[2].startswith(f"{path}: criteria[1].check: '3 kg' has dimension [mass]")
    assert "Traceback" not in result.output


def test_mistakes_in_sheet_signoff_revisions_parameters_evaluate_and_plot_are_gathered(tmp_path):
    text = free(
        sheet='number = 7\n[signoff]\nchecked = 5\n[[revisions]]\nrevision = ""\ndescription = "x"',
        parameters='R = "10 kohmz"\nC = "100 uF"',
        extra='[evaluate]\nat = ["1 V"]\nreach = "2 s"\n[plot]\nto = "3 A"\n',
    )
    with pytest.raises(ErrorList) as info:
        load_model(write(tmp_path, text))
    keys = [e.key for e in info.value.errors]
    assert keys == [
        "sheet.number",
        "signoff.checked",
        "revisions[1].revision",
        "parameters.R",
        "evaluate.at[1]",
        "evaluate.reach[1]",
        "plot.to",
    ]
    # the equation needs its parameters: with R unreadable it is not checked, so no second error


# ------------------------------------------------------------ class: TOML syntax and nesting
def test_toml_syntax_error_is_reported_as_file_line_column(tmp_path):
    path = write(tmp_path, free() + "broken = = 1\n")
    with pytest.raises(InputError) as info:
        load_model(path)
    line = free().count("\n") + 1
    assert str(info.value) == f"{path}:{line}:10: not valid TOML: Invalid value"


def test_toml_arrays_nested_beyond_the_reader_are_refused_in_one_line(tmp_path):
    path = write(tmp_path, free() + "[evaluate]\nat = " + "[" * 5000 + "]" * 5000 + "\n")
    with pytest.raises(InputError) as info:
        load_model(path)
    assert str(info.value).startswith(f"{path}: ") and "nested too deeply" in str(info.value)


def test_toml_tables_nested_more_than_the_format_needs_are_refused(tmp_path):
    text = free(parameters='R = "10 kohm"\nC = { value = { a = { b = { c = { d = { e = { f = { g = 1 } } } } } } } }')
    refused(tmp_path, text, "parameters.C.value.a.b.c.d.e.f", "nested more than 8 deep")


def test_two_hundred_nested_parentheses_are_refused_by_our_parser(tmp_path):
    equation = "R*C*dv/dt + v = " + "(" * 200 + "v" + ")" * 200
    refused(tmp_path, free(equation=equation), "model.equation", "nests more than 50 levels deep")


def test_a_long_chain_of_signs_and_a_long_sum_are_refused_not_recursed(tmp_path):
    refused(tmp_path, free(equation="R*C*dv/dt + v = " + "-" * 900 + "v"), "model.equation", "nests more than")
    refused(
        tmp_path,
        free(equation="R*C*dv/dt + v = " + "+".join(["v"] * 600)),
        "model.equation",
        "more than 200 operations deep",
    )


def test_an_integer_of_thousands_of_digits_is_refused(tmp_path):
    path = write(tmp_path, free(parameters='R = "10 kohm"\nC = ' + "9" * 5000))
    with pytest.raises(InputError) as info:
        load_model(path)
    assert str(info.value).startswith(f"{path}: ") and "\n" not in str(info.value)


def test_file_larger_than_the_bound_is_refused(tmp_path):
    path = write(tmp_path, free() + "# " + "x" * 1_000_001 + "\n")
    with pytest.raises(InputError, match="larger than 1,000,000 bytes"):
        load_model(path)


def test_very_long_string_is_refused_naming_its_key(tmp_path):
    refused(tmp_path, free(sheet=f'project = "{"p" * 6000}"'), "sheet.project", "6000 characters", "at most 5000")


# --------------------------------------------- class: regexes on long runs of spaces (linear)
def test_hundred_thousand_spaces_in_a_value_are_refused_by_length(tmp_path):
    parameters = 'R = "10' + " " * 100_000 + 'x"\nC = "100 uF"'
    refused(tmp_path, free(parameters=parameters), "parameters.R", "100003 characters", "at most")


@pytest.mark.parametrize("where", ["parameter", "criterion", "unknown", "initial"])
def test_long_runs_of_spaces_within_the_bounds_are_read_or_refused_by_their_content(tmp_path, where):
    spaces = " " * 60
    if where == "parameter":  # a value of 60 spaces between number and unit is still a value
        model = load_model(write(tmp_path, free(parameters=f'R = "10{spaces}kohm"\nC = "100 uF"')))
        assert {p.name: p.si for p in model.parameters}["R"] == pytest.approx(1e4)
    elif where == "criterion":
        check = "v(1 s)" + " " * 4000 + "x"
        refused(tmp_path, free(extra=f'[[criteria]]\ncheck = "{check}"\n'), "criteria[1].check", "must read like")
    elif where == "unknown":
        refused(
            tmp_path,
            free(unknown="v" + spaces + "[V" + spaces + "x"),
            "model.unknown",
            "must be a name and a unit in brackets",
        )
    else:
        refused(tmp_path, free(initial="5" + spaces + "V" + spaces + "!"), "initial.value", "cannot have")


# ------------------------------------------------ class: user text as a re.sub replacement
@pytest.mark.parametrize("expression", [r"V_0\\g<0>", r"V_0*\\1", "V_0\\\\"])
def test_forcing_expression_with_backslashes_is_refused_not_expanded(tmp_path, expression):
    text = kind(
        parameters='R = "10 kohm"\nC = "100 uF"\nV_0 = "6 V"',
        extra=f'[forcing]\nform = "expression"\nexpression = "{expression}"\n',
    )
    refused(tmp_path, text, "forcing.expression", "unexpected character '\\'")


def test_forcing_expression_cannot_change_the_equation_around_it(tmp_path):
    text = kind(
        parameters='R = "10 kohm"\nC = "100 uF"\nV_0 = "6 V"',
        extra='[forcing]\nform = "expression"\nexpression = "V_0) + (V_0"\n',
    )
    refused(tmp_path, text, "forcing.expression", "expected an operator or the end")


# --------------------------------------------------- class: angular units asked of pint
@pytest.mark.parametrize("unknown", ["T [degree_Celsius]", "T [degR]", "T [degF]", "T [K]"])
def test_temperature_units_are_not_taken_for_angles(tmp_path, unknown):
    text = kind(
        kind="first_order_sensor",
        model=f'unknown = "{unknown}"',
        parameters='tau = "5 s"\nT_m = "80 degC"',
        initial="20 degC",
    )
    model = load_model(write(tmp_path, text))
    assert model.unknown.unit_text == unknown[3:-1]


@pytest.mark.parametrize(
    "unknown, accepted",
    [
        ("omega [rpm]", True),
        ("omega [rad/s]", True),
        ("omega [deg/s]", True),
        ("omega [revolution/min]", True),
        ("omega [turn/s]", True),
        ("omega [Hz]", False),
        ("omega [1/s]", False),
    ],
)
def test_angular_speed_units_are_recognised_by_pint(tmp_path, unknown, accepted):
    text = kind(
        kind="rotating_inertia",
        model=f'unknown = "{unknown}"',
        parameters='J = "0.5 kg*m^2"\nb = "0.02 N*m*s/rad"\nT_d = "2 N*m"',
        initial="0 rad/s",
    )
    if accepted:
        load_model(write(tmp_path, text))
    else:
        refused(tmp_path, text, "model.unknown", "is not an angular unit")


def test_units_is_angular_follows_the_radian():
    for text in ("rad", "deg", "arcmin", "rpm", "turn", "rad/s", "N*m*s/rad"):
        assert units.is_angular(units.parse_unit(text)), text
    for text in ("degC", "degree_Celsius", "degR", "K", "Hz", "1/s", "m"):
        assert not units.is_angular(units.parse_unit(text)), text


# --------------------------------------------------- class: sum of two absolute temperatures
def test_sum_of_two_absolute_temperatures_is_refused_with_a_hint(tmp_path):
    text = free(
        equation="tau*dT/dt + T = T_a + dT_r",
        unknown="T [degC]",
        initial="20 degC",
        parameters='tau = "60 s"\nT_a = "20 degC"\ndT_r = "15 degC"',
    )
    refused(
        tmp_path,
        text,
        "parameters.dT_r",
        "adds two absolute temperatures",
        '"15 K" or "15 delta_degC"',
        kind=InputError,
    )


@pytest.mark.parametrize(
    "equation, parameters",
    [
        ("tau*dT/dt + T = T_a + dT_r", 'T_a = "20 degC"\ndT_r = "15 K"'),  # a rise in kelvin
        ("tau*dT/dt + T = T_a + dT_r", 'T_a = "20 degC"\ndT_r = "15 delta_degC"'),
        ("tau*dT/dt = T_a - T", 'T_a = "20 degC"\ndT_r = "15 K"'),  # a difference of two
        ("tau*dT/dt + T = (T_a + T_b)/2", 'T_a = "20 degC"\nT_b = "40 degC"'),  # a mean
        ("tau*dT/dt + T = T_a + (T_b - T_a)*0.5", 'T_a = "20 degC"\nT_b = "40 degC"'),
    ],
)
def test_differences_rises_and_means_of_temperatures_are_accepted(tmp_path, equation, parameters):
    text = free(equation=equation, unknown="T [degC]", initial="20 degC", parameters='tau = "60 s"\n' + parameters)
    load_model(write(tmp_path, text))


def test_unknown_plus_an_absolute_temperature_is_refused(tmp_path):
    text = free(
        equation="tau*dT/dt = T + T_a",
        unknown="T [degC]",
        initial="20 degC",
        parameters='tau = "60 s"\nT_a = "20 degC"',
    )
    refused(tmp_path, text, "parameters.T_a", "adds two absolute temperatures")


# ----------------------------------------------------------------- class: sine phase units
@pytest.mark.parametrize(
    "phase, accepted",
    [('"90"', False), ("90", False), ('"1.5"', False), ('"90 deg"', True), ('"1.5 rad"', True), ('"0"', True)],
)
def test_sine_phase_needs_an_angle_unit(tmp_path, phase, accepted):
    text = kind(extra=f'[forcing]\nform = "sine"\namplitude = "5 V"\nfrequency = "2 Hz"\nphase = {phase}\n')
    if accepted:
        load_model(write(tmp_path, text))
    else:
        refused(tmp_path, text, "forcing.phase", "needs an angle unit", "deg")


# ------------------------------------------------------- class: physical constants as units
@pytest.mark.parametrize(
    "value, fragments",
    [
        ("47 k", ["Boltzmann", "did you mean 47 kohm?"]),
        ("47 kk", ["boltzmann"]),
        ("3 c", ["speed of light"]),
        ("2 e", ["elementary charge", "2e3"]),
        ("8 R", ["molar gas constant", "did you mean 8 ohm?"]),
        ("1 k_B", ["boltzmann constant"]),
        ("1 N_A", ["avogadro constant"]),
        ("1 sigma", ["stefan boltzmann constant"]),
        ("1 m_e", ["electron mass"]),
    ],
)
def test_a_physical_constant_is_not_a_unit(tmp_path, value, fragments):
    error = refused(tmp_path, free(parameters=f'R = "{value}"\nC = "100 uF"'), "parameters.R", "physical constant")
    for fragment in fragments:
        assert fragment.lower() in str(error).lower()


@pytest.mark.parametrize("text, si", [("1 atm", 101325.0), ("2 g0", 2 * 9.80665), ("5 g", 5e-3), ("2 h", 7200.0)])
def test_reference_values_and_one_letter_units_stay_units(text, si):
    # atm = 101325 Pa, standard gravity 9.80665 m/s^2 (CGPM 1954 and 1901; from memory)
    assert units.to_si(units.parse_quantity(text)) == pytest.approx(si)


def test_constants_list_comes_from_pint_itself():
    names = units.physical_constants()
    assert {"boltzmann_constant", "speed_of_light", "elementary_charge", "molar_gas_constant"} <= names
    assert not {"standard_atmosphere", "standard_gravity", "pi"} & names


# ------------------------------------------------------------ class: messages in our words
def test_a_calculation_where_only_a_value_is_read_gets_the_product_written_as_one_number(tmp_path):
    # A parameter may be an expression ("4 * 550 uF", tests/source/test_value_expressions.py); an initial
    # value is one number with its unit.
    refused(
        tmp_path,
        free(initial="2 * 2.5 V"),
        "initial.value",
        "is a calculation",
        'write the product as one number: "5 V"',
    )


def test_a_criterion_with_two_comparisons_is_told_to_split(tmp_path):
    check = "v(1 s) >= 5 V and v(2 min) <= 10 V"
    refused(
        tmp_path,
        free(extra=f'[[criteria]]\ncheck = "{check}"\n'),
        "criteria[1].check",
        "more than one comparison",
        "its own [[criteria]] table",
    )


@pytest.mark.parametrize(
    "value, found",
    [("{ value = { x = 1 } }", "a table"), ("[1]", "a list"), ("true", "true/false"), ("2024-01-01", "a date")],
)
def test_wrong_kind_of_value_is_named_in_toml_terms(tmp_path, value, found):
    error = refused(tmp_path, free(parameters=f'R = {value}\nC = "100 uF"'), "parameters.R", found)
    assert "dict" not in str(error) and "got " not in str(error)


def test_kind_missing_source_mentions_forcing(tmp_path):
    text = kind(
        kind="lumped_body",
        parameters='rho = "7850 kg/m^3"\nc_p = "460 J/(kg*K)"\nV = "1e-4 m^3"\n'
        'A = "0.016 m^2"\nh = "25 W/(m^2*K)"\nk = "45 W/(m*K)"',
        initial="200 degC",
    )
    refused(tmp_path, text, "parameters.T_inf", "needs T_inf", "or a [forcing] table")


def test_kind_unit_error_names_its_key(tmp_path):
    refused(tmp_path, kind(model='unknown = "v [Vz]"'), "model.unknown", "unknown unit 'Vz'")


@pytest.mark.parametrize(
    "name, key", [("", 'parameters.""'), ("R\x1b[2J", 'parameters."R\\x1b[2J"'), ("a b", 'parameters."a b"')]
)
def test_odd_keys_are_echoed_quoted_and_escaped(tmp_path, name, key):
    toml_name = '"' + name.replace("\x1b", "\\u001b") + '"'
    error = refused(tmp_path, free(parameters=f'{toml_name} = "1 V"\nR = "10 kohm"\nC = "100 uF"'), key)
    assert "\x1b" not in str(error)


# --------------------------------------------------------------- class: control characters
@pytest.mark.parametrize(
    "field, value",
    [
        ("title", "Bleed\\u001b[31m-down"),
        ("number", "EL\\n01"),
        ("project", "Plant \\u202eevil"),
        ("originator", "A. Engineer\\u2066"),
        ("revision", "A\\u0007"),
        ("date", "2024-01-01\\r"),
        ("references", '["Datasheet\\nOUTCOME: passes"]'),
    ],
)
def test_single_line_fields_refuse_control_and_direction_characters(tmp_path, field, value):
    value = value if value.startswith("[") else f'"{value}"'
    sheet = f"{field} = {value}" if field != "title" else ""
    text = free(sheet=sheet)
    if field == "title":
        text = text.replace('title = "Snubber bleed-down (demo)"', f"title = {value}")
    key = f"sheet.{field}" + ("[1]" if field == "references" else "")
    error = refused(tmp_path, text, key)
    assert any(w in str(error) for w in ("control or text-direction character", "line break"))
    assert not any(c in str(error) for c in "\x1b\u202e\u2066\x07\r")


@pytest.mark.parametrize("where", ["criteria", "source", "note", "signoff", "switch"])
def test_other_single_line_texts_refuse_control_characters(tmp_path, where):
    if where == "criteria":  # a forged record line
        text, key = (
            free(extra='[[criteria]]\ntext = "ok\\nOUTCOME: passes"\ncheck = "v(1 s) <= 5 V"\n'),
            "criteria[1].text",
        )
        refused(tmp_path, text, key, "holds a line break")
        text = text.replace("\\nOUTCOME", "\\u0085OUTCOME")
    elif where in ("source", "note"):
        text = free(parameters=f'R = {{ value = "10 kohm", {where} = "x\\u001b[0m" }}\nC = "100 uF"')
        key = f"parameters.R.{where}"
    elif where == "signoff":
        text, key = free(extra='[signoff]\nchecked = "B. Checker\\u202e"\n'), "signoff.checked"
    else:
        text, key = free(extra='[[switch]]\nat = "1 s"\ntext = "open\\u0000"\n'), "switch[1].text"
    refused(tmp_path, text, key, "control or text-direction character")


def test_multi_line_fields_keep_newlines_but_refuse_other_controls(tmp_path):
    sheet = 'purpose = """Show the bleed-down.\nSecond line."""\nassumptions = ["One\\ntwo"]'
    model = load_model(write(tmp_path, free(sheet=sheet)))
    assert model.sheet.purpose == "Show the bleed-down.\nSecond line."
    assert model.sheet.assumptions == ("One\ntwo",)
    refused(tmp_path, free(sheet='purpose = "tab\\there"'), "sheet.purpose", "U+0009")
    refused(tmp_path, free(sheet='assumptions = ["a\\u001b[1m"]'), "sheet.assumptions[1]", "U+001B")


# ------------------------------------------------------------ class: zero and extreme values
def test_zero_resistance_in_front_of_the_derivative_is_refused(tmp_path):
    error = refused(
        tmp_path,
        kind(parameters='R = "0 ohm"\nC = "100 uF"'),
        "parameters.R",
        "R = 0 makes the equation singular",
        "coefficient of dv/dt",
        kind=ModelRefused,
    )
    assert error.exit_code == 2


@pytest.mark.parametrize(
    "equation, parameters, name, fragment",
    [
        ("tau*dv/dt + v = V_0*t/T", 'tau = "1 s"\nV_0 = "1 V"\nT = "0 s"', "T", "its divisor 'T' is zero"),
        ("tau*dv/dt + v = V_0*sin(x/L)", 'tau = "1 s"\nV_0 = "1 V"\nL = "0 s"\nx = "1 s"', "L", "divisor 'L'"),
        ("tau*dv/dt + v = V_0*exp(-t/(a*T))", 'tau = "1 s"\nV_0 = "1 V"\nT = "2 s"\na = "0"', "a", "'a*T' is zero"),
        ("dv/dt + v/(R*C) = 0", 'R = "0 ohm"\nC = "1 uF"', "R", "'R*C' is zero"),
    ],
)
def test_zero_divisors_are_refused_naming_parameter_and_term(tmp_path, equation, parameters, name, fragment):
    refused(
        tmp_path,
        free(equation=equation, parameters=parameters),
        f"parameters.{name}",
        f"{name} = 0 makes the equation singular",
        fragment,
    )


def test_empty_tank_volume_under_the_outflow_is_refused(tmp_path):
    text = kind(
        kind="mixing_tank",
        parameters='q_in = "1 m^3/min"\nq_out = "1 m^3/min"\nc_in = "2 kg/m^3"\nV_0 = "0 m^3"',
        initial="0 kg",
    )
    refused(tmp_path, text, "parameters.V_0", "V_0 = 0 makes the equation singular", "at t = 0")


def test_removable_singularity_of_the_variable_alone_is_left_to_the_derivation(tmp_path):
    # sin(w t)/(w t) tends to 1 at t = 0: legal, and not refused by the loader
    text = free(equation="tau*dv/dt + v = V_0*sin(w*t)/(w*t)", parameters='tau = "1 s"\nV_0 = "1 V"\nw = "3 1/s"')
    load_model(write(tmp_path, text))


@pytest.mark.parametrize("value", ["1e308 ohm", "1e31 ohm", "1e-31 F", "-2e40 ohm"])
def test_magnitudes_beyond_the_stated_range_are_refused(tmp_path, value):
    refused(
        tmp_path,
        free(parameters=f'R = "{value}"\nC = "100 uF"'),
        "parameters.R",
        "outside the range computed here",
        "1e-30 to 1e+30",
    )


def test_magnitudes_at_the_edges_of_the_range_are_accepted(tmp_path):
    load_model(write(tmp_path, free(parameters='R = "1e30 ohm"\nC = "1e-30 F"\nL_s = "0 H"')))


def test_a_point_beyond_the_range_is_refused(tmp_path):
    refused(tmp_path, free(extra='[evaluate]\nat = ["1e40 s"]\n'), "evaluate.at[1]", "outside the range")


@pytest.mark.parametrize("depth", [4, 50])
def test_a_constant_tower_that_overflows_is_refused(tmp_path, depth):
    tower = "exp(" * depth + "5" + ")" * depth
    refused(
        tmp_path,
        free(equation=f"R*C*dv/dt + v = V_0*{tower}", parameters='R = "1 ohm"\nC = "1 F"\nV_0 = "1 V"'),
        "model.equation",
        "not a finite real number",
        "overflows double precision",
    )


def test_constant_outside_a_function_domain_is_refused(tmp_path):
    refused(
        tmp_path,
        free(equation="R*C*dv/dt + v = V_0*log(a - 1)", parameters='R = "1 ohm"\nC = "1 F"\nV_0 = "1 V"\na = "0.5"'),
        "model.equation",
        "not a finite real number",
        "a = 0.5",
    )


# ------------------------------------------------- class: kinds accepting V_s_anything
@pytest.mark.parametrize("extra_parameter", ['V_s_anything = "3 V"', 'V_s_amp = "3 V"', 'L = "1 H"'])
def test_kind_refuses_a_parameter_it_does_not_have(tmp_path, extra_parameter):
    name = extra_parameter.split(" ")[0]
    refused(
        tmp_path,
        kind(parameters=f'R = "10 kohm"\nC = "100 uF"\n{extra_parameter}'),
        f"parameters.{name}",
        f"'{name}' is not a parameter of kind series_rc",
        "its parameters: R, C, V_s",
    )


def test_kind_refuses_a_forcing_value_also_given_as_a_parameter(tmp_path):
    text = kind(
        parameters='R = "10 kohm"\nC = "100 uF"\nV_s_amp = "3 V"',
        extra='[forcing]\nform = "sine"\namplitude = "5 V"\nfrequency = "2 Hz"\n',
    )
    refused(tmp_path, text, "parameters.V_s_amp", "is given by [forcing]")


def test_kind_with_a_forcing_form_keeps_its_generated_parameters(tmp_path):
    text = kind(extra='[forcing]\nform = "sine"\namplitude = "5 V"\nfrequency = "2 Hz"\n')
    names = {p.name for p in load_model(write(tmp_path, text)).parameters}
    assert {"V_s_amp", "V_s_freq", "V_s_phase", "V_s_offset"} <= names


# ---------------------------------------------------------------------- class: style folders
@pytest.mark.parametrize("style", ["../../..", "/etc", "/", "..", "sub/../../elsewhere"])
def test_style_outside_the_input_folder_is_refused(tmp_path, style):
    home = tmp_path / "a" / "b" / "c"
    home.mkdir(parents=True)
    (tmp_path / "elsewhere").mkdir()
    path = write(home, free(sheet=f'style = "{style}"'))
    with pytest.raises(InputError) as info:
        load_model(path)
    shown = str(info.value)
    assert shown.startswith(f"{path}: sheet.style: ") and "outside the input file's folder" in shown
    assert "--style" in shown and "\n" not in shown


def test_style_symlink_pointing_outside_is_refused(tmp_path):
    outside = tmp_path / "outside"
    outside.mkdir()
    home = tmp_path / "home"
    home.mkdir()
    os.symlink(outside, home / "house")
    path = write(home, free(sheet='style = "house"'))
    with pytest.raises(InputError, match="outside the input file's folder"):
        load_model(path)


def test_style_inside_the_input_folder_is_accepted(tmp_path):
    (tmp_path / "styles" / "house").mkdir(parents=True)
    model = load_model(write(tmp_path, free(sheet='style = "styles/house"')))
    assert model.sheet.style == str(tmp_path / "styles" / "house")


@pytest.mark.parametrize("length, fragment", [(300, "at most 200"), (199, "no style folder")])
def test_long_style_names_get_one_line(tmp_path, length, fragment):
    refused(tmp_path, free(sheet=f'style = "{"s" * length}"'), "sheet.style", fragment)


def test_zero_forcing_time_constant_is_keyed_where_it_was_written(tmp_path):
    text = kind(extra='[forcing]\nform = "exponential"\ninitial = "10 V"\ntime_constant = "0 s"\n')
    refused(tmp_path, text, "forcing.time_constant", "V_s_tau = 0 makes the equation singular", "'V_s_tau' is zero")
