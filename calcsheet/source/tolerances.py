"""A parameter's range: ``tolerance`` (symmetric, per cent or an amount) or ``min``/``max`` (either side).

Read here so the loader's parameter reading stays one call; every problem is one line keyed to the
entry (``parameters.R.tolerance``). For a temperature written on a scale with an offset (degC), a
tolerance is a difference: "5 K", "5 delta_degC" or "5 degC" all mean five kelvin either way.
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.source.pint_import import pint

from calcsheet.errors import InputError
from calcsheet.formatting import number
from calcsheet.input_keys import RANGE_KEYS
from calcsheet.source import units


@dataclass(frozen=True)
class Range:
    low: float | None  # SI
    high: float | None
    spread: str  # as written, for the sheet


def read_range(entry: dict, quantity: pint.Quantity, si: float, where: str) -> Range:
    """The SI range an entry states, checked against its value; no range when it states none."""
    tolerance, low, high = (entry.get(key) for key in RANGE_KEYS)
    if tolerance is not None and (low is not None or high is not None):
        raise InputError("give either a tolerance or min and max, not both", where)
    if tolerance is not None:
        amount = _tolerance(tolerance, quantity, si, f"{where}.tolerance")
        return Range(si - amount, si + amount, f"± {_text(tolerance)}")
    if low is None and high is None:
        return Range(None, None, "")
    lowest = si if low is None else _bound(low, quantity, f"{where}.min")
    highest = si if high is None else _bound(high, quantity, f"{where}.max")
    if low is not None and high is not None and lowest > highest:
        raise InputError(f"min ({_text(low)}) is greater than max ({_text(high)})", where)
    if not lowest <= si <= highest:
        side = "min" if si < lowest else "max"
        raise InputError(f"the value lies outside its range (min {_text(low)}, max {_text(high)})", f"{where}.{side}")
    spread = ", ".join(f"{k} {_text(v)}" for k, v in (("min", low), ("max", high)) if v is not None)
    return Range(lowest, highest, spread)


def _tolerance(raw, quantity: pint.Quantity, si: float, where: str) -> float:
    """The SI amount either side of the value."""
    amount = _parse(raw, where)
    if amount.magnitude < 0:
        raise InputError(f"'{_text(raw)}' is negative; a tolerance is an amount either side of the value", where)
    if amount.units == units.parse_unit("percent"):
        if units.is_offset(quantity.units):
            raise InputError(
                f"a per cent of a temperature on the {_unit(quantity)} scale depends on where the scale "
                'starts; give the tolerance as a difference, e.g. "5 K"',
                where,
            )
        return abs(si) * amount.magnitude / 100
    if not units.same_dimension(amount.units, quantity.units):
        raise InputError(
            f"'{_text(raw)}' is neither a per cent (\"5 %\") nor an amount in the value's unit "
            f"({_unit(quantity)}, {units.dimension_text(quantity.units)})",
            where,
        )
    if units.is_offset(amount.units):  # "5 degC" on a degC value: a difference of five degrees
        return amount.magnitude / units.scale_and_offset(amount.units)[0]
    return units.to_si(amount)


def _bound(raw, quantity: pint.Quantity, where: str) -> float:
    bound = _parse(raw, where)
    if not units.same_dimension(bound.units, quantity.units):
        raise InputError(
            f"'{_text(raw)}' has dimension {units.dimension_text(bound.units)}, but the value is in "
            f"{_unit(quantity)} ({units.dimension_text(quantity.units)})",
            where,
        )
    si = units.to_si(bound)
    try:
        units.check_magnitude(si, _text(raw))
    except InputError as error:
        raise error.located(key=where)
    return si


def _parse(raw, where: str) -> pint.Quantity:
    try:
        return units.parse_quantity(raw)
    except InputError as error:
        raise error.located(key=where)


def _text(raw) -> str:
    if raw is None:
        return "not stated"
    return raw.strip() if isinstance(raw, str) else number(float(raw))


def _unit(quantity: pint.Quantity) -> str:
    return units.unit_label(quantity.units) or "no unit"
