"""One sheet's result as another sheet's parameter: a value the upstream sheet itself shows, read from its
record at full record precision, so the checker can find the number on the sheet it comes from."""

from __future__ import annotations

import math
import re

from calcsheet.errors import InputError, shortened
from calcsheet.source import units

_CALL = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*\((.*)\)\s*$")
NAMED = ("time_constant", "final_value")
_IN_INTERVAL = re.compile(r"^(time_constant|final_value) in interval ([0-9]{1,3})$")


def result_quantity(record: dict, result: str, upstream: str) -> str:
    """The result as a value with its unit, e.g. '6.0 s', ready for the downstream sheet's parameter table.
    ``upstream`` names the sheet in messages."""
    text = " ".join(result.split())
    if "intervals" in record:
        record, named = _switched(record, text, upstream)
        if named is not None:
            return named
    elif _IN_INTERVAL.match(text):
        raise InputError(f"'{shortened(text)}': sheet {upstream} is not switched; write {text.split()[0]}")
    if text in NAMED:
        return _quantity(record.get(text), text, upstream)
    call = _CALL.match(text)
    if not call:
        raise InputError(
            f"'{shortened(text)}' is not a result a sheet shows (time_constant, final_value, "
            f"{_unknown(record)}(at), max({_unknown(record)}) or min({_unknown(record)}), with an optional window)"
        )
    word, arguments = call.group(1), [a.strip() for a in call.group(2).split(",")] if call.group(2).strip() else []
    if word == _unknown(record):
        return _value_at(record, arguments, text, upstream)
    if word in ("max", "min"):
        return _extreme(record, word, arguments, text, upstream)
    raise InputError(f"'{shortened(text)}': sheet {upstream}'s unknown is {_unknown(record)}, not {word}")


def _switched(record: dict, text: str, upstream: str) -> tuple[dict, str | None]:
    """A switched sheet shows its values and extremes across the intervals, and a time constant and final value per
    interval: ``final_value`` is the last interval's (where the response settles), a time constant is named by
    its interval (``time_constant in interval 2``). Anything else is read from the values across the switches."""
    intervals = record["intervals"]
    named = _IN_INTERVAL.match(text)
    if named:
        number = int(named.group(2))
        if not 1 <= number <= len(intervals):
            raise InputError(f"'{shortened(text)}': sheet {upstream} has intervals 1 to {len(intervals)}")
        return record, _quantity(intervals[number - 1].get(named.group(1)), text, upstream)
    if text == "final_value":
        return record, _quantity(intervals[-1].get("final_value"), text, upstream)
    if text == "time_constant":
        raise InputError(
            f"sheet {upstream} is switched and each interval has its own time constant: write "
            f"'time_constant in interval N' (N from 1 to {len(intervals)})"
        )
    return {"model": record["model"], **record.get("across", {})}, None


def _unknown(record: dict) -> str:
    return record["model"]["unknown"]["name"]


def _quantity(found, text: str, upstream: str) -> str:
    if not isinstance(found, dict) or found.get("value") is None or not math.isfinite(found["value"]):
        raise InputError(f"sheet {upstream} gives no {text}")
    return f"{found['value']!r} {found['unit']}"


def _si(text: str) -> float:
    return units.to_si(units.parse_quantity(text))


def _same(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)


def _record_si(item: dict) -> float:
    return _si(f"{item['value']!r} {item['unit']}")


def _value_at(record: dict, arguments: list[str], text: str, upstream: str) -> str:
    if len(arguments) != 1:
        raise InputError(f"'{shortened(text)}' needs one point, e.g. {_unknown(record)}(60 s)")
    at = _si(arguments[0])
    for row in record.get("values") or ():
        if row.get("applies", True) and _same(_record_si(row["at"]), at):
            return _quantity(row["value"], text, upstream)
    raise InputError(
        f"sheet {upstream} does not show {shortened(text)}: add {arguments[0]} to its [evaluate] at, "
        "so the value passed is one its checker has seen"
    )


def _extreme(record: dict, kind: str, arguments: list[str], text: str, upstream: str) -> str:
    if len(arguments) not in (1, 3) or arguments[0] != _unknown(record):
        raise InputError(
            f"'{shortened(text)}' is written {kind}({_unknown(record)}) or {kind}({_unknown(record)}, a, b)"
        )
    found = [e for e in record.get("extremes") or () if e["type"] == kind and e["of"] == arguments[0]]
    if len(arguments) == 3:
        a, b = _si(arguments[1]), _si(arguments[2])
        found = [e for e in found if _same(_record_si(e["from"]), a) and _same(_record_si(e["to"]), b)]
    elif found:  # over the analysed range: the widest window the sheet searched
        widest = max(_record_si(e["to"]) - _record_si(e["from"]) for e in found)
        found = [e for e in found if _same(_record_si(e["to"]) - _record_si(e["from"]), widest)]
    if not found:
        raise InputError(
            f"sheet {upstream} does not show {shortened(text)}: ask for it in its [evaluate] extremes or a criterion"
        )
    return _quantity(found[0]["value"], text, upstream)
