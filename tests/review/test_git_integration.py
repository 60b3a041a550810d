"""git shows derivation changes of *.toml inputs through `calcsheet show` as its textconv, and the shipped
pre-commit hooks run commands that exist."""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from calcsheet.cli import main
from tests.review.helpers import COUPON, coupon

ROOT = Path(__file__).resolve().parents[2]
pytestmark = pytest.mark.skipif(shutil.which("git") is None, reason="git not installed")


def git(repo: Path, *args: str) -> str:
    return subprocess.run(["git", *args], cwd=repo, capture_output=True, text=True, check=True).stdout


def test_git_diff_shows_the_derivation_change(tmp_path):
    repo = tmp_path / "designs"
    repo.mkdir()
    git(repo, "init", "-q")
    git(repo, "config", "user.name", "Test Engineer")
    git(repo, "config", "user.email", "test@example.invalid")
    # The README's two lines, with this interpreter standing for the installed `calcsheet` command.
    (repo / ".gitattributes").write_text("*.toml diff=calcsheet\n", encoding="utf-8")
    git(repo, "config", "diff.calcsheet.textconv", f"{sys.executable} -m calcsheet.cli show --format txt")
    path = coupon(repo)
    git(repo, "add", ".")
    git(repo, "commit", "-q", "-m", "first")
    path.write_text(COUPON.replace('"40 s"', '"50 s"'), encoding="utf-8")
    diff = git(repo, "diff")
    assert re.search(r"^-Fingerprint: [0-9a-f]{64}$", diff, re.M) and re.search(r"^\+Fingerprint: ", diff, re.M)
    assert re.search(r"^-  tau \| 40 s \| 40 s \|", diff, re.M)
    assert re.search(r"^\+  tau \| 50 s \| 50 s \|", diff, re.M)
    assert "value = " not in diff  # the record, not the raw TOML
    git(repo, "commit", "-q", "-am", "slower")
    log = git(repo, "log", "-p", "--", "coupon.toml")
    assert log.count("+Fingerprint: ") == 2  # both commits show as records


def test_the_pre_commit_hooks_run_our_commands():
    text = (ROOT / ".pre-commit-hooks.yaml").read_text(encoding="utf-8")
    entries = re.findall(r"^  entry: calcsheet (\w+)$", text, re.M)
    assert entries == ["check", "status"]
    assert set(entries) <= set(main.commands)
