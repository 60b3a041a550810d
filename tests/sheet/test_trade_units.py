"""Units as the trade prints them (°C, m³, W/(m²·K), µF, kΩ) are the units the input wrote in ASCII: pint, an
outside library, reads each printed form back to the same unit, for every unit of the demos' records and the
starters."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pint
import pytest

from calcsheet.kinds import KIND_MODULES
from calcsheet.kinds.catalogue import starter_text
from calcsheet.sheet.quantities import trade_unit, trade_units

ROOT = Path(__file__).resolve().parents[2]
UREG = pint.UnitRegistry()


def _record_units(node) -> set[str]:
    if isinstance(node, dict):
        found = {node["unit"]} if isinstance(node.get("unit"), str) and node["unit"] else set()
        return found.union(*(_record_units(v) for v in node.values()))
    if isinstance(node, list):
        return set().union(*(_record_units(v) for v in node))
    return set()


def _units() -> list[str]:
    units: set[str] = set()
    for record in (ROOT / "tests" / "end_to_end" / "golden").glob("*.json"):
        units |= _record_units(json.loads(record.read_text(encoding="utf-8")))
    for kind in KIND_MODULES:
        text = starter_text(kind)
        units |= set(re.findall(r'"-?[\d.]+(?:e-?\d+)? ([^"\s]+)"', text))
        units |= set(re.findall(r"\[([^\]\s]+)\]", text)) - {"sheet", "model", "parameters", "evaluate", "forcing"}
    return sorted(u for u in units if _parses(u))


def _parses(unit: str) -> bool:
    try:
        UREG.Unit(unit)
    except Exception:  # a table name or a word, not a unit
        return False
    return True


UNITS = _units()


def test_the_demos_and_starters_use_units_worth_printing():
    assert {"degC", "kohm", "uF", "W/(m^2*K)", "ohm"} <= set(UNITS)


@pytest.mark.parametrize("unit", UNITS)
def test_pint_reads_the_printed_unit_as_the_written_one(unit):
    printed = trade_unit(unit)
    assert UREG.Unit(printed) == UREG.Unit(unit), (unit, printed)


@pytest.mark.parametrize(
    ("ascii", "trade"),
    # The forms the trade writes (SI Brochure, 9th edition, 5.4; common practice, no source for the rest).
    [("degC", "°C"), ("m^3", "m³"), ("W/(m^2*K)", "W/(m²·K)"), ("uF", "µF"), ("kohm", "kΩ"), ("ohm", "Ω")],
)
def test_the_trade_forms(ascii, trade):
    assert trade_unit(ascii) == trade


def test_only_units_after_numbers_change_in_running_text():
    text = "2 x 9.4 kohm in parallel, 25 degC at 5 s; the ohm law uses R"
    assert trade_units(text) == "2 x 9.4 kΩ in parallel, 25 °C at 5 s; the ohm law uses R"
    assert UREG.Quantity(25, trade_unit("degC")).to("degC").magnitude == pytest.approx(25)
