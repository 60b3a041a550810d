"""Numbers and quantities as the sheet prints them: 4 significant figures, units as declared."""

from __future__ import annotations

import sympy as sp

from calcsheet.formatting import SIGNIFICANT, number  # noqa: F401  (the sheet's formatter, re-exported)
from calcsheet.model import Declared
from calcsheet.source.units import from_si

RECORD_DIGITS = 10  # significant digits kept in the JSON record: stable across runs, ample for checks


def duration(seconds: float) -> str:
    """A time in s, with min, h or d beside it where those read more easily: '6000 s (100.0 min)'."""
    text = f"{number(seconds)} s"
    for limit, size, unit in ((2 * 86400, 86400, "d"), (2 * 3600, 3600, "h"), (120, 60, "min")):
        if abs(seconds) >= limit:
            return f"{text} ({number(seconds / size)} {unit})"
    return text


def in_units(si_value: float | None, declared: Declared) -> str:
    """An SI value shown in the unit the engineer declared, e.g. '196.6 degC'."""
    if si_value is None:
        return "n/a"
    return declared.text_of(si_value)


def record_value(si_value: float | None, declared: Declared) -> dict | None:
    """``{value, unit}`` in the declared unit, rounded for a stable record."""
    if si_value is None:
        return None
    return {"value": rounded(from_si(si_value, declared.unit)), "unit": declared.unit_text}


def rounded(value: float) -> float:
    return float(f"{value:.{RECORD_DIGITS}g}")


def numeric_expression(expr: sp.Expr, values: dict, digits: int = SIGNIFICANT) -> sp.Expr:
    """An expression with SI numbers in place of symbols, each shown to ``digits`` significant figures."""
    numeric = sp.N(expr.subs(values), 15)
    return numeric.xreplace({f: sp.Float(float(f"{float(f):.{digits}g}"), digits) for f in numeric.atoms(sp.Float)})


MOST_DIGITS = 10


def reproducing_expression(expr: sp.Expr, values: dict, x: sp.Symbol, rows, declared: Declared) -> sp.Expr:
    """The numeric expression with the fewest significant figures (4 or more) that reproduces every row
    of a table as shown: ``rows`` are (x in SI, the value's text in the declared unit). A checker who
    evaluates the printed equation by hand then gets the printed table (318.1 - 25.0 e^(...) in kelvin
    would give 32.09 degC where the table says 32.14). Expressions that keep an integral are shown to 4."""
    shown = numeric_expression(expr, values)
    if not rows or shown.has(sp.Integral):
        return shown
    for digits in range(SIGNIFICANT, MOST_DIGITS + 1):
        candidate = numeric_expression(expr, values, digits)
        if all(_text_at(candidate, x, at, declared) == text for at, text in rows):
            return candidate
    return numeric_expression(expr, values, MOST_DIGITS)


def _text_at(expr: sp.Expr, x: sp.Symbol, at: float, declared: Declared) -> str:
    try:
        value = complex(sp.N(expr.subs(x, sp.Float(at, 30)), 30))
    except (TypeError, ValueError, ArithmeticError):
        return ""
    return declared.text_of(value.real) if abs(value.imag) <= 1e-12 * max(1.0, abs(value.real)) else ""
