"""Tests for calcsheet.load.loader.load_model: refused inputs, and one accepted model.

The demo scenario (invented): the coil of a 24 V control relay is switched on and its current
rises through the coil inductance and resistance, L*di/dt + R*i = V_s.

Physics claims checked here: an inductor's voltage L*di/dt is in volts and R*i is in volts
(Ohm's law), so the equation is dimensionally consistent (common practice, no source); a
temperature in degC converts to kelvin by adding 273.15 (SI Brochure, 9th ed., definition of
the Celsius temperature; section from memory); SI prefixes k = 1e3, m = 1e-3, u = 1e-6
(SI Brochure, 9th ed., table of SI prefixes).
"""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy as sp

from calcsheet.derive.classify import classify
from calcsheet.errors import CalcsheetError, InputError, ModelRefused
from calcsheet.load.loader import TABLES, ErrorList, load_model

SHEET = '[sheet]\ntitle = "Relay coil current rise"\n'
MODEL = '[model]\nequation = "L*di/dt + R*i = V_s"\nunknown = "i [A]"\nvariable = "t [s]"\n'
PARAMETERS = '[parameters]\nL = "120 mH"\nR = "47 ohm"\nV_s = "24 V"\n'
INITIAL = '[initial]\nat = "0 s"\nvalue = "0 A"\n'
IMPORT = "__import__('os').system('touch X')"


def toml(sheet=SHEET, model=MODEL, parameters=PARAMETERS, initial=INITIAL, extra=""):
    return "\n".join(part for part in (sheet, model, parameters, initial, extra) if part)


def with_equation(equation, parameters=PARAMETERS, unknown="i [A]"):
    model = f'[model]\nequation = "{equation}"\nunknown = "{unknown}"\nvariable = "t [s]"\n'
    return toml(model=model, parameters=parameters)


def with_parameters(*lines):
    return toml(parameters="[parameters]\n" + "\n".join(lines) + "\n")


def with_criteria(check):
    return toml(extra=f'[[criteria]]\ntext = "probe"\ncheck = "{check}"\n')


def write(tmp_path: Path, text: str, name: str = "input.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def key_of(error: CalcsheetError) -> str:
    if isinstance(error, ErrorList):
        return error.errors[0].key
    return error.key


# id, input text, expected error type, message fragments, expected key. An input with one mistake
# gets that one error itself; ErrorList gathers two or more (tests of that are further down).
BAD_INPUTS = [
    ("missing-model-table", toml(model=""), InputError, ["the [model] table is missing"], "model"),
    ("missing-sheet-table", toml(sheet=""), InputError, ["the [sheet] table is missing"], "sheet"),
    ("missing-initial-table", toml(initial=""), InputError, ["the [initial] table is missing"], "initial"),
    (
        "missing-equation",
        toml(model='[model]\nunknown = "i [A]"\nvariable = "t [s]"\n'),
        InputError,
        ["is missing"],
        "model.equation",
    ),
    ("missing-initial-value", toml(initial='[initial]\nat = "0 s"\n'), InputError, ["is missing"], "initial.value"),
    ("unknown-table", toml(extra="[solver]\nmethod = 4\n"), InputError, ["unknown table", "sheet, model"], "solver"),
    (
        "unknown-key-in-sheet",
        toml(sheet=SHEET + 'author = "X"\n'),
        InputError,
        ["unknown key", "title"],
        "sheet.author",
    ),
    ("unknown-key-in-model", toml(model=MODEL + "order = 1\n"), InputError, ["unknown key"], "model.order"),
    ("table-as-scalar", 'sheet = "x"\n' + toml(sheet=""), InputError, ["must be a table"], "sheet"),
    (
        "criteria-as-single-table",
        toml(extra='[criteria]\ncheck = "i(1 s) <= 1 A"\n'),
        InputError,
        ["write criteria as [[criteria]] tables"],
        "criteria",
    ),
    ("criteria-not-tables", 'criteria = ["i(1 s) <= 1 A"]\n' + toml(), InputError, ["must be a table"], "criteria[1]"),
    (
        "unknown-unit",
        with_parameters('L = "120 mH"', 'R = "47 ohmz"', 'V_s = "24 V"'),
        InputError,
        ["unknown unit 'ohmz'"],
        "parameters.R",
    ),
    (
        "unknown-unit-of-unknown",
        with_equation("L*di/dt + R*i = V_s", unknown="i [amps2]"),
        InputError,
        ["unknown unit 'amps2'"],
        "model.unknown",
    ),
    (
        "incompatible-initial-value",
        toml(initial='[initial]\nvalue = "0 V"\n'),
        InputError,
        ["'0 V' has dimension", "i is in A", "[current]"],
        "initial.value",
    ),
    (
        "incompatible-initial-at",
        toml(initial='[initial]\nat = "0 A"\nvalue = "0 A"\n'),
        InputError,
        ["'0 A' has dimension [current]", "t is in s"],
        "initial.at",
    ),
    (
        "unit-with-quotes",
        with_parameters('L = "120 mH"', "R = \"47 'ohm'\"", 'V_s = "24 V"'),
        InputError,
        ["holds characters a unit cannot have"],
        "parameters.R",
    ),
    (
        "unit-with-number",
        with_equation("L*di/dt + R*i = V_s", unknown="i [2 A]"),
        InputError,
        ["carries a number"],
        "model.unknown",
    ),
    ("import-as-equation", with_equation(IMPORT), InputError, ["unexpected character '''"], "model.equation"),
    (
        "import-without-quotes-in-equation",
        with_equation("L*di/dt + R*i = __import__(os)"),
        InputError,
        ["'__import__' is not a known function"],
        "model.equation",
    ),
    (
        "dunder-name-in-equation",
        with_equation("L*di/dt + R*i = __class__"),
        InputError,
        ["'__class__' is not an allowed name"],
        "model.equation",
    ),
    (
        "import-as-parameter-value",
        with_parameters('L = "120 mH"', f'R = "{IMPORT}"', 'V_s = "24 V"'),
        InputError,
        ["is not a number followed by a unit"],
        "parameters.R",
    ),
    (
        "import-as-parameter-unit",
        with_parameters('L = "120 mH"', f'R = "47 {IMPORT}"', 'V_s = "24 V"'),
        InputError,
        ["holds characters a unit cannot have"],
        "parameters.R",
    ),
    (
        "import-as-unit-of-unknown",
        with_equation("L*di/dt + R*i = V_s", unknown=f"i [{IMPORT}]"),
        InputError,
        ["holds characters a unit cannot have"],
        "model.unknown",
    ),
    (
        "import-as-unknown-name",
        with_equation("L*di/dt + R*i = V_s", unknown=f"{IMPORT} [A]"),
        InputError,
        ["must be a name and a unit in brackets"],
        "model.unknown",
    ),
    (
        "import-in-criteria-check",
        with_criteria(f"{IMPORT} <= 1 A"),
        InputError,
        ["must read like"],
        "criteria[1].check",
    ),
    (
        "import-as-criteria-limit",
        with_criteria(f"i(1 s) <= {IMPORT}"),
        InputError,
        ["is not a number followed by a unit"],
        "criteria[1].check",
    ),
    (
        "undefined-name-second-unknown",
        with_equation("L*di/dt + R*i = V_s - R*i_2"),
        InputError,
        ["'i_2' is not a parameter", "second unknown"],
        "model.equation",
    ),
    (
        "dimension-mismatch-names-both-terms",
        with_equation("L*di/dt + R*i = R"),
        InputError,
        ["term 'R' has dimension", "term 'L*di/dt' has dimension", "[current]"],
        "model.equation",
    ),
    (
        "exp-of-dimensional-argument",
        with_equation("L*di/dt + R*i = V_s*exp(t)"),
        InputError,
        ["the argument of exp() must be dimensionless", "'t' has dimension [time]"],
        "model.equation",
    ),
    (
        "log-of-dimensional-argument",
        with_equation("L*di/dt + R*i = V_s*ln(R)"),
        InputError,
        ["the argument of log() must be dimensionless"],
        "model.equation",
    ),
    (
        "dimensional-exponent",
        with_equation("L*di/dt + R*i = V_s^t"),
        InputError,
        ["the exponent 't' must be dimensionless"],
        "model.equation",
    ),
    (
        "second-derivative",
        with_equation("L*d2i/dt2 + R*i = V_s"),
        ModelRefused,
        ["'d2i/dt2' is a second derivative", "order 2"],
        "model.equation",
    ),
    (
        "second-derivative-caret",
        with_equation("L*d^2i/dt^2 + R*i = V_s"),
        ModelRefused,
        ["'d^2i/dt^2' is a second derivative"],
        "model.equation",
    ),
    (
        "no-derivative",
        with_equation("R*i = V_s"),
        ModelRefused,
        ["no derivative di/dt appears", "algebraic"],
        "model.equation",
    ),
    (
        "derivative-of-another-name",
        with_equation("L*dq/dt + R*i = V_s"),
        ModelRefused,
        ["'dq/dt' is a derivative of 'q'", "system of equations"],
        "model.equation",
    ),
    (
        "derivative-wrong-variable",
        with_equation("L*di/dx + R*i = V_s"),
        InputError,
        ["taken with respect to 'x'", "the variable is 't'"],
        "model.equation",
    ),
    (
        "reserved-parameter-exp",
        with_parameters('L = "120 mH"', 'R = "47 ohm"', 'V_s = "24 V"', 'exp = "2 s"'),
        InputError,
        ["'exp' is reserved"],
        "parameters.exp",
    ),
    (
        "reserved-parameter-pi",
        with_parameters('L = "120 mH"', 'R = "47 ohm"', 'V_s = "24 V"', 'pi = "3"'),
        InputError,
        ["'pi' is reserved"],
        "parameters.pi",
    ),
    (
        "parameter-named-as-unknown",
        with_parameters('L = "120 mH"', 'R = "47 ohm"', 'V_s = "24 V"', 'i = "1 A"'),
        InputError,
        ["already the unknown or the variable"],
        "parameters.i",
    ),
    (
        "parameter-bad-name",
        with_parameters('L = "120 mH"', 'R = "47 ohm"', 'V_s = "24 V"', '"2R" = "1 ohm"'),
        InputError,
        ["a parameter name is letters"],
        "parameters.2R",
    ),
    (
        "parameter-double-underscore",
        with_parameters('L = "120 mH"', 'R__x = "47 ohm"', 'V_s = "24 V"'),
        InputError,
        ["a parameter name is letters"],
        "parameters.R__x",
    ),
    (
        "reserved-unknown-name",
        with_equation("L*dexp/dt + R*exp = V_s", unknown="exp [A]"),
        InputError,
        ["'exp' is a reserved name"],
        "model.unknown",
    ),
    (
        "unknown-equals-variable",
        toml(model='[model]\nequation = "L*dt/dt = V_s"\nunknown = "t [s]"\nvariable = "t [s]"\n'),
        InputError,
        ["need different names"],
        "model.variable",
    ),
    (
        "bad-criteria-syntax",
        with_criteria("i(60 s) == 0.4 A"),
        InputError,
        ["must read like", "reach(50 V) <= 60 s"],
        "criteria[1].check",
    ),
    (
        "criteria-limit-wrong-dimension",
        with_criteria("i(60 ms) >= 0.4 V"),
        InputError,
        ["'0.4 V' has dimension", "i is in A"],
        "criteria[1].check",
    ),
    (
        "criteria-argument-wrong-dimension",
        with_criteria("i(60 A) >= 0.4 A"),
        InputError,
        ["'60 A' has dimension [current]", "t is in s"],
        "criteria[1].check",
    ),
    (
        "criteria-reach-limit-wrong-dimension",
        with_criteria("reach(0.4 A) <= 1 A"),
        InputError,
        ["'1 A' has dimension [current]", "t is in s"],
        "criteria[1].check",
    ),
    (
        "criteria-unknown-subject",
        with_criteria("q(60 ms) >= 0.4 A"),
        InputError,
        ["'q' is not i(...), reach(...), time_constant, final_value, max(...), min(...) or integral(...)"],
        "criteria[1].check",
    ),
    (
        "criteria-value-needs-argument",
        with_criteria("i >= 0.4 A"),
        InputError,
        ["'i' needs an argument"],
        "criteria[1].check",
    ),
    (
        "criteria-time-constant-takes-no-argument",
        with_criteria("time_constant(1 s) <= 5 ms"),
        InputError,
        ["'time_constant' takes no argument"],
        "criteria[1].check",
    ),
    (
        "criteria-missing-check",
        toml(extra='[[criteria]]\ntext = "probe"\n'),
        InputError,
        ["is missing"],
        "criteria[1].check",
    ),
    (
        "criteria-text-not-string",
        toml(extra='[[criteria]]\ntext = 5\ncheck = "i(1 s) <= 1 A"\n'),
        InputError,
        ["must be text in quotes, but found a number"],
        "criteria[1].text",
    ),
    (
        "evaluate-at-wrong-dimension",
        toml(extra='[evaluate]\nat = ["10 ms", "5 A"]\n'),
        InputError,
        ["'5 A' has dimension [current]", "t is in s"],
        "evaluate.at[2]",
    ),
    (
        "evaluate-reach-wrong-dimension",
        toml(extra='[evaluate]\nreach = "5 s"\n'),
        InputError,
        ["'5 s' has dimension [time]", "i is in A"],
        "evaluate.reach[1]",
    ),
    (
        "evaluate-at-bare-number",
        toml(extra="[evaluate]\nat = 5\n"),
        InputError,
        ["'5' has dimension dimensionless"],
        "evaluate.at[1]",
    ),
    (
        "dimensionless-parameter-where-unit-required",
        with_parameters('L = "120 mH"', "R = 47", 'V_s = "24 V"'),
        InputError,
        ["term 'R*i' has dimension [current]", "term 'L*di/dt'"],
        "model.equation",
    ),
    (
        "dimensionless-initial-value",
        toml(initial="[initial]\nvalue = 0\n"),
        InputError,
        ["'0' has dimension dimensionless", "i is in A"],
        "initial.value",
    ),
    (
        "non-string-title",
        toml(sheet="[sheet]\ntitle = 42\n"),
        InputError,
        ["must be text in quotes, but found a number"],
        "sheet.title",
    ),
    ("empty-title", toml(sheet='[sheet]\ntitle = "   "\n'), InputError, ["must not be empty"], "sheet.title"),
    (
        "references-not-texts",
        toml(sheet=SHEET + "references = [1, 2]\n"),
        InputError,
        ["must be a list of texts"],
        "sheet.references",
    ),
    (
        "non-string-equation",
        toml(model='[model]\nequation = 5\nunknown = "i [A]"\nvariable = "t [s]"\n'),
        InputError,
        ["must be text in quotes, but found a number"],
        "model.equation",
    ),
    ("empty-equation", with_equation("  "), InputError, ["equation is empty"], "model.equation"),
    (
        "parameter-table-without-value",
        with_parameters('L = "120 mH"', 'R = { source = "coil data" }', 'V_s = "24 V"'),
        InputError,
        ["the table needs a value"],
        "parameters.R",
    ),
    (
        "parameter-table-unknown-key",
        with_parameters('L = "120 mH"', 'R = { value = "47 ohm", tol = "10 %" }', 'V_s = "24 V"'),
        InputError,
        ["unknown key 'tol'"],
        "parameters.R",
    ),
    (
        "parameter-boolean",
        with_parameters('L = "120 mH"', "R = true", 'V_s = "24 V"'),
        InputError,
        ["true/false"],
        "parameters.R",
    ),
    (
        "parameter-list",
        with_parameters('L = "120 mH"', 'R = ["47 ohm"]', 'V_s = "24 V"'),
        InputError,
        ["found a list"],
        "parameters.R",
    ),
    (
        "unknown-without-unit",
        with_equation("L*di/dt + R*i = V_s", unknown="i"),
        InputError,
        ["must be a name and a unit in brackets"],
        "model.unknown",
    ),
    (
        "unknown-function",
        with_equation("L*di/dt + R*i = V_s*ramp(t)"),
        InputError,
        ["'ramp' is not a known function"],
        "model.equation",
    ),
    (
        "two-equals-signs",
        with_equation("L*di/dt + R*i = V_s = 0"),
        InputError,
        ["expected an operator or the end but found '='"],
        "model.equation",
    ),
    (
        "no-equals-sign",
        with_equation("L*di/dt + R*i - V_s"),
        InputError,
        ["expected '=' between the two sides"],
        "model.equation",
    ),
    ("division-by-zero", with_equation("L*di/dt + R*i = V_s/0"), InputError, ["division by zero"], "model.equation"),
    (
        "overlong-equation",
        with_equation("L*di/dt + R*i = V_s" + " + 0*V_s" * 300),
        InputError,
        ["longer than 2000 characters"],
        "model.equation",
    ),
]


@pytest.mark.parametrize(
    "text, kind, fragments, key", [case[1:] for case in BAD_INPUTS], ids=[case[0] for case in BAD_INPUTS]
)
def test_bad_input_is_refused_with_file_key_and_message(tmp_path, text, kind, fragments, key):
    path = write(tmp_path, text)
    with pytest.raises(CalcsheetError) as info:
        load_model(path)
    error = info.value
    assert type(error) is kind
    shown = str(error)
    assert "\n" not in shown, shown
    assert shown.startswith(f"{path}: "), shown
    for fragment in fragments:
        assert fragment in shown, shown
    assert key_of(error) == key
    if key:
        assert shown.startswith(f"{path}: {key}: "), shown
    if isinstance(error, ErrorList):
        assert len(error.errors) == 1 and error.errors[0].file == str(path)
    else:
        assert error.file == str(path)


def test_distinct_kinds_of_bad_input_are_at_least_twenty():
    assert len({case[0] for case in BAD_INPUTS}) == len(BAD_INPUTS) >= 20


INJECTIONS = [
    with_equation(IMPORT),
    with_parameters('L = "120 mH"', f'R = "{IMPORT}"', 'V_s = "24 V"'),
    with_parameters('L = "120 mH"', f'R = {{ value = "{IMPORT}" }}', 'V_s = "24 V"'),
    with_parameters('L = "120 mH"', f'R = "47 {IMPORT}"', 'V_s = "24 V"'),
    with_equation("L*di/dt + R*i = V_s", unknown=f"i [{IMPORT}]"),
    with_equation("L*di/dt + R*i = V_s", unknown=f"{IMPORT} [A]"),
    with_criteria(f"{IMPORT} <= 1 A"),
    with_criteria(f"i({IMPORT}) <= 1 A"),
    with_criteria(f"i(1 s) <= 1 {IMPORT}"),
    toml(initial=f'[initial]\nvalue = "{IMPORT}"\n'),
    toml(extra=f'[evaluate]\nat = ["{IMPORT}"]\n'),
]


@pytest.mark.parametrize("text", INJECTIONS, ids=[f"injection-{n}" for n in range(len(INJECTIONS))])
def test_code_in_any_field_is_refused_and_never_run(tmp_path, monkeypatch, text):
    monkeypatch.chdir(tmp_path)
    path = write(tmp_path, text)
    with pytest.raises(CalcsheetError) as info:
        load_model(path)
    assert str(info.value).startswith(str(path))
    assert not (tmp_path / "X").exists()
    assert not Path("X").exists()


def test_several_parameter_errors_are_reported_together_one_per_line(tmp_path):
    path = write(tmp_path, with_parameters('L = "120 mHz2"', 'R = "47 ohmz"', 'V_s = "24 V"'))
    with pytest.raises(ErrorList) as info:
        load_model(path)
    lines = str(info.value).splitlines()
    assert len(lines) == 2
    assert lines[0].startswith(f"{path}: parameters.L: unknown unit")
    assert lines[1].startswith(f"{path}: parameters.R: unknown unit")
    assert [e.key for e in info.value.errors] == ["parameters.L", "parameters.R"]


def test_several_unknown_tables_are_reported_together(tmp_path):
    path = write(tmp_path, toml(extra="[solver]\nx = 1\n[graph]\ny = 2\n"))
    with pytest.raises(ErrorList) as info:
        load_model(path)
    lines = str(info.value).splitlines()
    assert lines == [
        f"{path}: solver: unknown table (expected one of: {', '.join(TABLES)})",
        f"{path}: graph: unknown table (expected one of: {', '.join(TABLES)})",
    ]


def test_missing_file(tmp_path):
    path = tmp_path / "absent.toml"
    with pytest.raises(InputError) as info:
        load_model(path)
    assert str(info.value).startswith(f"{path}: cannot read the file")
    assert "\n" not in str(info.value)


def test_file_not_utf8(tmp_path):
    path = tmp_path / "latin.toml"
    path.write_bytes(b'[sheet]\ntitle = "K\xfchlung"\n')
    with pytest.raises(InputError) as info:
        load_model(path)
    assert str(info.value) == f"{path}: the file is not UTF-8 text"


# ------------------------------------------------- regressions: bugs found by these tests
@pytest.mark.parametrize("table", ["parameters", "initial", "evaluate"])
def test_array_of_tables_where_a_table_is_expected(tmp_path, table):
    text = toml(extra='[evaluate]\nat = "1 s"\n').replace(f"[{table}]", f"[[{table}]]")
    with pytest.raises(CalcsheetError) as info:
        load_model(write(tmp_path, text))
    assert "must be a table" in str(info.value)


@pytest.mark.parametrize("table", ["model", "sheet"])
def test_array_of_tables_for_model_or_sheet_is_named(tmp_path, table):
    text = toml().replace(f"[{table}]", f"[[{table}]]")
    with pytest.raises(CalcsheetError) as info:
        load_model(write(tmp_path, text))
    assert "must be a table" in str(info.value)


@pytest.mark.parametrize("where", ["parameter", "initial"])
def test_non_finite_number_is_refused(tmp_path, where):
    if where == "parameter":
        text = with_equation("L*di/dt + R*i = k*V_s", parameters=PARAMETERS + "k = inf\n")
    else:
        text = toml(
            model='[model]\nequation = "tau*dx/dt + x = 0"\nunknown = "x []"\nvariable = "t [s]"\n',
            parameters='[parameters]\ntau = "3 s"\n',
            initial="[initial]\nvalue = nan\n",
        )
    with pytest.raises(CalcsheetError, match="finite"):
        load_model(write(tmp_path, text))


def test_ratio_of_diameters_is_not_a_derivative(tmp_path):
    parameters = PARAMETERS + 'd_o = "12 mm"\nd_i = "10 mm"\n'
    model = load_model(write(tmp_path, with_equation("L*di/dt + R*i = V_s*d_i/d_o", parameters=parameters)))
    d_i, d_o = sp.Symbol("d_i", positive=True), sp.Symbol("d_o", positive=True)
    assert model.rhs == sp.Symbol("V_s", positive=True) * d_i / d_o


def test_variable_name_ending_in_2(tmp_path):
    model_table = '[model]\nequation = "L*di/dt2 + R*i = V_s"\nunknown = "i [A]"\nvariable = "t2 [s]"\n'
    model = load_model(write(tmp_path, toml(model=model_table, initial='[initial]\nvalue = "0 A"\n')))
    assert model.variable.name == "t2"


# ------------------------------------------------------------------ nonlinear: classify
NONLINEAR = [
    ("square-of-unknown", "L*di/dt + k*i^2 = V_s", 'k = "2 V/A^2"\n', "i [A]"),
    ("unknown-times-derivative", "L*i*di/dt/I_0 + R*i = V_s", 'I_0 = "1 A"\n', "i [A]"),
    ("square-of-derivative", "L*(di/dt)^2/I_0*T_0 + R*i = V_s", 'I_0 = "1 A"\nT_0 = "1 s"\n', "i [A]"),
    ("exp-of-unknown", "L*di/dt + R*I_0*exp(i/I_0) = V_s", 'I_0 = "1 A"\n', "i [A]"),
]


@pytest.mark.parametrize("equation, extra, unknown", [c[1:] for c in NONLINEAR], ids=[c[0] for c in NONLINEAR])
def test_nonlinear_models_load_but_are_refused_by_classify(tmp_path, equation, extra, unknown):
    model = load_model(write(tmp_path, with_equation(equation, parameters=PARAMETERS + extra, unknown=unknown)))
    with pytest.raises(ModelRefused) as info:
        classify(model)
    assert "is not linear in i and di/dt" in info.value.message
    assert info.value.key == "model.equation"


def test_sine_of_angle_is_refused_by_classify(tmp_path):
    # A first-order angle model with sin(phi): nonlinear in the unknown.
    model_table = '[model]\nequation = "tau*dphi/dt + sin(phi) = 0"\nunknown = "phi [rad]"\nvariable = "t [s]"\n'
    text = toml(model=model_table, parameters='[parameters]\ntau = "3 s"\n', initial='[initial]\nvalue = "0.2 rad"\n')
    model = load_model(write(tmp_path, text))
    with pytest.raises(ModelRefused, match="is not linear in phi and dphi/dt"):
        classify(model)


def test_derivative_that_cancels_is_refused_by_classify(tmp_path):
    model = load_model(write(tmp_path, with_equation("L*di/dt - L*di/dt + R*i = V_s")))
    with pytest.raises(ModelRefused, match="cancels out") as info:
        classify(model)
    assert info.value.key == "model.equation"


def test_linear_model_is_classified(tmp_path):
    """Control for the refusals above: the linear coil model passes, with p = R/L."""
    model = load_model(write(tmp_path, toml()))
    result = classify(model)
    L, R, V_s = (sp.Symbol(n, positive=True) for n in ("L", "R", "V_s"))
    assert not result.homogeneous
    assert sp.simplify(result.p - R / L) == 0
    assert sp.simplify(result.r - V_s / L) == 0


# -------------------------------------------------------------------------- happy path
VALID = """\
# Demo (invented): a bleed resistor discharges a snubber capacitor in a small converter.
[sheet]
title = "Snubber capacitor discharge"
number = "DEMO-01"
references = ["Converter layout (demo)"]
assumptions = ["Nominal component values"]

[model]
equation = "R_b*C_s*dv / dt + v = V_f"
unknown = "v [V]"
variable = "t [ms]"

[parameters]
R_b = { value = "4.7 kohm", source = "bleed resistor, layout", note = "single resistor" }
C_s = "2200 uF"
V_f = "0 V"
L_stray = "3 uH"

[initial]
value = "48 V"

[evaluate]
at = ["10 ms", "2 min"]
reach = "5 V"

[[criteria]]
text = "Below 5 V within a minute"
check = "reach(5 V) <= 1 min"

[[criteria]]
check = "time_constant <= 20 s"
"""


def test_valid_model_loads(tmp_path):
    path = write(tmp_path, VALID)
    model = load_model(path)

    assert model.path == str(path)
    assert model.sheet.title == "Snubber capacitor discharge"
    assert model.sheet.references == ("Converter layout (demo)",)
    assert model.equation_text == "R_b*C_s*dv / dt + v = V_f"

    v = sp.Symbol("v", real=True)
    t = sp.Symbol("t", real=True)
    dv = sp.Symbol("dv/dt", real=True)
    R_b, C_s = sp.Symbol("R_b", positive=True), sp.Symbol("C_s", positive=True)
    V_f = sp.Symbol("V_f", real=True)  # value 0: no sign assumption
    assert model.unknown.symbol == v and model.variable.symbol == t
    assert model.derivative == dv
    assert model.lhs == R_b * C_s * dv + v
    assert model.rhs == V_f
    assert sp.expand(model.residual - (R_b * C_s * dv + v - V_f)) == 0

    by_name = {p.name: p for p in model.parameters}
    assert by_name["R_b"].si == pytest.approx(4700.0)
    assert by_name["R_b"].text == "4.7 kohm"
    assert by_name["R_b"].source == "bleed resistor, layout"
    assert by_name["R_b"].note == "single resistor"
    assert by_name["C_s"].si == pytest.approx(2.2e-3)
    assert by_name["L_stray"].si == pytest.approx(3e-6)
    assert by_name["V_f"].si == 0.0
    assert model.unused_parameters == ("L_stray",)
    # R*C = 4.7e3 ohm * 2.2e-3 F = 10.34 s (ohm*farad = second; common practice, no source)
    values = model.numeric_values()
    assert float((R_b * C_s).subs(values)) == pytest.approx(10.34)

    # initial.at defaults to zero in the variable's unit
    assert model.initial_at.si == 0.0 and model.initial_at.text == "0 ms"
    assert model.initial_value.si == pytest.approx(48.0)
    assert [p.si for p in model.evaluate_at] == pytest.approx([0.010, 120.0])
    assert [p.si for p in model.reach] == pytest.approx([5.0])

    first, second = model.criteria
    assert (first.subject, first.operator, first.text) == ("reach", "<=", "Below 5 V within a minute")
    assert first.argument.si == pytest.approx(5.0) and first.limit.si == pytest.approx(60.0)
    assert (second.subject, second.argument, second.text) == ("time_constant", None, "time_constant <= 20 s")
    assert second.limit.si == pytest.approx(20.0)


def test_temperature_model_converts_absolute_temperatures(tmp_path):
    """A lumped body cooling in air: absolute temperatures in degC go to kelvin with the offset."""
    text = """\
[sheet]
title = "Cooling of a cast bracket (demo)"

[model]
equation = "m*c*dT/dt = -h*A*(T - T_amb)"
unknown = "T [degC]"
variable = "t [min]"

[parameters]
m = "3.5 kg"
c = "460 J/(kg*K)"
h = "12 W/(m^2*K)"
A = "0.15 m^2"
T_amb = "18 degC"

[initial]
value = "240 degC"

[evaluate]
reach = "40 degC"

[[criteria]]
check = "T(30 min) <= 80 degC"
"""
    model = load_model(write(tmp_path, text))
    by_name = {p.name: p for p in model.parameters}
    # T/K = t/degC + 273.15 (SI Brochure, 9th ed.)
    assert by_name["T_amb"].si == pytest.approx(291.15)
    assert model.initial_value.si == pytest.approx(513.15)
    assert model.reach[0].si == pytest.approx(313.15)
    assert model.criteria[0].argument.si == pytest.approx(1800.0)
    assert model.criteria[0].limit.si == pytest.approx(353.15)
    assert by_name["c"].si == pytest.approx(460.0)
