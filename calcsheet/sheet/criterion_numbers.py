"""A criterion answered in the unit of its own limit, with its margin and utilisation: the numbers a
checker compares with the limit as written ("reach(40 degC) >= 15 min" is answered in min, not s).

margin: how far the found value is inside the limit (negative: outside), limit - found for an upper
limit and found - limit for a lower one, as a difference in the limit's unit (kelvin for a temperature).
utilisation: the share of the limit used, found / limit for an upper limit and limit / found for a lower
one (at most 1 passes); not given for a scale with an offset (degC), or where the divisor is zero.
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.formatting import number
from calcsheet.source.units import from_si, is_offset


@dataclass(frozen=True)
class CriterionNumbers:
    found: float | None  # in the limit's unit
    margin: float | None  # in the limit's unit (a difference)
    utilisation: float | None  # a fraction
    unit: str  # the limit's unit as written
    margin_unit: str  # K for an absolute temperature's difference, else the limit's unit


def criterion_numbers(verdict) -> CriterionNumbers | None:
    """None where the criterion has no number to compare (not found, or no limit unit to read)."""
    criterion = verdict.criterion
    limit = criterion.limit
    if verdict.actual is None or limit.quantity is None:
        return None
    unit_text = limit.text.strip().partition(" ")[2].strip()
    unit = limit.quantity.units
    found = from_si(verdict.actual, unit) if unit_text else verdict.actual
    written = float(limit.quantity.magnitude)
    upper = criterion.operator in ("<", "<=")
    margin = written - found if upper else found - written
    offset = bool(unit_text) and is_offset(unit)
    utilisation = None
    if not offset and (written if upper else found) != 0:
        utilisation = found / written if upper else written / found
    margin_unit = unit_text
    if offset:  # a difference of two readings on an offset scale: kelvin, or a Fahrenheit degree
        degree = from_si(1.0, unit) - from_si(0.0, unit)
        margin_unit = "K" if abs(degree - 1.0) < 1e-9 else "delta_degF"
    return CriterionNumbers(found, margin, utilisation, unit_text, margin_unit)


def found_text(numbers: CriterionNumbers) -> str:
    return f"{number(numbers.found)} {numbers.unit}".rstrip()


def margin_text(numbers: CriterionNumbers) -> str:
    return f"{number(numbers.margin)} {numbers.margin_unit}".rstrip()


def utilisation_text(numbers: CriterionNumbers) -> str:
    return "" if numbers.utilisation is None else f"{number(100 * numbers.utilisation, 3)} %"
