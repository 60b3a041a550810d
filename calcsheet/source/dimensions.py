"""Dimensional analysis on the parsed tree, so errors can quote terms exactly as written."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

from calcsheet.source.pint_import import pint

from calcsheet.errors import InputError
from calcsheet.source import expressions as ex
from calcsheet.source.units import dimension_text, parse_unit, registry, same_dimension, si_unit

UnitOf = Callable[[str], pint.Unit]


@dataclass(frozen=True)
class Factor:
    """One factor of a term as written, with its unit as the check saw it (SI base units); ``power`` is 1
    for a factor multiplied, -1 for one divided by."""

    node: ex.Node
    unit: pint.Unit
    power: int


@dataclass(frozen=True)
class TermUnits:
    """One additive term of an equation as written: its side ('left' or 'right'), its sign, its factors and
    the unit of the whole term (SI base units)."""

    side: str
    sign: int
    node: ex.Node
    factors: tuple[Factor, ...]
    unit: pint.Unit


@dataclass(frozen=True)
class InnerCheck:
    """A check made inside a term: the argument of a function, or an exponent, which must be dimensionless
    (``what`` 'argument' or 'exponent', ``function`` its name), a sum inside a term ('sum'), whose terms
    must share a unit, or the argument of a square root ('root'), of any unit. ``unit`` is the argument's,
    exponent's or sum's unit in SI base units."""

    what: str
    function: str
    node: ex.Node
    parts: tuple[Factor, ...]  # an argument's or exponent's factors; a sum's terms (power 1, signs in ``node``)
    unit: pint.Unit


@dataclass(frozen=True)
class EquationUnits:
    """What the unit check of an equation found: every term with its unit, every check inside the terms in
    the order met, and the unit all terms share (SI base units)."""

    terms: tuple[TermUnits, ...]
    inner: tuple[InnerCheck, ...]
    unit: pint.Unit


def check_equation(
    equation: ex.Equation, unit_of: UnitOf, derivative_unit: Callable[[ex.Derivative], pint.Unit]
) -> EquationUnits:
    """Check that every additive term on both sides has one dimension, and every function argument and
    exponent none; return what was found, term by term, so a sheet can show the check as it was made."""
    analyser = _Analyser(unit_of, derivative_unit)
    sides = [("left", sign, node) for sign, node in ex.additive_terms(equation.left)]
    sides += [("right", sign, node) for sign, node in ex.additive_terms(equation.right)]
    unit = _common_dimension([node for _, _, node in sides], analyser)
    terms = []
    for side, sign, node in sides:
        if _is_zero(node):
            continue  # a literal 0 fits any dimension, and is no term to check
        if isinstance(node, ex.Unary) and node.op == "-":
            sign, node = -sign, node.operand
        terms.append(TermUnits(side, sign, node, analyser.factors(node), analyser.unit(node)))
    return EquationUnits(tuple(terms), analyser.inner_checks(), unit)


def check_expression(
    node: ex.Node, unit_of: UnitOf, derivative_unit: Callable[[ex.Derivative], pint.Unit] | None
) -> list[tuple[ex.Node, pint.Unit]]:
    """Check that every additive term of an expression has one dimension; return each term with its unit,
    so a caller comparing the whole with a declared unit can quote the term as written."""
    analyser = _Analyser(unit_of, derivative_unit)
    terms = [node for _, node in ex.additive_terms(node)]
    _common_dimension(terms, analyser)
    return [(term, analyser.unit(term)) for term in terms if not _is_zero(term)]


def expression_unit(node: ex.Node, unit_of: UnitOf) -> pint.Unit:
    """The dimension of a value written as an expression ("R*C"), every sum checked term by term."""
    return _Analyser(unit_of, None).unit(node)


class _Analyser:
    def __init__(self, unit_of: UnitOf, derivative_unit):
        self.unit_of = unit_of
        self.derivative_unit = derivative_unit
        self.seen: dict[tuple[str, str, str], InnerCheck] = {}  # each check inside a term once, in order met

    def inner_checks(self) -> tuple[InnerCheck, ...]:
        return tuple(self.seen.values())

    def note(self, what: str, function: str, node: ex.Node, unit: pint.Unit) -> None:
        key = (what, function, ex.render(node))
        if key in self.seen:
            return
        if what == "sum":
            terms = [n for _, n in ex.additive_terms(node) if not _is_zero(n)]
            parts = tuple(Factor(n.operand if _negated(n) else n, self.unit(n), 1) for n in terms)
        else:
            parts = self.factors(node)
        self.seen[key] = InnerCheck(what, function, node, parts, unit)

    def factors(self, node: ex.Node, power: int = 1) -> tuple[Factor, ...]:
        """The factors of a product or quotient as written, each with its unit; a pure number is left out."""
        if isinstance(node, ex.Binary) and node.op in "*/":
            right_power = power if node.op == "*" else -power
            return self.factors(node.left, power) + self.factors(node.right, right_power)
        if isinstance(node, ex.Number):
            return ()
        return (Factor(node, self.unit(node), power),)

    def unit(self, node: ex.Node) -> pint.Unit:
        ureg = registry()
        if isinstance(node, ex.Number):
            return ureg.dimensionless
        if isinstance(node, ex.Name):
            return self.unit_of(node.name)
        if isinstance(node, ex.Measured):
            return si_unit(parse_unit(node.unit))  # SI: an offset unit (degC) cannot be multiplied
        if isinstance(node, ex.Derivative):
            if self.derivative_unit is None:
                raise InputError(f"a derivative ({node.text}) is not allowed here")
            return self.derivative_unit(node)
        if isinstance(node, ex.Unary):
            return self.unit(node.operand)
        if isinstance(node, ex.Call):
            return self.call(node)
        if node.op in "+-":
            unit = _common_dimension([n for _, n in ex.additive_terms(node)], self)
            self.note("sum", "", node, unit)
            return unit
        if node.op == "*":
            return _product(self.unit(node.left), self.unit(node.right))
        if node.op == "/":
            return _product(self.unit(node.left), self.unit(node.right) ** -1)
        return self.power(node)

    def call(self, node: ex.Call) -> pint.Unit:
        inner = self.unit(node.argument)
        if node.function == "sqrt":
            self.note("root", "sqrt", node.argument, inner)  # any dimension: its root is the factor's unit
            return inner**0.5
        if node.function == "abs":
            return inner
        if node.function == "step":  # step(t - t_1): any dimension in, a pure number out
            return registry().dimensionless
        if not _dimensionless(inner):
            raise InputError(
                f"the argument of {node.function}() must be dimensionless, but "
                f"'{ex.render(node.argument)}' has dimension {dimension_text(inner)}"
            )
        self.note("argument", node.function, node.argument, inner)
        return registry().dimensionless

    def power(self, node: ex.Binary) -> pint.Unit:
        base = self.unit(node.left)
        exponent_unit = self.unit(node.right)
        if not _dimensionless(exponent_unit):
            raise InputError(
                f"the exponent '{ex.render(node.right)}' must be dimensionless, "
                f"but has dimension {dimension_text(exponent_unit)}"
            )
        if constant_value(node.right) is None:  # a fixed number needs no check
            self.note("exponent", "", node.right, exponent_unit)
        if _dimensionless(base):
            return registry().dimensionless
        exponent = constant_value(node.right)
        if exponent is None:
            raise InputError(
                f"'{ex.render(node)}': a quantity with dimension "
                f"{dimension_text(base)} can only be raised to a fixed number"
            )
        return base**exponent


def _common_dimension(nodes: list[ex.Node], analyser: _Analyser) -> pint.Unit:
    first_unit = None
    first_node = None
    for node in nodes:
        if _is_zero(node):
            continue  # a literal 0 fits any dimension
        unit = analyser.unit(node)
        if first_unit is None:
            first_unit, first_node = unit, node
        elif not same_dimension(unit, first_unit):
            raise InputError(
                f"term '{ex.render(node)}' has dimension {dimension_text(unit)} but term "
                f"'{ex.render(first_node)}' has dimension {dimension_text(first_unit)}"
            )
    return first_unit if first_unit is not None else registry().dimensionless


def constant_value(node: ex.Node) -> float | None:
    """The value of a tree made of numbers only (e.g. an exponent ``-1/2``), else None."""
    if isinstance(node, ex.Number):
        return float(node.text)
    if isinstance(node, ex.Unary):
        inner = constant_value(node.operand)
        return None if inner is None else (-inner if node.op == "-" else inner)
    if isinstance(node, ex.Binary) and node.op in "+-*/":
        left, right = constant_value(node.left), constant_value(node.right)
        if left is None or right is None or (node.op == "/" and right == 0):
            return None
        return {"+": left + right, "-": left - right, "*": left * right, "/": left / right}[node.op]
    return None


def _product(a: pint.Unit, b: pint.Unit) -> pint.Unit:
    return (registry().Quantity(1, a) * registry().Quantity(1, b)).units


def _dimensionless(unit: pint.Unit) -> bool:
    return not registry().Quantity(1, unit).dimensionality


def _negated(node: ex.Node) -> bool:
    return isinstance(node, ex.Unary) and node.op == "-"


def _is_zero(node: ex.Node) -> bool:
    return isinstance(node, ex.Number) and float(node.text) == 0.0


def refuse_absolute_sums(equation: ex.Equation, absolute: dict[str, str], parameters: frozenset[str]) -> None:
    """Refuse a sum of two absolute temperatures (names stated in degC or degF, with their texts).

    In kelvin, 20 degC + 15 degC is 293.15 K + 288.15 K: a temperature of 308 degC, not 35 degC.
    A difference of two (T - T_amb) is a temperature difference, and a difference plus one
    (T_amb + (T_1 - T_2)) is a temperature again; a scaled sum such as (T_1 + T_2)/2, a mean, is
    kept. Terms are counted in the order written, so ``T_a + dT_r - T`` is refused at ``T_a + dT_r``.
    """
    for side in (equation.left, equation.right):
        _AbsoluteSums(absolute, parameters).visit(side, scaled=False)


class _AbsoluteSums:
    def __init__(self, absolute: dict[str, str], parameters: frozenset[str]):
        self.absolute = absolute
        self.parameters = parameters

    def visit(self, node: ex.Node, scaled: bool) -> None:
        if isinstance(node, ex.Binary) and node.op in "+-" and not scaled:
            self.chain(node)
        if isinstance(node, ex.Binary) and node.op in "*/":
            numeric_left, numeric_right = constant_value(node.left) is not None, constant_value(node.right) is not None
            self.visit(node.left, scaled=numeric_right)
            self.visit(node.right, scaled=numeric_left and node.op == "*")
            return
        for child in ex.children(node):
            self.visit(child, scaled=False)

    def chain(self, node: ex.Node) -> None:
        net, seen = 0, []
        for sign, term in ex.additive_terms(node):
            if isinstance(term, ex.Unary) and isinstance(term.operand, ex.Name):
                sign, term = (-sign if term.op == "-" else sign), term.operand
            if isinstance(term, ex.Name) and term.name in self.absolute:
                net += sign
                seen.append(term.name)
                if abs(net) >= 2:
                    self.refuse(node, seen)

    def refuse(self, node: ex.Node, names: list[str]) -> None:
        first, second = names[-2], names[-1]
        if second not in self.parameters:
            first, second = second, first  # name the parameter to rewrite, not the unknown
        number, _, unit = self.absolute[second].partition(" ")
        hint = (
            f'"{number} K" or "{number} delta_{unit.strip()}"'
            if second in self.parameters and unit.strip()
            else "K or delta_degC"
        )
        raise InputError(
            f"'{ex.render(node)}' adds two absolute temperatures ({first} = {self.absolute[first]}, "
            f"{second} = {self.absolute[second]}), and the sum of two temperatures on a scale with an offset "
            f"is no temperature; if {second} is a rise or a difference, write it as one: {hint}",
            key=f"parameters.{second}" if second in self.parameters else "model.equation",
        )
