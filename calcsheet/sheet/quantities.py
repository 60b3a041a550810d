"""Numbers and quantities as the sheet prints them: 4 significant figures, units as declared."""

from __future__ import annotations

import re
from decimal import Decimal

import sympy as sp

from calcsheet.formatting import SIGNIFICANT, number  # noqa: F401  (the sheet's formatter, re-exported)
from calcsheet.unit_text import UNIT_PART, trade_part, trade_unit, units_after_numbers  # noqa: F401 (trade_unit re-exported)
from calcsheet.model import Declared
from calcsheet.errors import InputError
from calcsheet.source.units import from_si, parse_unit

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


def numeric_expression(expr: sp.Expr, values: dict, digits: int = SIGNIFICANT, kept: dict | None = None) -> sp.Expr:
    """An expression with SI numbers in place of symbols, each shown to ``digits`` significant figures.

    A whole number is written as one (680, not 680.0; a square, not a power 2.0). A symbol in ``kept``
    (tau) is not multiplied out: it is replaced by its number as written, so exp(-(t - 0.12)/0.01) is not
    turned into exp(12 - 100 t)."""
    kept = kept or {}
    given = {k: v for k, v in values.items() if k not in kept}
    numeric = sp.N(exact_zeros(expr, given).subs(given), 15)
    numeric = numeric.xreplace({f: _shown_float(f, digits) for f in numeric.atoms(sp.Float)})
    return numeric.xreplace({symbol: shown_number(value, digits) for symbol, value in kept.items()})


UNIT_ROUNDOFF = 2.0**-53  # IEEE 754 double precision, in which the SI values are held


def exact_zeros(expr: sp.Expr, values: dict) -> sp.Expr:
    """Each sum of numbers (T_0 - T_inf - Q/(h*A)) that comes to less than its own round-off, set to 0.

    The SI values are doubles: each term carries at most one rounding (its unit conversion or product) and
    a sum of n terms n - 1 more, so a sum whose size is within n * 2u * sum|term| (u = 2^-53; the summation
    bound of Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., section 4.2, from memory) is
    an exact zero that round-off made -3.6e-15, and is printed as 0. A sum above that bound is kept, however
    small."""
    if not values:
        return expr

    def zero_within_roundoff(e) -> bool:
        if not isinstance(e, sp.Add) or not e.free_symbols or not e.free_symbols <= set(values):
            return False
        terms = [complex(sp.N(term.subs(values), 17)) for term in e.args]
        size = sum(abs(term) for term in terms)
        return size > 0 and abs(sum(terms)) <= len(terms) * 2 * UNIT_ROUNDOFF * size

    return expr.replace(zero_within_roundoff, lambda e: sp.Integer(0))


def _shown_float(f: sp.Float, digits: int) -> sp.Number:
    value = float(f"{float(f):.{digits}g}")
    return sp.Integer(int(value)) if value.is_integer() and abs(value) < 1e7 else sp.Float(value, digits)


def shown_number(value: float, digits: int) -> sp.Symbol:
    """A number that sympy keeps as written inside an expression (a symbol named by its digits)."""
    text = f"{value:.{digits}g}"
    return sp.Symbol(format(Decimal(text), "f") if 1e-4 <= abs(value) < 1e7 else text)


def _numbers_as_values(expr: sp.Expr) -> sp.Expr:
    """The numbers kept as written (``shown_number``) back as values, to evaluate the expression."""
    return expr.xreplace({s: sp.Float(s.name, 30) for s in expr.free_symbols if _is_number(s.name)})


def _is_number(name: str) -> bool:
    try:
        float(name)
    except ValueError:
        return False
    return True


MOST_DIGITS = 10


def reproducing_expression(
    expr: sp.Expr, values: dict, x: sp.Symbol, rows, declared: Declared, kept: dict | None = None
) -> sp.Expr:
    """The numeric expression with the fewest significant figures (4 or more) that reproduces every row
    of a table as shown: ``rows`` are (x in SI, the value's text in the declared unit). A checker who
    evaluates the printed equation by hand then gets the printed table (318.1 - 25.0 e^(...) in kelvin
    would give 32.09 degC where the table says 32.14). Expressions that keep an integral are shown to 4."""
    shown = numeric_expression(expr, values, kept=kept)
    if not rows or shown.has(sp.Integral):
        return shown
    for digits in range(SIGNIFICANT, MOST_DIGITS + 1):
        candidate = numeric_expression(expr, values, digits, kept)
        if all(_text_at(candidate, x, at, declared) == text for at, text in rows):
            return candidate
    return numeric_expression(expr, values, MOST_DIGITS, kept)


def _text_at(expr: sp.Expr, x: sp.Symbol, at: float, declared: Declared) -> str:
    try:
        value = complex(sp.N(_numbers_as_values(expr).subs(x, sp.Float(at, 30)), 30))
    except (TypeError, ValueError, ArithmeticError):
        return ""
    return declared.text_of(value.real) if abs(value.imag) <= 1e-12 * max(1.0, abs(value.real)) else ""


def unit_latex(unit: str) -> str:
    """An ASCII unit as trade_unit prints it, in LaTeX for an equation: 'W/(m^2*K)' -> \\mathrm{W/(m^{2}\\cdot K)}."""
    if not unit:
        return ""
    return r"\mathrm{" + UNIT_PART.sub(lambda m: _latex_part(m.group(0)), unit) + "}"


def _latex_part(part: str) -> str:
    if part == "*":
        return r"\cdot "
    if part.startswith("^"):
        return f"^{{{part[1:]}}}"
    return trade_part(part)


def number_latex(text: str) -> str:
    """A number as written, in LaTeX: 2.5e-3 as 2.5 × 10^{-3}; other numbers as they are."""
    mantissa, _, exponent = text.lower().partition("e")
    if not exponent:
        return text
    power = rf"10^{{{int(exponent)}}}"
    return power if mantissa in ("1", "1.0") else rf"{mantissa} \times {power}"


def quantity_latex(shown: str) -> str:
    """'4.7 kohm' (a number, a space, an ASCII unit) in LaTeX as the sheet prints it: 4.7 kΩ."""
    value, _, unit = shown.partition(" ")
    return rf"{number_latex(value)}\ {unit_latex(unit)}" if unit else number_latex(value)


def trade_units(text: str) -> str:
    """Every unit written right after a number in ``text`` ('4.7 kohm', '25 degC') in its trade form, and a
    unit named after "in" ('T in degC', 'V in m^3') when pint reads it as one."""
    text = units_after_numbers(text)
    return _UNIT_AFTER_IN.sub(lambda m: m.group(1) + _named_unit(m.group(2)), text)


def _named_unit(word: str) -> str:
    """A word after "in" in its trade form when it is a unit ('m^3' of '(S in m^3)', its bracket kept)."""
    closing = ""
    while word.endswith(")") and word.count(")") > word.count("("):
        word, closing = word[:-1], closing + ")"
    return _unit_word(word) + closing


_UNIT_AFTER_IN = re.compile(r"(\bin )([A-Za-z][A-Za-z0-9_^*/()\-]*[A-Za-z0-9)])")


def _unit_word(word: str) -> str:
    printed = trade_unit(word)
    if printed == word or word == "us":  # "in us" is English before it is microseconds
        return word
    try:
        parse_unit(word)
    except InputError:
        return word
    return printed
