"""The sheets a command works on: a package folder stands for its sheets in build order (each after the
sheets whose results it uses), and the sheets of one package share the records of the sheets already built,
so that an upstream sheet is built once however many sheets use it."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from calcsheet.errors import InputError
from calcsheet.load.package_file import PACKAGE_FILE, Package, find_package, read_package
from calcsheet.load.references import SheetEntry, build_order, sheet_entries


@dataclass
class PackageSession:
    """One package's sheets for one command, and the records of the sheets built so far (by number)."""

    package: Package
    entries: tuple[SheetEntry, ...] = ()
    order: tuple[SheetEntry, ...] = ()
    records: dict = field(default_factory=dict)

    @classmethod
    def open(cls, file: Path) -> PackageSession:
        package = read_package(file)
        entries = sheet_entries(package)
        return cls(package, entries, build_order(entries))

    @property
    def by_number(self) -> dict[str, SheetEntry]:
        return {e.number: e for e in self.entries if e.number}

    def build(self, path: Path, overrides: tuple[tuple[str, str], ...] = ()):
        """The sheet built with its package's values; a what-if's results do not flow to other sheets."""
        from calcsheet.pipeline import build_sheet

        entry = next((e for e in self.entries if e.path.resolve() == path.resolve()), None)
        if entry is None:
            raise InputError(
                f"lies under package {self.package.number} ({self.package.file}) but is not one of its sheets "
                "(package.sheets)",
                file=str(path),
            )
        built = build_sheet(path, overrides, self.records)
        self.remember(entry, built.sheet.record, overrides)
        return built

    def remember(self, entry: SheetEntry, record: dict, overrides: tuple = ()) -> None:
        """A sheet's record, for the sheets after it that use its results; a what-if's results do not flow."""
        if entry.number and not overrides:
            self.records[entry.number] = record


@dataclass(frozen=True)
class Job:
    """One sheet a command works on, and the package it belongs to (None: a sheet on its own)."""

    path: Path
    session: PackageSession | None
    whole_package: bool = False  # named through its package's folder: the build writes the register too

    @property
    def package_records(self) -> dict | None:
        """The records of its package's sheets built so far by this command (None: a sheet on its own finds its
        package's values itself as it is built)."""
        return None if self.session is None else self.session.records

    def remember(self, record: dict, overrides: tuple = ()) -> None:
        """This sheet's record, built through the Python API, for its package's later sheets."""
        if self.session is not None:
            entry = next((e for e in self.session.entries if e.path == self.path), None)
            if entry is not None:
                self.session.remember(entry, record, overrides)

    def build(self, overrides: tuple[tuple[str, str], ...] = ()):
        from calcsheet.pipeline import build_sheet

        if self.session is None:
            return build_sheet(self.path, overrides)
        return self.session.build(self.path, overrides)


def jobs_for(items: tuple[str, ...], writes: bool = False) -> list[Job]:
    """The sheets named on the command line. A package's folder stands for its sheets in build order, sharing the
    records of the sheets already built; a sheet named on its own finds its package values as it is built."""
    from calcsheet.pipeline import collect_inputs, refuse_same_stems

    found: list[Job] = []
    for item in items:
        path = Path(item)
        file = find_package(path) if path.is_dir() else None
        if file is not None and path.resolve() == file.parent.resolve():
            session = PackageSession.open(file)
            found.extend(Job(e.path, session, whole_package=True) for e in session.order)
        else:  # a sheet on its own, or one of a package: build_sheet finds its package values itself
            found.extend(Job(p, None) for p in collect_inputs((item,), writes) if p.name != PACKAGE_FILE)
    if writes:
        refuse_same_stems([j.path for j in found])
    return found
