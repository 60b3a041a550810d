"""What one ``calcsheet watch`` looks after, decided once at the start: a package folder (every sheet, through the
build cache, so only what changed is built again), a folder of sheets (each sheet saved), or one sheet (that sheet;
under a package also when the package file or an upstream sheet changes, since its values come from them).

Which saved files matter is decided here, by name alone: sheets and package files are ``.toml``, house styles are
``.css`` and ``.j2`` (or anything under ``--style``). No output of a build has those names, so the watcher never
answers its own writing."""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import InputError
from calcsheet.load.package_file import PACKAGE_FILE, find_package

SHEET_SUFFIXES = (".toml",)
STYLE_SUFFIXES = (".css", ".j2")


@dataclass(frozen=True)
class WatchTarget:
    """The folders handed to the watcher and the rule for which of their files matter (paths absolute)."""

    given: Path  # as the user wrote it: lines and the paths handed to the build keep the user's form
    mode: str  # "package", "folder" or "sheet"
    root: Path  # the folder watched
    recursive: bool  # a package's sheets and styles may sit in subfolders; a lone sheet's folder is not walked
    out_dir: Path
    style: Path | None = None  # --style: every file under it matters
    sheet: Path | None = None  # mode "sheet": the sheet itself
    in_package: bool = False  # mode "sheet": the sheet takes values from a package

    @property
    def folders(self) -> tuple[Path, ...]:
        return (self.root,) + ((self.style,) if self.style is not None else ())

    def relevant(self, path: Path) -> bool:
        """Whether a change to ``path`` (absolute) can change an output."""
        if self.style is not None and _within(path, self.style):
            return True
        if self.out_dir != self.root and _within(self.out_dir, self.root) and _within(path, self.out_dir):
            return False
        if self.mode == "sheet" and not self.in_package:
            return path == self.sheet
        if self.mode == "folder":
            return path.parent == self.root and path.suffix in SHEET_SUFFIXES
        return path.suffix in SHEET_SUFFIXES + STYLE_SUFFIXES and _within(path, self.root)

    def items(self, changed: frozenset[Path] | None = None) -> tuple[str, ...]:
        """What a round builds, named as ``calcsheet build`` takes it: everything (the first round, a package, one
        sheet, a style changed), or a folder's sheets that were saved and still exist."""
        if self.mode != "folder" or changed is None:
            return (str(self.given),)
        if any(p.suffix not in SHEET_SUFFIXES for p in changed):  # a style file: every sheet may look different
            return (str(self.given),)
        names = sorted(p.name for p in changed if p.name != PACKAGE_FILE and p.is_file())
        return tuple(str(self.given / name) for name in names)

    def snapshot(self) -> dict[Path, str]:
        """The content digest of every file that matters, to find a save made before the watcher started."""
        found: dict[Path, str] = {}
        for folder in self.folders:
            for file in _files(folder, self.recursive or folder == self.style):
                if self.relevant(file):
                    try:
                        found[file] = hashlib.sha256(file.read_bytes()).hexdigest()
                    except OSError:  # gone or unreadable: the round will say so
                        continue
        return found


def watch_target(given: str, out_dir: str, style: Path | None = None) -> WatchTarget:
    """The target named on the command line; a path that does not exist is refused (there is nothing to watch)."""
    path = Path(given)
    out = Path(out_dir).resolve()
    style_dir = Path(style).resolve() if style is not None else None
    if path.is_dir():
        root = path.resolve()
        package = find_package(path)
        mode = "package" if package is not None and package.parent.resolve() == root else "folder"
        return WatchTarget(path, mode, root, mode == "package", out, style_dir)
    if not path.is_file():
        raise InputError("no such file or folder", file=given)
    package = find_package(path)
    root = package.parent.resolve() if package is not None else path.resolve().parent
    return WatchTarget(path, "sheet", root, package is not None, out, style_dir, path.resolve(), package is not None)


def _within(path: Path, folder: Path) -> bool:
    return path == folder or folder in path.parents


def _files(folder: Path, recursive: bool):
    """The files under ``folder`` (only its own without ``recursive``), skipping hidden folders such as .git."""
    if not folder.is_dir():
        return
    for top, subfolders, names in os.walk(folder):
        subfolders[:] = sorted(d for d in subfolders if not d.startswith(".")) if recursive else []
        for name in sorted(names):
            yield Path(top) / name
