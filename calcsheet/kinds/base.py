"""What a kind is made of, and how an input that names one becomes an ordinary equation."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

from calcsheet.errors import InputError
from calcsheet.source import units


INFO, WARNING, INVALID = "info", "warning", "invalid"
SEVERITIES = (INFO, WARNING, INVALID)
_WORDED = "WARNING: "  # how a warning or an invalid verdict reads when a note is shown as one string


class Note(str):
    """One finding of a kind's checks: what it says, how serious it is, and a stable code.

    ``severity`` is ``info`` (a derived fact worth showing), ``warning`` (the engineer should
    look, but the model still describes the case) or ``invalid`` (the model does not hold for
    this case: no criterion can pass). The string value is the worded note, with "WARNING: "
    before a warning or an invalid finding, so a note still reads as the text it always was.
    """

    severity: str
    code: str
    text: str

    def __new__(cls, text: str, severity: str = INFO, code: str = ""):
        if severity not in SEVERITIES:
            raise ValueError(f"unknown severity {severity!r}")
        worded = text if severity == INFO else _WORDED + text
        note = super().__new__(cls, worded)
        note.severity, note.code, note.text = severity, code, text
        return note

    @classmethod
    def of(cls, item) -> "Note":
        """A Note as it is, or a worded string read the old way ("WARNING: " marks a warning)."""
        if isinstance(item, Note):
            return item
        text = str(item)
        if text.startswith(_WORDED):
            return cls(text[len(_WORDED):], WARNING)
        return cls(text, INFO)


def invalid(text: str, code: str) -> Note:
    """The model does not hold for this case (a Biot number too large, a negative mass)."""
    return Note(text, INVALID, code)


def warning(text: str, code: str = "") -> Note:
    return Note(text, WARNING, code)


def info(text: str, code: str = "") -> Note:
    return Note(text, INFO, code)


START_SLOT = "t_V"  # the start of a shifted law's clock: the initial point or the switch instant


@dataclass(frozen=True)
class Slot:
    """A named quantity of a kind: its symbol, a unit showing its dimension, what it means."""

    name: str
    unit: str
    meaning: str
    example: str = ""
    default: str | None = None  # an optional slot takes this value when the input leaves it out


@dataclass(frozen=True)
class Kind:
    name: str
    title: str
    summary: str
    law: str  # the physical law, named as the trade names it
    unknown: Slot
    variable: Slot
    slots: tuple[Slot, ...]
    equation: str  # in the input notation, using the slot names
    law_steps: tuple[tuple[str, str], ...]  # (LaTeX, plain text): from the law to the equation
    assumptions: tuple[str, ...]
    source: str = ""  # the slot a [forcing] table may replace by a function of the variable
    # the kind's checks on the SI values: Notes (worded strings are read by Note.of as before)
    checks: Callable[[dict[str, float]], tuple[Note | str, ...]] = field(default=lambda values: ())
    # where the model stops holding, as (variable value in SI, what happens), e.g. a tank overflowing
    limit: Callable[[dict[str, float]], tuple[float, str] | None] = field(default=lambda values: None)
    starter: str = ""  # the rest of a starter input for `calcsheet new` ([sheet], values, requests)
    # A law whose own clock starts with the interval (a tank's volume law): the equation with the
    # variable measured from START_SLOT, used when an interval does not start at 0.
    shifted_equation: str = ""
    # States the law carries besides the unknown, at the end of an interval: SI values of the slots
    # the next interval starts from (a tank's V_0 becomes the volume reached at the switch).
    carry: Callable[[dict[str, float], float], dict[str, float]] = field(default=lambda values, at: {})

    def slot(self, name: str) -> Slot:
        return next(s for s in self.slots if s.name == name)


@dataclass(frozen=True)
class KindUse:
    """What the sheet says about the kind an input used."""

    name: str
    title: str
    law: str
    law_steps: tuple[tuple[str, str], ...]
    assumptions: tuple[str, ...]
    notes: tuple[Note, ...] = ()  # the kind's checks, each a Note (see Note.of for worded strings)
    forcing: str = ""  # the forcing form in words, if a [forcing] table was given
    frequency: str = ""  # the parameter holding a sinusoidal forcing's frequency
    slot_names: tuple[str, ...] = ()  # the kind's own parameters (some serve only its checks)
    limit: tuple[float, str] | None = None  # where the model stops holding (SI), and why

    @property
    def not_valid(self) -> tuple[Note, ...]:
        """The findings that say the model does not hold for this case."""
        return tuple(n for n in map(Note.of, self.notes) if n.severity == INVALID)


def check_slot_dimension(kind: Kind, slot: Slot, quantity, where: str) -> None:
    """A slot with an empty unit takes any dimension (a gain between two chosen units, say);
    the equation's own unit check still applies to it."""
    if not slot.unit:
        return
    expected = units.parse_unit(slot.unit)
    if not units.same_dimension(quantity.units, expected):
        raise InputError(
            f"kind {kind.name} expects {slot.name} ({slot.meaning}) with the dimension of {slot.unit} "
            f"({units.dimension_text(expected)}), got {units.dimension_text(quantity.units)}", where)
