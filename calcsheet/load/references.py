"""Which design-basis values and which other sheets' results each sheet of a package uses, and the order
that builds every sheet after the sheets it uses (a cycle is refused, named)."""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import InputError, key_part, shortened
from calcsheet.input_keys import REFERENCE_KEYS
from calcsheet.load.toml_file import read_toml
from calcsheet.load.package_file import Package


@dataclass(frozen=True)
class Reference:
    """A parameter of a sheet that takes its value from the basis (``basis``) or from another sheet."""

    where: str  # the parameter's key, e.g. parameters.T_inf or switch[1].parameters.R
    basis: str = ""  # a basis value's name
    sheet: str = ""  # another sheet's number
    result: str = ""  # what of that sheet: time_constant, final_value, v(60 s), max(T), ...


@dataclass(frozen=True)
class SheetEntry:
    path: Path
    number: str  # the sheet's [sheet] number ("" if it has none: then no other sheet can use it)
    revision: str
    references: tuple[Reference, ...]
    style: str = ""  # the [sheet] style as written, read here so a build's cache key need not read the file again

    @property
    def upstream(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(r.sheet for r in self.references if r.sheet))

    @property
    def basis_used(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(r.basis for r in self.references if r.basis))


def parameter_tables(raw: dict):
    """(key prefix, parameters table) for the sheet's own parameters and each switch's."""
    if isinstance(raw.get("parameters"), dict):
        yield "parameters", raw["parameters"]
    switches = raw.get("switch")
    if isinstance(switches, list):
        for index, switch in enumerate(switches):
            if isinstance(switch, dict) and isinstance(switch.get("parameters"), dict):
                yield f"switch[{index}].parameters", switch["parameters"]


def references_in(raw: dict) -> tuple[Reference, ...]:
    """Each parameter written as ``{ basis = "..." }`` or ``{ from = "...", result = "..." }``, checked for shape."""
    found = []
    for prefix, table in parameter_tables(raw):
        for name, entry in table.items():
            if not isinstance(entry, dict) or not set(entry) & set(REFERENCE_KEYS):
                continue
            where = f"{prefix}.{key_part(name)}"
            for key in REFERENCE_KEYS:
                if key in entry and not (isinstance(entry[key], str) and entry[key].strip()):
                    raise InputError("must be text in quotes", f"{where}.{key}")
            if "basis" in entry and ("from" in entry or "result" in entry):
                raise InputError("takes either a basis value or another sheet's result, not both", where)
            if "basis" in entry:
                found.append(Reference(where, basis=entry["basis"].strip()))
            elif "from" not in entry or "result" not in entry:
                raise InputError(
                    'another sheet\'s result needs both keys, e.g. { from = "EL-014", result = "time_constant" }',
                    where,
                )
            elif "value" in entry:
                raise InputError("takes its value from the other sheet; remove 'value' or 'from'", where)
            else:
                found.append(Reference(where, sheet=entry["from"].strip(), result=entry["result"].strip()))
    return tuple(found)


def sheet_entries(package: Package) -> tuple[SheetEntry, ...]:
    """Every sheet with its number and references; unknown basis names, unknown sheets and two sheets of one
    number are refused here, before anything is built."""
    entries = []
    for path in package.sheets:
        raw = read_toml(path)
        head = raw.get("sheet") if isinstance(raw.get("sheet"), dict) else {}
        number = head.get("number", "") if isinstance(head.get("number", ""), str) else ""
        revision = head.get("revision", "") if isinstance(head.get("revision", ""), str) else ""
        try:
            references = references_in(raw)
        except InputError as error:
            raise error.located(file=str(path))
        style = head.get("style", "") if isinstance(head.get("style", ""), str) else ""
        entries.append(SheetEntry(path, number.strip(), revision.strip(), references, style.strip()))
    _refuse_repeated_numbers(entries)
    numbers = {e.number for e in entries if e.number}
    for entry in entries:
        for reference in entry.references:
            if reference.basis and reference.basis not in package.basis:
                raise InputError(
                    f"'{shortened(reference.basis)}' is not in the design basis of {package.file.name} "
                    f"(its values: {', '.join(sorted(package.basis)) or 'none'})",
                    f"{reference.where}.basis",
                    str(entry.path),
                )
            if reference.sheet and reference.sheet not in numbers:
                raise InputError(
                    f"uses sheet '{shortened(reference.sheet)}', which is not a sheet of package "
                    f"{package.number} (its sheets: {', '.join(sorted(numbers)) or 'none'})",
                    f"{reference.where}.from",
                    str(entry.path),
                )
            if reference.sheet and reference.sheet == entry.number:
                raise InputError("a sheet cannot use its own result", f"{reference.where}.from", str(entry.path))
    return tuple(entries)


def _refuse_repeated_numbers(entries: list[SheetEntry]) -> None:
    seen: dict[str, Path] = {}
    for entry in entries:
        if entry.number and seen.setdefault(entry.number, entry.path) != entry.path:
            raise InputError(
                f"has number {entry.number}, as {seen[entry.number]} has; sheet numbers in a package are unique",
                "sheet.number",
                str(entry.path),
            )


def build_order(entries: tuple[SheetEntry, ...]) -> tuple[SheetEntry, ...]:
    """Register order, except that every sheet comes after the sheets whose results it uses."""
    by_number = {e.number: e for e in entries if e.number}
    done: dict[Path, SheetEntry] = {}

    def visit(entry: SheetEntry, path: tuple[SheetEntry, ...]) -> None:
        if entry.path in done:
            return
        if entry in path:
            cycle = [e.number for e in path[path.index(entry) :]] + [entry.number]
            raise InputError(
                f"the sheets use each other's results in a cycle: {' -> '.join(cycle)}",
                "from",
                str(entry.path),
            )
        for number in entry.upstream:
            visit(by_number[number], (*path, entry))
        done[entry.path] = entry

    for entry in entries:
        visit(entry, ())
    return tuple(done.values())


def dependants(entries: tuple[SheetEntry, ...], target: str) -> tuple[SheetEntry, ...]:
    """The sheets that use ``target`` (``basis.NAME`` or a sheet number), directly or through other sheets,
    in register order."""
    basis = target[len("basis.") :] if target.startswith("basis.") else None
    hit = {e.number or str(e.path) for e in entries if (basis in e.basis_used if basis else target in e.upstream)}
    grown = True
    while grown:
        grown = False
        for entry in entries:
            key = entry.number or str(entry.path)
            if key not in hit and set(entry.upstream) & hit:
                hit.add(key)
                grown = True
    return tuple(e for e in entries if (e.number or str(e.path)) in hit)
