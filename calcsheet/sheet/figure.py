"""The response plot as data: the derived curve, the independent check, points, levels, limits."""

from __future__ import annotations

from dataclasses import replace

from calcsheet.sheet.document import Figure, Guide, Legend, PointLimit
from calcsheet.source.units import from_si
from calcsheet.subjects import SUBJECTS, UNKNOWN, VARIABLE


LEGEND = Legend(
    curve="derived solution",
    independent="independent integration",
    points="evaluated points",
    largest="extremes (max)",
    smallest="extremes (min)",
)
NONLINEAR_LEGEND = "non-linear model"


def response_figure(d) -> Figure:
    m, num = d.model, d.numbers
    x_of = lambda value: from_si(value, m.variable.unit)  # noqa: E731
    y_of = lambda value: from_si(value, m.unknown.unit)  # noqa: E731
    curve = tuple((x_of(x), y_of(y)) for x, y in d.curve)
    start, end = num.span[0], d.curve[-1][0]
    independent = tuple((x_of(x), y_of(yi)) for x, _, yi in d.verification.compared if start <= x <= end)
    points = tuple(
        (x_of(v.at.si), y_of(v.y), f"{m.unknown.name}({v.at.text})") for v in num.values if start <= v.at.si <= end
    )  # a point past the plotted range stays in the tables only
    extremes = _extreme_marks(m, num, start, end, x_of, y_of)
    forcing, forcing_label = _forcing(d, x_of, y_of)
    levels = [Guide(y_of(r.level.si), f"level {r.level.text}", "") for r in num.reach]
    crossings = tuple((x_of(r.x), y_of(r.level.si), "") for r in num.reach if r.x is not None and start <= r.x <= end)
    limits, point_limits = [], []
    beyond = [f"{m.unknown.name}({v.at.text})" for v in num.values if not start <= v.at.si <= end]
    beyond += [f"where {m.unknown.name} reaches {r.level.text}" for r in num.reach if r.x is not None and r.x > end]
    beyond += [
        f"the {e.kind} of {m.unknown.name}"
        for e in num.extremes
        if not getattr(e, "of", "") and e.at is not None and e.value is not None and not start <= e.at <= end
    ]
    for v in num.verdicts:
        c, status = v.criterion, "pass" if v.passed else "fail"
        if getattr(c, "of", ""):  # about a derived quantity, not the curve drawn: in the tables only
            continue
        subject = SUBJECTS[c.subject]
        if subject.argument == VARIABLE:  # a limit at one point is drawn at that point, not across the plot
            if not start <= c.argument.si <= end:
                beyond.append(c.check)
            else:
                point_limits.append(
                    PointLimit(
                        x_of(c.argument.si),
                        y_of(c.limit.si),
                        f"limit {c.check}",
                        status,
                        "below" if c.operator in ("<", "<=") else "above",
                    )
                )
        elif subject.guide == "level":
            levels.append(Guide(y_of(c.limit.si), f"limit {c.check}", status))
        else:
            limits.append(Guide(x_of(c.limit.si), f"limit {c.check}", status))
        if subject.argument == UNKNOWN and all(g.label != f"level {c.argument.text}" for g in levels):
            levels.append(Guide(y_of(c.argument.si), f"level {c.argument.text}", ""))
    accuracy = getattr(d, "accuracy", None)
    nonlinear = tuple((x_of(x), y_of(y)) for x, y in accuracy.curve) if accuracy is not None else ()
    return Figure(
        title=f"Response of {m.unknown.name}",
        x_label=_axis(m.variable),
        y_label=_axis(m.unknown),
        curve=curve,
        independent=independent,
        points=points,
        levels=tuple(levels),
        limits=tuple(limits),
        extremes=extremes,
        point_limits=tuple(point_limits),
        crossings=crossings,
        legend=replace(LEGEND, nonlinear=NONLINEAR_LEGEND) if nonlinear else LEGEND,
        nonlinear=nonlinear,
        forcing=forcing,
        forcing_label=forcing_label,
        switches=tuple((x_of(s.at.si), s.text) for s in m.switches if start <= s.at.si <= end),
        caption=(
            f"Line: the particular solution{' of the linearised model' if nonlinear else ''}; open circles: the "
            f"independent numerical integration; "
            f"{'dashed line: the non-linear model, integrated on its own equation; ' if nonlinear else ''}"
            f"filled dots: the values asked for{'; triangles: the extremes found' if extremes else ''}"
            f"{'; crosses: where a level is first reached' if crossings else ''}"
            f"{_forcing_caption(d) if forcing else ''}"
            f"{'; dash-dotted grey lines: the switches' if m.switches else ''}"
            f"{'; a short bar: a limit at one point, coloured by its verdict' if point_limits else ''}. "
            f"Horizontal lines mark levels and limits on "
            f"{m.unknown.name}, vertical lines limits on {m.variable.name}: dotted grey for a level, "
            "solid green for a limit that passes, dashed red for one that fails."
            + (f" Past the plotted range, in the tables only: {', '.join(beyond)}." if beyond else "")
        ),
    )


SENSOR_KIND = "first_order_sensor"


def _forcing(d, x_of, y_of) -> tuple[tuple[tuple[float, float], ...], str]:
    """The forcing as a value of the unknown, with its legend words: for a sensor always (the input against the
    reading), for any other model only where it changes along the plot (a constant is the final value, shown
    by the curve itself); nothing where it does not exist."""
    driving = getattr(d, "driving", None)
    kind = getattr(d.model.kind, "name", "")
    if driving is None or not (driving.varies or kind == SENSOR_KIND):
        return (), ""
    name = d.model.unknown.name
    label = "input K·T_m, what the probe senses" if kind == SENSOR_KIND else f"forcing, as the {name} it drives toward"
    return tuple((x_of(x), y_of(v)) for x, v in driving.samples), label


def _forcing_caption(d) -> str:
    name = d.model.unknown.name
    return (
        f"; thin purple line: the forcing as a value of {name} (the right-hand side over the coefficient of {name} "
        f"in the standard form, r/p), which {name} would settle at if the forcing held still"
    )


def _extreme_marks(m, num, start, end, x_of, y_of) -> tuple[tuple[float, float, str], ...]:
    """Each extreme taken at a point inside the plotted range, once: 'max 88.71 degC'. An extreme past the
    plotted range, or a final value never reached, stays in the tables only."""
    from calcsheet.sheet.quantities import in_units

    marks = {}
    for e in num.extremes:
        if getattr(e, "of", ""):
            continue
        if e.at is not None and e.value is not None and start <= e.at <= end:
            marks.setdefault((e.kind, e.at), (x_of(e.at), y_of(e.value), f"{e.kind} {in_units(e.value, m.unknown)}"))
    return tuple(marks[k] for k in sorted(marks, key=lambda k: (k[1], k[0])))


def _axis(declared) -> str:
    return f"{declared.name} [{declared.unit_text}]" if declared.unit_text else declared.name
