"""Each demo and each `calcsheet new` starter built once per test process, and each PDF printed once.

Many test files look at the same sheets (equations, page breaks, plots, units, legibility). Building a sheet
(derivation, tolerance study) and printing it (WeasyPrint) are the slow part of the suite, so tests ask here
instead of calling ``build_sheet`` on a demo or a starter themselves. The cache lives in the test process:
under pytest-xdist each worker builds a sheet at most once, whichever files it is given (``--dist loadfile``
or ``load``), and a file run alone builds only what it asks for. Entries are keyed on the input's bytes (and
for a package's sheet, the package file's), so a changed input is built again, never served stale.

The objects handed out are shared between tests: treat them as read-only (the Sheet and its nodes are
frozen dataclasses; derive a changed copy with ``dataclasses.replace``). A test about building itself (counts,
monkeypatched writers, environment variables, a fresh process) builds its own.
"""

from __future__ import annotations

import atexit
import functools
import shutil
import tempfile
from pathlib import Path

from calcsheet.kinds import KIND_MODULES
from calcsheet.kinds.catalogue import starter_text
from calcsheet.pipeline import Built, build_sheet, render

ROOT = Path(__file__).resolve().parents[1]
DEMO_FOLDER = ROOT / "inputs"
DEMOS = tuple(sorted(p.stem for p in DEMO_FOLDER.glob("*.toml") if p.name != "package.toml"))
STARTERS = tuple(sorted(KIND_MODULES))
STYLES = {"default": None, "example_firm": ROOT / "styles" / "example_firm"}

_STARTER_FOLDER = Path(tempfile.mkdtemp(prefix="calcsheet-starters-"))
atexit.register(shutil.rmtree, _STARTER_FOLDER, ignore_errors=True)  # removed when the process ends


def input_path(source: str) -> Path:
    """The input file of a demo (by its file's stem) or of a starter (by its kind's name, written once into a
    folder of this process as ``<kind>.toml``, as ``calcsheet new`` would write it)."""
    if source in DEMOS:
        return DEMO_FOLDER / f"{source}.toml"
    if source not in KIND_MODULES:
        raise KeyError(f"no demo or starter named {source!r}")
    path = _STARTER_FOLDER / f"{source}.toml"
    text = starter_text(source)
    if not path.exists() or path.read_text(encoding="utf-8") != text:
        path.write_text(text, encoding="utf-8")
    return path


def every_source() -> tuple[str, ...]:
    """Every demo, then every starter: the sheets the tool ships examples of."""
    return DEMOS + STARTERS


def built(source: str) -> Built:
    """A demo or a starter loaded, derived and composed (``pipeline.build_sheet``), once per process."""
    path = input_path(source)
    return _built(path, _key(path))


def sheet(source: str):
    """The composed, sealed Sheet of a demo or a starter."""
    return built(source).sheet


def rendered(source: str, fmt: str, style: str = "default") -> str | bytes:
    """One format of a demo or a starter, in a style of ``STYLES``, written once per process."""
    path = input_path(source)
    return _rendered(path, _key(path), fmt, style)


def _key(path: Path) -> tuple[bytes, bytes]:
    """What a sheet is built from: its input and, for a sheet of a package, the package file (which holds the
    design basis and finds the upstream sheets)."""
    package = path.parent / "package.toml"
    return path.read_bytes(), package.read_bytes() if package.is_file() else b""


@functools.lru_cache(maxsize=None)
def _built(path: Path, key: tuple[bytes, bytes]) -> Built:
    return build_sheet(path)


@functools.lru_cache(maxsize=None)
def _rendered(path: Path, key: tuple[bytes, bytes], fmt: str, style: str) -> str | bytes:
    return render(_built(path, key).sheet, (fmt,), STYLES[style])[fmt]
