"""Classification words that do not mislead (a property of our own wording; the arithmetic is the input's)."""

from __future__ import annotations

from calcsheet.pipeline import render
from calcsheet.sheet.document import Table
from tests import shared_builds


def test_a_source_of_zero_volts_is_forced_as_written_and_homogeneous_with_the_values():
    built = shared_builds.built("bus-capacitor-bleed-down")
    section = next(s for s in built.sheet.sections if s.key == "classification")
    table = next(b for b in section.blocks if isinstance(b, Table))
    forcing = next(row for row in table.rows if row[0] == "Forcing")
    assert forcing[1] == "forced as written; homogeneous with the stated values"
    assert "V_s = 0 V" in forcing[2]
    classification = built.sheet.record["classification"]
    assert classification["homogeneous"] is False and classification["homogeneous_with_values"] is True


def test_a_tank_that_overflows_does_not_grow_without_bound():
    built = shared_builds.built("equalisation-tank-tracer")
    text = render(built.sheet, ("txt",))["txt"]
    assert "grows without bound" not in text
    assert "Final value: none within the model: the tank overflows at t = 100 min" in text
