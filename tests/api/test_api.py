"""The Python API (calcsheet/api.py): one test or more per public name, results against an outside reference,
and the command line shown to give the same lines, messages and bytes as the API it sits on.

The reference: a capacitor discharging through a resistor, v(t) = V0 exp(-t/(R C)) (common practice, no source),
evaluated with mpmath at 30 digits in the test itself. The scenario (a test-bench snubber capacitor) is invented.
"""

from __future__ import annotations

import re
import subprocess
import sys
import tomllib
from pathlib import Path

import mpmath
import pytest
from click.testing import CliRunner

import calcsheet
from calcsheet.cli import main

ROOT = Path(__file__).resolve().parents[2]

BENCH = """
[sheet]
title = "Snubber capacitor <b>bleed</b> on test bench TB-2"
number = "TB-201"

[model]
kind = "series_rc"
unknown = "v [V]"
variable = "t [s]"

[parameters]
R = { value = "10 kohm", source = "bleed resistor fitted" }
C = { value = "47 uF", source = "snubber capacitor" }
V_s = "0 V"

[initial]
at = "0 s"
value = "400 V"

[evaluate]
at = ["1 s", "2 s"]

[[criteria]]
text = "Snubber below 50 V two seconds after switch-off"
check = "v(2 s) <= 50 V"
"""


def closed_form(r_ohm: str, c_farad: str, t_s: str, v0: str = "400") -> float:
    """V0 exp(-t/(R C)) in 30 digits (common practice, no source)."""
    with mpmath.workdps(30):
        return float(mpmath.mpf(v0) * mpmath.exp(-mpmath.mpf(t_s) / (mpmath.mpf(r_ohm) * mpmath.mpf(c_farad))))


def value_at(sheet: calcsheet.Sheet, t: float) -> float:
    (found,) = [v for v in sheet.values if v["at"]["value"] == t]
    assert found["value"]["unit"] == "V"
    return found["value"]["value"]


@pytest.fixture()
def bench(tmp_path: Path) -> Path:
    path = tmp_path / "bench.toml"
    path.write_text(BENCH, encoding="utf-8")
    return path


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, list(args))
    return result.exit_code, result.stdout, result.stderr


def test_load_reads_a_path_or_text_alike(bench: Path):
    from_path = calcsheet.load(bench)
    from_text = calcsheet.load(BENCH, name=str(bench))
    assert isinstance(from_path, calcsheet.Input) and from_path.text is None
    assert from_text.text == BENCH and from_path.name == from_text.name == str(bench)
    assert {p.name: p.text for p in from_path.model.parameters} == {p.name: p.text for p in from_text.model.parameters}
    assert calcsheet.load(BENCH).name == "<text>"


def test_build_values_match_the_closed_form():
    sheet = calcsheet.build(BENCH)
    # the record keeps 10 significant digits: a relative difference below 1e-9 is all rounding
    assert value_at(sheet, 1.0) == pytest.approx(closed_form("10e3", "47e-6", "1"), rel=1e-9)
    assert value_at(sheet, 2.0) == pytest.approx(closed_form("10e3", "47e-6", "2"), rel=1e-9)
    assert sheet.passed and sheet.exit_code == 0
    assert [c["status"] for c in sheet.criteria] == ["pass"]
    assert sheet.outputs == {}  # nothing rendered unless asked for


def test_build_with_set_takes_the_same_path_as_the_command_line(bench: Path):
    sheet = calcsheet.build(bench, set={"R": "51 kohm"})
    assert value_at(sheet, 2.0) == pytest.approx(closed_form("51e3", "47e-6", "2"), rel=1e-9)
    assert not sheet.passed and sheet.exit_code == 1  # 400 V exp(-2/2.397) = 174 V > 50 V
    assert sheet.record["overrides"] == {"R": {"value": "51 kohm", "was": "10 kohm"}}
    code, out, _ = run("check", str(bench), "--set", "R=51 kohm")
    assert (code, out) == (1, f"{bench}: {sheet.summary}\n")


def test_a_bad_override_is_the_same_typed_error_as_on_the_command_line(bench: Path):
    with pytest.raises(calcsheet.InputError) as caught:
        calcsheet.build(bench, set={"R": "5 V"})
    error = caught.value
    assert (error.file, error.key) == (str(bench), "--set R")
    assert "dimension" in error.message
    code, _, err = run("check", str(bench), "--set", "R=5 V")
    assert (code, err) == (2, f"{error}\n")
    with pytest.raises(calcsheet.InputError) as twice:
        calcsheet.build(calcsheet.load(bench, set={"R": "5 kohm"}), set=[("R", "6 kohm")])
    assert twice.value.key == "--set R" and twice.value.message == "is set twice"


def test_an_input_error_carries_file_key_and_message():
    broken = BENCH.replace('value = "47 uF"', 'value = "47 uF/s"')
    with pytest.raises(calcsheet.CalcsheetError) as caught:
        calcsheet.load(broken, name="bench-broken.toml")
    error = caught.value
    assert isinstance(error, calcsheet.InputError)
    assert error.file == "bench-broken.toml" and error.key.startswith("parameters.C")
    assert str(error).startswith(f"bench-broken.toml: {error.key}: ") and error.message in str(error)


def test_errors_are_the_typed_exceptions_of_calcsheet_errors():
    from calcsheet import errors

    for name in ("CalcsheetError", "InputError", "ModelRefused", "ErrorList"):
        assert getattr(calcsheet, name) is getattr(errors, name)
    with pytest.raises(calcsheet.InputError) as caught:
        calcsheet.build(BENCH, formats=["docx"])
    assert caught.value.key == "--format"


def test_check_is_what_calcsheet_check_prints(bench: Path):
    sheet = calcsheet.check(bench)
    code, out, err = run("check", str(bench))
    assert (code, out, err) == (sheet.exit_code, f"{sheet.name}: {sheet.summary}\n", "")
    assert sheet.summary == "PASS (1 of 1 criteria pass; verification passed)"
    assert sheet.outputs == {} and sheet.problem == ""


def test_build_writes_the_bytes_the_command_line_writes(bench: Path, tmp_path: Path):
    sheet = calcsheet.build(bench, formats="json,txt", out=tmp_path / "api")
    assert sorted(p.name for p in sheet.written) == ["bench.json", "bench.txt"]
    code, _, _ = run("build", str(bench), "--format", "json,txt", "--out", str(tmp_path / "cli"), "--jobs", "1")
    assert code == 0
    for name in ("bench.json", "bench.txt"):
        assert (tmp_path / "api" / name).read_bytes() == (tmp_path / "cli" / name).read_bytes()
        assert sheet.outputs[name.split(".")[1]].encode("utf-8") == (tmp_path / "cli" / name).read_bytes()
    import json

    assert sheet.record == json.loads((tmp_path / "cli" / "bench.json").read_text(encoding="utf-8"))
    whatif = calcsheet.build(bench, formats=["json"], set={"R": "12 kohm"}, out=tmp_path / "api")
    assert [p.name for p in whatif.written] == ["bench.whatif.json"]


def test_the_sheet_shows_itself_in_a_notebook_without_page_chrome():
    shown = calcsheet.build(BENCH)._repr_html_()
    assert "<math" in shown and "<svg" in shown
    assert not re.search(r"<(html|head|body|!DOCTYPE)\b", shown, re.IGNORECASE)
    # user text arrives escaped, as in the .html file
    assert "&lt;b&gt;bleed&lt;/b&gt;" in shown and "<b>bleed" not in shown
    # every style rule, the sheet's and the plot's, applies inside the sheet's own <div> only
    scope = re.match(r'<div class="calcsheet-sheet (calcsheet-[0-9a-f]{12})', shown).group(1)
    for css in re.findall(r"<style[^>]*>(.*?)</style>", shown, re.DOTALL):
        for selectors in re.findall(r"(?:^|})\s*([^{}@]+?)\s*\{", css):
            for selector in selectors.split(","):
                assert selector.strip().startswith(f".{scope}"), selector
    assert ":root" not in shown and re.search(r"(?<![\w-])body\s*\{", shown) is None


def test_the_fragment_is_the_html_files_body(tmp_path: Path):
    sheet = calcsheet.build(BENCH, formats=["html"])
    page, shown = sheet.outputs["html"], sheet._repr_html_()
    body = re.search(r"<main.*</main>", page, re.DOTALL).group(0)
    svg_style = re.compile(r"<style[^>]*>.*?</style>", re.DOTALL)
    assert svg_style.sub("", body) in svg_style.sub("", shown)


def test_rendered_adds_formats_to_a_built_sheet():
    sheet = calcsheet.check(BENCH).rendered(["txt"])
    assert set(sheet.outputs) == {"txt"} and "TB-201" in sheet.outputs["txt"]


def test_import_calcsheet_alone_imports_no_heavy_library():
    heavy = ("sympy", "scipy", "pint", "matplotlib", "weasyprint", "ziamath")
    script = (
        "import sys, calcsheet; calcsheet.InputError; import calcsheet.load.toml_file; "
        f"print([m for m in {heavy!r} if m in sys.modules]); "
        "print(type(calcsheet.load).__name__, calcsheet.load.__module__)"
    )
    done = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, cwd=ROOT, check=True)
    assert done.stdout.splitlines() == ["[]", "function calcsheet.api"]


def test_public_names_are_listed_typed_and_shipped():
    assert sorted(calcsheet.__all__) == sorted(
        ["load", "build", "check", "Input", "Sheet", "CalcsheetError", "InputError", "ModelRefused", "ErrorList"]
        + ["__version__"]
    )
    for name in calcsheet.__all__:
        assert getattr(calcsheet, name) is not None and name in dir(calcsheet)
    for function in (calcsheet.load, calcsheet.build, calcsheet.check):
        assert function.__doc__ and "return" in function.__annotations__
    assert (ROOT / "calcsheet" / "py.typed").is_file()
    package_data = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]
    assert "py.typed" in package_data["package-data"]["calcsheet"]


def test_text_is_read_as_the_file_it_is_named_after(tmp_path: Path, tmp_path_factory):
    (tmp_path / "other.toml").write_text(BENCH, encoding="utf-8")  # the package's one sheet on disk
    (tmp_path / "package.toml").write_text(
        '[package]\ntitle = "Bench package"\nnumber = "TBP-1"\nsheets = ["other.toml"]\n'
        '[basis]\nC_snub = { value = "22 uF", source = "bench standard parts list" }\n',
        encoding="utf-8",
    )
    text = BENCH.replace('C = { value = "47 uF", source = "snubber capacitor" }', 'C = { basis = "C_snub" }')
    sheet = calcsheet.build(text, name=str(tmp_path / "bench.toml"))
    assert value_at(sheet, 1.0) == pytest.approx(closed_form("10e3", "22e-6", "1"), rel=1e-9)
    with pytest.raises(calcsheet.InputError) as caught:
        calcsheet.load(text, name=str(tmp_path_factory.mktemp("alone") / "bench.toml"))
    assert "no package.toml" in caught.value.message and caught.value.key == "parameters.C"


def test_build_into_out_writes_every_format_by_default(bench: Path, tmp_path: Path):
    sheet = calcsheet.build(calcsheet.load(bench), out=tmp_path / "all")
    assert sorted(p.name for p in sheet.written) == ["bench.html", "bench.json", "bench.pdf", "bench.txt"]
    assert isinstance(sheet.outputs["pdf"], bytes) and sheet.outputs["pdf"].startswith(b"%PDF")
    assert (tmp_path / "all" / "bench.pdf").read_bytes() == sheet.outputs["pdf"]
