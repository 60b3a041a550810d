"""Lines a checker redoes by hand beside the tables of levels reached and of integrals.

A level reached where the response is one exponential approach, y = y_inf + (y_k - y_inf) exp(-(t - t_k)/tau),
gets the closed form t = t_k + tau ln((y_k - y_inf)/(y - y_inf)) with its numbers, printed with as many
digits as make the line reproduce the table (4 or more). Any other reach is found by the scan and Brent's
method of derive/numbers.py, and the sheet says so, with the samples that bracket it. An integral gets the
bounds that the integrand's smallest and largest values over the window give (derive/integral_bounds.py).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from decimal import Decimal

import mpmath
import sympy as sp

from calcsheet.derive.numbers import AT_LEVEL, INTERPOLATED, ROOT_RTOL, ROOT_XTOL, SEARCH_POINTS
from calcsheet.derive.piecewise import INTERVAL_SCAN_POINTS
from calcsheet.formatting import number
from calcsheet.sheet.criterion_numbers import criterion_numbers
from calcsheet.sheet.document import Equation, Math, Note, Paragraph
from calcsheet.sheet.quantities import in_units, quantity_latex, record_value
from calcsheet.source.units import from_si, is_offset

MOST_DIGITS = 10


@dataclass(frozen=True)
class Approach:
    """One exponential approach over an interval of the variable (SI)."""

    start: float
    end: float | None
    y_start: float
    y_inf: float
    tau: float


@dataclass(frozen=True)
class ReachCheck:
    level: object  # the level's Point
    found: float  # SI
    table: str  # the value as the table shows it
    line: Math | None  # the closed form with its numbers; None when found by the scan alone
    bracket: tuple[float, float] | None = None  # SI, when known
    refined: str = ""


def approaches(d) -> list[Approach | None]:
    """For each interval of a derivation (one for an ordinary model), its exponential approach or None."""
    if hasattr(d, "intervals"):
        return [_approach(i.derivation, i.start, i.end) for i in d.intervals]
    return [_approach(d, d.model.initial_at.si, None)]


def _approach(d, start: float, end: float | None) -> Approach | None:
    """Constant p > 0 and constant r with the stated values, in closed form: y = r/p + (y_k - r/p) e^(-p (t - t_k))."""
    tau, s, cls, m = d.numbers.time_constant, d.solution, d.classification, d.model
    if tau is None or not s.closed_form or not cls.constant_coefficients:
        return None
    values = m.numeric_values()
    p = (s.p if s.p is not None else cls.p).subs(values)
    r = (s.r if s.r is not None else cls.r).subs(values)
    if m.variable.symbol in (p.free_symbols | r.free_symbols) or not (p.is_number and r.is_number):
        return None
    p, r = complex(sp.N(p, 20)), complex(sp.N(r, 20))
    if p.imag or r.imag or not p.real > 0:
        return None
    return Approach(start, end, m.initial_value.si, r.real / p.real, tau)


def _in(approach: Approach, x: float) -> bool:
    return approach.start <= x and (approach.end is None or x < approach.end)


def reach_checks(d) -> tuple[list[ReachCheck], list[tuple[int, ReachCheck]]]:
    """The checks of the levels table, and of the reach criteria (with their place among the criteria)."""
    m, num, laws = d.model, d.numbers, approaches(d)
    variable = _Scale(m.variable.scale, m.variable.unit_text, m.variable.offset)
    levels = [
        _check(m, laws, r.level, r.x, variable, in_units(r.x, m.variable), r.bracket, r.refined)
        for r in num.reach
        if r.x is not None
    ]
    criteria = []
    for k, v in enumerate(num.verdicts):
        if v.criterion.subject != "reach" or v.actual is None:
            continue
        numbers = criterion_numbers(v)
        if numbers is None or not numbers.unit:
            scale, table = variable, in_units(v.actual, m.variable)
        else:
            unit = v.criterion.limit.quantity.units
            if is_offset(unit):
                continue
            scale, table = _Scale(from_si(1.0, unit), numbers.unit), f"{number(numbers.found)} {numbers.unit}"
        same = next((r for r in num.reach if r.x == v.actual), None)
        bracket = (same.bracket, same.refined) if same is not None else (None, "")
        criteria.append((k, _check(m, laws, v.criterion.argument, v.actual, scale, table, *bracket)))
    return levels, criteria


@dataclass(frozen=True)
class _Scale:
    """How a value of the variable is shown: declared value = SI × scale + offset, in ``unit``."""

    scale: float
    unit: str
    offset: float = 0.0


def _check(m, laws, level, x: float, scale: _Scale, table: str, bracket, refined) -> ReachCheck:
    law = next((a for a in laws if a is not None and _in(a, x)), None)
    line = None if law is None or scale.offset else _closed_form_line(m, law, level, x, scale, table)
    return ReachCheck(level, x, table, line, bracket, refined)


def _closed_form_line(m, law: Approach, level, x: float, scale: _Scale, table: str) -> Math | None:
    """The line with the fewest digits (4 or more) whose numbers give the tabulated value, or None when the
    closed form and the table disagree (then the response is not the approach this module assumes)."""
    y = m.unknown
    ratio = (law.y_start - law.y_inf) / (level.si - law.y_inf) if level.si != law.y_inf else 0.0
    if not ratio > 0:  # the level is not between the start and the final value: not this approach's
        return None
    exact = law.start + law.tau * math.log(ratio)
    if not math.isclose(exact, x, rel_tol=1e-9, abs_tol=1e-9 * law.tau):
        return None
    target = table.partition(" ")[0]
    for digits in range(4, MOST_DIGITS + 1):
        parts = {
            "t_k": _digits(law.start * scale.scale, digits),
            "tau": _digits(law.tau * scale.scale, digits),
            "y_k": _digits(y.shown(law.y_start), digits),
            "y_inf": _digits(y.shown(law.y_inf), digits),
            "y": _digits(y.shown(level.si), digits),
        }
        if number(_evaluated_or_none(parts)) == target:
            return _line_math(m, parts, scale.unit, y.unit_text, table)
    return None


def _digits(value: float, digits: int) -> str:
    """``value`` to ``digits`` significant figures, without trailing zeros: 680, 10.34, 0.012, 2.5e-07."""
    if value == 0:
        return "0"
    text = f"{value:.{digits}g}"
    return format(Decimal(text).normalize(), "f") if 1e-4 <= abs(value) < 1e7 else text


def _evaluated_or_none(parts: dict[str, str]) -> float | None:
    """None where the rounded numbers leave no logarithm to take (the level rounds onto the final value)."""
    try:
        return evaluate_line(parts)
    except (ZeroDivisionError, TypeError, ValueError):
        return None


def evaluate_line(parts: dict[str, str]) -> float:
    """t_k + tau ln((y_k - y_inf)/(y - y_inf)) from the printed numbers, in 30 digits (mpmath), so that the
    choice of digits does not hang on the last bit of one platform's logarithm."""
    with mpmath.workdps(30):
        n = {k: mpmath.mpf(v) for k, v in parts.items()}
        return float(n["t_k"] + n["tau"] * mpmath.log((n["y_k"] - n["y_inf"]) / (n["y"] - n["y_inf"])))


def _line_math(m, parts: dict[str, str], x_unit: str, y_unit: str, table: str) -> Math:
    def q(value: str, unit: str) -> tuple[str, str]:
        text = f"{value} {unit}".rstrip()
        tex = quantity_latex(text)  # the unit in its trade form (°C, kΩ), as every equation prints it
        return (f"({text})", rf"\left({tex}\right)") if value.startswith("-") else (text, tex)

    yk, yi, yl = q(parts["y_k"], y_unit), q(parts["y_inf"], y_unit), q(parts["y"], y_unit)
    tau = q(parts["tau"], x_unit)
    start = "" if float(parts["t_k"]) == 0 else parts["t_k"]
    lead_text, lead_tex = ("", "") if not start else (f"{q(start, x_unit)[0]} + ", f"{q(start, x_unit)[1]} + ")
    name = m.variable.name
    text = f"{name} = {lead_text}{tau[0]} × ln(({yk[0]} - {yi[0]})/({yl[0]} - {yi[0]})) = {table}"
    tex = (
        rf"{sp.latex(sp.Symbol(name))} = {lead_tex}{tau[1]} \times \ln\left(\frac{{{yk[1]} - {yi[1]}}}"
        rf"{{{yl[1]} - {yi[1]}}}\right) = {quantity_latex(table)}"
    )
    return Math(tex, text)


def reach_blocks(d, switched: bool = False) -> list:
    """The closed-form lines and the method of every reach found by the scan alone, for the levels table."""
    m = d.model
    levels, criteria = reach_checks(d)
    shown = {(c.level.si, c.table) for c in levels}
    labelled = [(f"reach {c.level.text}", c) for c in levels] + [
        (f"criterion {k + 1}", c) for k, c in criteria if (c.level.si, c.table) not in shown
    ]
    checks = [c for _, c in labelled]
    blocks = []
    closed = [(label, c) for label, c in labelled if c.line is not None]
    if closed:
        blocks += [Paragraph(_LEAD), _general_line(m)] + [Equation(c.line, label) for label, c in closed]
    scanned = list({c.level.si: c for c in reversed(checks) if c.line is None}.values())[::-1]  # a level once
    if scanned:
        blocks.append(Note("method", _method_words(m, scanned, switched)))
    return blocks


_LEAD = (
    "By hand: where the response is one exponential approach, from its value at the interval's start "
    "towards its final value with time constant tau, a level is first reached at:"
)


def _general_line(m) -> Equation:
    y, x = m.unknown.name, m.variable.name
    yk, yi, yl, xk, xl = (sp.latex(sp.Symbol(n)) for n in (f"{y}_k", f"{y}_inf", y, f"{x}_k", x))
    yi = yi.replace(" inf}", r" \infty}").replace("{inf}", r"{\infty}")
    tex = rf"{xl} = {xk} + \tau \ln\left(\frac{{{yk} - {yi}}}{{{yl} - {yi}}}\right)"
    text = f"{x} = {x}_k + tau*ln(({y}_k - {y}_inf)/({y} - {y}_inf))"
    return Equation(Math(tex, text), "closed form")


def _method_words(m, scanned: list[ReachCheck], switched: bool) -> str:
    x = m.variable.name
    grid = (
        f"{INTERVAL_SCAN_POINTS} equally spaced points in each interval"
        if switched
        else f"{SEARCH_POINTS} equally spaced points over the searched range"
    )
    levels = ", ".join(c.level.text for c in scanned)
    words = (
        f"Found numerically ({levels}): the response is evaluated at {grid}; the first two neighbouring "
        f"samples on opposite sides of the level, each farther from it than {AT_LEVEL:g} of the response's "
        "size so far, bracket the crossing, and Brent's method (scipy.optimize.brentq) refines it with the "
        f"response itself until the bracket is narrower than {ROOT_XTOL:g} of its first width plus "
        f"{ROOT_RTOL:g} of the root."
    )
    brackets = [
        f"{c.level.text} between {x} = {in_units(c.bracket[0], m.variable)} and {in_units(c.bracket[1], m.variable)}"
        + (" (located by linear interpolation of the scanned values)" if c.refined == INTERPOLATED else "")
        for c in scanned
        if c.bracket is not None
    ]
    if brackets:
        words += " Brackets: " + "; ".join(brackets) + "."
    return words


def reach_record(check: ReachCheck | None, declared) -> dict:
    """``hand_check`` of a reach entry: the closed-form line, or the scan's bracket."""
    if check is None:
        return {"closed_form": None, "bracket": None}
    bracket = None if check.bracket is None else [record_value(v, declared) for v in check.bracket]
    return {"closed_form": check.line.text if check.line is not None else None, "bracket": bracket}


# ---------------------------------------------------------------------------------------------- integrals
def integral_bound_blocks(m, integrals) -> list:
    """For each integral with bounds: the integrand's extremes times the window's length, and the result
    between them (or a warning when it is not, which would be a fault of the calculation)."""
    lines = [line for i in integrals if (line := _bound_line(m, i)) is not None]
    if not lines:
        return []
    lead = Paragraph(
        "Bounds, by hand: over a window the integrand lies between its smallest and its largest value there "
        "(found as for max and min), so its integral lies between those values times the window's length."
    )
    return [lead] + lines


def _bound_line(m, i):
    b = getattr(i, "bounds", None)
    if b is None or i.value is None:
        return None
    q = m.derived_named(i.of)
    length = f"{number((i.end - i.start) * m.variable.scale)} {m.variable.unit_text}".rstrip()
    lower = f"{in_units(b.smallest, q.declared)} × {length} = {in_units(b.lower, q.integral)}"
    upper = f"{in_units(b.largest, q.declared)} × {length} = {in_units(b.upper, q.integral)}"
    window = f"{in_units(i.start, m.variable)} to {in_units(i.end, m.variable)}"
    found = in_units(i.value, q.integral)
    if b.holds(i.value):
        return Paragraph(f"integral of {i.of} from {window} = {found}; bounds: between {lower} and {upper}.")
    return Note(
        "warning",
        f"integral of {i.of} from {window} = {found} lies outside its bounds, between {lower} and {upper}: "
        "the calculation is at fault; do not use this result.",
    )


def integral_bounds_record(i, m) -> dict | None:
    """``bounds`` of an integral entry, in the declared units; None where there are none."""
    b = getattr(i, "bounds", None)
    if b is None or i.value is None:
        return None
    q = m.derived_named(i.of)
    return {
        "smallest_integrand": record_value(b.smallest, q.declared),
        "largest_integrand": record_value(b.largest, q.declared),
        "lower": record_value(b.lower, q.integral),
        "upper": record_value(b.upper, q.integral),
        "within": b.holds(i.value),
    }
