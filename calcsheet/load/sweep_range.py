"""``--vary NAME=LOW..HIGH``: the parameter a sweep varies and its range, checked as ``--set`` checks a value.

Each bound passes the checks a value written in the file passes (the parser, units, the magnitude) and is
compared with the value it replaces, so a range in the wrong dimension is reported against ``--vary NAME``.
The parameter's entry is then given the sweep's range (with its own value) before the input is loaded, so the
sign the loader assumes for its symbol holds at every point of the sweep and one symbolic solution serves them
all, as a tolerance range does for the worst case.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from calcsheet.errors import InputError, key_part, shortened
from calcsheet.load.overrides import check_like, settable
from calcsheet.source import units
from calcsheet.input_keys import RANGE_KEYS
from calcsheet.source.value_expressions import is_expression

MIN_STEPS, MAX_STEPS = 2, 1000
_NUMBER_FIRST = re.compile(r"\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*")


@dataclass(frozen=True)
class Vary:
    """The varied parameter's range in SI, and the unit the range is written in (the table's column unit)."""

    name: str
    low_text: str
    high_text: str
    low: float  # SI
    high: float  # SI
    unit_text: str  # as the low bound writes it: "kohm"
    scale: float  # written units per SI unit
    offset: float  # the written value of SI zero (-273.15 for degC)

    def shown(self, si: float) -> float:
        return si * self.scale + self.offset


def parse_vary(text: str) -> tuple[str, str, str]:
    """``R=1 kohm..100 kohm`` -> (R, 1 kohm, 100 kohm); the command line's form, checked for shape only."""
    name, sep, span = text.partition("=")
    parts = span.split("..")
    if not sep or not name.strip() or len(parts) != 2 or not all(p.strip() for p in parts):
        raise InputError(f"'{shortened(text)}' is not NAME=LOW..HIGH, e.g. --vary R=\"1 kohm..100 kohm\"", "--vary")
    return name.strip(), parts[0].strip(), parts[1].strip()


def check_steps(steps: int) -> None:
    if not MIN_STEPS <= steps <= MAX_STEPS:
        raise InputError(f"{steps} points; a sweep takes {MIN_STEPS} to {MAX_STEPS}", "--steps")


def apply_sweep_range(
    raw: dict, vary: tuple[str, str, str], log: bool, overridden: tuple[str, ...] = ()
) -> tuple[dict, Vary]:
    """The raw input with the varied parameter's range set to cover the sweep and its value, and the range."""
    name, low_text, high_text = vary
    key = f"--vary {key_part(name)}"
    parameters = dict(raw.get("parameters", {})) if isinstance(raw.get("parameters", {}), dict) else {}
    known = settable(raw, parameters)
    if name not in known:
        raise InputError(
            f"'{shortened(name)}' is not a parameter of this model "
            f"(its parameters: {', '.join(sorted(known)) or 'none'})",
            key,
        )
    if name in overridden:
        raise InputError("is also given by --set; a sweep sets its value at every point", key)
    for text in (low_text, high_text):
        check_like(text, known[name], key)
    low_q, high_q = units.parse_quantity(low_text), units.parse_quantity(high_text)
    low, high = units.to_si(low_q), units.to_si(high_q)
    for si, text in ((low, low_text), (high, high_text)):
        try:
            units.check_magnitude(si, text)
        except InputError as error:
            raise error.located(key=key)
    if not low < high:
        raise InputError(f"the low end '{shortened(low_text)}' is not below the high end '{shortened(high_text)}'", key)
    if log and low <= 0:
        raise InputError(f"--log needs both ends above zero; '{shortened(low_text)}' is not", key)
    entry = parameters.get(name)
    value = entry.get("value") if isinstance(entry, dict) else entry
    if value is None:  # a kind's optional slot left to its default
        from calcsheet.kinds import kind_named

        value = next(s.default for s in kind_named(raw["model"]["kind"]).slots if s.name == name)
    if is_expression(value, frozenset(parameters)):
        raise InputError(
            f"'{shortened(name)}' is worked out from '{shortened(value)}', so it has no value of its own to vary; "
            "vary the values it uses, or write it as one value",
            key,
        )
    nominal = _si_or_none(value)
    table = {k: v for k, v in entry.items() if k not in RANGE_KEYS} if isinstance(entry, dict) else {}
    table["value"] = value
    table["min"] = low_text if nominal is None or low <= nominal else value
    table["max"] = high_text if nominal is None or high >= nominal else value
    parameters[name] = table
    scale, offset = units.scale_and_offset(low_q.units)
    found = Vary(name, low_text, high_text, low, high, _unit_written(low_text, low_q), scale, offset)
    return {**raw, "parameters": parameters}, found


def _si_or_none(value) -> float | None:
    try:
        return units.to_si(units.parse_quantity(value))
    except InputError:
        return None  # the input's own value is wrong: reported where it is written


def _unit_written(text: str, quantity) -> str:
    """The unit part of a bound as written ("1kohm" -> "kohm"), else pint's label for it."""
    match = _NUMBER_FIRST.match(text)
    rest = text[match.end() :].strip() if match else ""
    return rest or units.unit_label(quantity.units)
