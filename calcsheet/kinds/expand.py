"""From ``[model] kind = ...`` to the equation, unknown, variable and parameters of a plain model."""

from __future__ import annotations

import re
from dataclasses import dataclass, replace

from calcsheet.errors import InputError
from calcsheet.kinds import kind_named
from calcsheet.kinds.base import Kind, KindUse, Note, check_slot_dimension
from calcsheet.kinds.forcing import forcing_from_table
from calcsheet.source import units
from calcsheet.source.loader_support import declared_parts


@dataclass(frozen=True)
class Expanded:
    model_table: dict
    parameters: dict
    use: KindUse


def expand_kind(model_table: dict, parameters: dict, forcing_table) -> Expanded:
    name = model_table.get("kind")
    if not isinstance(name, str):
        raise InputError("must be the name of a kind in quotes (see `calcsheet kinds`)", "model.kind")
    kind = kind_named(name.strip())
    if "equation" in model_table:
        raise InputError(f"give either kind or equation, not both (kind {kind.name} writes its own equation)",
                         "model.equation")
    unknown = _declared(model_table, "unknown", kind.unknown, kind)
    variable = _declared(model_table, "variable", kind.variable, kind)
    params = dict(parameters)
    equation, words, frequency = kind.equation, "", ""
    if forcing_table is not None:
        if not kind.source:
            raise InputError(f"kind {kind.name} has no source to drive", "forcing")
        if kind.source in params:
            raise InputError(f"{kind.source} is given by [forcing]; remove it from [parameters]",
                             f"parameters.{kind.source}")
        source_unit = kind.slot(kind.source).unit
        forcing = forcing_from_table(forcing_table, kind.source, source_unit, kind.variable.name,
                                     _unit_of(variable) or kind.variable.unit)
        params.update({name: {"value": raw, "source": f"[forcing] {forcing.form}"}
                       for name, raw in forcing.parameters.items()})
        equation = re.sub(rf"(?<![A-Za-z0-9_]){re.escape(kind.source)}(?![A-Za-z0-9_])", forcing.expression, equation)
        words, frequency = forcing.words, forcing.frequency
    _check_parameters(kind, params, forcing_table)
    table = {"equation": equation, "unknown": unknown, "variable": variable}
    use = KindUse(kind.name, kind.title, kind.law, kind.law_steps, kind.assumptions, forcing=words,
                  frequency=frequency, slot_names=tuple(s.name for s in kind.slots))
    return Expanded(table, params, use)


def kind_checks(use: KindUse, parameters) -> KindUse:
    """The kind's validity checks, run on the SI values of the parameters."""
    kind = kind_named(use.name)
    values = {p.name: p.si for p in parameters}
    return replace(use, notes=tuple(map(Note.of, kind.checks(values))), limit=kind.limit(values))


def _declared(model_table: dict, key: str, slot, kind: Kind) -> str:
    text = model_table.get(key)
    if text is None:
        return f"{slot.name} [{slot.unit}]"
    name, unit_text = declared_parts(text, f"model.{key}")
    if name != slot.name:
        raise InputError(f"kind {kind.name} calls its {key} '{slot.name}' ({slot.meaning}); write "
                         f"\"{slot.name} [{unit_text or slot.unit}]\"", f"model.{key}")
    unit = units.parse_unit(unit_text)
    if not slot.unit:  # a quantity of any dimension: the reading of a sensor, say
        return text
    if _angular(slot.unit) != _angular(unit_text):
        raise InputError(f"kind {kind.name} needs {slot.name} in a unit like {slot.unit}; '{unit_text}' "
                         f"{'is not' if _angular(slot.unit) else 'is'} an angular unit, and rad/s and Hz "
                         "differ by 2 pi although they share a dimension", f"model.{key}")
    if not units.same_dimension(unit, units.parse_unit(slot.unit)):
        raise InputError(f"kind {kind.name} needs {slot.name} in a unit like {slot.unit}, got '{unit_text}'",
                         f"model.{key}")
    return text


def _angular(unit_text: str) -> bool:
    """Angles hide in pint's dimensionless radian; look at the unit's words instead."""
    return bool(re.search(r"rad|rpm|deg(?!C|F)|rev", unit_text))


def _unit_of(declared_text: str) -> str:
    return declared_parts(declared_text, "")[1]


def _check_parameters(kind: Kind, params: dict, forcing_table) -> None:
    known = {s.name for s in kind.slots}
    for slot in kind.slots:
        where = f"parameters.{slot.name}"
        if slot.name not in params:
            if slot.name == kind.source and forcing_table is not None:
                continue
            if slot.default is None:
                raise InputError(f"kind {kind.name} needs {slot.name} ({slot.meaning}), e.g. "
                                 f"{slot.name} = \"{slot.example}\"", where)
            params[slot.name] = {"value": slot.default, "source": f"default of kind {kind.name}"}
        raw = params[slot.name]
        value = raw.get("value") if isinstance(raw, dict) else raw
        try:
            quantity = units.parse_quantity(value)
        except InputError as error:
            raise error.located(key=where)
        check_slot_dimension(kind, slot, quantity, where)
    generated = set(params) - known
    expression_forcing = isinstance(forcing_table, dict) and forcing_table.get("form") == "expression"
    for name in sorted(generated):
        if not name.startswith(f"{kind.source}_") and not expression_forcing:
            raise InputError(f"'{name}' is not a parameter of kind {kind.name} (its parameters: "
                             f"{', '.join(s.name for s in kind.slots)})", f"parameters.{name}")
