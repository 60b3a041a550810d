"""Budgets guard against hangs and never choose the form of a shipped sheet.

Every demo is derived with each symbolic budget divided by four, as a machine four times slower would
see it, and must give the same text and JSON records as with the full budgets, with no step taking a
fallback because time ran out. (A property of our own budgets; no outside source.)
"""

from __future__ import annotations

from pathlib import Path

import pytest

from calcsheet.derive import budget
from calcsheet.pipeline import build_sheet, render
from tests.end_to_end.demo_verdicts import DEMOS as DEMO_SHEETS

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS


def _records(path: Path) -> dict:
    built = build_sheet(path)
    derivations = getattr(built.derivation, "intervals", None)
    solutions = [i.derivation.solution for i in derivations] if derivations else [built.derivation.solution]
    assert all(budget.BUDGET_EXCEEDED not in s.fallback_codes for s in solutions)
    return render(built.sheet, ("txt", "json"))


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_a_machine_four_times_slower_gives_the_same_records(path, monkeypatch):
    full = _records(path)
    monkeypatch.setattr(budget, "SCALE", 0.25)
    assert _records(path) == full
