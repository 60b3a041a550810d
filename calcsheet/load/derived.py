"""Read ``[[derived]]``: quantities computed from the response (P_R = v^2/R), and those a kind offers by name.

An expression goes through the same whitelisting parser as the equation; it may name the parameters, the
unknown, its derivative d<unknown>/d<variable> and the variable. Its dimension is checked against the unit
it is declared in, and a mismatch quotes the term as written.
"""

from __future__ import annotations

from typing import Any

import sympy as sp

from calcsheet.errors import ErrorList, InputError, shortened
from calcsheet.input_keys import DERIVED_KEYS, names
from calcsheet.model import Declared, DerivedQuantity, Parameter
from calcsheet.source import expressions as ex
from calcsheet.source import units
from calcsheet.source.dimensions import check_expression, refuse_absolute_sums
from calcsheet.source.symbolic import to_sympy
from calcsheet.source.text_rules import toml_kind

KEYS = names(DERIVED_KEYS)  # calcsheet/input_keys.py


def read_derived(
    entries: Any,
    unknown: Declared,
    variable: Declared,
    parameters: tuple[Parameter, ...],
    derivative: sp.Symbol,
    reserved: set[str],
    offers: tuple = (),
) -> tuple[tuple[DerivedQuantity, ...], dict[str, DerivedQuantity]]:
    """(the quantities the input declares, every quantity it may name: those and the kind's offers)."""
    if not isinstance(entries, list):
        raise InputError("write each derived quantity as its own [[derived]] table", "derived")
    reader = _Reader(unknown, variable, parameters, derivative, reserved)
    offered = {o.name: o for o in offers}
    declared, errors = [], []
    for index, entry in enumerate(entries):
        where = f"derived[{index + 1}]"
        try:
            quantity = reader.entry(entry, where, offered)
            if any(q.name == quantity.name for q in declared):
                raise InputError(f"'{quantity.name}' is already a derived quantity", f"{where}.name")
            declared.append(quantity)
        except InputError as error:
            errors.append(error.located(key=where))
    if errors:
        raise errors[0] if len(errors) == 1 else ErrorList(errors)
    available = {q.name: q for q in declared}
    for offer in offers:
        if offer.name not in available and offer.name not in reader.taken:
            try:  # an offer naming a slot that [forcing] replaced is not available
                available[offer.name] = reader.quantity(
                    offer.name, offer.expression, offer.unit, offer.text, "", "derived", offered_by=True
                )
            except InputError:
                continue
    return tuple(declared), available


class _Reader:
    def __init__(self, unknown, variable, parameters, derivative, reserved):
        self.unknown, self.variable, self.parameters, self.derivative = unknown, variable, parameters, derivative
        self.reserved = reserved
        self.taken = {p.name for p in parameters} | {unknown.name, variable.name}

    def entry(self, entry: Any, where: str, offered: dict) -> DerivedQuantity:
        if not isinstance(entry, dict):
            raise InputError(f"expected a table with name, expression and unit, found {toml_kind(entry)}", where)
        for key in entry:
            if key not in KEYS:
                raise InputError(f"unknown key '{shortened(key)}' (expected {', '.join(KEYS)})", f"{where}.{key}")
        for key, value in entry.items():
            if not isinstance(value, str):
                raise InputError(f"expected text in quotes, found {toml_kind(value)}", f"{where}.{key}")
        name = entry.get("name", "").strip()
        if not name:
            raise InputError('needs a name, e.g. name = "P_R"', f"{where}.name")
        offer = offered.get(name)
        if "expression" not in entry:
            if offer is None:
                known = f" (this kind offers {', '.join(offered)})" if offered else ""
                raise InputError(f"'{shortened(name)}' needs an expression{known}", f"{where}.expression")
            return self.quantity(
                name,
                offer.expression,
                entry.get("unit", offer.unit),
                entry.get("text", offer.text),
                entry.get("integral_unit", ""),
                where,
                offered_by=True,
            )
        if "unit" not in entry:
            raise InputError('needs a unit, e.g. unit = "W" (write "" for a pure number)', f"{where}.unit")
        return self.quantity(
            name, entry["expression"], entry["unit"], entry.get("text", ""), entry.get("integral_unit", ""), where
        )

    def quantity(
        self, name, expression_text, unit_text, text, integral_text, where, offered_by: bool = False
    ) -> DerivedQuantity:
        if not ex.NAME_PATTERN.match(name) or "__" in name:
            raise InputError(
                f"'{shortened(name)}' is not a name (letters, digits and single underscores, starting with a letter)",
                f"{where}.name",
            )
        if name in self.reserved or name in self.taken:
            raise InputError(
                f"'{name}' is reserved or already a parameter, the unknown or the variable", f"{where}.name"
            )
        unit = _located(lambda: units.parse_unit(unit_text), f"{where}.unit")
        node = _located(lambda: ex.parse_expression(expression_text), f"{where}.expression")
        _located(lambda: self.check(node, unit, unit_text), f"{where}.expression")
        symbols = {p.name: p.symbol for p in self.parameters}
        symbols[self.unknown.name] = self.unknown.symbol
        symbols[self.variable.name] = self.variable.symbol
        expr = _located(lambda: to_sympy(node, symbols, lambda d: self.derivative), f"{where}.expression")
        scale, offset = units.scale_and_offset(unit)
        declared = Declared(name, unit, unit_text.strip(), sp.Symbol(name, real=True), scale, offset)
        integral = self.integral_unit(name, unit, unit_text.strip(), integral_text.strip(), f"{where}.integral_unit")
        return DerivedQuantity(
            name=name,
            text=text.strip(),
            expression_text=expression_text.strip(),
            expression=node,
            expr=expr,
            declared=declared,
            integral=integral,
            offered_by="kind" if offered_by else "",
        )

    def check(self, node: ex.Node, unit, unit_text: str) -> None:
        """Names, derivatives and dimensions, each refusal quoting the expression's own terms."""
        for d in ex.derivatives_in(node):
            if d.of != self.unknown.name or d.wrt != self.variable.name or d.order != 1:
                raise InputError(
                    f"'{d.text}': the only derivative a derived quantity may use is "
                    f"d{self.unknown.name}/d{self.variable.name}"
                )
        known = {p.name for p in self.parameters} | {self.unknown.name, self.variable.name, "pi"}
        for missing in sorted(ex.names_in(node) - known):
            raise InputError(
                f"'{missing}' is not a parameter, the unknown ({self.unknown.name}) or the variable "
                f"({self.variable.name})"
            )
        si = {p.name: p.si_unit for p in self.parameters}
        si[self.unknown.name] = units.si_unit(self.unknown.unit)
        si[self.variable.name] = units.si_unit(self.variable.unit)
        reg = units.registry()
        rate = (reg.Quantity(1, si[self.unknown.name]) / reg.Quantity(1, si[self.variable.name])).units
        terms = check_expression(node, lambda n: si.get(n, reg.dimensionless), lambda d: rate)
        for term, term_unit in terms:
            if not units.same_dimension(term_unit, unit):
                raise InputError(
                    f"term '{ex.render(term)}' has dimension {units.dimension_text(term_unit)}, but the quantity is "
                    f"declared in '{unit_text.strip() or 'no unit'}' ({units.dimension_text(unit)})"
                )
        absolute = {p.name: p.text for p in self.parameters if units.is_offset(p.quantity.units)}
        if units.is_offset(self.unknown.unit):
            absolute[self.unknown.name] = f"the unknown, in {self.unknown.unit_text}"
        refuse_absolute_sums(ex.Equation(node, ex.Number("0")), absolute, frozenset(si) - {self.unknown.name})

    def integral_unit(self, name: str, unit, unit_text: str, written: str, where: str) -> Declared:
        """The unit an integral of the quantity over the variable is shown in: as written (J for a power over
        time), else the product of the two units."""
        reg = units.registry()
        base = units.unit_label(units.si_unit(unit)) if units.is_offset(unit) else unit_text
        product = (reg.Quantity(1, units.parse_unit(base or "")) * reg.Quantity(1, self.variable.unit)).units
        parts = [f"({p})" if "/" in p else p for p in (base, self.variable.unit_text) if p]
        text = "*".join(parts)
        if written:
            chosen = _located(lambda: units.parse_unit(written), where)
            if not units.same_dimension(chosen, product):
                raise InputError(
                    f"'{shortened(written)}' has dimension {units.dimension_text(chosen)}, but an integral of {name} "
                    f"over {self.variable.name} has dimension {units.dimension_text(product)}, as {text} has",
                    where,
                )
            text = written
        else:
            chosen = product
        scale, offset = units.scale_and_offset(chosen)
        return Declared(f"integral of {name}", chosen, text, sp.Symbol(f"int_{name}", real=True), scale, offset)


def _located(thunk, key: str):
    try:
        return thunk()
    except InputError as error:
        raise error.located(key=key)
