"""Values written as expressions of numbers with units and of parameters: "4 * 550 uF", "R*C", "T_s - T_amb",
"T_amb + 8.8 K", so that a value worked out by hand cannot drift from the values it came from.

The whitelisting parser reads them (``expressions.parse_value``), ``dimensions`` checks every sum term by term,
and the value is worked out in SI base units, temperatures in kelvin. A temperature on a scale with an offset
(degC) is absolute; a difference of two is a difference (in K), and an absolute one plus a difference is absolute
again; a kelvin amount added to an absolute temperature is read as a difference ("T_amb + 8.8 K"), where pint
itself would call the sum ambiguous. Two absolute temperatures added are refused, as in equations.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Callable, Mapping

from calcsheet.source.pint_import import pint
import sympy as sp

from calcsheet.errors import InputError, shortened
from calcsheet.formatting import number
from calcsheet.source import expressions as ex
from calcsheet.source import units
from calcsheet.source.dimensions import constant_value, expression_unit
from calcsheet.source.symbolic import to_sympy

ABSOLUTE, DIFFERENCE, PLAIN = "absolute", "difference", "plain"  # how a temperature value reads


@dataclass(frozen=True)
class Operand:
    """A parameter an expression uses: its SI value and the unit it is written in (degC: absolute)."""

    si: float
    unit: pint.Unit
    unit_text: str


@dataclass(frozen=True)
class Worked:
    """An expression worked out: its SI value, and the unit it is shown in."""

    node: ex.Node
    si: float
    si_unit: pint.Unit
    unit: pint.Unit  # the unit to show it in
    unit_text: str
    reading: str  # ABSOLUTE, DIFFERENCE or PLAIN

    @property
    def shown(self) -> float:
        return units.from_si(self.si, self.unit) if self.reading != DIFFERENCE else self.si

    @property
    def text(self) -> str:
        """The value as the sheet shows it: "2200 uF"."""
        return f"{number(self.shown)} {self.unit_text}".rstrip()

    def quantity(self) -> pint.Quantity:
        return units.registry().Quantity(self.shown, self.unit)


def is_expression(raw, names: frozenset[str] = frozenset()) -> bool:
    """Whether ``raw`` is written as an expression rather than as one number with its unit (``names``: the
    parameters, so that "2 R" is an expression missing its '*', not a number with an unknown unit).

    A value that reads as a quantity is one; otherwise it is an expression when it parses as one that does more
    than state a number with a unit, or does not begin with a number, so that a mistyped unit ("47 kohmm") is
    still reported as a unit."""
    if not isinstance(raw, str):
        return False
    try:
        units.parse_quantity(raw)
        return False
    except InputError:
        pass
    if _constant_as_unit(raw):
        return False  # "8 R": a number with a physical constant for its unit, reported as such
    try:
        node = ex.parse_value(raw, names)
    except InputError:  # a broken expression is reported as one; text of other characters, as a value
        words = set(re.findall(r"[A-Za-z_][A-Za-z0-9_]*", raw))
        return bool(_EXPRESSION_CHARACTERS.fullmatch(raw)) and (any(op in raw for op in "*/+^") or bool(words & names))
    return not isinstance(node, (ex.Number, ex.Measured))


def _constant_as_unit(raw: str) -> bool:
    try:
        node = ex.parse_value(raw)
    except InputError:
        return False
    if not isinstance(node, ex.Measured):
        return False
    try:
        units.parse_unit(node.unit)
    except units.ConstantAsUnit:
        return True
    except InputError:
        return False
    return False


_EXPRESSION_CHARACTERS = re.compile(r"[A-Za-z0-9_µμΩ°%\s+\-*/^().]*")


def parse(text: str, names: frozenset[str]) -> ex.Node:
    return ex.parse_value(text, names)


def names_used(raw) -> set[str]:
    """The names an expression value refers to (none for a plain value or one that does not parse)."""
    if not is_expression(raw):
        return set()
    try:
        return ex.names_in(ex.parse_value(raw)) - {"pi"}
    except InputError:
        return set()


def work_out(node: ex.Node, operands: Mapping[str, Operand]) -> Worked:
    """The value of ``node`` with each name's operand: dimension checked, temperatures read, SI value."""
    for name in sorted(ex.names_in(node) - set(operands) - {"pi"}):
        raise InputError(f"'{name}' is not a parameter")
    for measured in _measured(node):
        _quantity(measured)  # a bad unit is reported as such, before dimensions are compared
    unit = expression_unit(
        node, lambda name: units.si_unit(operands[name].unit) if name in operands else units.registry().dimensionless
    )
    si_unit = units.si_unit(unit)
    reading = _reading(node, operands)
    value = si_value(node, lambda name: operands[name].si)
    units.check_magnitude(value, ex.render(node))
    shown, text = _shown_unit(node, operands, unit, reading)
    return Worked(node, value, si_unit, shown, text, reading)


def si_value(node: ex.Node, value_of: Callable[[str], float]) -> float:
    """The SI value of ``node`` with each name's SI value (also used to work a value out again when a
    parameter it uses is varied)."""
    names = sorted(ex.names_in(node) - {"pi"})
    symbols = {name: sp.Float(value_of(name), 30) for name in names}
    expression = to_sympy(node, symbols)
    try:
        result = complex(sp.N(expression, 30))
    except (TypeError, ValueError, ArithmeticError):
        result = complex(math.nan)
    if not math.isfinite(result.real) or abs(result.imag) > 1e-12 * max(abs(result.real), 1e-300):
        raise InputError(f"'{shortened(ex.render(node))}' has no finite real value with the values stated")
    return result.real


def sympy_form(node: ex.Node, symbols: Mapping[str, sp.Expr]) -> sp.Expr:
    """``node`` in the symbols given for its names (a derived parameter in terms of the ones it uses)."""
    return to_sympy(node, symbols)


def dependency_cycle(uses: Mapping[str, set[str]]) -> list[str] | None:
    """A cycle among values defined from each other, as the names around it (first repeated at the end)."""
    state: dict[str, int] = {}
    for start in sorted(uses):
        if state.get(start):
            continue
        path, stack = [start], [iter(sorted(uses[start] & set(uses)))]
        state[start] = 1
        while stack:
            following = next(stack[-1], None)
            if following is None:
                state[path.pop()] = 2
                stack.pop()
            elif state.get(following) == 1:
                return path[path.index(following) :] + [following]
            elif not state.get(following):
                state[following] = 1
                path.append(following)
                stack.append(iter(sorted(uses[following] & set(uses))))
    return None


def substituted(node: ex.Node, texts: Mapping[str, str]) -> ex.Node:
    """``node`` with each parameter's name replaced by its value as shown ("R*C" -> "4.7 kohm * 2200 uF")."""
    if isinstance(node, ex.Name) and node.name in texts:
        value, _, unit = texts[node.name].partition(" ")
        negative = value.startswith("-")
        leaf = ex.Measured(value.lstrip("-"), unit.strip()) if unit.strip() else ex.Number(value.lstrip("-"))
        return ex.Unary("-", leaf) if negative else leaf
    if isinstance(node, ex.Unary):
        return ex.Unary(node.op, substituted(node.operand, texts))
    if isinstance(node, ex.Binary):
        return ex.Binary(node.op, substituted(node.left, texts), substituted(node.right, texts))
    if isinstance(node, ex.Call):
        return ex.Call(node.function, substituted(node.argument, texts))
    return node


# ----------------------------------------------------------------------------- helpers
def _measured(node: ex.Node) -> list[ex.Measured]:
    if isinstance(node, ex.Measured):
        return [node]
    return [m for child in ex.children(node) for m in _measured(child)]


def _quantity(node: ex.Measured) -> pint.Quantity:
    return units.parse_quantity(f"{node.number} {node.unit}")


def _unit_of_leaf(node: ex.Node, operands: Mapping[str, Operand]) -> tuple[pint.Unit, str] | None:
    if isinstance(node, ex.Measured):
        return _quantity(node).units, node.unit
    if isinstance(node, ex.Name) and node.name in operands:
        return operands[node.name].unit, operands[node.name].unit_text
    return None


def _leaves(node: ex.Node) -> list[ex.Node]:
    if isinstance(node, (ex.Measured, ex.Name)):
        return [node]
    return [leaf for child in ex.children(node) for leaf in _leaves(child)]


def _reading(node: ex.Node, operands: Mapping[str, Operand]) -> str:
    """Whether a temperature value is absolute (one absolute temperature, net, in its sums), a difference (they
    cancel), or involves no scale with an offset; two absolute temperatures added are refused."""
    offsets = [leaf for leaf in _leaves(node) if _is_absolute(leaf, operands)]
    if not offsets:
        return PLAIN
    count = _absolute_count(node, operands)
    if count is None:
        return PLAIN  # an absolute temperature scaled by a parameter: a product in kelvin, no reading
    if math.isclose(count, 1.0):
        return ABSOLUTE
    if math.isclose(count, 0.0, abs_tol=1e-12):
        return DIFFERENCE
    raise InputError(
        f"'{shortened(ex.render(node))}' is neither a temperature nor a temperature difference: on a scale with an "
        "offset (degC) a value holds one absolute temperature (T_amb + 8.8 K, a mean (T_1 + T_2)/2) or none "
        '(T_s - T_amb); write a rise as one, e.g. "8.8 K" or "8.8 delta_degC"'
    )


def _is_absolute(leaf: ex.Node, operands: Mapping[str, Operand]) -> bool:
    found = _unit_of_leaf(leaf, operands)
    return found is not None and units.is_offset(found[0])


def _absolute_count(node: ex.Node, operands: Mapping[str, Operand]) -> float | None:
    """How many absolute temperatures a term holds, net: T_s - T_amb holds none, (T_1 + T_2)/2 one."""
    if isinstance(node, (ex.Measured, ex.Name)):
        return 1.0 if _is_absolute(node, operands) else 0.0
    if isinstance(node, ex.Unary):
        inner = _absolute_count(node.operand, operands)
        return None if inner is None else (-inner if node.op == "-" else inner)
    if isinstance(node, ex.Binary) and node.op in "+-":
        left, right = _absolute_count(node.left, operands), _absolute_count(node.right, operands)
        if left is None or right is None:
            return None
        return left + right if node.op == "+" else left - right
    if isinstance(node, ex.Binary) and node.op in "*/":
        left, right = _absolute_count(node.left, operands), _absolute_count(node.right, operands)
        if left is None or right is None:
            return None
        if left == 0 and right == 0:
            return 0.0
        factor = constant_value(node.right if left else node.left)
        if factor is None or (node.op == "/" and not left) or factor == 0:
            return None
        return left * factor if node.op == "*" else left / factor
    return 0.0 if _absolute_count_free(node, operands) else None


def _absolute_count_free(node: ex.Node, operands: Mapping[str, Operand]) -> bool:
    return not any(_is_absolute(leaf, operands) for leaf in _leaves(node))


def _shown_unit(node: ex.Node, operands: Mapping[str, Operand], unit: pint.Unit, reading: str):
    """The unit a worked value is shown in: an absolute temperature in the scale of its absolute term, a
    difference in K, otherwise the first unit written in it with the value's dimension, else SI."""
    found = [f for f in (_unit_of_leaf(leaf, operands) for leaf in _leaves(node)) if f is not None]
    if reading == ABSOLUTE:
        return next(f for f in found if units.is_offset(f[0]))
    if reading == DIFFERENCE:
        return units.parse_unit("K"), "K"
    for written, text in found:
        if units.same_dimension(written, unit) and not units.is_offset(written):
            return written, text
    si = units.si_unit(unit)
    return si, units.unit_label(si)
