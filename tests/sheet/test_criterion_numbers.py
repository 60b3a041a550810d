"""Criteria are answered in the unit of their own limit, with margin and utilisation. The found value is
converted to the limit's unit with pint here, independently of calcsheet's conversion."""

from __future__ import annotations

import pint
import pytest

from calcsheet.kinds.catalogue import starter_text
from calcsheet.pipeline import build_sheet

UREG = pint.UnitRegistry()


def test_a_reach_in_seconds_is_answered_in_the_minutes_of_its_limit(tmp_path):
    path = tmp_path / "block.toml"
    path.write_text(starter_text("lumped_body"), encoding="utf-8")
    built = build_sheet(path)
    verdict = next(v for v in built.derivation.numbers.verdicts if v.criterion.check == "reach(40 degC) >= 15 min")
    minutes = UREG.Quantity(verdict.actual, "s").to("min").magnitude
    record = next(c for c in built.sheet.record["criteria"] if c["check"] == verdict.criterion.check)
    assert record["margin"] == {"value": pytest.approx(minutes - 15, rel=1e-9), "unit": "min"}
    assert record["utilisation"] == pytest.approx(15 / minutes, rel=1e-9)  # a lower limit: limit / found
    table = next(
        b for s in built.sheet.sections for b in s.blocks if getattr(b, "caption", "") == "Acceptance criteria"
    )
    row = next(r for r in table.rows if r[1] == verdict.criterion.check)
    assert row[3].endswith(" min") and row[5] == f"{100 * 15 / minutes:.1f} %"  # after the source column


def test_an_absolute_temperature_has_its_margin_in_kelvin_and_no_utilisation(tmp_path):
    path = tmp_path / "block.toml"
    path.write_text(starter_text("lumped_body"), encoding="utf-8")
    built = build_sheet(path)
    record = next(c for c in built.sheet.record["criteria"] if c["check"] == "final_value <= 60 degC")
    final_c = UREG.Quantity(built.derivation.numbers.final_value, "K").to("degC").magnitude
    assert record["margin"] == {"value": pytest.approx(60 - final_c, rel=1e-9), "unit": "K"}
    assert record["utilisation"] is None  # a ratio of Celsius readings means nothing
