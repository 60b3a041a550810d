"""The stages end to end: load -> derive -> compose -> render -> write (atomically)."""

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


def build_sheet(path: Path) -> Built:
    """Load, derive and compose one input (imports sympy lazily: only commands that solve pay for it)."""
    from calcsheet.derive.derivation import derive
    from calcsheet.sheet.compose import compose
    from calcsheet.source.loader import load_model

    model = load_model(path)
    if model.switches:
        from calcsheet.derive.piecewise import derive_piecewise
        from calcsheet.sheet.piecewise import compose_piecewise

        derivation = derive_piecewise(model)
        return Built(path, derivation, compose_piecewise(derivation))
    derivation = derive(model)
    return Built(path, derivation, compose(derivation))


def render(sheet, formats: tuple[str, ...], style: Path | None = None) -> dict[str, str | bytes]:
    """Every requested format as text, all in memory before anything touches the disk."""
    from calcsheet.writers import writer_for

    return {fmt: writer_for(fmt)(sheet, style) for fmt in formats}


def write_outputs(out_dir: Path, stem: str, rendered: dict[str, str | bytes]) -> list[Path]:
    """Write each output to a temporary file in ``out_dir`` and rename it into place."""
    out_dir.mkdir(parents=True, exist_ok=True)
    written = []
    for fmt, text in rendered.items():
        target = out_dir / f"{stem}.{fmt}"
        handle, temporary = tempfile.mkstemp(dir=out_dir, prefix=f".{stem}.", suffix=".part")
        try:
            with os.fdopen(handle, "wb") as stream:
                stream.write(text if isinstance(text, bytes) else text.encode("utf-8"))
            os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; outputs are ordinary files
            os.replace(temporary, target)
        except BaseException:
            Path(temporary).unlink(missing_ok=True)
            raise
        written.append(target)
    return written


def write_text_file(target: Path, text: str) -> None:
    """One text file, written atomically like the outputs."""
    write_outputs(target.parent if str(target.parent) else Path("."), target.name.rsplit(".", 1)[0],
                  {target.name.rsplit(".", 1)[1] if "." in target.name else "toml": text})


def collect_inputs(items: tuple[str, ...]) -> list[Path]:
    """Files as given; folders contribute their *.toml files in name order."""
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
    return paths


def parse_formats(text: str, known: tuple[str, ...]) -> tuple[str, ...]:
    formats = tuple(dict.fromkeys(f.strip().lower() for f in text.split(",") if f.strip()))
    unknown = [f for f in formats if f not in known]
    if unknown or not formats:
        raise InputError(f"unknown format '{unknown[0] if unknown else text}' (choose from {', '.join(known)})",
                         key="--format")
    return formats


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
