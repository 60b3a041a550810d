"""Values that make an equation meaningless, found on the syntax tree before anything is solved.

A parameter of zero where it divides (``t/T`` with T = 0, ``sin(x/L)`` with L = 0, a tank's
volume V_0 = 0 under its outflow), or where it multiplies the derivative (R = 0 in
``R*C*dv/dt + v = 0``: the standard form divides by R*C), is refused, naming the parameter and
the term as written. A part of the equation made of parameters and numbers alone is evaluated in
double precision, one operation at a time, and refused where it is not finite (an overflowing
``exp(exp(exp(...)))``). Every evaluation is a bounded float operation: nothing here can hang.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

from calcsheet.errors import InputError, ModelRefused
from calcsheet.source import expressions as ex


@dataclass(frozen=True)
class Values:
    """The SI values the checks use: each parameter with its text, and the variable's initial point."""

    parameters: dict  # name -> (SI value, text as written)
    variable: str
    variable_at: float | None  # None when the initial point could not be read
    variable_text: str = ""


_FUNCTIONS = {
    "exp": math.exp,
    "log": math.log,
    "log10": math.log10,
    "sqrt": math.sqrt,
    "sin": math.sin,
    "cos": math.cos,
    "tan": math.tan,
    "asin": math.asin,
    "acos": math.acos,
    "atan": math.atan,
    "sinh": math.sinh,
    "cosh": math.cosh,
    "tanh": math.tanh,
    "abs": abs,
    "erf": math.erf,
    "step": lambda a: 1.0 if a >= 0 else 0.0,
}


def check_equation_values(equation: ex.Equation, values: Values) -> None:
    """Refuse zero divisors, zero coefficients of the derivative and non-finite constant parts."""
    checker = _Checker(values)
    for side in (equation.left, equation.right):
        for _, term in ex.additive_terms(side):
            checker.term = term
            checker.value(term)
            checker.derivative_coefficient(term)


class _Checker:
    def __init__(self, values: Values):
        self.values = values
        self.term: ex.Node | None = None

    def value(self, node: ex.Node) -> tuple[float | None, bool]:
        """(value at the initial point or None where unknown, whether it depends on the variable)."""
        if isinstance(node, ex.Number):
            return self.finite(float(node.text), node, False)
        if isinstance(node, ex.Name):
            if node.name in self.values.parameters:
                return self.values.parameters[node.name][0], False
            if node.name == self.values.variable:
                return self.values.variable_at, True
            if node.name == "pi":
                return math.pi, False
            return None, False  # the unknown
        if isinstance(node, ex.Derivative):
            return None, False
        if isinstance(node, ex.Unary):
            inner, varying = self.value(node.operand)
            return (None if inner is None else (-inner if node.op == "-" else inner)), varying
        if isinstance(node, ex.Call):
            inner, varying = self.value(node.argument)
            if inner is None:
                return None, varying
            return self.finite(_apply(_FUNCTIONS[node.function], inner), node, varying)
        left, left_varying = self.value(node.left)
        right, right_varying = self.value(node.right)
        varying = left_varying or right_varying
        if node.op == "/" and right == 0:
            self.zero(node.right, right_varying, f"its divisor '{ex.render(node.right)}' is zero")
            return None, varying  # 0/0 of the variable at the initial point: a limit, not an error
        if node.op == "^" and left == 0 and right is not None and right < 0:
            self.zero(node.left, left_varying, f"'{ex.render(node.left)}' is zero and raised to a negative power")
            return None, varying
        if left is None or right is None:
            return None, varying
        operation = {
            "+": lambda a, b: a + b,
            "-": lambda a, b: a - b,
            "*": lambda a, b: a * b,
            "/": lambda a, b: a / b,
            "^": _power,
        }[node.op]
        return self.finite(_apply(lambda: operation(left, right)), node, varying)

    def finite(self, result, node: ex.Node, varying: bool) -> tuple[float | None, bool]:
        if isinstance(result, float) and math.isfinite(result):
            return result, varying
        if varying:  # at the initial point only; whether it holds later is the derivation's question
            return None, varying
        raise InputError(
            f"'{_short(ex.render(node))}' is not a finite real number with the stated values "
            f"({_values_text(node, self.values)}): it {_why(result)}",
            "model.equation",
        )

    def zero(self, part: ex.Node, varying: bool, what: str) -> None:
        """A zero where the equation divides: refuse it if a parameter's value of 0 causes it."""
        if not ex.names_in(part) and not varying:
            raise InputError(f"division by zero in '{_short(ex.render(self.term))}': {what}", "model.equation")
        zeros = [n for n in sorted(ex.names_in(part)) if self.values.parameters.get(n, (None,))[0] == 0]
        if varying and not zeros:
            return  # e.g. sin(w*t)/(w*t) at t = 0: a removable singularity, the derivation's concern
        at = f" at {self.values.variable} = {self.values.variable_text}" if varying else ""
        term = f"the term '{_short(ex.render(self.term))}'" if self.term is not None else "the equation"
        if zeros:
            name = zeros[0]
            raise ModelRefused(
                f"{name} = 0 makes the equation singular: in {term}, {what}{at} "
                f"({name} is stated as {self.values.parameters[name][1]})",
                f"parameters.{name}",
            )
        raise ModelRefused(
            f"the stated values ({_values_text(part, self.values)}) make the equation singular: in {term}, {what}{at}",
            "model.equation",
        )

    def derivative_coefficient(self, term: ex.Node) -> None:
        """The factors multiplying the derivative in a product: none may be zero."""
        numerator, _ = _factors(term)
        if not any(isinstance(f, ex.Derivative) for f in numerator):
            return
        derivative = next(f for f in numerator if isinstance(f, ex.Derivative))
        for factor in numerator:
            if isinstance(factor, ex.Derivative) or ex.derivatives_in(factor):
                continue
            value, varying = self.value(factor)
            if value == 0:
                self.zero(
                    factor,
                    varying,
                    f"the coefficient of {derivative.text} is zero there, and the standard form divides by it",
                )


def _factors(node: ex.Node) -> tuple[list[ex.Node], list[ex.Node]]:
    """The factors of a product or quotient as written: (numerator, denominator)."""
    if isinstance(node, ex.Unary):
        return _factors(node.operand)
    if isinstance(node, ex.Binary) and node.op in "*/":
        top, bottom = _factors(node.left)
        right_top, right_bottom = _factors(node.right)
        if node.op == "*":
            return top + right_top, bottom + right_bottom
        return top + right_bottom, bottom + right_top
    return [node], []


def _apply(function, *arguments):
    """A float operation whose failures (overflow, a domain error, a complex result) are values."""
    try:
        result = function(*arguments)
    except OverflowError:
        return math.inf
    except (ValueError, ZeroDivisionError):
        return math.nan
    if isinstance(result, complex):
        return result
    return float(result)


def _power(base: float, exponent: float):
    if base < 0 and not float(exponent).is_integer():
        return complex(cmath.exp(exponent * cmath.log(base)))
    return math.pow(base, exponent)


def _why(result) -> str:
    if isinstance(result, complex):
        return "is complex"
    if isinstance(result, float) and math.isinf(result):
        return "overflows double precision"
    return "is undefined (outside the domain of a function, or 0/0)"


def _values_text(node: ex.Node, values: Values) -> str:
    named = [f"{n} = {values.parameters[n][1]}" for n in sorted(ex.names_in(node)) if n in values.parameters]
    return ", ".join(named[:4]) + (", ..." if len(named) > 4 else "") if named else "numbers only"


def _short(text: str, limit: int = 80) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."
