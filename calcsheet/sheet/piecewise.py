"""Compose a switched model: each interval's steps in turn, then the results across the switches."""

from __future__ import annotations

from dataclasses import replace

from calcsheet.sheet import cautions
from calcsheet.sheet.compose import (
    checks_table,
    compose,
    criteria_table,
    extremes_blocks,
    reach_table,
    values_table,
    _outcome,
)
from calcsheet.sheet.derived_words import switched_derived_blocks
from calcsheet.sheet.document import Paragraph, Section, Sheet, Table
from calcsheet.sheet.figure import response_figure
from calcsheet.sheet.hand_checks import reach_blocks
from calcsheet.sheet.margin_words import has_margin, margin_section
from calcsheet.sheet.printed_symbols import printed_symbols
from calcsheet.sheet.quantities import in_units
from calcsheet.sheet.record import build_switched_record


def compose_piecewise(pd) -> Sheet:
    """The sheet of a SwitchedDerivation (derive/piecewise.py)."""
    parts = [compose(interval.derivation) for interval in pd.intervals]
    first = parts[0]
    sections = [
        Section("response", "Response at a glance", (response_figure(pd),)),
        next(s for s in first.sections if s.key == "basis"),
        _switch_list(pd),
    ]
    for k, part in enumerate(parts, start=1):
        sections += [
            Section(f"i{k}_{s.key}", f"Interval {k}, step {s.number}: {s.title}", s.blocks)
            for s in part.sections
            if s.number
        ]
    sections.append(_across(pd))
    if has_margin(pd):
        sections.append(margin_section(pd, "across_margin", "Sensitivity and tolerances across the switches"))
    record = build_switched_record(pd, [part.record for part in parts])
    notes = cautions.hazard_notes(
        pd.model, tuple(y for _, y in pd.curve), cautions.coil_voltage_steps(pd), pd.numbers, pd.derived_at_switches
    )
    symbols = tuple(sorted({name for part in parts for name in part.symbols}))
    return replace(
        first,
        outcome=_outcome(pd),
        sections=tuple(sections),
        record=record,
        cautions=(cautions.GENERAL,) + notes,
        symbols=tuple(sorted(set(symbols) | set(printed_symbols(pd.model, tuple(sections))))),
    )


def _switch_list(pd) -> Section:
    m = pd.model
    rows = []
    for k, interval in enumerate(pd.intervals, start=1):
        end = in_units(interval.end, m.variable) if interval.end is not None else "end"
        start_value = interval.derivation.model.initial_value
        rows.append(
            (
                str(k),
                f"{in_units(interval.start, m.variable)} to {end}",
                interval.text,
                in_units(start_value.si, m.unknown),
                "; ".join(f"{name} at the switch = {value}" for name, value in interval.carried) or "-",
            )
        )
    return Section(
        "switches",
        "Intervals and switches",
        (
            Paragraph(
                f"The model changes at each switch. Every interval is derived on its own below; its initial value "
                f"is the value the previous interval reaches at the switch, since {m.unknown.name} cannot jump. "
                "Parameters set at a switch stay in force until a later switch changes them, and any other state "
                "the law carries (a tank's volume) starts from the value reached at the switch."
            ),
            Table(
                (
                    "Interval",
                    f"{m.variable.name}",
                    "At its start",
                    f"{m.unknown.name} at its start",
                    "Other states carried over",
                ),
                tuple(rows),
            ),
        ),
    )


def _across(pd) -> Section:
    m, num = pd.model, pd.numbers
    blocks = []
    if num.values:
        blocks.append(values_table(m, num.values))
    if num.reach:
        blocks.append(reach_table(m, num.reach))
    blocks += reach_blocks(pd, switched=True)
    own = tuple(e for e in num.extremes if not e.of)  # a derived quantity's are with its values below
    if own:
        blocks += extremes_blocks(m, own)
    if m.derived:
        blocks += switched_derived_blocks(pd)
    if num.verdicts:  # after every value a criterion is answered from, as on an ordinary sheet
        blocks.append(criteria_table(m, num.verdicts))
    blocks.append(checks_table(pd.verification.checks, "Verification across the switches"))
    return Section("across", "Results across the switches", tuple(blocks))
