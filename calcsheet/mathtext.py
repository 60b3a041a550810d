"""Expressions as text: LaTeX for the HTML and PDF, a plain linear form for the record and messages."""

from __future__ import annotations

import re

import sympy as sp
from sympy.printing.latex import LatexPrinter
from sympy.printing.str import StrPrinter

_WORD_SUBSCRIPT = re.compile(r"^([A-Za-z]+)_([A-Za-z][A-Za-z0-9]+)$")


class _PlainPrinter(StrPrinter):
    """sympy's str form, with integrals written out and dummy variables shown by their names."""

    def _print_Dummy(self, expr):
        return expr.name

    def _print_Heaviside(self, expr):
        return f"step({self._print(expr.args[0])})"

    def _print_Integral(self, expr):
        ((variable, *limits),) = expr.limits
        body = self._print(expr.function)
        if not limits:
            return f"integral(({body}) d{self._print(variable)})"
        low, high = (self._print(v) for v in limits)
        return f"integral from {low} to {high} of (({body}) d{self._print(variable)})"


def plain(expr) -> str:
    """A one-line form in the input notation (``^`` for powers), stable for diffs."""
    if isinstance(expr, str):
        return expr
    return _PlainPrinter().doprint(expr).replace("**", "^")


class _SheetLatexPrinter(LatexPrinter):
    """sympy's LaTeX with two habits of hand-written sheets.

    An exponential whose argument is more than a symbol or number is written exp(...), so the
    argument is set at full size instead of as a tiny superscript fraction. A word subscript
    (T_air) is set upright, as descriptive subscripts are (ISO 80000-2; from memory).
    """

    def _print_exp(self, expr, exp=None):
        argument = expr.args[0]
        if sp.count_ops(argument) <= 2:  # e^{-t/tau} reads well as a superscript
            return super()._print_ExpBase(expr, exp)
        body = rf"\exp\left({self._print(argument)}\right)"
        return body if exp is None else rf"{body}^{{{exp}}}"

    def _print_Heaviside(self, expr, exp=None):
        body = rf"\operatorname{{step}}\left({self._print(expr.args[0])}\right)"
        return body if exp is None else rf"{body}^{{{exp}}}"

    def _print_Symbol(self, expr, style="plain"):
        if expr in self._settings["symbol_names"]:
            return self._settings["symbol_names"][expr]
        return symbol_latex(expr.name) if _WORD_SUBSCRIPT.match(expr.name) else super()._print_Symbol(expr, style)


def latex(expr, names: dict | None = None) -> str:
    """LaTeX for the sheet, with the derivative symbol and similar shown as engineers write them."""
    if isinstance(expr, str):
        return expr
    printer = _SheetLatexPrinter({"symbol_names": names or {}, "mul_symbol": None, "ln_notation": True})
    return printer.doprint(expr)


def derivative_latex(unknown: str, variable: str) -> str:
    return rf"\frac{{d{symbol_latex(unknown)}}}{{d{symbol_latex(variable)}}}"


def symbol_latex(name: str) -> str:
    """LaTeX of a bare name: sympy's form, with a word subscript set upright (T_air)."""
    match = _WORD_SUBSCRIPT.match(name)
    if match:
        base, subscript = match.groups()
        return rf"{sp.latex(sp.Symbol(base))}_{{\mathrm{{{subscript}}}}}"
    return sp.latex(sp.Symbol(name))
