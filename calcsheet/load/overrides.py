"""``--set NAME=VALUE``: a parameter replaced for a what-if run, before the input is checked.

The new value takes the place of the value in the input's tables, so it passes the very checks a value
written in the file passes (the parser, units, the equation's dimensions, a kind's slots); it is first
compared with what it replaces so a wrong unit is reported against ``--set NAME``, not the equation.
"""

from __future__ import annotations

from calcsheet.errors import ErrorList, InputError, key_part, shortened
from calcsheet.model import Override
from calcsheet.source import units


def parse_assignment(text: str) -> tuple[str, str]:
    """``R=5.1 kohm`` -> (R, 5.1 kohm); the command line's own form, checked for shape only."""
    name, sep, value = text.partition("=")
    if not sep:
        raise InputError(f"'{shortened(text)}' is not NAME=VALUE, e.g. --set R=\"5.1 kohm\"", "--set")
    return checked_pair(name, value, text)


def checked_pair(name: str, value: str, text: str) -> tuple[str, str]:
    """(name, value) with the spaces around them taken off; both must be there (``text``: as written)."""
    if not name.strip() or not value.strip():
        raise InputError(f"'{shortened(text)}' is not NAME=VALUE, e.g. --set R=\"5.1 kohm\"", "--set")
    return name.strip(), value.strip()


def apply_overrides(raw: dict, assignments: tuple[tuple[str, str], ...]) -> tuple[dict, tuple[Override, ...]]:
    """The raw input with each named parameter's value replaced, and what was replaced."""
    if not assignments:
        return raw, ()
    parameters = dict(raw.get("parameters", {})) if isinstance(raw.get("parameters", {}), dict) else {}
    known = settable(raw, parameters)
    errors, done = [], []
    for name, value in assignments:
        key = f"--set {key_part(name)}"
        if name in {o.name for o in done}:
            errors.append(InputError("is set twice", key))
            continue
        if name not in known:
            errors.append(
                InputError(
                    f"'{shortened(name)}' is not a parameter of this model (its parameters: "
                    f"{', '.join(sorted(known)) or 'none'})",
                    key,
                )
            )
            continue
        try:
            check_like(value, known[name], key)
        except InputError as error:
            errors.append(error)
            continue
        entry = parameters.get(name)
        was = entry.get("value", "") if isinstance(entry, dict) else (entry if entry is not None else "")
        parameters[name] = {**entry, "value": value} if isinstance(entry, dict) else value
        done.append(Override(name, value, str(was).strip() if was != "" else "kind default"))
    if errors:
        raise errors[0] if len(errors) == 1 else ErrorList(errors)
    return {**raw, "parameters": parameters}, tuple(done)


def settable(raw: dict, parameters: dict) -> dict[str, str]:
    """Each parameter a what-if may set, with a value of the unit it needs (None: any unit)."""
    known = {}
    for name, entry in parameters.items():
        known[name] = entry.get("value") if isinstance(entry, dict) else entry
    model = raw.get("model", {})
    if isinstance(model, dict) and isinstance(model.get("kind"), str):
        from calcsheet.kinds import KIND_MODULES, kind_named
        from calcsheet.kinds.base import START_SLOT

        if model["kind"] in KIND_MODULES:
            for slot in kind_named(model["kind"]).slots:
                if slot.name != START_SLOT:
                    known.setdefault(slot.name, f"1 {slot.unit}")
    return known


def check_like(value: str, like, key: str) -> None:
    try:
        quantity = units.parse_quantity(value)
        reference = units.parse_quantity(like) if like is not None else None
    except InputError as error:
        if reference_failed(like):
            return  # the input's own value is wrong: reported where it is written
        raise error.located(key=key)
    if reference is not None and not units.same_dimension(quantity.units, reference.units):
        raise InputError(
            f"'{shortened(value)}' has dimension {units.dimension_text(quantity.units)}, but the input's "
            f"value is in {units.dimension_text(reference.units)}",
            key,
        )


def reference_failed(like) -> bool:
    try:
        units.parse_quantity(like)
    except InputError:
        return True
    return False
