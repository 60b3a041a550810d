"""The JSON Schema of the input format (``calcsheet schema``) against the loader, with the jsonschema library.

The oracle is outside the schema on both sides: the jsonschema library's draft 2020-12 validator says what the
schema accepts, and the loader (``load_model``, ``read_package``) says what calcsheet accepts. What one accepts
the other must accept, key for key; where the schema cannot say what the loader checks (units, dimensions,
expressions, references between values), the case is listed in BEYOND_THE_SCHEMA with the reason.

The inputs here are invented for these checks (a test capacitor bank, a test coil).
"""

from __future__ import annotations

import ast
import datetime as dt
import json
import os
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import jsonschema
import pytest
import tomli_w
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError
from calcsheet.input_keys import PACKAGE_TABLES, SHEET_TABLES, STATUSES, Table
from calcsheet.kinds import KIND_MODULES, all_kinds
from calcsheet.kinds.catalogue import starter_text
from calcsheet.kinds.forcing_forms import FORMS
from calcsheet.load.loader import load_model
from calcsheet.load.package_file import read_package
from calcsheet.load.schema import input_schema, package_schema, schema_text
from tests.fuzz.test_malformed_inputs import mutated_inputs

ROOT = Path(__file__).resolve().parents[2]
DEMOS = sorted(p for p in (ROOT / "inputs").glob("*.toml") if p.name != "package.toml")
SHEET = jsonschema.Draft202012Validator(input_schema())
PACKAGE = jsonschema.Draft202012Validator(package_schema())
FINGERPRINT = "0123456789abcdef" * 4

# Every key of every table of a plain model, each as the loader reads it (values invented).
FULL = '''#:schema ./calcsheet-input.schema.json
[sheet]
title = "Bleed-down of a test capacitor bank"
number = "TS-01"
revision = "B"
project = "Schema test bench"
originator = "Q. Writer"
purpose = """Time for the bank to fall
to a safe voltage."""
references = ["Bank drawing TB-1 (test)"]
assumptions = "Ideal components."
date = 2026-03-05
style = "house"
status = "for check"

[signoff]
prepared = "Q. Writer"
checked = { name = "R. Checker", date = "2026-03-06", fingerprint = "FINGERPRINT" }
approved = { name = "S. Approver" }

[[revisions]]
revision = "A"
date = 2026-03-01
description = "First issue"

[[revisions]]
revision = "B"
date = "2026-03-05"
description = "Bleed resistor changed"

[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"

[parameters]
R = { value = "10 kohm", tolerance = "5 %", source = "resistor datasheet (test)", note = "one resistor" }
C = { value = "1000 uF", min = "900 uF", max = "1200 uF" }
tau_c = "R*C"

[initial]
at = "0 s"
value = "400 V"

[evaluate]
at = ["5 s", "20 s"]
reach = "50 V"
extremes = ["max", "min 0 s .. 30 s"]
integrals = "integral(P_R, 0 s, 30 s)"

[[criteria]]
text = "Below 50 V within 60 s"
check = "reach(50 V) <= 60 s"
source = "Test specification TS-0 (invented)"

[[criteria]]
check = "time_constant <= 15 s"
basis = "common practice, no source"

[plot]
to = "60 s"

[[derived]]
name = "P_R"
expression = "v^2/R"
unit = "W"
text = "power in the bleed resistor"
integral_unit = "J"
'''.replace("FINGERPRINT", FINGERPRINT)

# A kind with a forcing form and a switch that changes a parameter and the forcing.
# A well draining through an orifice, linearised about its steady level h = (q_in/k)^2 = 1 m (test values).
ORIFICE = """[sheet]
title = "Test well draining through an orifice"

[model]
equation = "A*dh/dt = q_in - k*sqrt(h)"
unknown = "h [m]"
variable = "t [s]"

[parameters]
A = "2 m^2"
q_in = "0.01 m^3/s"
k = "0.01 m^2.5/s"

[initial]
at = "0 s"
value = "1.2 m"

[linearise]
about = "steady state"
tolerance = "5 %"
"""

COIL = """[sheet]
title = "Test coil with an economy phase"

[model]
kind = "series_rl"
unknown = "i [A]"
variable = "t [ms]"

[parameters]
R = "120 ohm"
L = "0.6 H"

[forcing]
form = "step"
before = "0 V"
after = "24 V"
at = "0 ms"

[initial]
value = "0 A"

[[switch]]
at = "50 ms"
text = "economy resistor switched in"
parameters = { R = { value = "200 ohm", source = "coil plus economy resistor (test)" } }
forcing = { form = "constant", value = "24 V" }
"""

PACKAGE_FILE = """#:schema ./calcsheet-package.schema.json
[package]
title = "Schema test package"
number = "TP-01"
revision = "A"
project = "Schema test bench"
client = "none"
style = "house"
sheets = ["*.toml"]

[basis]
V_bus = { value = "400 V", source = "bus design value (test)", note = "nominal", tolerance = "5 %" }
T_room = "22 degC"

[signoff]
prepared = "Q. Writer"
checked = { name = "R. Checker", date = 2026-03-06, fingerprint = "FINGERPRINT" }
approved = "S. Approver"
""".replace("FINGERPRINT", FINGERPRINT)

# A sheet of that package: one parameter from the basis, one from another sheet's result.
IN_PACKAGE = """[sheet]
title = "Second stage of the test bank"
number = "TS-02"

[model]
equation = "tau*dv/dt + v = V_0"
unknown = "v [V]"
variable = "t [s]"

[parameters]
tau = { from = "TS-01", result = "time_constant" }
V_0 = { basis = "V_bus" }

[initial]
value = "0 V"
"""
UPSTREAM = {("TS-01", "time_constant"): ("10 s", "sheet TS-01 rev A, time constant")}


def as_json(value):
    """A TOML document as an editor hands it to a JSON Schema validator: dates and times become ISO text."""
    if isinstance(value, dict):
        return {key: as_json(item) for key, item in value.items()}
    if isinstance(value, list):
        return [as_json(item) for item in value]
    if isinstance(value, (dt.date, dt.time)):
        return value.isoformat()
    return value


def problems(validator, text: str) -> list[str]:
    return [
        f"{'/'.join(map(str, e.absolute_path))}: {e.message[:160]}"
        for e in validator.iter_errors(as_json(tomllib.loads(text)))
    ]


def write(folder: Path, text: str, name: str = "input.toml") -> Path:
    (folder / "house").mkdir(exist_ok=True)  # the style folder FULL and PACKAGE_FILE name
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def loads(folder: Path, text: str, **options) -> bool:
    try:
        load_model(write(folder, text), **options)
    except CalcsheetError:
        return False
    return True


# ------------------------------------------------------------------------------------ the schema itself
def test_the_schemas_are_draft_2020_12_schemas():
    for schema in (input_schema(), package_schema()):
        jsonschema.Draft202012Validator.check_schema(schema)
        assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"


@pytest.mark.parametrize("arguments", [["schema"], ["schema", "--package"]])
def test_the_printed_schema_is_sorted_ascii_json_ending_in_one_newline(arguments):
    first, second = (CliRunner().invoke(main, arguments) for _ in range(2))
    assert first.exit_code == 0 and first.output == second.output
    assert first.output.isascii() and first.output.endswith("}\n") and not first.output.endswith("\n\n")
    assert first.output == json.dumps(json.loads(first.output), indent=2, sort_keys=True) + "\n"
    assert first.output == schema_text(package="--package" in arguments)


def test_the_schema_command_imports_no_heavy_library():
    probe = (
        "import sys, atexit\n"
        "atexit.register(lambda: print('MODULES', ' '.join(sorted(sys.modules)), file=sys.stderr))\n"
        "from calcsheet.cli import main\n"
        "main(['schema'])\n"
    )
    environment = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, env=environment)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["title"] == "calcsheet input"
    modules = next(line for line in done.stderr.splitlines() if line.startswith("MODULES")).split()
    heavy = {m.split(".")[0] for m in modules} & {"sympy", "scipy", "pint", "matplotlib", "weasyprint", "numpy"}
    assert not heavy, heavy


def test_enums_name_every_kind_form_role_and_status():
    definitions = input_schema()["$defs"]
    properties = input_schema()["properties"]
    assert properties["model"]["properties"]["kind"]["enum"] == list(KIND_MODULES)
    assert definitions["forcing"]["properties"]["form"]["enum"] == [*FORMS, "expression"]
    assert sorted(properties["signoff"]["properties"]) == ["approved", "checked", "prepared"]
    assert properties["sheet"]["properties"]["status"]["enum"] == list(STATUSES)


def test_every_choice_the_schema_offers_is_one_the_loader_accepts(tmp_path):
    properties = input_schema()["properties"]
    for status in properties["sheet"]["properties"]["status"]["enum"]:
        text = FULL.replace('status = "for check"', f'status = "{status}"')
        assert loads(tmp_path, text) and problems(SHEET, text) == [], status
    for kind in properties["model"]["properties"]["kind"]["enum"]:
        assert loads(tmp_path, starter_text(kind)), kind


# ------------------------------------------------------------------------------- valid inputs validate
@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_every_demo_validates(path):
    assert problems(SHEET, path.read_text(encoding="utf-8")) == []


def test_the_demo_package_file_validates():
    assert problems(PACKAGE, (ROOT / "inputs" / "package.toml").read_text(encoding="utf-8")) == []


@pytest.mark.parametrize("kind", KIND_MODULES)
def test_every_starter_validates(kind):
    assert problems(SHEET, starter_text(kind)) == []


def test_every_forcing_form_of_the_forcing_tests_validates(tmp_path):
    from tests.kinds.test_forcing_and_commands import FORMS as FORCINGS, RC

    assert set(FORCINGS) == {*FORMS, "expression"}
    for form, (forcing, _) in FORCINGS.items():
        text = RC.format(C="100 uF", at='"0.5 s"', forcing=forcing)
        if form == "expression":
            text = text.replace('C = "100 uF"', 'C = "100 uF"\nV_0 = "6 V"\nT_r = "0.2 s"')
        assert loads(tmp_path, text), form
        assert problems(SHEET, text) == [], form


def test_every_reference_corpus_case_validates():
    from tests.reference.corpus import CASES, toml_text

    for case in CASES:
        assert problems(SHEET, toml_text(case)) == [], case.name


def _inputs_written_in_the_tests() -> list[tuple[str, str]]:
    """Every input the test modules keep as a module-level text with a [sheet] table (templates included:
    the loader decides which are inputs)."""
    found = []
    for path in sorted((ROOT / "tests").rglob("*.py")):
        for node in ast.parse(path.read_text(encoding="utf-8")).body:
            value = getattr(node, "value", None)
            if isinstance(node, ast.Assign) and isinstance(value, ast.Constant) and isinstance(value.value, str):
                if "[sheet]" in value.value and isinstance(node.targets[0], ast.Name):
                    found.append((f"{path.relative_to(ROOT)}::{node.targets[0].id}", value.value))
    return found


def test_every_input_the_tests_write_that_the_loader_accepts_validates(tmp_path):
    accepted = []
    for name, text in _inputs_written_in_the_tests():
        if loads(tmp_path, text):
            accepted.append(name)
            assert problems(SHEET, text) == [], name
    assert len(accepted) >= 20, accepted  # the scan still finds the tests' inputs


@settings(max_examples=200, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck))
@given(tree=mutated_inputs())
def test_every_mutated_demo_the_loader_accepts_validates(tree, tmp_path_factory):
    """The malformed-input campaign's mutants of the demos (values, units, keys and types changed): about one in
    ten still loads, and each of those must pass the schema too (a longer run of 4,500 found no exception)."""
    try:
        text = tomli_w.dumps(tree)
    except (TypeError, ValueError):  # a tree TOML cannot hold: nothing to test
        return
    if loads(tmp_path_factory.mktemp("mutant"), text):
        assert problems(SHEET, text) == []


def test_an_input_with_every_key_loads_and_validates(tmp_path):
    assert loads(tmp_path, FULL) and problems(SHEET, FULL) == []
    assert loads(tmp_path, COIL) and problems(SHEET, COIL) == []
    assert loads(tmp_path, ORIFICE) and problems(SHEET, ORIFICE) == []
    write(tmp_path, PACKAGE_FILE, "package.toml")
    read_package(tmp_path / "package.toml")
    assert problems(PACKAGE, PACKAGE_FILE) == []
    assert loads(tmp_path, IN_PACKAGE, results=UPSTREAM) and problems(SHEET, IN_PACKAGE) == []


def _keys_used(raw, prefix: str = "") -> set[str]:
    """Every key path of a TOML document, lists read through: criteria.check, switch.parameters.R.value."""
    used = set()
    items = raw.items() if isinstance(raw, dict) else enumerate(raw) if isinstance(raw, list) else ()
    for key, value in items:
        path = prefix if isinstance(raw, list) else f"{prefix}.{key}" if prefix else key
        used |= ({path} if isinstance(raw, dict) else set()) | _keys_used(value, path)
    return used


def _closed_keys(tables: tuple[Table, ...]) -> set[str]:
    return {f"{t.name}.{k}" for t in tables if t.keys is not None for k in t.key_names} | {t.name for t in tables}


def test_every_key_the_schema_knows_is_used_by_an_input_the_loader_accepts():
    used = set().union(*(_keys_used(tomllib.loads(text)) for text in (FULL, COIL, ORIFICE, IN_PACKAGE)))
    assert _closed_keys(SHEET_TABLES) - used == set()
    assert set(input_schema()["properties"]) == {t.name for t in SHEET_TABLES}
    for entry in ("value", "source", "note", "tolerance", "min", "max"):
        assert f"parameters.R.{entry}" in used or f"parameters.C.{entry}" in used, entry
    assert {"parameters.tau.from", "parameters.tau.result", "parameters.V_0.basis"} <= used
    assert _closed_keys(PACKAGE_TABLES) - _keys_used(tomllib.loads(PACKAGE_FILE)) == set()


# --------------------------------------------------------- the loader and the schema list the same keys
def _listed(message: str) -> set[str]:
    """The keys a loader message lists after 'expected': "(expected one of: a, b)", "(expected a, b or c)"."""
    found = re.search(r"\(expected(?: one of)?:? ([^)]*)\)", message)
    assert found, message
    return {part.strip() for part in re.split(r",| or ", found.group(1)) if part.strip()}


def _refusal(tmp_path: Path, text: str, **options) -> str:
    with pytest.raises(CalcsheetError) as info:
        load_model(write(tmp_path, text), **options)
    return str(info.value)


CLOSED = [t.name for t in SHEET_TABLES if t.keys is not None]


@pytest.mark.parametrize("table", CLOSED)
def test_an_unknown_key_in_each_table_is_refused_by_both_and_the_loader_lists_the_schemas_keys(tmp_path, table):
    raw = tomllib.loads(next(text for text in (FULL, COIL, ORIFICE) if table in tomllib.loads(text)))
    entry = raw[table][0] if isinstance(raw[table], list) else raw[table]
    entry["zz_probe"] = "1 s"
    text = tomli_w.dumps(raw)
    message = _refusal(tmp_path, text)
    assert f"{table}[1].zz_probe" in message or f"{table}.zz_probe" in message, message
    schema = input_schema()["properties"][table]
    listed = (schema.get("items") or schema)["properties"]
    assert _listed(message) == set(listed)
    assert problems(SHEET, text)


def test_an_unknown_table_is_refused_by_both_and_the_loader_lists_the_schemas_tables(tmp_path):
    text = FULL + "\n[solver]\nsteps = 4\n"
    assert _listed(_refusal(tmp_path, text)) == set(input_schema()["properties"])
    assert problems(SHEET, text)


def test_a_parameter_tables_keys_are_the_schemas(tmp_path):
    text = FULL.replace('note = "one resistor"', 'note = "one resistor", remark = "x"')
    listed = _listed(_refusal(tmp_path, text))
    references = {"basis", "from", "result"}  # read from the package before the loader sees the table
    assert listed | references == set(input_schema()["$defs"]["parameter_table"]["properties"])
    assert problems(SHEET, text)


@pytest.mark.parametrize("form", sorted(FORMS))
def test_each_forcing_forms_keys_are_the_schemas(tmp_path, form):
    text = COIL.replace('form = "step"', f'form = "{form}"\nzz_probe = "1 V"')
    rule = next(
        r for r in input_schema()["$defs"]["forcing"]["allOf"] if r["if"]["properties"]["form"]["const"] == form
    )
    assert _listed(_refusal(tmp_path, text)) == set(rule["then"]["properties"])
    assert problems(SHEET, text)


def test_a_derived_quantitys_keys_are_the_schemas(tmp_path):
    text = FULL.replace('integral_unit = "J"', 'integral_unit = "J"\nshown = "yes"')
    assert _listed(_refusal(tmp_path, text)) == set(input_schema()["properties"]["derived"]["items"]["properties"])
    assert problems(SHEET, text)


def _package_refusal(tmp_path: Path, text: str) -> str:
    write(tmp_path, FULL, "sheet.toml")  # a sheet for its pattern to match
    write(tmp_path, text, "package.toml")
    with pytest.raises(CalcsheetError) as info:
        read_package(tmp_path / "package.toml")
    return str(info.value)


def test_the_package_files_keys_are_the_schemas(tmp_path):
    schema = package_schema()["properties"]
    extra_key = PACKAGE_FILE.replace('client = "none"', 'client = "none"\nowner = "x"')
    assert _listed(_package_refusal(tmp_path, extra_key)) == set(schema["package"]["properties"])
    extra_entry = PACKAGE_FILE.replace('note = "nominal"', 'note = "nominal", remark = "x"')
    entry = next(f for f in schema["basis"]["additionalProperties"]["anyOf"] if f.get("type") == "object")
    assert _listed(_package_refusal(tmp_path, extra_entry)) == set(entry["properties"])
    extra_table = PACKAGE_FILE + "\n[sheets]\nall = true\n"
    assert "unknown table" in _package_refusal(tmp_path, extra_table)
    for text in (extra_key, extra_entry, extra_table):
        assert problems(PACKAGE, text)


# ------------------------------------------------------------- a kind's parameters, as the loader needs them
def _starter_without(kind: str, slot: str) -> str:
    return re.sub(rf"(?m)^{re.escape(slot)} = .*\n", "", starter_text(kind))


SLOTS = [(kind.name, slot.name) for kind in all_kinds().values() for slot in kind.slots]


@pytest.mark.parametrize("kind, slot", SLOTS, ids=[f"{k}-{s}" for k, s in SLOTS])
def test_a_starter_without_one_parameter_fails_both_or_neither(tmp_path, kind, slot):
    text = _starter_without(kind, slot)
    assert text != starter_text(kind)
    loader_accepts = loads(tmp_path, text)
    assert loader_accepts == (all_kinds()[kind].slot(slot).default is not None)
    assert (problems(SHEET, text) == []) == loader_accepts


# ------------------------------------------------------------------ mistakes of structure fail both
STRUCTURE_MISTAKES = [
    ("status-not-a-status", FULL.replace('status = "for check"', 'status = "draft"')),
    ("unknown-kind", COIL.replace('kind = "series_rl"', 'kind = "series_rlc"')),
    ("kind-and-equation", COIL.replace('kind = "series_rl"', 'kind = "series_rl"\nequation = "L*di/dt = 0"')),
    ("forcing-without-kind", FULL + '\n[forcing]\nform = "constant"\nvalue = "1 V"\n'),
    ("forcing-unknown-form", COIL.replace('form = "step"', 'form = "staircase"')),
    ("forcing-key-of-another-form", COIL.replace('before = "0 V"', 'amplitude = "1 V"')),
    ("forcing-needs-a-value", COIL.replace('after = "24 V"\n', "")),
    ("forcing-without-form", COIL.replace('form = "step"\n', "")),
    ("source-in-parameters-and-forcing", COIL.replace('L = "0.6 H"', 'L = "0.6 H"\nV_s = "24 V"')),
    ("kind-unknown-renamed", COIL.replace('unknown = "i [A]"', 'unknown = "current [A]"')),
    ("fingerprint-not-hex", FULL.replace(FINGERPRINT, "signed-by-hand")),
    ("signoff-unknown-role", FULL.replace('approved = { name = "S. Approver" }', 'reviewed = "S. Approver"')),
    ("signoff-entry-unknown-key", FULL.replace('{ name = "S. Approver" }', '{ name = "S. Approver", team = "x" }')),
    ("signoff-as-number", FULL.replace('prepared = "Q. Writer"', "prepared = 1")),
    ("revision-without-description", FULL.replace('description = "First issue"\n', "")),
    ("revision-empty", FULL.replace('revision = "A"', 'revision = " "')),
    ("date-not-iso", FULL.replace("date = 2026-03-05", 'date = "5 March 2026"')),
    ("source-and-basis", FULL.replace('basis = "common practice, no source"', 'basis = "x"\nsource = "y"')),
    ("check-without-comparison", FULL.replace('"time_constant <= 15 s"', '"time_constant"')),
    ("check-two-comparisons", FULL.replace('"time_constant <= 15 s"', '"1 s <= time_constant <= 15 s"')),
    ("extreme-misspelt", FULL.replace('"min 0 s .. 30 s"', '"minimum"')),
    ("integral-misspelt", FULL.replace('"integral(P_R, 0 s, 30 s)"', '"sum(P_R)"')),
    ("derived-without-name", FULL.replace('name = "P_R"\n', "")),
    ("derived-expression-without-unit", FULL.replace('unit = "W"\n', "")),
    ("derived-value-not-text", FULL.replace('integral_unit = "J"', "integral_unit = 1")),
    ("switch-without-at", COIL.replace('at = "50 ms"\n', "")),
    (
        "switch-value-bare-number",
        COIL.replace('{ value = "200 ohm", source = "coil plus economy resistor (test)" }', "200"),
    ),
    ("initial-value-a-calculation", FULL.replace('value = "400 V"', 'value = "4 * 100 V"')),
    ("evaluate-at-a-table", FULL.replace('at = ["5 s", "20 s"]', 'at = { first = "5 s" }')),
    ("plot-to-text", FULL.replace('to = "60 s"', 'to = "the end"')),
    ("parameter-value-and-result", FULL.replace('"R*C"', '{ value = "1 s", from = "X", result = "y" }')),
    ("parameter-basis-and-result", FULL.replace('"R*C"', '{ basis = "X", from = "Y", result = "z" }')),
    ("parameter-value-with-a-quote", FULL.replace('tau_c = "R*C"', 'tau_c = "R*C\'"')),
    ("equation-two-equals", FULL.replace('"R*C*dv/dt + v = 0"', '"R*C*dv/dt + v = 0 = 0"')),
    ("title-a-list", FULL.replace('title = "Bleed-down of a test capacitor bank"', 'title = ["a", "b"]')),
    ("purpose-a-number", FULL.replace('purpose = """Time for the bank to fall\nto a safe voltage."""', "purpose = 5")),
    ("criteria-a-table", FULL.replace("[[criteria]]", "[criteria]", 1).replace("[[criteria]]", "[more]")),
]


@pytest.mark.parametrize("text", [c[1] for c in STRUCTURE_MISTAKES], ids=[c[0] for c in STRUCTURE_MISTAKES])
def test_a_mistake_of_structure_fails_the_loader_and_the_schema(tmp_path, text):
    assert text not in (FULL, COIL)
    assert not loads(tmp_path, text)
    assert problems(SHEET, text)


def test_a_reference_with_both_keys_missing_fails_both(tmp_path):
    write(tmp_path, PACKAGE_FILE, "package.toml")
    text = IN_PACKAGE.replace('{ from = "TS-01", result = "time_constant" }', '{ from = "TS-01" }')
    assert not loads(tmp_path, text, results=UPSTREAM)
    assert problems(SHEET, text)


@pytest.mark.parametrize(
    "change",
    [
        ('title = "Schema test package"\n', ""),
        ('"TP-01"', '""'),
        ('sheets = ["*.toml"]', "sheets = 3"),
        ('sheets = ["*.toml"]', 'sheets = ["../*.toml"]'),
        ('sheets = ["*.toml"]', 'sheets = ["/tmp/*.toml"]'),
    ],
    ids=["no-title", "empty-number", "sheets-not-a-list", "sheets-above", "sheets-absolute"],
)
def test_a_mistake_in_the_package_file_fails_both(tmp_path, change):
    text = PACKAGE_FILE.replace(*change)
    assert text != PACKAGE_FILE
    _package_refusal(tmp_path, text)
    assert problems(PACKAGE, text)


# --------------------------------------------- the loader's own error cases: where the schema can follow
# Refusals the schema cannot express, by the loader error test's id, with the reason. Each is a rule about
# what a value means, not about the shape of the file.
UNITS = "which unit names exist is pint's registry, not a pattern"
DIMENSIONS = "dimensions depend on the units of other keys"
EXPRESSION = "what an expression or a check means needs the parser (names, functions, derivatives, order)"
RELATIONS = "a rule relating two keys' values (names already taken, the unknown and the variable)"
BEYOND_THE_SCHEMA = {
    "unknown-unit": UNITS,
    "unknown-unit-of-unknown": UNITS,
    "unit-with-number": UNITS,
    "incompatible-initial-value": DIMENSIONS,
    "incompatible-initial-at": DIMENSIONS,
    "criteria-limit-wrong-dimension": DIMENSIONS,
    "criteria-argument-wrong-dimension": DIMENSIONS,
    "criteria-reach-limit-wrong-dimension": DIMENSIONS,
    "evaluate-at-wrong-dimension": DIMENSIONS,
    "evaluate-reach-wrong-dimension": DIMENSIONS,
    "evaluate-at-bare-number": DIMENSIONS,  # a bare number is right for a dimensionless variable
    "dimensionless-parameter-where-unit-required": DIMENSIONS,
    "dimensionless-initial-value": DIMENSIONS,
    "dimension-mismatch-names-both-terms": DIMENSIONS,
    "exp-of-dimensional-argument": DIMENSIONS,
    "log-of-dimensional-argument": DIMENSIONS,
    "dimensional-exponent": DIMENSIONS,
    "import-without-quotes-in-equation": EXPRESSION,
    "dunder-name-in-equation": EXPRESSION,
    "undefined-name-second-unknown": EXPRESSION,
    "second-derivative": EXPRESSION,
    "second-derivative-caret": EXPRESSION,
    "no-derivative": EXPRESSION,
    "derivative-of-another-name": EXPRESSION,
    "derivative-wrong-variable": EXPRESSION,
    "unknown-function": EXPRESSION,
    "division-by-zero": EXPRESSION,
    "criteria-unknown-subject": EXPRESSION,
    "criteria-value-needs-argument": EXPRESSION,
    "criteria-time-constant-takes-no-argument": EXPRESSION,
    "parameter-named-as-unknown": RELATIONS,
    "reserved-unknown-name": RELATIONS,
    "unknown-equals-variable": RELATIONS,
    "revision differs from the last row": RELATIONS,
    "rows out of date order": RELATIONS,
    "signed before the revision": RELATIONS,
}


def _loader_cases() -> list[tuple[str, str]]:
    """(id, input) of every case of the loader's error tests and of the review inputs' error tests."""
    from tests.review.test_bad_review_inputs import BAD
    from tests.source.test_loader_errors import BAD_INPUTS

    return [(case[0], case[1]) for case in BAD_INPUTS] + [(name, case[0]) for name, case in BAD.items()]


@pytest.mark.parametrize("name, text", _loader_cases(), ids=[c[0] for c in _loader_cases()])
def test_each_loader_error_case_fails_the_schema_or_is_listed_as_beyond_it(name, text):
    found = problems(SHEET, text)
    if name in BEYOND_THE_SCHEMA:
        assert found == [], f"{name} fails the schema now: take it off the list ({found})"
    else:
        assert found, f"{name}: the loader refuses it and the schema lets it through"


def test_the_list_beyond_the_schema_names_only_loader_cases():
    assert set(BEYOND_THE_SCHEMA) <= {case[0] for case in _loader_cases()}


# ------------------------------------------------------------------- the editor's first-line comment
def test_a_schema_comment_on_the_first_line_changes_nothing_the_loader_reads(tmp_path):
    assert FULL.startswith("#:schema ./calcsheet-input.schema.json\n")
    with_comment = load_model(write(tmp_path, FULL, "a.toml"))
    without = load_model(write(tmp_path, FULL.split("\n", 1)[1], "a.toml"))
    assert with_comment == without
    write(tmp_path, PACKAGE_FILE, "package.toml")
    assert read_package(tmp_path / "package.toml").title == "Schema test package"
