"""Exit codes, one-line errors and no half-written output, through the command line."""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main

GOOD = """
[sheet]
title = "Test: bleed-down"
[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = "10 kohm"
C = "1000 uF"
[initial]
value = "400 V"
[evaluate]
at = ["10 s"]
"""


def run(*args):
    return CliRunner().invoke(main, list(args))


def write(tmp_path: Path, text: str, name: str = "case.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_failing_criterion_exits_1_and_still_writes_the_sheet(tmp_path):
    path = write(tmp_path, GOOD + '[[criteria]]\ntext = "fast"\ncheck = "v(10 s) <= 50 V"\n')
    result = run("build", str(path), "--out", str(tmp_path / "out"))
    assert result.exit_code == 1
    text = (tmp_path / "out" / "case.txt").read_text()
    assert "FAIL" in text  # v(10 s) = 400 e^-1 = 147 V, above 50 V


def test_check_names_each_failing_criterion_by_number_and_text(tmp_path):
    # v(10 s) = 400 exp(-1) = 147 V (the arithmetic of the input): the first passes, the second fails
    path = write(
        tmp_path,
        GOOD + '[[criteria]]\ntext = "slow enough"\ncheck = "v(10 s) >= 100 V"\n'
        '[[criteria]]\ntext = "fast"\ncheck = "v(10 s) <= 50 V"\n',
    )
    result = run("check", str(path))
    assert result.exit_code == 1
    assert '1 of 2 criteria pass; FAIL: #2 "fast";' in result.output


def test_check_counts_a_criterion_not_assessed_apart_from_a_failure(tmp_path):
    # A lumped body with Bi = h Lc / k = 25 * (1e-4/0.016) / 0.2 = 0.78 > 0.1 (common practice, no source:
    # the lumped model needs Bi <= 0.1), so its criterion is not assessed, and says so.
    from calcsheet.kinds.catalogue import starter_text

    text = starter_text("lumped_body").replace('value = "45 W/(m*K)"', 'value = "0.2 W/(m*K)"')
    result = run("check", str(write(tmp_path, text)))
    assert result.exit_code == 1
    assert "0 of 2 criteria pass; not assessed (the model is not valid for this case): #1" in result.output
    assert "FAIL: #" not in result.output


@pytest.mark.parametrize(
    "bad, fragment",
    [
        (GOOD.replace('"10 kohm"', '"10 kohmz"'), "parameters.R"),
        (GOOD.replace("R*C*dv/dt + v = 0", "R*C*dv/dt + v^2/(1 V) = 0"), "model.equation"),
        (GOOD.replace("R*C*dv/dt + v = 0", "R*C*dv/dt + v = 5 A"), "model.equation"),
        (GOOD.replace('at = ["10 s"]', 'at = ["-5 s"]'), "evaluate.at[1]"),
        (GOOD.replace('value = "400 V"', "value = \"__import__('os').system('touch PWNED')\""), "initial.value"),
    ],
)
def test_input_errors_exit_2_with_one_line_and_write_nothing(tmp_path, bad, fragment, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = write(tmp_path, bad)
    result = run("build", str(path), "--out", str(tmp_path / "out"))
    assert result.exit_code == 2
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"{path}: {fragment}")
    assert "Traceback" not in result.output
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())
    assert not (tmp_path / "PWNED").exists()


def test_missing_input_exits_2(tmp_path):
    result = run("check", str(tmp_path / "nowhere.toml"))
    assert result.exit_code == 2 and "no such file" in result.output


def test_unknown_format_exits_2(tmp_path):
    result = run("build", str(write(tmp_path, GOOD)), "--format", "docx", "--out", str(tmp_path))
    assert result.exit_code == 2 and "unknown format 'docx'" in result.output


def test_format_option_limits_outputs(tmp_path):
    result = run("build", str(write(tmp_path, GOOD)), "--format", "txt", "--out", str(tmp_path / "o"))
    assert result.exit_code == 0
    assert sorted(p.name for p in (tmp_path / "o").iterdir()) == ["case.txt"]


def test_style_folder_overrides_css_and_inherits_template(tmp_path):
    style = tmp_path / "firm"
    style.mkdir()
    (style / "sheet.css").write_text("body { color: #123456; }\n")
    result = run(
        "build", str(write(tmp_path, GOOD)), "--format", "html", "--style", str(style), "--out", str(tmp_path / "o")
    )
    assert result.exit_code == 0
    html = (tmp_path / "o" / "case.html").read_text()
    assert "#123456" in html and "Integrating factor" in html
