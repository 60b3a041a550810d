"""The earlier side of a comparison: an input as it was at a git revision, or an older file (input or record).

`calcsheet diff` and `calcsheet build --changes-since` both read it here. Each way it can fail (no git, not
a repository, an unknown revision, a file git did not hold then, a file that does not load) is one line
naming the file. ``build_sheet`` is the pipeline's, passed in by the caller: review does not import it.
"""

from __future__ import annotations

import io
import json
import shutil
import subprocess
import tarfile
import tempfile
from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import CalcsheetError, InputError
from calcsheet.load.package_file import PACKAGE_FILE, find_package
from calcsheet.sheet.change_facts import Baseline

GIT_SECONDS = 60  # a guard against a hung git, never reached by a working one


@dataclass(frozen=True)
class Earlier:
    """The earlier sheet's record, the name it is reported under, and what the sheet calls it."""

    record: dict
    name: str
    baseline: Baseline


def at_revision(path: Path, rev: str, build_sheet) -> Earlier:
    """``path`` as git held it at ``rev``, built in a temporary folder; named ``REV:path``. A sheet of a package
    is built inside its whole package folder as git held it then, so the basis values and other sheets'
    results it used then are the ones compared."""
    name = f"{rev}:{path}"
    text = git_text(rev, path)
    package = find_package(path)
    with tempfile.TemporaryDirectory() as folder:
        copy = _package_at(rev, package.parent, path, Path(folder)) if package is not None else None
        if copy is None:
            copy = Path(folder) / path.name
        copy.write_text(text, encoding="utf-8")
        try:
            record = build_sheet(copy).sheet.record
        except CalcsheetError as error:
            error.file = name
            raise
    revision = _sheet_revision(record)
    return Earlier(record, name, Baseline(str(path), revision, _git(["rev-parse", "--short", _commit(rev)], path)))


def _package_at(rev: str, package_folder: Path, path: Path, folder: Path) -> Path | None:
    """The package folder as git held it at ``rev``, written under ``folder``; where the sheet's copy goes in it
    (None when git cannot give the folder: then the sheet is built on its own)."""
    anchor = package_folder / PACKAGE_FILE  # git runs in the package folder
    done = _run(["archive", "--format=tar", _commit(rev), "--", "."], anchor)
    if done.returncode != 0:
        return None
    prefix = _git(["rev-parse", "--show-prefix"], anchor)
    with tarfile.open(fileobj=io.BytesIO(done.stdout)) as archive:
        archive.extractall(folder, filter="data")
    copy = folder / prefix / path.resolve().relative_to(package_folder.resolve())
    copy.parent.mkdir(parents=True, exist_ok=True)
    return copy


def from_file(name: str, build_sheet) -> Earlier:
    """An older input file, built; or a JSON record (version 2) kept from an earlier build, read as it is."""
    path = Path(name)
    if not path.is_file():
        raise InputError("no such file", file=name)
    if path.suffix.lower() == ".json":
        record = _record(path, name)
    else:
        try:
            record = build_sheet(path).sheet.record
        except CalcsheetError as error:
            raise error.located(file=name)
    return Earlier(record, name, Baseline(name, _sheet_revision(record), ""))


def git_text(rev: str, path: Path) -> str:
    """The text of ``path`` at git revision ``rev``, each reason it cannot be read one line."""
    if shutil.which("git") is None:
        raise InputError("git is not installed, so an earlier revision cannot be read", file=str(path))
    if _run(["rev-parse", "--is-inside-work-tree"], path).returncode != 0:
        raise InputError(f"is not in a git repository, so there is no revision {rev} to compare with", file=str(path))
    if rev.startswith("-") or _run(["rev-parse", "--verify", "--quiet", _commit(rev)], path).returncode != 0:
        raise InputError(f"cannot read it at revision {rev}: no such git revision", file=str(path))
    done = _run(["show", f"{_commit(rev)}:./{path.name}"], path)
    if done.returncode != 0:
        raise InputError(
            f"cannot read it at revision {rev}: git did not hold this file at that revision", file=str(path)
        )
    try:
        return done.stdout.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"is not UTF-8 text at revision {rev}", file=str(path)) from None


def _commit(rev: str) -> str:
    return f"{rev}^{{commit}}"


def _git(args: list[str], path: Path) -> str:
    return _run(args, path).stdout.decode("utf-8", "replace").strip()


def _run(args: list[str], path: Path) -> subprocess.CompletedProcess:
    folder = path.parent if str(path.parent) else Path(".")
    try:
        return subprocess.run(["git", *args], cwd=folder, capture_output=True, check=False, timeout=GIT_SECONDS)
    except (OSError, subprocess.TimeoutExpired) as error:
        raise InputError(f"git could not be run: {error}", file=str(path)) from None


def _sheet_revision(record: dict) -> str:
    sheet = record.get("sheet") if isinstance(record, dict) else None
    revision = sheet.get("revision") if isinstance(sheet, dict) else ""
    return revision.strip() if isinstance(revision, str) else ""


def _record(path: Path, name: str) -> dict:
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
    except (json.JSONDecodeError, UnicodeDecodeError) as error:
        raise InputError(f"not a JSON record: {error}", file=name) from None
    except OSError as error:
        raise InputError(f"cannot read it: {error.strerror or error}", file=name) from None
    if not isinstance(record, dict) or record.get("format") != "calcsheet-record" or record.get("version") != 2:
        raise InputError("is not a calcsheet JSON record of version 2", key="format", file=name)
    return record
