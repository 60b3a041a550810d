"""The response plot as data: the derived curve, the independent check, points, levels, limits."""

from __future__ import annotations

from calcsheet.sheet.document import Figure, Guide
from calcsheet.source.units import from_si
from calcsheet.subjects import SUBJECTS, UNKNOWN


def response_figure(d) -> Figure:
    m, num = d.model, d.numbers
    x_of = lambda value: from_si(value, m.variable.unit)  # noqa: E731
    y_of = lambda value: from_si(value, m.unknown.unit)  # noqa: E731
    curve = tuple((x_of(x), y_of(y)) for x, y in d.curve)
    start, end = num.span[0], d.curve[-1][0]
    independent = tuple((x_of(x), y_of(yi)) for x, _, yi in d.verification.compared if start <= x <= end)
    points = tuple((x_of(v.at.si), y_of(v.y), f"{m.unknown.name}({v.at.text})") for v in num.values
                   if start <= v.at.si <= end)  # a point past the plotted range stays in the tables only
    levels = [Guide(y_of(r.level.si), f"level {r.level.text}", "") for r in num.reach]
    limits = []
    for v in num.verdicts:
        c, status = v.criterion, "pass" if v.passed else "fail"
        subject = SUBJECTS[c.subject]
        if subject.guide == "level":
            levels.append(Guide(y_of(c.limit.si), f"limit {c.check}", status))
        else:
            limits.append(Guide(x_of(c.limit.si), f"limit {c.check}", status))
        if subject.argument == UNKNOWN and all(g.label != f"level {c.argument.text}" for g in levels):
            levels.append(Guide(y_of(c.argument.si), f"level {c.argument.text}", ""))
    return Figure(
        title=f"Response of {m.unknown.name}",
        x_label=_axis(m.variable), y_label=_axis(m.unknown),
        curve=curve, independent=independent, points=points, levels=tuple(levels), limits=tuple(limits),
        caption=(f"Line: the particular solution; open circles: the independent numerical integration; "
                 f"filled dots: the values asked for. Horizontal lines mark levels and limits on "
                 f"{m.unknown.name}, vertical lines limits on {m.variable.name}: dotted grey for a level, "
                 "solid green for a limit that passes, dashed red for one that fails."),
    )


def _axis(declared) -> str:
    return f"{declared.name} [{declared.unit_text}]" if declared.unit_text else declared.name
