"""A small input of our own (an invented test coupon cooling in air) and ways to run the command line on it."""

from __future__ import annotations

from pathlib import Path

from click.testing import CliRunner

from calcsheet.cli import main

# T(60 s) = 20 + 70 exp(-1.5) = 35.62 degC (first-order lag; common practice, no source), so the criterion passes.
COUPON = """# Test input (invented): a machined coupon cools in still air.
[sheet]
title = "Cool-down of a test coupon"
number = "RV-1"
revision = "A"
originator = "T. Writer"
purpose = "Show the coupon is below 60 degC one minute after leaving the furnace."
references = ["Coupon drawing CP-1 (test)"]
assumptions = ["Uniform coupon temperature."]

[model]
equation = "tau*dT/dt + T = T_a"
unknown = "T [degC]"
variable = "t [s]"

[parameters]
tau = { value = "40 s", source = "measured cooling (test)" }
T_a = { value = "20 degC", source = "room (test)" }

[initial]
at = "0 s"
value = "90 degC"

[evaluate]
at = ["30 s"]

[[criteria]]
text = "Coupon below 60 degC after one minute"
check = "T(60 s) <= 60 degC"
"""


def coupon(folder: Path, text: str = COUPON, name: str = "coupon.toml") -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def run(*args: str):
    """The command line in this process: (exit code, stdout, stderr)."""
    result = CliRunner().invoke(main, [str(a) for a in args])
    return result.exit_code, result.stdout, result.stderr


def sign(path: Path, role: str, name: str, date: str, *extra: str) -> None:
    code, out, err = run("sign", path, "--role", role, "--name", name, "--date", date, *extra)
    assert code == 0, out + err
