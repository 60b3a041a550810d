"""The criterion subjects are one table read by every stage (a property of our own code; no outside source)."""

from __future__ import annotations

from calcsheet.derive.numbers import QUANTITIES
from calcsheet.load.loader import RESERVED
from calcsheet.subjects import (
    CONDITION_SUBJECT,
    INTEGRAL,
    SUBJECTS,
    UNKNOWN,
    VARIABLE,
    WINDOW,
    spellings,
    written_subject,
)


def test_every_subject_has_a_quantity_to_compute():
    assert set(QUANTITIES) == set(SUBJECTS)


def test_every_subject_says_what_its_numbers_are_measured_like():
    for subject in SUBJECTS.values():
        assert subject.argument in (None, UNKNOWN, VARIABLE, WINDOW)
        assert subject.found in (UNKNOWN, VARIABLE, INTEGRAL)
        assert subject.guide in ("level", "limit_x", "")
        assert (subject.guide == "level") == (subject.found == UNKNOWN)
        assert (subject.guide == "") == (subject.found == INTEGRAL)  # an integral is no point on the curve


def test_a_check_names_its_subject_by_the_unknown_or_a_word():
    assert written_subject("v", "v").name == "value"
    assert written_subject("reach", "v").name == "reach"
    assert written_subject("tau", "v") is None
    assert written_subject("P_R", "v", frozenset({"P_R"})).name == "value"
    assert spellings("v") == "v(...), reach(...), time_constant, final_value, max(...), min(...) or integral(...)"


def test_a_condition_over_a_window_is_the_extreme_that_decides_it():
    assert set(CONDITION_SUBJECT.values()) <= {s.name for s in SUBJECTS.values() if s.argument == WINDOW}


def test_subject_words_cannot_be_parameter_names():
    assert {"reach", "time_constant", "final_value", "max", "min", "integral"} <= RESERVED
