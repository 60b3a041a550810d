"""Forcing forms: a [forcing] table turns a kind's source into a function of the variable.

Each form names its values in words (amplitude, frequency, ...). They become parameters named
after the source (``V_s_amp``), so they appear in the parameter table with their units, and the
form becomes an expression in the input notation that goes through the ordinary parser.
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.errors import InputError
from calcsheet.kinds.forcing_forms import EXPRESSION, FORM_KEY, FORMS, Role
from calcsheet.source import units, value_expressions


@dataclass(frozen=True)
class Forcing:
    expression: str
    parameters: dict  # generated parameter name -> raw value (as written)
    words: str  # e.g. "V_s is a sinusoid: ..."
    form: str
    frequency: str = ""  # name of the frequency parameter, for the sinusoid's steady-state figures


def forcing_from_table(table: dict, source: str, source_unit: str, variable: str, variable_unit: str) -> Forcing:
    if not isinstance(table.get("form"), str):
        raise InputError(f"give the form of the forcing: one of {', '.join(FORMS)}, or expression", "forcing.form")
    name = table["form"].strip()
    if name == EXPRESSION:
        return _expression(table, source)
    if name not in FORMS:
        raise InputError(f"unknown form '{name}' (known: {', '.join(FORMS)}, expression)", "forcing.form")
    form = FORMS[name]
    allowed = {FORM_KEY} | {r.key for r in form.roles}
    for key in table:
        if key not in allowed:
            raise InputError(f"unknown key for a {name} (expected: {', '.join(sorted(allowed))})", f"forcing.{key}")
    if not source_unit:  # a source of any dimension takes the unit of the first value given for it
        source_unit = next(
            (
                _unit_text(table[r.key], f"forcing.{r.key}")
                for r in form.roles
                if r.dimension == "source" and r.key in table and not value_expressions.is_expression(table[r.key])
            ),
            "",
        )
    expected = {
        "source": source_unit,
        "variable": variable_unit,
        "rate": f"({source_unit})/({variable_unit})",
        "frequency": f"1/({variable_unit})",
        "angle": "rad",
    }
    parameters, names = {}, {"x": variable}
    for role in form.roles:
        raw = table.get(role.key, None)
        if raw is None:
            if role.default is None or (
                role.dimension == "source" and not role.difference and _is_temperature(expected["source"])
            ):
                # a level of an absolute temperature has no sensible default (0 K is absolute zero)
                raise InputError(f"a {name} needs '{role.key}'", f"forcing.{role.key}")
            unit = "" if role.dimension == "angle" or "()" in expected[role.dimension] else expected[role.dimension]
            raw = f"{role.default} {unit}".strip()
        if value_expressions.is_expression(raw):
            pass  # worked out with the parameters; the equation's unit check and the kind's slots check it
        else:
            if role.difference and isinstance(raw, str):
                raw = _as_difference(raw)
            _check(raw, expected[role.dimension], role, name)
        parameter = f"{source}_{role.suffix}"
        parameters[parameter] = raw
        names[role.suffix] = parameter
    words = f"{source} is {form.words}: " + ", ".join(
        f"{r.key} {parameters[f'{source}_{r.suffix}']}" for r in form.roles
    )
    return Forcing(
        f"({form.template.format(**names)})",
        parameters,
        words,
        name,
        frequency=f"{source}_freq" if name == "sine" else "",
    )


def role_keys(table, source: str) -> dict[str, str]:
    """Each parameter a form generates, with the [forcing] key it comes from: V_s_tau -> forcing.time_constant."""
    named = table.get("form") if isinstance(table, dict) else None
    form = FORMS.get(named.strip()) if isinstance(named, str) else None
    return {f"{source}_{r.suffix}": f"forcing.{r.key}" for r in form.roles} if form and source else {}


def _expression(table: dict, source: str) -> Forcing:
    for key in table:
        if key not in (FORM_KEY, EXPRESSION):
            raise InputError("unknown key for an expression (expected: expression)", f"forcing.{key}")
    text = table.get("expression")
    if not isinstance(text, str) or not text.strip():
        raise InputError('give the forcing as text in quotes, e.g. "V_0*(1 - exp(-t/T_r))"', "forcing.expression")
    _check_expression(text)
    return Forcing(f"({text.strip()})", {}, f"{source} is given by the expression {text.strip()}", "expression")


def _check_expression(text: str) -> None:
    """The expression stands in the kind's equation in parentheses, so it must be one whole
    expression of its own: no '=', no derivative, brackets balanced."""
    from calcsheet.source import expressions as ex

    try:
        node = ex.parse_expression(text)
    except InputError as error:
        raise error.located(key="forcing.expression")
    found = ex.derivatives_in(node)
    if found:
        raise InputError(
            f"'{found[0].text}' is a derivative; a forcing is a function of the variable only", "forcing.expression"
        )


def _is_temperature(unit_text: str) -> bool:
    return bool(unit_text) and units.same_dimension(units.parse_unit(unit_text), units.parse_unit("K"))


def _as_difference(raw: str) -> str:
    """'10 degC' as an amplitude is a temperature difference: write it as one."""
    number, _, unit = raw.strip().partition(" ")
    return f"{number} delta_{unit.strip()}" if unit.strip() in ("degC", "degF") else raw


def _unit_text(raw, where: str = "forcing") -> str:
    try:
        quantity = units.parse_quantity(raw)
    except InputError as error:
        raise error.located(key=where)
    return str(quantity.units) if str(quantity.units) != "dimensionless" else ""


def _check(raw, expected_unit: str, role: Role, form: str) -> None:
    where = f"forcing.{role.key}"
    try:
        quantity = units.parse_quantity(raw)
    except InputError as error:
        raise error.located(key=where)
    if role.dimension == "angle" and quantity.magnitude != 0 and not units.is_angular(quantity.units):
        raise InputError(
            f"'{raw}' needs an angle unit: a bare number would be read as radians, so write "
            f'"{raw} deg" or "{raw} rad"',
            where,
        )
    if "()" in expected_unit or not expected_unit:
        return  # a source of any dimension: the equation's unit check decides
    if not units.same_dimension(quantity.units, units.parse_unit(expected_unit)):
        raise InputError(
            f"the {role.key} of a {form} needs the dimension of {expected_unit}, got "
            f"{units.dimension_text(quantity.units)}",
            where,
        )
    if role.dimension == "frequency" and isinstance(raw, str) and ("rad" in raw or "rpm" in raw):
        raise InputError(
            "give the frequency in cycles (Hz, 1/s, 1/min); an angular speed in rad/s "
            "would be taken as cycles per second",
            where,
        )
