"""A sweep's words and layout: the table's columns and cells, the plots as data, the command's summary lines.

Every number is in the unit the engineer declared (quantities) or the unit the sweep's range is written in
(the parameter), written by the one number formatter at a fixed count of significant figures, so the same
input gives the same bytes. The writers (writers/sweep_csv.py, writers/sweep_plot.py) only draw these.
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.formatting import number
from calcsheet.subjects import SUBJECTS, UNKNOWN, VARIABLE

TABLE_SIGNIFICANT = 6  # significant figures in the table: enough to see a verdict change between points


@dataclass(frozen=True)
class SweepTable:
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]


@dataclass(frozen=True)
class Limit:
    """A criterion's limit on a panel's quantity, and where along the sweep its verdict changes."""

    value: float  # in the quantity's declared unit
    label: str
    changes: tuple[tuple[float, str], ...] = ()  # (parameter value, label) of each limiting value found


@dataclass(frozen=True)
class Panel:
    """One quantity against the parameter; ``statuses`` per point: the verdict of the criterion on it, if any."""

    y_label: str
    points: tuple[tuple[float, float | None], ...]
    statuses: tuple[str, ...]
    limits: tuple[Limit, ...] = ()


@dataclass(frozen=True)
class SweepPlot:
    title: str
    x_label: str
    log: bool
    panels: tuple[Panel, ...]
    legend: tuple[tuple[str, str], ...]  # (status, words) for the point markers
    absent: str = ""  # words for a point whose quantity does not exist, drawn on the panel's top edge


@dataclass(frozen=True)
class FamilyPlot:
    title: str
    x_label: str
    y_label: str
    curves: tuple[tuple[str, tuple[tuple[float, float], ...]], ...]  # (label, points), in declared units
    levels: tuple[tuple[float, str], ...]  # horizontal limits on the unknown (value, label)
    limits: tuple[tuple[float, str], ...]  # vertical limits on the variable
    point_limits: tuple[tuple[float, float, str], ...] = ()  # a limit on the unknown at one point (x, value, label)


STATUS_WORDS = (("pass", "criterion holds"), ("fail", "criterion fails"), ("not assessed", "not assessed"))
ABSENT_WORDS = "does not exist (never reached): on the top edge"


def sweep_table(sweep, model, vary) -> SweepTable:
    """One header row (names with units), one row per parameter value: the quantities, then each verdict."""
    header = [f"{sweep.parameter} [{vary.unit_text}]" if vary.unit_text else sweep.parameter]
    header += [_with_unit(quantity_name(q, model), _measured(q, model)) for q in sweep.quantities]
    header += [f"criterion {k}: {c.check}" for k, c in enumerate(model.criteria, 1)]
    rows = []
    for value, quantities, statuses in zip(sweep.values, sweep.table, sweep.statuses):
        row = [number(vary.shown(value), TABLE_SIGNIFICANT)]
        row += [_cell(v, _measured(q, model)) for v, q in zip(quantities, sweep.quantities)]
        row += list(statuses)
        rows.append(tuple(row))
    return SweepTable(tuple(header), tuple(rows))


def sweep_plot(sweep, model, vary) -> SweepPlot:
    xs = [vary.shown(v) for v in sweep.values]
    panels = []
    for q, quantity in enumerate(sweep.quantities):
        declared = _measured(quantity, model)
        on_it = [k for k, c in enumerate(model.criteria) if _same_quantity(c, quantity)]
        statuses = tuple(s[on_it[0]] if on_it else "" for s in sweep.statuses)
        limits = tuple(
            Limit(
                declared.shown(model.criteria[k].limit.si),
                f"limit {model.criteria[k].check}",
                tuple(
                    (vary.shown(f.value), f"{sweep.parameter} = {_parameter_text(f.value, vary)}")
                    for f in sweep.flips
                    if f.criterion == k and f.value is not None
                ),
            )
            for k in on_it
        )
        points = tuple((x, None if row[q] is None else declared.shown(row[q])) for x, row in zip(xs, sweep.table))
        panels.append(Panel(_with_unit(quantity_name(quantity, model), declared), points, statuses, limits))
    return SweepPlot(
        title=f"{model.sheet.title}: sweep of {sweep.parameter}",
        x_label=_axis(sweep.parameter, vary.unit_text),
        log=sweep.log,
        panels=tuple(panels),
        legend=STATUS_WORDS,
        absent=ABSENT_WORDS,
    )


def family_plot(sweep, model, vary) -> FamilyPlot:
    x_of, y_of = model.variable.shown, model.unknown.shown
    curves = tuple(
        (
            f"{sweep.parameter} = {_parameter_text(c.value, vary)}",
            tuple((x_of(x), y_of(y)) for x, y in c.points),
        )
        for c in sweep.family
    )
    levels, limits, point_limits = [], [], []
    for c in model.criteria:
        subject = SUBJECTS[c.subject]
        if subject.argument == VARIABLE:  # a limit at one point is drawn there, as on the sheet's plot
            point_limits.append((x_of(c.argument.si), y_of(c.limit.si), f"limit {c.check}"))
        elif subject.guide == "level":
            levels.append((y_of(c.limit.si), f"limit {c.check}"))
        else:
            limits.append((x_of(c.limit.si), f"limit {c.check}"))
    return FamilyPlot(
        title=f"{model.sheet.title}: responses for several values of {sweep.parameter}",
        x_label=_axis(model.variable.name, model.variable.unit_text),
        y_label=_axis(model.unknown.name, model.unknown.unit_text),
        curves=curves,
        levels=tuple(levels),
        limits=tuple(limits),
        point_limits=tuple(point_limits),
    )


def summary_lines(sweep, model, vary) -> list[str]:
    """What the command prints: the range swept, then per criterion where its verdict changes."""
    span = f"{vary.low_text} .. {vary.high_text}"
    lines = [
        f"sweep of {sweep.parameter} over {span}, {len(sweep.values)} points" + (" (log spacing)" if sweep.log else "")
    ]
    for k, c in enumerate(model.criteria):
        flips = [f for f in sweep.flips if f.criterion == k]
        column = [s[k] for s in sweep.statuses]
        if flips:
            said = "; ".join(_flip_words(f, vary, sweep.parameter) for f in flips)
        elif all(s == "pass" for s in column):
            said = "holds at every point"
        elif all(s == "fail" for s in column):
            said = "fails at every point"
        else:
            said = "no change between pass and fail"
        unassessed = sum(1 for s in column if s == "not assessed")
        if unassessed:
            said += f"; not assessed at {unassessed} of {len(column)} points (the model does not hold there)"
        lines.append(f'  criterion {k + 1} "{c.check}": {said}')
    refused = sum(1 for r in sweep.refusals if r)
    if refused:
        first = next(r for r in sweep.refusals if r)
        lines.append(f"  {refused} points could not be evaluated (first: {first})")
    return lines


def quantity_name(c, model) -> str:
    """A quantity as a check writes it, from the facts: v(60 s), reach(50 V), max(T, 0 s, 60 s), time_constant."""
    name = model.unknown.name
    if c.subject in ("max", "min"):
        window = c.window
        if window is None or window.start is None:
            return f"{c.subject}({name})"
        if window.end is None:
            return f"{c.subject}({name}, from {window.start.text})"
        return f"{c.subject}({name}, {window.start.text}, {window.end.text})"
    if c.subject == "value":
        return f"{name}({c.argument.text})"
    if c.subject == "reach":
        return f"reach({c.argument.text})"
    return SUBJECTS[c.subject].written


def _flip_words(flip, vary, name: str) -> str:
    if flip.value is None:
        a, b = (_parameter_text(v, vary) for v in flip.between)
        return f"changes between {name} = {a} and {b}"
    side = "<=" if flip.holds == "below" else ">="
    return f"holds for {name} {side} {_parameter_text(flip.value, vary)}"


def _parameter_text(si: float, vary) -> str:
    return f"{number(vary.shown(si))} {vary.unit_text}".rstrip()


def _measured(quantity, model):
    return model.unknown if SUBJECTS[quantity.subject].found == UNKNOWN else model.variable


def _same_quantity(criterion, quantity) -> bool:
    def key(c):
        window = c.window
        ends = None if window is None else (window.start and window.start.si, window.end and window.end.si)
        return (c.subject, c.argument.si if c.argument else None, ends)

    return key(criterion) == key(quantity)


def _cell(si, declared) -> str:
    return number(None if si is None else declared.shown(si), TABLE_SIGNIFICANT)


def _with_unit(name: str, declared) -> str:
    return f"{name} [{declared.unit_text}]" if declared.unit_text else name


def _axis(name: str, unit: str) -> str:
    return f"{name} [{unit}]" if unit else name
