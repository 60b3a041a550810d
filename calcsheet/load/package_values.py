"""A sheet's package references filled in before the loader checks it: each design-basis value or other
sheet's result becomes the parameter's value, with a source that says where it came from."""

from __future__ import annotations

from pathlib import Path

from calcsheet.errors import InputError, shortened
from calcsheet.load.package_file import Package, find_package, read_package
from calcsheet.input_keys import REFERENCE_KEYS
from calcsheet.load.references import references_in

# (sheet number, result as written) -> (value with unit, citation of the sheet it comes from)
Results = dict[tuple[str, str], tuple[str, str]]


def fill_package_values(path: Path, raw: dict, results: Results) -> dict:
    """``raw`` with every ``{ basis = ... }`` and ``{ from = ..., result = ... }`` parameter replaced by a plain
    parameter table; unchanged if it has none. ``results`` holds the upstream results (pipeline.build_sheet
    finds them)."""
    references = references_in(raw)
    if not references:
        return raw
    file = find_package(path)
    if file is None:
        raise InputError(
            "uses the design basis or another sheet's result, but no package.toml was found in its folder or above",
            references[0].where,
        )
    package = read_package(file)
    for reference in references:
        if reference.basis and reference.basis not in package.basis:
            raise InputError(
                f"'{shortened(reference.basis)}' is not in the design basis of {file} "
                f"(its values: {', '.join(sorted(package.basis)) or 'none'})",
                f"{reference.where}.basis",
            )
        if reference.sheet and (reference.sheet, reference.result) not in results:
            raise InputError(
                f"needs the result '{shortened(reference.result)}' of sheet {shortened(reference.sheet)}, which was "
                "not built",
                f"{reference.where}.from",
            )
    raw = dict(raw)
    if isinstance(raw.get("parameters"), dict):
        raw["parameters"] = _filled(raw["parameters"], package, results)
    if isinstance(raw.get("switch"), list):
        raw["switch"] = [
            {**s, "parameters": _filled(s["parameters"], package, results)}
            if isinstance(s, dict) and isinstance(s.get("parameters"), dict)
            else s
            for s in raw["switch"]
        ]
    return raw


def _filled(table: dict, package: Package, results: Results) -> dict:
    filled = {}
    for name, entry in table.items():
        if not isinstance(entry, dict) or not set(entry) & set(REFERENCE_KEYS):
            filled[name] = entry
            continue
        own = {k: v for k, v in entry.items() if k not in REFERENCE_KEYS}
        if "basis" in entry:
            filled[name] = _from_basis(entry["basis"].strip(), own, package)
        else:
            value, citation = results[(entry["from"].strip(), entry["result"].strip())]
            filled[name] = {**own, "source": citation, "value": value}
    return filled


def _from_basis(name: str, own: dict, package: Package) -> dict:
    basis = package.basis[name]
    if "value" in own:  # the sheet keeps a value of its own, and says so
        said = f"own value; the design basis {name} is {basis.value}"
        return {**own, "source": f"{said}; {own['source']}" if own.get("source") else said}
    cited = f"from the design basis, {name}" + (f": {basis.source}" if basis.source else "")
    return {**basis.entry, **own, "source": cited}
