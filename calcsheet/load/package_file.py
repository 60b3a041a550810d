"""``package.toml``: the package's title block, its sheets in register order, and its design basis."""

from __future__ import annotations

import re

import tomllib
from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import ErrorList, InputError, key_part, shortened
from calcsheet.input_keys import BASIS_KEYS as BASIS_ENTRY_KEYS
from calcsheet.input_keys import PACKAGE_TABLES, TITLE_KEYS, names, table_named
from calcsheet.load.toml_file import read_toml
from calcsheet.source import units
from calcsheet.source.expressions import NAME_PATTERN
from calcsheet.source.text_rules import check_raw, toml_kind

PACKAGE_FILE = "package.toml"
BASIS_KEYS = names(BASIS_ENTRY_KEYS)
PACKAGE_KEYS = names(table_named(PACKAGE_TABLES, "package").keys)


@dataclass(frozen=True)
class BasisValue:
    """One design-basis value as written: its table is handed to each sheet that uses it."""

    name: str
    entry: dict  # value, source, note and any tolerance, min, max, exactly as in package.toml

    @property
    def value(self) -> str:
        return str(self.entry["value"])

    @property
    def source(self) -> str:
        return str(self.entry.get("source", ""))


@dataclass(frozen=True)
class Package:
    file: Path
    title: str
    number: str
    revision: str
    project: str
    client: str
    style: Path | None
    sheets: tuple[Path, ...]  # register order
    basis: dict[str, BasisValue]
    signoff: tuple = ()  # the package's own sign-off block (the bound PDF's cover)

    @property
    def folder(self) -> Path:
        return self.file.parent


def find_package(path: Path) -> Path | None:
    """The package file that governs ``path`` (a sheet or a folder): in its folder or the nearest above."""
    folder = path if path.is_dir() else path.parent
    # as written first (so messages and outputs name the files as the user does), then beyond it
    for candidate in (folder, *folder.parents, *folder.resolve().parents):
        if (candidate / PACKAGE_FILE).is_file():
            return candidate / PACKAGE_FILE
    return None


def read_package(file: Path) -> Package:
    """The package file checked key by key; every problem is one line naming the file and the key."""
    try:
        raw = read_toml(file)
        problems = check_raw(raw)
        if problems:
            raise problems[0]
        return _package(file, raw)
    except InputError as error:
        raise error.located(file=str(file))
    except tomllib.TOMLDecodeError as error:  # read_toml reports these itself; kept for safety
        raise InputError(f"not valid TOML: {error}", file=str(file)) from None


def _package(file: Path, raw: dict) -> Package:
    unknown = set(raw) - {table.name for table in PACKAGE_TABLES}
    if unknown:
        raise InputError(
            "unknown table (a package file has [package], [basis] and [signoff])", key_part(sorted(unknown)[0])
        )
    head = _table(raw, "package")
    extra = set(head) - set(PACKAGE_KEYS)
    if extra:
        raise InputError(
            f"unknown key (expected {', '.join(PACKAGE_KEYS[:-1])} or {PACKAGE_KEYS[-1]})",
            f"package.{key_part(sorted(extra)[0])}",
        )
    texts = {}
    for key in TITLE_KEYS:
        value = head.get(key, "")
        if not isinstance(value, str):
            raise InputError(f"must be text in quotes, but found {toml_kind(value)}", f"package.{key}")
        texts[key] = value.strip()
    for key in ("title", "number"):
        if not texts[key]:
            raise InputError("is needed: the register and the bound document are headed by it", f"package.{key}")
    style = file.parent / texts["style"] if texts["style"] else None
    if style is not None and not style.is_dir():
        raise InputError(
            f"'{shortened(texts['style'])}' is not a style folder beside the package file", "package.style"
        )
    sheets = _sheets(file.parent, head.get("sheets"))
    _outputs_apart(texts["number"], sheets, file.parent)
    return Package(
        file=file,
        title=texts["title"],
        number=texts["number"],
        revision=texts["revision"],
        project=texts["project"],
        client=texts["client"],
        style=style,
        sheets=sheets,
        basis=_basis(_table(raw, "basis")),
        signoff=_signoff(raw),
    )


def _signoff(raw: dict) -> tuple:
    """``[signoff]`` read like a sheet's (prepared, checked, approved); nobody prepares it by default. Imported
    only when the table is there: the sheet model it builds on loads sympy, which a package read need not."""
    if "signoff" not in raw:
        return ()
    from calcsheet.load.sheet_keys import signoff

    return signoff(_table(raw, "signoff"), "")


def _table(raw: dict, name: str) -> dict:
    table = raw.get(name, {})
    if not isinstance(table, dict):
        raise InputError(f"must be a table [{name}], but found {toml_kind(table)}", name)
    return table


def _sheets(folder: Path, patterns) -> tuple[Path, ...]:
    """The sheets in register order: each pattern's matches in name order, each sheet once."""
    where = "package.sheets"
    if patterns is None:
        patterns = ["*.toml"]
    if not isinstance(patterns, list) or not all(isinstance(p, str) and p.strip() for p in patterns):
        raise InputError('must be a list of file patterns in quotes, e.g. ["el/*.toml", "pr/*.toml"]', where)
    found: list[Path] = []
    for index, pattern in enumerate(patterns):
        pattern = pattern.strip()
        if Path(pattern).is_absolute() or ".." in Path(pattern).parts:
            raise InputError(f"'{shortened(pattern)}' must stay inside the package folder", f"{where}[{index}]")
        matches = [p for p in sorted(folder.glob(pattern)) if p.is_file() and p.name != PACKAGE_FILE]
        if not matches:
            raise InputError(f"'{shortened(pattern)}' matches no input file", f"{where}[{index}]")
        found.extend(p for p in matches if p not in found)
    return tuple(found)


def bound_file_name(number: str) -> str:
    """The package number as a file name: letters, digits, '.', '_' and '-' kept, anything else '-'."""
    stem = re.sub(r"[^A-Za-z0-9._-]+", "-", number).strip(".-") or "package"
    return f"{stem}.pdf"


REGISTER_STEM = "register"


def _outputs_apart(number: str, sheets: tuple[Path, ...], folder: Path) -> None:
    """Every sheet's outputs are named after its file's stem in one out folder, beside the register and the bound
    PDF: two sheets of one stem, a sheet named like the register, or a package number that names the bound PDF
    like a sheet's PDF would overwrite each other's files, so the package is refused before anything is built."""
    seen: dict[str, Path] = {}
    for sheet in sheets:
        other = seen.setdefault(sheet.stem.casefold(), sheet)
        if other != sheet:
            raise InputError(
                f"'{other.relative_to(folder).as_posix()}' and '{sheet.relative_to(folder).as_posix()}' would write "
                "outputs of the same name into the out folder; rename one",
                "package.sheets",
            )
        if sheet.stem.casefold() == REGISTER_STEM:
            raise InputError(
                f"'{sheet.name}' would write outputs named like the register (register.html); rename the sheet",
                "package.sheets",
            )
    bound = bound_file_name(number)
    clash = seen.get(bound.removesuffix(".pdf").casefold())
    if clash is not None:
        raise InputError(
            f"the bound PDF '{shortened(bound)}' would overwrite the PDF of sheet '{clash.name}'; "
            "rename the sheet or change the number",
            "package.number",
        )


def _basis(table: dict) -> dict[str, BasisValue]:
    values, errors = {}, []
    for name, entry in table.items():
        where = f"basis.{key_part(name)}"
        try:
            values[name] = _basis_value(name, entry, where)
        except InputError as error:
            errors.append(error.located(key=where))
    if errors:
        raise errors[0] if len(errors) == 1 else ErrorList(errors)
    return values


def _basis_value(name: str, entry, where: str) -> BasisValue:
    if not NAME_PATTERN.match(name) or "__" in name:
        raise InputError("a basis name is letters, digits and single underscores, starting with a letter")
    if not isinstance(entry, dict):
        entry = {"value": entry}
    extra = set(entry) - set(BASIS_KEYS)
    if extra:
        raise InputError(f"unknown key '{key_part(sorted(extra)[0])}' (expected {', '.join(BASIS_KEYS)})")
    if "value" not in entry:
        raise InputError('the table needs a value, e.g. { value = "35 degC", source = "..." }')
    try:
        units.parse_quantity(entry["value"])
    except InputError as error:
        raise error.located(key=f"{where}.value")
    return BasisValue(name, dict(entry))
