"""The malformed-input campaign prints how its inputs ended, so a CI log shows what it covered."""

from __future__ import annotations

from collections import Counter

import pytest

OUTCOMES: dict[str, Counter] = {}


@pytest.fixture
def outcomes():
    def record(campaign: str, outcome: str) -> None:
        OUTCOMES.setdefault(campaign, Counter())[outcome] += 1

    return record


def pytest_terminal_summary(terminalreporter):
    for campaign, counts in sorted(OUTCOMES.items()):
        summary = ", ".join(f"{outcome}: {count}" for outcome, count in sorted(counts.items()))
        terminalreporter.write_line(f"malformed-input campaign, {campaign}: {sum(counts.values())} inputs ({summary})")
