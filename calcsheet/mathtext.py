"""Expressions as text: LaTeX for the HTML and PDF, a plain linear form for the record and messages."""

from __future__ import annotations

import sympy as sp
from sympy.printing.str import StrPrinter

class _PlainPrinter(StrPrinter):
    """sympy's str form, with integrals written out and dummy variables shown by their names."""

    def _print_Dummy(self, expr):
        return expr.name

    def _print_Integral(self, expr):
        (variable, *limits), = expr.limits
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


def latex(expr, names: dict | None = None) -> str:
    """LaTeX via sympy, with the derivative symbol and similar shown as engineers write them."""
    if isinstance(expr, str):
        return expr
    return sp.latex(expr, symbol_names=names or {}, mul_symbol=None, ln_notation=True)


def derivative_latex(unknown: str, variable: str) -> str:
    return rf"\frac{{d{symbol_latex(unknown)}}}{{d{symbol_latex(variable)}}}"


def symbol_latex(name: str) -> str:
    """LaTeX of a bare name, matching what sympy prints for a symbol of that name."""
    return sp.latex(sp.Symbol(name))

