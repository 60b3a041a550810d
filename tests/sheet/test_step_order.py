"""A checker never meets a value before the step that works it out: the acceptance criteria have a step of
their own after every step whose results they are answered from (Numbers, Extremes, Derived quantities) and
before the steps that build on the verdicts (Sensitivity and tolerances, Verification), in the same place on
every sheet; on a switched sheet the criteria table closes the results across the switches."""

from __future__ import annotations

import pytest

from tests import shared_builds

CASES = list(shared_builds.every_source())
ANSWERED_FROM = ("numbers", "extremes", "derived")  # the steps that work out what a criterion is answered from
AFTER_THE_VERDICTS = ("margin", "verification")
CRITERIA = "Acceptance criteria"


def _holding_criteria(sheet):
    return [s for s in sheet.sections if any(getattr(b, "caption", "") == CRITERIA for b in s.blocks)]


@pytest.mark.parametrize("case", CASES)
def test_the_criteria_come_after_every_value_they_are_answered_from(case):
    built = shared_builds.built(case)  # as the pipeline builds it, the tolerance study included
    d, sheet = built.derivation, built.sheet
    holding = _holding_criteria(sheet)
    if not d.numbers.verdicts:
        assert not holding
        return
    assert len(holding) == 1, [s.key for s in holding]
    section = holding[0]
    keys = [s.key for s in sheet.sections]
    if getattr(d, "intervals", None):  # switched: the table is the last result across the switches
        assert section.key == "across"
        captions = [getattr(b, "caption", "") for b in section.blocks]
        place = captions.index(CRITERIA)
        tables = [c for c in captions if c]
        assert tables[-2] == CRITERIA and tables[-1].startswith("Verification"), tables
        assert place > max((i for i, c in enumerate(captions) if c and c != CRITERIA and "Verification" not in c))
        return
    assert section.key == "criteria"
    numbered = [s for s in sheet.sections if s.number]
    at = keys.index("criteria")
    before = [k for k in keys if k in ANSWERED_FROM]
    after = [k for k in keys if k in AFTER_THE_VERDICTS]
    assert all(keys.index(k) < at for k in before), keys
    assert all(keys.index(k) > at for k in after), keys
    assert numbered[[s.key for s in numbered].index("criteria") - 1].key == before[-1]  # right after them
    # a criterion on a derived quantity meets the quantity's definition first
    if any(v.criterion.of for v in d.numbers.verdicts):
        assert keys.index("derived") < at


def test_the_discharge_sheet_defines_its_power_and_energy_before_the_criteria_use_them():
    """The demo where two criteria (the peak power and the energy of one discharge) are answered from the
    derived quantities: in the text record, their step and its numbers come before the criteria's step, and
    the lead-in of the criteria step names the steps by the numbers the headings carry."""
    from calcsheet.writers.text_record import write

    sheet = shared_builds.sheet("discharge-resistor-rating")
    record = write(sheet)
    lines = record.splitlines()
    heading = {line.split(". ", 1)[1].rstrip(" ="): line for line in lines if line.startswith("== STEP ")}
    order = list(heading)
    assert (
        order.index("Derived quantities")
        < order.index("Acceptance criteria")
        < order.index("Sensitivity and tolerances")
    )
    criteria_step = lines.index(heading["Acceptance criteria"])
    assert record.index("P_R = v^2/R") < record.index("max(P_R) <= 400 W")
    number = {title: line.split()[2].rstrip(".") for title, line in heading.items()}
    lead = lines[criteria_step + 1]
    assert f"step {number['Numbers']} (Numbers)" in lead and f"step {number['Derived quantities']} (" in lead
    assert all("Acceptance criteria:" not in line for line in lines[:criteria_step])
