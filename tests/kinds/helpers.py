"""What the kind tests share: building an input, the `new` and `check` commands, a finding in words."""

from __future__ import annotations

import json
from pathlib import Path
from types import SimpleNamespace

from click.testing import CliRunner

from calcsheet.cli import main
from calcsheet.kinds import kind_named
from calcsheet.pipeline import build_sheet, render
from calcsheet.sheet.compose import finding_text


def build(directory: Path, name: str, text: str):
    """Write ``text`` as ``<name>.toml`` in ``directory`` and build it (raises CalcsheetError on bad input)."""
    path = directory / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return build_sheet(path)


def sheet_text(built) -> str:
    return render(built.sheet, ("txt",))["txt"]


def record(built) -> dict:
    return json.loads(render(built.sheet, ("json",))["json"])


def findings(built) -> list[str]:
    """The kind's findings of a built sheet, in the words the sheet shows."""
    use = built.derivation.model.kind
    return [finding_text(note, use) for note in use.notes]


def worded(kind_name: str, notes) -> list[str]:
    """A kind's findings (from its checks called directly) in the words the sheet would show."""
    use = SimpleNamespace(findings=tuple(kind_named(kind_name).findings.items()))  # what compose reads to word one
    return [finding_text(note, use) for note in notes]


def new_starter(directory: Path, name: str) -> Path:
    """The starter input `calcsheet new NAME FILE` writes."""
    target = directory / f"{name}.toml"
    result = CliRunner().invoke(main, ["new", name, str(target)])
    assert result.exit_code == 0, result.output
    return target


def check(path: Path):
    """`calcsheet check FILE`: the command's result (exit code and output)."""
    return CliRunner().invoke(main, ["check", str(path)])
