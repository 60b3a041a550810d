"""The stages end to end: load -> derive -> compose -> seal -> render -> write (atomically)."""

from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import InputError

DEFAULT_FORMATS = ("html", "pdf", "json", "txt")


@dataclass(frozen=True)
class Built:
    path: Path
    derivation: object
    sheet: object


def build_sheet(path: Path, overrides: tuple[tuple[str, str], ...] = ()) -> Built:
    """Load, derive and compose one input (imports sympy lazily: only commands that solve pay for it);
    ``overrides`` (--set) replace parameters for a what-if. Where parameters have ranges, the derivation
    carries its margin (derive/margin.py), which the sheet shows and the verdict includes."""
    from dataclasses import replace

    from calcsheet.derive.margin import find_margin
    from calcsheet.derive.derivation import derive
    from calcsheet.sheet.compose import compose
    from calcsheet.load.loader import load_model

    from calcsheet.review.seal import seal

    model = load_model(path, overrides)
    if model.switches:
        from calcsheet.derive.piecewise import derive_piecewise
        from calcsheet.sheet.piecewise import compose_piecewise

        derivation = derive_piecewise(model)
        derivation = replace(derivation, margin=find_margin(derivation))
        return Built(path, derivation, seal(compose_piecewise(derivation), model.sheet))
    derivation = derive(model)
    derivation = replace(derivation, margin=find_margin(derivation))
    return Built(path, derivation, seal(compose(derivation), model.sheet))


def with_changes_since(built: Built, since: str) -> Built:
    """``built`` with the section "Changes since ..." and revision marks: compared with the file ``since`` when
    one exists by that name, else with the input as git held it at revision ``since``. The fingerprint stays
    as sealed: the comparison is a document part (review/fingerprint.py)."""
    from dataclasses import replace

    from calcsheet.review.diff import compare_records
    from calcsheet.review.earlier import at_revision, from_file
    from calcsheet.sheet.changes import with_changes

    if Path(since).is_file():
        earlier = from_file(since, build_sheet)
    else:
        earlier = at_revision(built.path, since, build_sheet)
    changes = compare_records(earlier.record, built.sheet.record, earlier.name)
    revision_now = built.derivation.model.sheet.revision
    return replace(built, sheet=with_changes(built.sheet, changes, earlier.baseline, revision_now))


def render(sheet, formats: tuple[str, ...], style: Path | None = None) -> dict[str, str | bytes]:
    """Every requested format as text, all in memory before anything touches the disk."""
    from calcsheet.writers import writer_for

    return {fmt: writer_for(fmt)(sheet, style) for fmt in formats}


def write_outputs(out_dir: Path, stem: str, rendered: dict[str, str | bytes]) -> list[Path]:
    """Write a sheet's outputs as ``out_dir/<stem>.<format>``: every format goes to a temporary file first,
    and only when all are complete are they renamed into place, one right after another. A failed run
    leaves the previous outputs as they were; no file under a final name is ever partly written."""
    out_dir.mkdir(parents=True, exist_ok=True)
    remove_stale_parts(out_dir)
    staged = []
    try:
        for fmt, data in rendered.items():
            staged.append((_staged(out_dir / f"{stem}.{fmt}", data), out_dir / f"{stem}.{fmt}"))
    except BaseException:
        for temporary, _ in staged:
            temporary.unlink(missing_ok=True)
        raise
    for temporary, target in staged:
        os.replace(temporary, target)
    return [target for _, target in staged]


def write_file(target: Path, data: str | bytes) -> Path:
    """Write to a temporary file beside ``target`` and rename it into place: never half a file."""
    target.parent.mkdir(parents=True, exist_ok=True)
    os.replace(_staged(target, data), target)
    return target


def _staged(target: Path, data: str | bytes) -> Path:
    """``data`` written in full to a hidden temporary beside ``target``, named with this process's id."""
    handle, temporary = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.{os.getpid()}.", suffix=".part")
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data if isinstance(data, bytes) else data.encode("utf-8"))
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; outputs are ordinary files
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return Path(temporary)


def remove_stale_parts(folder: Path) -> None:
    """Temporaries left by a build that was killed: those whose process no longer runs."""
    for part in folder.glob(".*.part"):
        pid = part.name.rsplit(".", 3)[-3] if part.name.count(".") >= 4 else ""
        if pid.isdigit() and not _running(int(pid)):
            part.unlink(missing_ok=True)


def _running(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def collect_inputs(items: tuple[str, ...], writes: bool = False) -> list[Path]:
    """Files as given; folders contribute their *.toml files in name order. Where outputs are written,
    two inputs of one stem are refused."""
    paths: list[Path] = []
    for item in items:
        path = Path(item)
        if path.is_dir():
            found = sorted(path.glob("*.toml"))
            if not found:
                raise InputError("the folder holds no .toml input files", file=item)
            paths.extend(found)
        elif path.is_file():
            paths.append(path)
        else:
            raise InputError("no such file or folder", file=item)
    if writes:
        _refuse_same_stems(paths)
    return paths


def _refuse_same_stems(paths: list[Path]) -> None:
    """Outputs are named after the input's stem: two inputs of one stem would overwrite each other."""
    seen: dict[str, Path] = {}
    for path in paths:
        other = seen.setdefault(path.stem, path)
        if other != path and other.resolve() != path.resolve():
            raise InputError(
                f"has the same name as {other}; their outputs ({path.stem}.*) would overwrite "
                "each other: build them into different --out folders",
                file=str(path),
            )


def parse_formats(text: str, known: tuple[str, ...]) -> tuple[str, ...]:
    formats = tuple(dict.fromkeys(f.strip().lower() for f in text.split(",") if f.strip()))
    unknown = [f for f in formats if f not in known]
    if unknown or not formats:
        raise InputError(
            f"unknown format '{unknown[0] if unknown else text}' (choose from {', '.join(known)})", key="--format"
        )
    return formats


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
