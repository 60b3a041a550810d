"""``calcsheet impact``: which sheets of a package a change reaches, directly or through other sheets."""

from __future__ import annotations

from pathlib import Path

from calcsheet.errors import InputError, shortened
from calcsheet.load.package_file import PACKAGE_FILE, find_package
from calcsheet.load.references import dependants
from calcsheet.package.session import PackageSession


def impact_lines(folder: Path, target: str) -> list[str]:
    """One line per sheet that uses ``target`` ('basis.NAME' or a sheet number), in register order, each saying
    how: directly, or through which sheets; then a count."""
    file = find_package(folder) if folder.exists() else None
    if file is None:
        raise InputError(f"holds no {PACKAGE_FILE} (in it or a folder above)", file=str(folder))
    session = PackageSession.open(file)
    target = target.strip()
    if target.startswith("basis."):
        if target[len("basis.") :] not in session.package.basis:
            raise InputError(
                f"'{shortened(target)}' is not in the design basis (its values: "
                f"{', '.join('basis.' + n for n in sorted(session.package.basis)) or 'none'})",
                file=str(file),
            )
    elif target not in session.by_number:
        raise InputError(
            f"'{shortened(target)}' is neither basis.NAME nor a sheet number of this package (its sheets: "
            f"{', '.join(sorted(session.by_number)) or 'none'})",
            file=str(file),
        )
    hit = dependants(session.entries, target)
    numbers = {e.number for e in hit}
    lines = []
    for entry in hit:
        direct = (
            target[len("basis.") :] in entry.basis_used if target.startswith("basis.") else target in entry.upstream
        )
        through = [n for n in entry.upstream if n in numbers]
        how = "uses it directly" if direct else f"through {', '.join(through)}"
        if direct and through:
            how += f", and through {', '.join(through)}"
        revision = f" rev {entry.revision}" if entry.revision else ""
        lines.append(f"{entry.number or '-'}{revision}: {entry.path} ({how})")
    lines.append(f"{len(hit)} of {len(session.entries)} sheets use {target}")
    return lines
