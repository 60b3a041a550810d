"""An equation set in LaTeX exactly as the engineer wrote it: the same terms in the same order, the
same factors in the same order, the same symbols. The checker's first equation is the input's own;
reordering starts only at the standard form, which says so.

It walks the syntax tree of our own parser (source/expressions.py), not a sympy expression, because
sympy orders terms and factors its own way.
"""

from __future__ import annotations

from calcsheet.mathtext import derivative_latex, display_inner_fractions, symbol_latex
from calcsheet.sheet.quantities import number_latex, unit_latex
from calcsheet.source import expressions as ex

_LEVEL = {"+": 1, "-": 1, "*": 2, "/": 2, "^": 4}
_CALLS = {
    "exp": r"\exp",
    "log": r"\ln",
    "ln": r"\ln",
    "log10": r"\log_{10}",
    "sin": r"\sin",
    "cos": r"\cos",
    "tan": r"\tan",
    "asin": r"\arcsin",
    "acos": r"\arccos",
    "atan": r"\arctan",
    "arcsin": r"\arcsin",
    "arccos": r"\arccos",
    "arctan": r"\arctan",
    "sinh": r"\sinh",
    "cosh": r"\cosh",
    "tanh": r"\tanh",
    "erf": r"\operatorname{erf}",
    "step": r"\operatorname{step}",
}


def equation_latex(equation: ex.Equation) -> str:
    tex = display_inner_fractions(f"{node_latex(equation.left)} = {node_latex(equation.right)}")
    return tex.replace(r"\left(-", r"\left({-}")  # a sign just inside a bracket is unary


def node_latex(node: ex.Node, inline: bool = False) -> str:
    """``inline``: inside an exponent, where a stacked fraction would be set too small to read, a/b."""
    if isinstance(node, ex.Number):
        return number_latex(node.text)
    if isinstance(node, ex.Name):
        return r"\pi" if node.name == "pi" else symbol_latex(node.name)
    if isinstance(node, ex.Derivative):
        return derivative_latex(node.of, node.wrt)
    if isinstance(node, ex.Measured):  # a number with its unit, in a value
        return rf"{number_latex(node.number)}\ {unit_latex(node.unit)}"
    if isinstance(node, ex.Unary):
        return f"{node.op}{_wrapped(node.operand, 3, inline=inline)}"
    if isinstance(node, ex.Call):
        return _call(node, inline)
    if node.op == "/" and inline:
        return f"{_wrapped(node.left, 2, inline=True)}/{_wrapped(node.right, 3, right=True, inline=True)}"
    if node.op == "/":
        return rf"\frac{{{node_latex(node.left)}}}{{{node_latex(node.right)}}}"
    if node.op == "^":
        return rf"{_wrapped(node.left, 5, inline=inline)}^{{{node_latex(node.right, inline=True)}}}"
    if node.op == "*":
        right = _wrapped(node.right, 2, right=True, inline=inline)
        joint = r" \cdot " if right[:1].isdigit() or right.startswith("-") else r"\,"
        return f"{_wrapped(node.left, 2, inline=inline)}{joint}{right}"
    right = _wrapped(node.right, 2 if node.op == "-" else 1, right=True, inline=inline)
    return f"{node_latex(node.left, inline)} {node.op} {right}"


def _wrapped(node: ex.Node, level: int, right: bool = False, inline: bool = False) -> str:
    """The node's LaTeX, in parentheses where it binds less tightly than its place needs (a sign right of
    an operator always: a - (-b), a (-b))."""
    text = node_latex(node, inline)
    if isinstance(node, ex.Binary) and (node.op != "/" or inline):
        own = _LEVEL[node.op]
    elif isinstance(node, ex.Unary):
        own = 0 if right else 3
    elif isinstance(node, ex.Measured):
        own = 2 if level > 2 else 5  # a number with its unit is a product: (550 uF)^2
    else:
        own = 5 if not (isinstance(node, ex.Binary) and level == 5) else 2  # a fraction as a base
    return rf"\left({text}\right)" if own < level else text


def _call(node: ex.Call, inline: bool = False) -> str:
    inner = node_latex(node.argument, inline)
    if node.function == "sqrt":
        return rf"\sqrt{{{inner}}}"
    if node.function == "abs":
        return rf"\left|{inner}\right|"
    if node.function == "exp":  # exp(-t/tau): the argument on the line, as everywhere on the sheet
        inner = node_latex(node.argument, True)
    return rf"{_CALLS[node.function]}{{\left({inner}\right)}}"  # braced: no gap before the bracket
