"""What an acceptance criterion can be about: one entry per subject, read by every stage.

The loader parses a check against this table, derive computes the quantity named here
(``derive/numbers.py::QUANTITIES`` has one function per entry), and compose, the figure and the
record take from it what the found value and the limit are measured like. A new subject (an
extreme, a window, a derived quantity) is one entry here and one function there.
"""

from __future__ import annotations

from dataclasses import dataclass

UNKNOWN, VARIABLE = "unknown", "variable"  # what a number is measured like: the unknown or the variable
# What an integral over the variable is measured like: its quantity times the variable (a power over time: energy)
INTEGRAL = "integral"
# An argument that is the unknown's name (or a derived quantity's), optionally followed by a window on the variable:
# max(T) or max(P_R, 0 s, 60 s). "UNKNOWN" below then means that quantity, not only the unknown.
WINDOW = "window"


@dataclass(frozen=True)
class Subject:
    name: str  # the code in the model and the record
    written: str  # how a check writes it; "" for the unknown's own name, as in v(60 s)
    argument: str | None  # what its argument is measured like (UNKNOWN, VARIABLE or WINDOW), None: it takes none
    found: str  # what the found quantity, and so the limit, is measured like
    guide: str  # the plot's guide: "level" (horizontal, on the unknown), "limit_x" (vertical) or "" (none)
    absent_is_never: bool = False  # a quantity that does not exist counts as never happening (a level not reached)
    depends_on_whole_response: bool = False  # needs the response as the variable grows without bound
    needs_window: bool = False  # a WINDOW argument whose two ends must be written: integral(P_R, 0 s, 60 s)
    derived_only: bool = False  # about a [[derived]] quantity only, not the unknown


SUBJECTS: dict[str, Subject] = {
    s.name: s
    for s in (
        Subject("value", "", VARIABLE, UNKNOWN, "level"),
        Subject("reach", "reach", UNKNOWN, VARIABLE, "limit_x", absent_is_never=True),
        Subject("time_constant", "time_constant", None, VARIABLE, "limit_x"),
        Subject("final_value", "final_value", None, UNKNOWN, "level", depends_on_whole_response=True),
        Subject("max", "max", WINDOW, UNKNOWN, "level"),
        Subject("min", "min", WINDOW, UNKNOWN, "level"),
        Subject("integral", "integral", WINDOW, INTEGRAL, "", needs_window=True, derived_only=True),
    )
}
# A condition over a window, "T <= 90 degC for t in 0 s .. 10 min", is the extreme that decides it: the largest
# value for an upper limit, the smallest for a lower one.
CONDITION_SUBJECT = {"<=": "max", "<": "max", ">=": "min", ">": "min"}


def written_subject(written: str, unknown_name: str, derived: frozenset[str] = frozenset()) -> Subject | None:
    """The subject a check's leading word names: the unknown's own name, or a derived quantity's, is its value
    at a point."""
    if written == unknown_name or written in derived:
        return SUBJECTS["value"]
    return next((s for s in SUBJECTS.values() if s.written and s.written == written), None)


def spellings(unknown_name: str) -> str:
    """The subjects as a check writes them, for messages: 'v(...), reach(...), time_constant, ... or min(...)'."""
    words = [f"{s.written or unknown_name}{'(...)' if s.argument else ''}" for s in SUBJECTS.values()]
    return ", ".join(words[:-1]) + " or " + words[-1]


def reserved_words() -> set[str]:
    """Subject words a parameter may not be named."""
    return {s.written for s in SUBJECTS.values() if s.written}
