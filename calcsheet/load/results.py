"""One sheet's result as another sheet's parameter: a value the upstream sheet itself shows, read from its
record at full record precision, so the checker can find the number on the sheet it comes from."""

from __future__ import annotations

import math
import re

from calcsheet.errors import InputError, shortened
from calcsheet.source import units

_CALL = re.compile(r"^\s*([A-Za-z][A-Za-z0-9_]*)\s*\((.*)\)\s*$")
NAMED = ("time_constant", "final_value")


def result_quantity(record: dict, result: str, upstream: str) -> str:
    """The result as a value with its unit, e.g. '6.0 s', ready for the downstream sheet's parameter table.
    ``upstream`` names the sheet in messages."""
    if "intervals" in record:
        raise InputError(
            f"sheet {upstream} is a switched model; passing its results to other sheets is not supported yet"
        )
    text = result.strip()
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
