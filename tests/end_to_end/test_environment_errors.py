"""Errors in the user's environment (an unwritable folder, a file where a folder should be), a bad
SOURCE_DATE_EPOCH and inputs whose outputs would collide are input errors: one line, exit 2."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"


def _one_line_exit_2(result):
    assert result.exit_code == 2, result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "Traceback" not in result.output and "internal error" not in result.output


def test_new_into_a_folder_that_cannot_exist(tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    result = CliRunner().invoke(main, ["new", "series_rc", str(blocker / "x.toml")])
    _one_line_exit_2(result)


def test_build_into_a_file_where_a_folder_should_be(tmp_path):
    blocker = tmp_path / "out"
    blocker.write_text("x")
    result = CliRunner().invoke(main, ["build", str(DEMO), "--format", "json", "--out", str(blocker)])
    _one_line_exit_2(result)
    assert blocker.read_text() == "x"


def test_two_inputs_of_one_name_are_refused_before_anything_is_written(tmp_path):
    for folder in ("a", "b"):
        (tmp_path / folder).mkdir()
        shutil.copy(DEMO, tmp_path / folder / "same.toml")
    out = tmp_path / "out"
    result = CliRunner().invoke(
        main,
        [
            "build",
            str(tmp_path / "a" / "same.toml"),
            str(tmp_path / "b" / "same.toml"),
            "--format",
            "txt",
            "--out",
            str(out),
        ],
    )
    _one_line_exit_2(result)
    assert "same.toml" in result.output and not out.exists()


@pytest.mark.parametrize("value", ["", "abc", "-5", "99999999999999999999"])
def test_a_bad_source_date_epoch_is_ignored(value):
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    env["SOURCE_DATE_EPOCH"] = value
    done = subprocess.run(
        [sys.executable, "-m", "calcsheet.cli", "check", str(DEMO)],
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert done.returncode == 0, done.stderr
    assert "PASS" in done.stdout and done.stderr == ""
