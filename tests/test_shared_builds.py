"""The shared builds (tests/shared_builds.py) that the slow tests take their sheets from: one build per name and
process, the same sheet as a build of the same input, and a name that is neither a demo nor a kind refused."""

from __future__ import annotations

import pytest

from calcsheet.pipeline import build_sheet, render
from tests import shared_builds


def test_a_name_is_built_once_and_matches_a_build_of_its_own():
    first = shared_builds.built("series_rl")
    assert shared_builds.built("series_rl") is first
    own = build_sheet(shared_builds.input_path("series_rl")).sheet
    assert own.record == first.sheet.record
    assert shared_builds.rendered("series_rl", "txt") == render(own, ("txt",))["txt"]


def test_every_demo_and_starter_is_named_once():
    names = shared_builds.every_source()
    assert len(names) == len(set(names)) and set(shared_builds.STARTERS) <= set(names)
    assert all(shared_builds.input_path(name).is_file() for name in names)


def test_an_unknown_name_is_refused():
    with pytest.raises(KeyError):
        shared_builds.input_path("no-such-sheet")
