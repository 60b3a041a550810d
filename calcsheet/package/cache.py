"""The build cache of a package: one entry per sheet in ``<out>/.calcsheet-cache/<stem>.json``, keyed by a hash
of everything the sheet's outputs depend on, so that a sheet whose key and output files are unchanged is
neither derived nor rendered again. Light on purpose: a no-op rebuild imports nothing heavy through here."""

from __future__ import annotations

import hashlib
import json
from importlib import metadata, resources
from pathlib import Path

CACHE_FOLDER = ".calcsheet-cache"
ENTRY_VERSION = 1
# The libraries whose output a sheet's files depend on (their versions are part of every key).
LIBRARIES = ("calcsheet", "sympy", "scipy", "numpy", "pint", "matplotlib", "weasyprint", "pypdf", "jinja2")


def canonical(value) -> str:
    """One text for one value, whatever the order of its keys or the kind of its sequences."""
    return json.dumps(value, sort_keys=True, ensure_ascii=False, separators=(",", ":"), default=str)


def library_versions() -> dict[str, str]:
    """Installed versions, read from package metadata without importing the libraries themselves."""
    versions = {}
    for name in LIBRARIES:
        try:
            versions[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            versions[name] = ""
    return versions


def folder_digest(folder: str) -> str:
    """A hash of every file's relative name and bytes under ``folder`` (a style folder)."""
    digest = hashlib.sha256()
    root = Path(folder)
    for file in sorted(p for p in root.rglob("*") if p.is_file() and "__pycache__" not in p.parts):
        digest.update(file.relative_to(root).as_posix().encode("utf-8") + b"\0")
        digest.update(hashlib.sha256(file.read_bytes()).digest())
    return digest.hexdigest()


def default_styles_folder() -> Path:
    """The shipped styles (package calcsheet.styles), found as writers/styles.py finds them, without Jinja."""
    try:
        return Path(str(resources.files("calcsheet.styles")))
    except ModuleNotFoundError:
        return Path(__file__).resolve().parents[2] / "styles"


def sheet_key(
    path: Path,
    basis: dict[str, dict],
    upstream: dict[str, dict],
    styles: dict[str, str],
    settings: dict,
    versions: dict[str, str],
) -> str:
    """The hash of one sheet's input bytes and name, the basis values it uses (name -> table as written), its
    upstream sheets' records (number -> record), the style folders' digests (folder -> ``folder_digest``, the
    default style's among them), the build's settings (formats, SOURCE_DATE_EPOCH) and the library versions."""
    parts = {
        "entry": ENTRY_VERSION,
        "input": hashlib.sha256(path.read_bytes()).hexdigest(),
        "name": str(path),
        "basis": basis,
        "upstream": {number: hashlib.sha256(canonical(r).encode()).hexdigest() for number, r in upstream.items()},
        "styles": styles,
        "settings": settings,
        "versions": versions,
    }
    return hashlib.sha256(canonical(parts).encode("utf-8")).hexdigest()


def file_digest(data: str | bytes) -> str:
    return hashlib.sha256(data if isinstance(data, bytes) else data.encode("utf-8")).hexdigest()


def entry_file(out_dir: Path, stem: str) -> Path:
    return out_dir / CACHE_FOLDER / f"{stem}.json"


def cached_entry(out_dir: Path, stem: str, key: str) -> dict | None:
    """The entry for ``stem`` if its key matches and every output it lists is on disk unchanged; else None."""
    try:
        entry = json.loads(entry_file(out_dir, stem).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(entry, dict) or entry.get("key") != key or not isinstance(entry.get("outputs"), dict):
        return None
    for name, digest in entry["outputs"].items():
        try:
            if file_digest((out_dir / name).read_bytes()) != digest:
                return None
        except OSError:
            return None
    return entry


def new_entry(key: str, written: dict[str, str | bytes], facts: dict) -> str:
    """An entry's text: the key, each output's hash, and what the register and downstream sheets need."""
    return canonical({"key": key, "outputs": {n: file_digest(d) for n, d in sorted(written.items())}, **facts}) + "\n"
