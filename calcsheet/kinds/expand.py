"""From ``[model] kind = ...`` to the equation, unknown, variable and parameters of a plain model."""

from __future__ import annotations

import re
from dataclasses import dataclass, replace

from calcsheet.errors import InputError, key_part
from calcsheet.kinds import kind_named
from calcsheet.kinds.base import START_SLOT, Kind, KindUse, check_slot_dimension
from calcsheet.kinds.forcing import forcing_from_table
from calcsheet.source import units, value_expressions
from calcsheet.source.declared import declared_parts


@dataclass(frozen=True)
class Expanded:
    model_table: dict
    parameters: dict
    use: KindUse


def expand_kind(
    model_table: dict, parameters: dict, forcing_table, start=None, start_source: str = "", limit_names=frozenset()
) -> Expanded:
    """``start`` is where the interval begins as written (``[initial] at`` or a switch's ``at``): a law with
    its own clock (a tank's volume law) is then written from it. ``limit_names``: names the criteria's limits
    use, which may be parameters beside the kind's own."""
    name = model_table.get("kind")
    if not isinstance(name, str):
        raise InputError("must be the name of a kind in quotes (see `calcsheet kinds`)", "model.kind")
    kind = kind_named(name.strip())
    if "equation" in model_table:
        raise InputError(
            f"give either kind or equation, not both (kind {kind.name} writes its own equation)", "model.equation"
        )
    unknown = _declared(model_table, "unknown", kind.unknown, kind)
    variable = _declared(model_table, "variable", kind.variable, kind)
    params = dict(parameters)
    shifted = bool(kind.shifted_equation) and start is not None and _nonzero(start)
    equation, words, frequency = kind.shifted_equation if shifted else kind.equation, "", ""
    if forcing_table is not None:
        if not kind.source:
            raise InputError(f"kind {kind.name} has no source to drive", "forcing")
        if kind.source in params:
            raise InputError(
                f"{kind.source} is given by [forcing]; remove it from [parameters]", f"parameters.{kind.source}"
            )
        source_unit = kind.slot(kind.source).unit
        forcing = forcing_from_table(
            forcing_table, kind.source, source_unit, kind.variable.name, _unit_of(variable) or kind.variable.unit
        )
        for generated in sorted(set(forcing.parameters) & set(params)):
            raise InputError(
                f"{generated} is given by [forcing] (the {forcing.form}); remove it from [parameters]",
                f"parameters.{generated}",
            )
        params.update(
            {name: {"value": raw, "source": f"[forcing] {forcing.form}"} for name, raw in forcing.parameters.items()}
        )
        # the expression goes in through a function: user text is never read as a replacement template
        equation = re.sub(
            rf"(?<![A-Za-z0-9_]){re.escape(kind.source)}(?![A-Za-z0-9_])", lambda _: forcing.expression, equation
        )
        words, frequency = forcing.words, forcing.frequency
        generated_names = frozenset(forcing.parameters)
    else:
        generated_names = frozenset()
    _check_parameters(kind, params, forcing_table, generated_names | frozenset(limit_names))
    if shifted:
        params[START_SLOT] = {"value": start, "source": start_source or "start of the interval"}
    table = {"equation": equation, "unknown": unknown, "variable": variable}
    use = KindUse(
        kind.name,
        kind.title,
        kind.law,
        kind.shifted_law_steps if shifted else kind.law_steps,
        kind.assumptions,
        findings=tuple(kind.findings.items()),
        forcing=words,
        frequency=frequency,
        slot_names=tuple(s.name for s in kind.slots),
    )
    return Expanded(table, params, use)


def kind_checks(use: KindUse, parameters) -> KindUse:
    """The kind's validity checks, run on the SI values of the parameters."""
    kind = kind_named(use.name)
    values = {p.name: p.si for p in parameters}
    try:
        return replace(use, notes=tuple(kind.checks(values)), limit=kind.limit(values))
    except (ArithmeticError, ValueError):  # a check dividing by a parameter of zero, say
        zeros = [s.name for s in kind.slots if values.get(s.name) == 0]
        named = f": {', '.join(zeros)} = 0" if zeros else ""
        raise InputError(
            f"kind {kind.name}'s checks cannot be worked out with the stated values{named}; "
            "give each a value that describes a real case",
            f"parameters.{zeros[0]}" if zeros else "parameters",
        ) from None


def _declared(model_table: dict, key: str, slot, kind: Kind) -> str:
    text = model_table.get(key)
    if text is None:
        return f"{slot.name} [{slot.unit}]"
    name, unit_text = declared_parts(text, f"model.{key}")
    if name != slot.name:
        raise InputError(
            f"kind {kind.name} calls its {key} '{slot.name}' ({slot.meaning}); write "
            f'"{slot.name} [{unit_text or slot.unit}]"',
            f"model.{key}",
        )
    try:
        unit = units.parse_unit(unit_text)
    except InputError as error:
        raise error.located(key=f"model.{key}")
    if not slot.unit:  # a quantity of any dimension: the reading of a sensor, say
        return text
    if units.is_angular(units.parse_unit(slot.unit)) != units.is_angular(unit):
        raise InputError(
            f"kind {kind.name} needs {slot.name} in a unit like {slot.unit}; '{unit_text}' "
            f"{'is not' if units.is_angular(units.parse_unit(slot.unit)) else 'is'} an angular unit, "
            "and rad/s and Hz "
            "differ by 2 pi although they share a dimension",
            f"model.{key}",
        )
    if not units.same_dimension(unit, units.parse_unit(slot.unit)):
        raise InputError(
            f"kind {kind.name} needs {slot.name} in a unit like {slot.unit}, got '{unit_text}'", f"model.{key}"
        )
    return text


def _unit_of(declared_text: str) -> str:
    return declared_parts(declared_text, "model.variable")[1]


def _check_parameters(kind: Kind, params: dict, forcing_table, generated_names: frozenset = frozenset()) -> None:
    """Each slot present (or defaulted) with its dimension; nothing else but the names a [forcing]
    form generates or the criteria's limits use, the values an expression forcing names, or values other
    values are worked out from ("T_s" in "T_s - T_inf")."""
    known = {s.name for s in kind.slots}
    for slot in kind.slots:
        where = f"parameters.{slot.name}"
        if slot.name not in params:
            if slot.name == kind.source and forcing_table is not None:
                continue
            if slot.default is None:
                alternative = (
                    f", or a [forcing] table that gives {slot.name} as a function of {kind.variable.name}"
                    if slot.name == kind.source
                    else ""
                )
                raise InputError(
                    f"kind {kind.name} needs {slot.name} ({slot.meaning}), e.g. "
                    f'{slot.name} = "{slot.example}" in [parameters]{alternative}',
                    where,
                )
            params[slot.name] = {"value": slot.default, "source": f"default of kind {kind.name}"}
        raw = params[slot.name]
        value = raw.get("value") if isinstance(raw, dict) else raw
        if value_expressions.is_expression(value):
            continue  # its dimension is known once the parameters it uses are read: worked_slot_dimensions
        try:
            quantity = units.parse_quantity(value)
        except InputError as error:
            raise error.located(key=where)
        check_slot_dimension(kind, slot, quantity, where)
    helpers = set().union(*(value_expressions.names_used(_value(raw)) for raw in params.values()))
    others = set(params) - known - generated_names - helpers
    expression_forcing = isinstance(forcing_table, dict) and forcing_table.get("form") == "expression"
    for name in sorted(others):
        if not expression_forcing:
            through_forcing = (
                f"; the values of a [forcing] form are written in [forcing], not as {kind.source}_..."
                if kind.source and name.startswith(f"{kind.source}_")
                else ""
            )
            raise InputError(
                f"'{name}' is not a parameter of kind {kind.name} (its parameters: "
                f"{', '.join(s.name for s in kind.slots)}){through_forcing}",
                f"parameters.{key_part(name)}",
            )


def worked_slot_dimensions(use: KindUse, parameters) -> None:
    """Each slot whose value is written as an expression has the slot's dimension, once it is worked out."""
    kind = kind_named(use.name)
    for p in parameters:
        if p.node is not None and p.name in use.slot_names:
            check_slot_dimension(kind, kind.slot(p.name), p.quantity, f"parameters.{key_part(p.name)}")


def _value(raw):
    return raw.get("value") if isinstance(raw, dict) else raw


def _nonzero(raw) -> bool:
    """Whether a start point as written lies off the variable's origin (errors are reported where it is read)."""
    try:
        return units.to_si(units.parse_quantity(raw)) != 0
    except InputError:
        return False
