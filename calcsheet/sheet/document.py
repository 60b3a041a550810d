"""Sheet nodes. Writers only read these; they never solve, simplify or choose wording."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Union

from calcsheet.model import Revision


@dataclass(frozen=True)
class Math:
    """Inline or display mathematics: LaTeX for typesetting, a plain form for the text record."""

    latex: str
    text: str


Cell = Union[str, Math]


@dataclass(frozen=True)
class Paragraph:
    text: str


@dataclass(frozen=True)
class Equation:
    """A displayed equation, optionally with a short label such as 'standard form'."""

    math: Math
    label: str = ""


@dataclass(frozen=True)
class Table:
    header: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    caption: str = ""
    # per-row status used for pass/fail styling ("", "pass" or "fail"), shown on status_column
    row_status: tuple[str, ...] = ()
    status_column: int = -1
    # what the rows list ("parameters", "values", "criteria"...; "" for other tables), so that a comparison
    # with an earlier sheet finds the row of a changed item; writers do not show it
    key: str = ""
    # per row, True where it changed since the sheet this one is compared with (build --changes-since):
    # writers show a revision mark, a bar in the margin
    changed: tuple[bool, ...] = ()


@dataclass(frozen=True)
class Note:
    """A highlighted remark; ``kind`` is 'caution', 'warning' or 'method'."""

    kind: str
    text: str


@dataclass(frozen=True)
class ItemList:
    items: tuple[str, ...]


@dataclass(frozen=True)
class Guide:
    """A horizontal or vertical reference line on a plot: a level or a limit, with its verdict."""

    value: float
    label: str
    status: str = ""  # "", "pass" or "fail"


@dataclass(frozen=True)
class Figure:
    """The response plot, all numbers already in the units the engineer declared."""

    title: str
    x_label: str
    y_label: str
    curve: tuple[tuple[float, float], ...]  # the derived solution
    independent: tuple[tuple[float, float], ...]  # the independent numerical integration
    points: tuple[tuple[float, float, str], ...]  # evaluation points (x, y, label)
    levels: tuple[Guide, ...] = ()  # horizontal: reach levels and limits on the unknown
    limits: tuple[Guide, ...] = ()  # vertical: limits on the variable
    caption: str = ""
    extremes: tuple[tuple[float, float, str], ...] = ()  # extremes found (x, y, label), marked apart from points
    point_limits: tuple["PointLimit", ...] = ()  # a limit on the unknown at one point, drawn there, not across
    switches: tuple[tuple[float, str], ...] = ()  # switch instants (x, what happens)
    crossings: tuple[tuple[float, float, str], ...] = ()  # where a level is first reached (x, y, label)
    legend: "Legend | None" = None  # the words of the legend (compose's), None: no legend entries
    nonlinear: tuple[tuple[float, float], ...] = ()  # a linearised model's non-linear response, integrated on its own
    forcing: tuple[tuple[float, float], ...] = ()  # the forcing as a value of the unknown (r/p), a thin curve
    forcing_label: str = ""  # its legend entry


@dataclass(frozen=True)
class Legend:
    """The legend's words for each kind of mark; the writer draws, the sheet words."""

    curve: str
    independent: str
    points: str
    largest: str  # an extreme that is a largest value
    smallest: str
    nonlinear: str = ""  # the non-linear model's curve beside a linearised one


@dataclass(frozen=True)
class PointLimit:
    """A criterion on the value at one point (v(60 s) <= 50 V): a mark at (x, value), with its verdict and
    the side that is allowed ("below" or "above")."""

    x: float
    value: float
    label: str
    status: str = ""
    allowed: str = "below"


Block = Union[Paragraph, Equation, Table, Note, ItemList, Figure]


@dataclass(frozen=True)
class Section:
    """A numbered step or an unnumbered part of the sheet (number 0)."""

    key: str
    title: str
    blocks: tuple[Block, ...]
    number: int = 0


@dataclass(frozen=True)
class Field:
    """One entry of the title block: the word shown for it and its value ("" when not given)."""

    label: str
    value: str = ""


@dataclass(frozen=True)
class TitleBlock:
    """The sheet's identity, by name, so a writer never finds an entry by searching its label."""

    title: str
    number: Field
    revision: Field
    project: Field
    originator: Field
    status: Field = Field("")  # the issue status ([sheet] status)

    @property
    def given(self) -> tuple[Field, ...]:
        """The entries the input gave, in the order the sheet shows them."""
        return tuple(f for f in (self.number, self.revision, self.status, self.project, self.originator) if f.value)


@dataclass(frozen=True)
class Labels:
    """Every word a writer shows around the content, so that only compose chooses wording.

    Writers may change the case of a label (the text record shouts its headings) but never its
    words. ``figure_summary`` is a str.format template over the figure's counts and range.
    """

    sheet: str  # before the title in the text record
    outcome: str
    step: str  # before a step's number
    revisions: str
    revision_columns: tuple[str, str, str]  # revision, date, description
    signoff: str
    signoff_columns: tuple[str, str, str, str]  # role, name, date, signature
    cautions: str
    notes: tuple[tuple[str, str], ...]  # Note.kind -> the word shown before a note
    figure: str
    figure_summary: str
    page: str  # running head: "<page> 3 <of> 7"
    of: str
    footer: str  # foot of every printed page
    signoff_state: str  # the sign-off column saying current, stale or unsigned
    fingerprint: str  # before the content fingerprint (title block, record, page foot)

    def note(self, kind: str) -> str:
        """The word for a note of this kind; an unknown kind is a composing error, not a blank."""
        words = dict(self.notes)
        if kind not in words:
            raise KeyError(f"no label for a note of kind {kind!r}")
        return words[kind]


@dataclass(frozen=True)
class Outcome:
    """The one-line answer a reviewer reads first."""

    passed: bool
    text: str
    lines: tuple[str, ...] = ()


@dataclass(frozen=True)
class SignOffLine:
    """One role of the sign-off block: who signed, when, and whether the signature still holds.

    ``state`` is the key a writer styles by ("current", "stale", "unsigned"; "" before the review state
    is known); ``state_text`` and ``reason`` are compose's words for it.
    """

    role: str
    name: str = ""
    date: str = ""
    state: str = ""
    state_text: str = ""
    reason: str = ""


@dataclass(frozen=True)
class Review:
    """The content fingerprint and what the sign-offs say about it (calcsheet/review/seal.py)."""

    fingerprint: str = ""  # SHA-256 of the canonical record, 64 hex digits; "" until sealed
    shown: str = ""  # the first 12 digits, printed on the pages and in the title block
    stale: bool = False  # a signed role no longer matches the content
    mark: str = ""  # words across every printed page while a sign-off is stale
    problem: str = ""  # why this sheet may not go out as it stands (an issued sheet without current sign-offs)


@dataclass(frozen=True)
class Sheet:
    title_block: TitleBlock
    labels: Labels
    outcome: Outcome
    sections: tuple[Section, ...]
    cautions: tuple[str, ...]
    signoff: tuple[SignOffLine, ...] = ()
    revisions: tuple[Revision, ...] = ()
    review: Review = Review()
    metadata: tuple[tuple[str, str], ...] = ()  # document properties: title, author, subject, date
    record: dict = field(default_factory=dict)  # structured results for the JSON record
    source_name: str = ""
    style: str = ""  # house style folder named by the input, already resolved to a path
    # names on the sheet printed otherwise than written (T_inf, rho): the writers set them so in prose and cells
    symbols: tuple[str, ...] = ()
