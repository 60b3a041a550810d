"""What a kind is made of, and how an input that names one becomes an ordinary equation."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

from calcsheet.errors import InputError


INFO, WARNING, INVALID = "info", "warning", "invalid"
SEVERITIES = (INFO, WARNING, INVALID)


@dataclass(frozen=True)
class Note:
    """One finding of a kind's checks, as a fact: how serious it is, a stable code and its numbers.

    ``severity`` is ``info`` (a derived fact worth showing), ``warning`` (the engineer should
    look, but the model still describes the case) or ``invalid`` (the model does not hold for
    this case: no criterion can pass). ``data`` holds the finding's numbers in SI as (name, value)
    pairs; the words are the kind's template for ``code`` (``Kind.findings``), filled in by
    ``sheet/compose.py``, so a kind never formats a number.
    """

    severity: str
    code: str
    data: tuple[tuple[str, float], ...] = ()

    def __post_init__(self):
        if self.severity not in SEVERITIES:
            raise ValueError(f"unknown severity {self.severity!r}")

    @property
    def values(self) -> dict[str, float]:
        return dict(self.data)


def _note(severity: str, code: str, data: dict[str, float]) -> Note:
    return Note(severity, code, tuple((name, float(value)) for name, value in data.items()))


def invalid(code: str, **data: float) -> Note:
    """The model does not hold for this case (a Biot number too large, a negative mass)."""
    return _note(INVALID, code, data)


def warning(code: str, **data: float) -> Note:
    return _note(WARNING, code, data)


def info(code: str, **data: float) -> Note:
    return _note(INFO, code, data)


def positive(values: dict[str, float], name: str, code_prefix: str, zero_allowed: bool = False) -> tuple[Note, ...]:
    """The sign check the trade makes first on a physical constant (a mass, a resistance, a friction).

    A negative value makes the model not valid (code ``<prefix>.<name>_negative``); zero gives a
    warning (``<prefix>.<name>_zero``) where the kind can still be solved with it, as a coil with no
    resistance, and nothing where zero is refused elsewhere. A slot a [forcing] form replaced is skipped.
    """
    value = values.get(name)
    if value is None:
        return ()
    if value < 0:
        return (invalid(f"{code_prefix}.{name}_negative", **{name: value}),)
    if value == 0 and zero_allowed:
        return (warning(f"{code_prefix}.{name}_zero"),)
    return ()


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
class Offer:
    """A quantity a kind derives from its response, taken by name (``[[derived]] name = "P_R"``, or named in a
    criterion): its expression in the kind's slot names, the unknown and its derivative, and its unit."""

    name: str
    expression: str
    unit: str
    text: str


@dataclass(frozen=True)
class Starter:
    """A kind's own parts of a starter input; `kinds/catalogue.py` writes the [sheet] header from them and
    adds [model], [parameters] with the slots' examples and [initial]."""

    title: str
    number: str
    purpose: str
    requests: str  # [evaluate] and [[criteria]] as TOML; a test builds the starter and requires them to pass


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
    # the kind's checks on the SI values, each finding a Note whose code has a template in `findings`
    checks: Callable[[dict[str, float]], tuple[Note, ...]] = field(default=lambda values: ())
    # code -> the words of the finding, with {name} fields for the Note's data (see sheet/compose.py
    # for the format specs: none for a number, "duration" for a time in s, a digit for significant figures)
    findings: dict[str, str] = field(default_factory=dict)
    # where the model stops holding, as (variable value in SI, a code), e.g. a tank overflowing; the code's words
    # are the findings template "limit.<code>"
    limit: Callable[[dict[str, float]], tuple[float, str] | None] = field(default=lambda values: None)
    starter: Starter | None = None  # what `calcsheet new` writes for this kind (see catalogue.py)
    # A law whose own clock starts with the interval (a tank's volume law): the equation with the
    # variable measured from START_SLOT, used when an interval does not start at 0.
    shifted_equation: str = ""
    # States the law carries besides the unknown, at the end of an interval: SI values of the slots
    # the next interval starts from (a tank's V_0 becomes the volume reached at the switch).
    carry: Callable[[dict[str, float], float], dict[str, float]] = field(default=lambda values, at: {})
    # the law steps written with the shifted clock, ending in `shifted_equation`
    shifted_law_steps: tuple[tuple[str, str], ...] = ()
    # the quantities the trade usually derives from this response (a resistor's power, a stored energy)
    offers: tuple[Offer, ...] = ()

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
    notes: tuple[Note, ...] = ()  # the kind's findings, as facts
    findings: tuple[tuple[str, str], ...] = ()  # code -> template, the kind's words for its notes
    forcing: str = ""  # the forcing form in words, if a [forcing] table was given
    frequency: str = ""  # the parameter holding a sinusoidal forcing's frequency
    slot_names: tuple[str, ...] = ()  # the kind's own parameters (some serve only its checks)
    limit: tuple[float, str] | None = None  # where the model stops holding (SI), and why: a code whose words are
    # the template "limit.<code>" in findings

    @property
    def not_valid(self) -> tuple[Note, ...]:
        """The findings that say the model does not hold for this case."""
        return tuple(n for n in self.notes if n.severity == INVALID)


def check_slot_dimension(kind: Kind, slot: Slot, quantity, where: str) -> None:
    """A slot with an empty unit takes any dimension (a gain between two chosen units, say);
    the equation's own unit check still applies to it. pint is imported here, not with the module, so the
    kinds can be listed (the catalogue, the schema) without loading it."""
    if not slot.unit:
        return
    from calcsheet.source import units

    expected = units.parse_unit(slot.unit)
    if not units.same_dimension(quantity.units, expected):
        raise InputError(
            f"kind {kind.name} expects {slot.name} ({slot.meaning}) with the dimension of {slot.unit} "
            f"({units.dimension_text(expected)}), got {units.dimension_text(quantity.units)}",
            where,
        )
