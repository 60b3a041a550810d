"""Expressions as text: LaTeX for the HTML and PDF, a plain linear form for the record and messages."""

from __future__ import annotations

import sympy as sp

def plain(expr) -> str:
    """A one-line form in the input notation (``^`` for powers), stable for diffs."""
    if isinstance(expr, str):
        return expr
    text = sp.sstr(expr)
    return text.replace("**", "^")


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

