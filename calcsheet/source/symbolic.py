"""Turn a checked syntax tree into a sympy expression, node by node (never by parsing text)."""

from __future__ import annotations

from typing import Callable, Mapping

import sympy as sp

from calcsheet.errors import InputError
from calcsheet.source import expressions as ex

_FUNCTIONS: Mapping[str, Callable] = {
    "exp": sp.exp,
    "log": sp.log,
    "log10": lambda a: sp.log(a, 10),
    "sqrt": sp.sqrt,
    "sin": sp.sin,
    "cos": sp.cos,
    "tan": sp.tan,
    "asin": sp.asin,
    "acos": sp.acos,
    "atan": sp.atan,
    "sinh": sp.sinh,
    "cosh": sp.cosh,
    "tanh": sp.tanh,
    "abs": sp.Abs,
    "erf": sp.erf,
    "step": sp.Heaviside,  # unit step: 0 before its argument reaches 0, 1 after
}


def to_sympy(
    node: ex.Node, symbols: Mapping[str, sp.Expr], derivative: Callable[[ex.Derivative], sp.Expr] | None = None
) -> sp.Expr:
    """Build the sympy expression for ``node``; names must be in ``symbols`` (or be ``pi``)."""
    if isinstance(node, ex.Number):
        return _number(node.text)
    if isinstance(node, ex.Name):
        if node.name in symbols:
            return symbols[node.name]
        if node.name == "pi":
            return sp.pi
        raise InputError(f"'{node.name}' is not defined (not a parameter, the unknown or the variable)")
    if isinstance(node, ex.Measured):  # a number with its unit, in a value: its SI value
        from calcsheet.source.units import parse_quantity, to_si

        return sp.Float(to_si(parse_quantity(f"{node.number} {node.unit}")), 15)
    if isinstance(node, ex.Derivative):
        if derivative is None:
            raise InputError(f"a derivative ({node.text}) is not allowed here")
        return derivative(node)
    if isinstance(node, ex.Unary):
        inner = to_sympy(node.operand, symbols, derivative)
        return -inner if node.op == "-" else inner
    if isinstance(node, ex.Call):
        return _FUNCTIONS[node.function](to_sympy(node.argument, symbols, derivative))
    left = to_sympy(node.left, symbols, derivative)
    right = to_sympy(node.right, symbols, derivative)
    if node.op == "+":
        return left + right
    if node.op == "-":
        return left - right
    if node.op == "*":
        return left * right
    if node.op == "/":
        if right == 0:
            raise InputError(f"division by zero in '{ex.render(node)}'")
        return left / right
    return left**right


def _number(text: str) -> sp.Expr:
    """Integers stay exact; decimals become floats so a sheet shows 0.85, not 17/20."""
    if text.isdigit():
        return sp.Integer(int(text))
    return sp.Float(text, 15)
