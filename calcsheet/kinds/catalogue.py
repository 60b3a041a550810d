"""Text for the `kinds` and `new` commands: the catalogue, one kind in detail, a starter input."""

from __future__ import annotations

import json

from calcsheet.kinds import all_kinds, kind_named
from calcsheet.kinds.base import Kind


def catalogue_lines() -> list[str]:
    kinds = all_kinds()
    width = max(len(name) for name in kinds)
    return [f"{name.ljust(width)}  {kind.title}: {kind.summary}" for name, kind in kinds.items()]


def describe(name: str) -> list[str]:
    kind = kind_named(name, "calcsheet kinds NAME")
    lines = [
        f"{kind.title} ({kind.name})",
        f"  {kind.summary}",
        "",
        f"Governing law: {kind.law}",
        f"Equation: {kind.equation}",
        f"Unknown: {kind.unknown.name} [{kind.unknown.unit}] - {kind.unknown.meaning}",
        f"Variable: {kind.variable.name} [{kind.variable.unit}] - {kind.variable.meaning}",
        "",
        "Parameters:",
    ]
    for slot in kind.slots:
        unit = slot.unit or "any unit"
        extra = f"; default {slot.default}" if slot.default is not None else ""
        source = "; may be a [forcing] form" if slot.name == kind.source else ""
        lines.append(f"  {slot.name} [{unit}] - {slot.meaning} (e.g. {slot.example}{extra}{source})")
    if kind.offers:
        lines += ["", 'Derived quantities (name one in a criterion, or in [[derived]] name = "..."):']
        lines += [f"  {o.name} = {o.expression} [{o.unit}] - {o.text}" for o in kind.offers]
    lines += ["", "Assumptions:"] + [f"  - {a}" for a in kind.assumptions]
    return lines


def starter_text(name: str) -> str:
    """A commented input for the kind, with example values, that builds as it stands."""
    kind = kind_named(name, "calcsheet new NAME")
    parameters = "\n".join(
        f'{slot.name} = {{ value = "{slot.example}", source = "example value: replace" }}  # {slot.meaning}'
        for slot in kind.slots
    )
    return (
        f"# Starter input for the kind {kind.name}: {kind.title}.\n"
        f"# Governing law: {kind.law}.\n"
        f"# The example values are invented; replace them and the texts with your own.\n\n"
        f"{_sheet_header(kind)}\n\n{kind.starter.requests.strip()}\n\n"
        f'[model]\nkind = "{kind.name}"\n'
        f'unknown = "{kind.unknown.name} [{kind.unknown.unit}]"    # {kind.unknown.meaning}\n'
        f'variable = "{kind.variable.name} [{kind.variable.unit}]"   # {kind.variable.meaning}\n\n'
        f"[parameters]\n{parameters}\n\n"
        f'[initial]\nat = "0 {kind.variable.unit}"\nvalue = "{kind.unknown.example}"\n' + _forcing_hint(kind)
    )


# The [sheet] entries every starter shares; the title, number and purpose are the kind's own.
_SHARED_SHEET = (("revision", "A"), ("project", "Example project (edit)"), ("originator", "Your name"))


def _sheet_header(kind: Kind) -> str:
    """The starter's [sheet] table, from the kind's Starter and the entries every starter shares."""
    starter = kind.starter
    entries = (("title", starter.title), ("number", starter.number), *_SHARED_SHEET, ("purpose", starter.purpose))
    # a JSON string is a TOML basic string for the texts we write here (our own text, quotes escaped)
    return "[sheet]\n" + "\n".join(f"{key} = {json.dumps(value, ensure_ascii=False)}" for key, value in entries)


def _forcing_hint(kind: Kind) -> str:
    if not kind.source:
        return ""
    return (
        f"\n# To make {kind.source} vary, remove it from [parameters] and add, for example:\n"
        f'# [forcing]\n# form = "step"          # constant, step, ramp, sine, exponential, pulse, expression\n'
        f'# after = "{kind.slot(kind.source).example}"\n# at = "1 {kind.variable.unit}"\n'
    )
