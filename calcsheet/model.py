"""The validated Model: what the engineer stated, checked, with units and sympy symbols.

A Model is built once by ``calcsheet.load.loader`` and never changed afterwards. Everything
numeric in it is also held in SI base units (``si``), the only units the mathematics sees.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from calcsheet.source.pint_import import pint
import sympy as sp

from calcsheet.formatting import number
from calcsheet.kinds.base import KindUse
from calcsheet.source import expressions as ex
from calcsheet.source.dimensions import EquationUnits


@dataclass(frozen=True)
class SignOff:
    """One line of the sign-off block; empty name and date are left to fill by hand."""

    role: str
    name: str = ""
    date: str = ""
    fingerprint: str = ""  # the content fingerprint it was signed for (``calcsheet sign``); "" when written by hand


@dataclass(frozen=True)
class Revision:
    revision: str
    date: str
    description: str


@dataclass(frozen=True)
class SheetInfo:
    """The title block and the document parts: ``[sheet]``, ``[signoff]``, ``[[revisions]]``."""

    title: str
    number: str = ""
    revision: str = ""
    project: str = ""
    originator: str = ""
    purpose: str = ""
    references: tuple[str, ...] = ()
    assumptions: tuple[str, ...] = ()
    date: str = ""  # ISO date of this issue of the sheet, if stated
    style: str = ""  # house style folder, relative to the input file
    status: str = ""  # issue status: preliminary, for check, issued or superseded ("" when not stated)
    signoff: tuple[SignOff, ...] = ()
    revisions: tuple[Revision, ...] = ()


@dataclass(frozen=True)
class Declared:
    """The unknown or the independent variable: a name, the unit to report in, a symbol.

    ``shown`` converts an SI value to the declared unit (a scale and, for degC and degF, an offset) and
    ``is_time`` says whether the unit is a time; the loader, which owns pint, sets them, so the stages
    after it need no unit registry.
    """

    name: str
    unit: pint.Unit
    unit_text: str
    symbol: sp.Symbol
    scale: float = 1.0  # declared units per SI unit
    offset: float = 0.0  # the declared value of SI zero (-273.15 for degC)
    is_time: bool = False

    def shown(self, si: float) -> float:
        return si * self.scale + self.offset

    def text_of(self, si: float | None) -> str:
        """An SI value in the declared unit, e.g. '196.6 degC'."""
        return "n/a" if si is None else f"{number(self.shown(si))} {self.unit_text}".rstrip()


@dataclass(frozen=True)
class Parameter:
    name: str
    text: str  # the value as written, e.g. "47 kohm"
    quantity: pint.Quantity
    si: float
    si_unit: pint.Unit
    symbol: sp.Symbol
    source: str = ""
    note: str = ""
    # The range the input allows (``tolerance`` or ``min``/``max``), in SI; None when none is stated.
    low: float | None = None
    high: float | None = None
    spread: str = ""  # the range as written: "5 %", "min 12 W/(m^2*K), max 25 W/(m^2*K)"
    unit_text: str = ""  # the unit the value is written in, for showing the range
    scale: float = 1.0  # written units per SI unit
    offset: float = 0.0  # the written value of SI zero (-273.15 for degC)
    # A value written as an expression ("R*C", "T_amb + 8.8 K"): as written, and its tree; ``text`` is then
    # the value it comes to, and the value is worked out again whenever a parameter it uses changes.
    expression: str = ""
    node: ex.Node | None = None

    @property
    def toleranced(self) -> bool:
        """Whether the input gives this parameter a range of more than one value."""
        return self.low is not None and self.high is not None and self.high > self.low

    def shown(self, si: float) -> float:
        """An SI value in the unit the parameter is written in."""
        return si * self.scale + self.offset


@dataclass(frozen=True)
class Override:
    """A parameter replaced on the command line (``--set``) for a what-if run."""

    name: str
    text: str  # the new value as written
    was: str  # the input's value as written ("" when the input left it to the kind's default)


@dataclass(frozen=True)
class Point:
    """A quantity from the input (an abscissa or a level), as written and in SI."""

    text: str
    quantity: pint.Quantity | None  # None for a point derive makes (an interval's start value): SI only
    si: float

    @classmethod
    def derived(cls, si: float, declared: "Declared", note: str = "") -> "Point":
        """A point found by the calculation, not written in the input: shown in the declared unit."""
        return cls(f"{declared.shown(si):.6g} {declared.unit_text}" + (f" ({note})" if note else ""), None, si)


@dataclass(frozen=True)
class Window:
    """A stretch of the variable an extreme is taken over: from ``start`` to ``end``.

    ``start`` None: from the initial point; ``end`` None: to the end of the analysed range. ``open_ended``:
    written "for t >= a" (or "from a"), a claim about every later point, which the tail of the response decides.
    """

    start: Point | None = None
    end: Point | None = None
    open_ended: bool = False


@dataclass(frozen=True)
class ExtremeRequest:
    """``[evaluate] extremes``: the largest ("max") or smallest ("min") value of the unknown over a window."""

    kind: str
    window: Window
    text: str  # as written, e.g. "max 0 s .. 60 s"


@dataclass(frozen=True)
class Criterion:
    """An acceptance check such as ``v(60 s) <= 50 V`` or ``reach(50 V) <= 60 s``.

    ``subject`` is one of ``value`` (the unknown at ``argument``), ``reach`` (where the unknown
    first reaches ``argument``), ``time_constant`` or ``final_value`` (no argument), ``max`` or ``min``
    (the extreme of the unknown over ``window``; also written as a condition, "T <= 90 degC for t in a .. b").
    """

    text: str
    check: str
    subject: str
    argument: Point | None
    operator: str
    limit: Point
    window: Window | None = None  # for max, min and integral
    of: str = ""  # the [[derived]] quantity the subject is about; "" for the unknown itself
    source: str = ""  # where the limit comes from ("client specification §4.2")
    basis: str = ""  # or on what basis it is taken ("common practice")
    limit_expression: str = ""  # a limit written in terms of parameters ("T_amb + 8.8 K"), as written
    limit_node: ex.Node | None = None  # its tree; ``limit`` is then its value


@dataclass(frozen=True)
class DerivedQuantity:
    """A quantity computed from the response, ``[[derived]]`` or offered by a kind: P_R = v^2/R.

    ``expr`` is in the unknown's symbol, the derivative symbol (the Model's ``derivative``), the variable and
    the parameters' symbols; derive substitutes the response. ``declared`` holds its unit as for the unknown,
    ``integral`` the unit its integrals over the variable are shown in.
    """

    name: str
    text: str  # what it is, in words
    expression_text: str  # as written
    expression: ex.Node
    expr: sp.Expr
    declared: Declared
    integral: Declared
    offered_by: str = ""  # the kind that offers it, when the input took it by name


@dataclass(frozen=True)
class IntegralRequest:
    """``integral(P_R, 0 s, 60 s)``: a derived quantity integrated over a window of the variable."""

    of: str
    window: Window
    text: str  # as written


@dataclass(frozen=True)
class IntervalLaw:
    """The equation and parameters in force from a switch on: the part of a Model a switch can change.

    It holds no initial value: the value the unknown starts from is known only once the interval
    before has been derived, so the interval's Model is built then (``derive.piecewise``).
    """

    equation_text: str
    equation: ex.Equation
    lhs: sp.Expr
    rhs: sp.Expr
    parameters: tuple["Parameter", ...]
    kind: KindUse | None = None  # when the input named a model kind
    unused_parameters: tuple[str, ...] = ()
    units_check: EquationUnits | None = None  # what the unit check of the equation found, term by term

    def fields(self) -> dict:
        """The Model fields this law sets, by name (for dataclasses.replace)."""
        return {name: getattr(self, name) for name in self.__dataclass_fields__}


@dataclass(frozen=True)
class Switch:
    """From ``at`` on, ``law`` is in force; the unknown carries over the switch unchanged."""

    at: "Point"
    text: str
    law: IntervalLaw
    carried: tuple[tuple[str, str], ...] = ()  # states the kind's law carries over, as (name, value shown)


@dataclass(frozen=True)
class LineariseRequest:
    """``[linearise]``: linearise a non-linear equation about an operating point before it is solved.

    ``point`` is the stated operating point of the unknown; None asks for the steady state (the
    equation with the derivative set to zero, solved for the unknown). ``tolerance`` is the largest
    difference between the linearised and the non-linear response the sheet accepts, as a fraction.
    """

    about: str  # as written: "h = 1.2 m" or "steady state"
    point: Point | None
    tolerance: float
    tolerance_text: str
    tolerance_stated: bool  # False: the default, which the sheet states as such


@dataclass(frozen=True)
class Model:
    path: str
    sheet: SheetInfo
    equation_text: str
    equation: ex.Equation
    unknown: Declared
    variable: Declared
    derivative: sp.Symbol  # stands for d(unknown)/d(variable) in the sympy expressions
    lhs: sp.Expr
    rhs: sp.Expr
    parameters: tuple[Parameter, ...]
    initial_at: Point
    initial_value: Point
    evaluate_at: tuple[Point, ...] = ()
    reach: tuple[Point, ...] = ()
    extremes: tuple[ExtremeRequest, ...] = ()
    criteria: tuple[Criterion, ...] = ()
    derived: tuple[DerivedQuantity, ...] = ()  # [[derived]] and the kind's offers the input uses
    integrals: tuple[IntegralRequest, ...] = ()  # [evaluate] integrals
    plot_to: Point | None = None  # end of the plotted range, when the input sets it
    kind: KindUse | None = None  # when the input named a model kind
    switches: tuple[Switch, ...] = ()  # later intervals, in order
    unused_parameters: tuple[str, ...] = field(default=())
    overrides: tuple[Override, ...] = ()  # --set: a what-if, not the issued design
    linearise: LineariseRequest | None = None  # [linearise]: a non-linear equation, linearised before it is solved
    units_check: EquationUnits | None = None  # what the loader's unit check found, term by term (source/dimensions)

    @property
    def residual(self) -> sp.Expr:
        """lhs - rhs: the equation as F(x, y, y') = 0."""
        return self.lhs - self.rhs

    def quantity(self, name: str) -> Declared:
        """The unknown, or the derived quantity of that name: what a criterion's value is measured like."""
        if not name or name == self.unknown.name:
            return self.unknown
        return next(d.declared for d in self.derived if d.name == name)

    def derived_named(self, name: str) -> DerivedQuantity:
        return next(d for d in self.derived if d.name == name)

    def numeric_values(self) -> dict[sp.Symbol, float]:
        """Parameter symbols mapped to their SI values."""
        return {p.symbol: p.si for p in self.parameters}
