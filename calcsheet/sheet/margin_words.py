"""The step "Sensitivity and tolerances", the worst-case words of the outcome, and the margin's record.

derive/margin.py gives numbers in SI and method codes; this module alone words them (the sheet layer's
words, like check_words.py), so compose, the switched sheet and the record share one wording.
"""

from __future__ import annotations

import math

from calcsheet.derive.margin import (
    AT_EXTREME,
    BRACKETED,
    CORNERS,
    DIFFERENCE,
    FAILS_THROUGHOUT,
    FLAT,
    HOLDS_THROUGHOUT,
    IMPLICIT,
    MAX,
    MIN,
    SEARCHED,
    SOLVED,
    SYMBOLIC,
    TOO_MANY,
    Margin,
    limit_symbol,
)
from calcsheet.mathtext import latex, plain
from calcsheet.sheet.document import Equation, Math, Note, Paragraph, Section, Table
from calcsheet.sheet.quantities import in_units, number, record_value, rounded
from calcsheet.subjects import SUBJECTS

SENSITIVITY_WORDS = {
    SYMBOLIC: "symbolic: derivative of the closed form",
    IMPLICIT: "symbolic, implicit: -(∂y/∂p)/(∂y/∂t) at the crossing",
    AT_EXTREME: "symbolic: ∂y/∂p at the point that gives the extreme",
    DIFFERENCE: "central difference of the numeric evaluation",
    FLAT: "central difference: no change beyond the evaluations' precision (1e-10 relative), so 0",
}
LIMIT_WORDS = {
    SOLVED: "solved in symbols (sympy), root checked numerically",
    BRACKETED: "bracketed, then Brent's method on the numeric evaluation",
    HOLDS_THROUGHOUT: "none: the criterion holds over the whole range searched",
    FAILS_THROUGHOUT: "none: the criterion fails over the whole range searched",
}
WORST_WORDS = {
    CORNERS: "at a corner of the tolerance box",
    SEARCHED: "searched inside the box (signs change)",
    TOO_MANY: "searched: more than 10 toleranced parameters",
}


def has_margin(d) -> bool:
    return getattr(d, "margin", None) is not None


def _chosen_for_a_case(d) -> bool:
    """Whether a solution of the sheet holds only under conditions its stated values meet (sympy's cases)."""
    pieces = [i.derivation for i in d.intervals] if getattr(d, "intervals", None) else [d]
    return any(getattr(p.solution, "chosen_under", ()) for p in pieces)


# ----------------------------------------------------------------------------- the step
def margin_section(d, key: str = "margin", title: str = "Sensitivity and tolerances") -> Section:
    mg: Margin = d.margin
    m = d.model
    blocks = [
        Paragraph(
            "The input gives these parameters a range. Each result below is taken again with the "
            "parameters moved within their ranges; "
            + (
                "the symbolic solution above is the form for the case the stated values select, so it is "
                "evaluated with the new numbers wherever that case still holds, and the equation is solved "
                "again for values that leave it."
                if _chosen_for_a_case(d)
                else "the symbolic solution above holds for every value in them, so it is evaluated with the new "
                "numbers rather than solved again."
            )
        ),
        Table(
            ("Parameter", "Nominal", "Range as stated", "Lowest", "Highest"),
            tuple(
                (
                    _parameter_name(t),
                    t.parameter.text,
                    t.parameter.spread,
                    _shown(t, t.parameter.low),
                    _shown(t, t.parameter.high),
                )
                for t in mg.parameters
            ),
            "Tolerances",
            key="tolerances",
        ),
    ]
    blocks += _sensitivity_blocks(mg, m)
    if mg.switched:
        blocks.append(
            Note(
                "method",
                "Switched model: every sensitivity is a central difference across the whole "
                "switched response (each interval evaluated with the changed values and the next "
                "started from where it ends), since each interval depends on those before it.",
            )
        )
    if m.criteria:
        blocks += _worst_blocks(mg, m, d.numbers.verdicts)
        blocks += _limit_blocks(mg, m, d.numbers.verdicts)
    return Section(key, title, tuple(blocks))


def _sensitivity_blocks(mg: Margin, m) -> list:
    rows, shown = [], []
    for s in mg.sensitivities:
        probe, t = mg.quantities[s.quantity], _toleranced(mg, s.parameter)
        like = _like(m, probe.criterion)
        unit = ratio_unit(like.unit_text, t.parameter.unit_text)
        derivative = s.derivative * like.scale / t.parameter.scale
        rows.append(
            (
                quantity_text(probe, m),
                _parameter_name(t),
                f"{number(derivative)} {unit}",
                "n/a (the quantity is zero)" if s.normalised is None else number(s.normalised, 3),
                SENSITIVITY_WORDS[s.method],
            )
        )
        if s.expression is not None and s.expression != 0:
            shown.append((probe, t, s.expression))
    blocks = [
        Paragraph(
            "Sensitivities: the change of each result per unit change of each parameter, and normalised "
            "(∂y/∂p · p/y: per cent change of the result per per cent change of the parameter)."
        ),
        Table(("Result", "Parameter", "∂y/∂p", "Normalised", "How"), tuple(rows), "Sensitivities", key="sensitivities"),
    ]
    for probe, t, expression in shown:
        name = "τ" if probe.subject == "time_constant" else "y_∞"
        tex = r"\tau" if probe.subject == "time_constant" else r"y_{\infty}"
        blocks.append(
            Equation(
                Math(
                    rf"\frac{{\partial {tex}}}{{\partial {latex(t.parameter.symbol)}}} = "
                    f"{latex(expression)}",
                    f"d{name}/d{t.parameter.name} = {plain(expression)}",
                ),
                "sensitivity",
            )
        )
    return blocks


def _worst_blocks(mg: Margin, m, verdicts) -> list:
    rows, status = [], []
    for v, w in zip(verdicts, mg.worst):
        like = _like(m, v.criterion)
        if w is None:
            rows.append((v.criterion.check, in_units(v.actual, like), "not assessed", "-", "NOT ASSESSED", "-"))
            status.append("")
            continue
        value = in_units(w.value, like) if w.value is not None else _absent(v.criterion)
        if w.limit is not None:  # a limit written in terms of parameters moves with them
            value = f"{value} (limit there {in_units(w.limit, like)})"
        margin = "n/a" if w.margin is None else difference_text(w.margin, like)
        rows.append(
            (
                v.criterion.check,
                in_units(v.actual, like) if v.actual is not None else _absent(v.criterion),
                value,
                corner_text(mg, w),
                "PASS" if w.passed else "FAIL",
                margin,
            )
        )
        status.append("pass" if w.passed else "fail")
    methods = sorted({w.method for w in mg.worst if w is not None})
    blocks = [
        Paragraph(
            f"Worst case: each criterion is evaluated at every corner of the tolerance box "
            f"(2^{len(mg.parameters)} = {2 ** len(mg.parameters)} corners). The worst corner is taken as "
            "the worst case when each parameter moves the criterion the same way along every edge of the "
            f"box and none of {mg.interior_points} interior points spread evenly through it (a Halton "
            "sequence) is worse; otherwise the box is searched numerically (Powell's method, bounded), "
            "and the table says so. A criterion that fails at its worst case makes the sheet FAIL."
        ),
        Table(
            ("Criterion", "Nominal", "Worst case", "At", "Verdict", "Margin"),
            tuple(rows),
            "Criteria at worst case",
            row_status=tuple(status),
            status_column=4,
            key="worst_case",
        ),
    ]
    if any(mth != CORNERS for mth in methods):
        blocks.append(Note("method", "; ".join(f"{WORST_WORDS[mth]}" for mth in methods) + "."))
    return blocks


def _limit_blocks(mg: Margin, m, verdicts) -> list:
    rows, equations = [], []
    for v, limits in zip(verdicts, mg.limits):
        for lv in limits:
            t = _toleranced(mg, lv.parameter)
            rows.append(
                (
                    v.criterion.check,
                    _parameter_name(t),
                    _shown(t, lv.value) if lv.value is not None else "-",
                    limit_reading(v, lv, t),
                    LIMIT_WORDS[lv.method],
                )
            )
            if lv.equation is not None:
                equations.append((v, t, lv))
    blocks = [
        Paragraph(
            "Limiting values: for each criterion and each parameter, the value at which the criterion "
            "just holds with every other parameter at its nominal value."
        ),
        Table(("Criterion", "Parameter", "Limiting value", "Reading", "How"), tuple(rows), "Limiting values"),
    ]
    for v, t, lv in equations:
        c = v.criterion
        at, level = (c.argument, c.limit) if c.subject == "value" else (c.limit, c.argument)
        start = f", {d_y0(mg, m)}" if c.subject != "time_constant" else ""
        where = (
            f"with {m.variable.name} = {at.text}, {limit_symbol(m).name} = {level.text}{start}"
            if c.subject != "time_constant"
            else f"with τ = {c.limit.text}"
        )
        blocks.append(
            Equation(
                Math(
                    f"{latex(t.parameter.symbol)} = {latex(lv.equation)}", f"{t.parameter.name} = {plain(lv.equation)}"
                ),
                f"limit of {c.check}",
            )
        )
        blocks.append(Paragraph(f"{where}: {t.parameter.name} = {_shown(t, lv.value)}."))
    return blocks


def d_y0(mg, m) -> str:
    """The start value's symbol in a solved limiting value: y_0 = the input's initial value."""
    return f"{m.unknown.name}_0 = {m.initial_value.text}"


def limit_reading(verdict, lv, t) -> str:
    """'R may rise to 21.2 kohm before v(60 s) <= 50 V fails', or why there is no such value."""
    name, check = t.parameter.name, verdict.criterion.check
    if lv.value is None:
        span = f"{_shown(t, lv.searched[0])} to {_shown(t, lv.searched[1])}" if lv.searched else "the range searched"
        return f"{check} {'holds' if lv.method == HOLDS_THROUGHOUT else 'fails'} for {name} from {span}"
    if verdict.passed:
        return f"{name} may {lv.direction} to {_shown(t, lv.value)} before {check} fails"
    verb = "rises" if lv.direction == "rise" else "falls"
    return f"{check} holds once {name} {verb} to {_shown(t, lv.value)}"


# ----------------------------------------------------------------------------- outcome
def outcome_words(d) -> tuple[str, bool]:
    """The outcome's worst-case sentence and whether every criterion holds at worst case."""
    if not has_margin(d) or not d.model.criteria:
        return "", True
    mg, verdicts = d.margin, d.numbers.verdicts
    passing = [k for k, v in enumerate(verdicts) if v.passed]
    failing = [k for k in passing if mg.worst[k] is not None and not mg.worst[k].passed]
    if not passing:
        return "", mg.passed
    head = f"{len(passing)} {'criterion passes' if len(passing) == 1 else 'criteria pass'} at nominal; "
    if not failing:
        return head + ("it holds at worst case too." if len(passing) == 1 else "all hold at worst case too."), mg.passed
    corners = "; ".join(f"{verdicts[k].criterion.check} at {corner_text(mg, mg.worst[k])}" for k in failing)
    return (
        head + f"{len(failing)} of them {'fails' if len(failing) == 1 else 'fail'} at worst case ({corners}).",
        mg.passed,
    )


def whatif_words(m) -> str:
    """The what-if banner at the head of the outcome: which values differ from the input's."""
    overrides = getattr(m, "overrides", ())
    if not overrides:
        return ""
    changed = ", ".join(f"{o.name} = {o.text} (input: {o.was})" for o in overrides)
    return f"What-if: {changed}; not the issued design. "


# ----------------------------------------------------------------------------- words shared
def quantity_text(probe, m) -> str:
    c = probe.criterion
    if probe.subject in ("max", "min", "integral") or (c.check and " for " in c.check):
        return c.check
    if c.check:
        return c.check.split("<")[0].split(">")[0].strip()
    if probe.subject == "value":
        return f"{m.unknown.name}({c.argument.text})"
    if probe.subject == "reach":
        return f"reach({c.argument.text})"
    return {"time_constant": "time constant τ", "final_value": "final value"}.get(probe.subject, probe.subject)


def corner_text(mg: Margin, w) -> str:
    """'R +31.5 %, V_s -10 %': each parameter's place in the worst case, from its nominal value."""
    parts = []
    for (key, side), (_, value) in zip(w.corner, w.point):
        t = _toleranced(mg, key)
        if value == t.nominal:
            continue
        parts.append(f"{_parameter_name(t)} {_change(t, value)}" + ("" if side in (MIN, MAX) else " (inside)"))
    return ", ".join(parts) or "nominal"


def ratio_unit(top: str, bottom: str) -> str:
    """'min/(W/(m^2*K))': a unit per a unit, the lower one bracketed when it is a product or quotient."""
    bottom = bottom or "1"
    return f"{top or '1'}/" + (f"({bottom})" if any(c in bottom for c in "/* ") else bottom)


def difference_text(si: float, like) -> str:
    return f"{number(si * like.scale)} {_difference_unit(like.unit_text)}".rstrip()


def _change(t, value: float) -> str:
    p = t.parameter
    if p.offset != 0 or p.si == 0:  # a temperature on a scale with an offset, or a zero nominal: the difference
        return f"{'+' if value > p.si else '−'}{number(abs(value - p.si) * p.scale)} {_difference_unit(p.unit_text)}"
    per_cent = (value - p.si) / abs(p.si) * 100
    return f"{'+' if per_cent > 0 else '−'}{abs(per_cent):.3g} %"


def _difference_unit(unit: str) -> str:
    return {"degC": "K", "°C": "K", "degF": "delta_degF"}.get(unit, unit)


def _absent(criterion) -> str:
    return "never" if SUBJECTS[criterion.subject].absent_is_never else "does not exist"


def _parameter_name(t) -> str:
    return t.parameter.name if not t.interval else f"{t.parameter.name} (interval {t.interval})"


def _toleranced(mg: Margin, key: str):
    return next(t for t in mg.parameters if t.key == key)


def _shown(t, si: float | None) -> str:
    if si is None:
        return "n/a"
    return f"{number(t.parameter.shown(si))} {t.parameter.unit_text}".rstrip()


def _like(m, criterion):
    from calcsheet.sheet.compose import measured_like  # compose imports this module

    return measured_like(m, criterion)


# ----------------------------------------------------------------------------- record
def margin_record(d) -> dict:
    """``tolerances``, ``sensitivities`` and ``overrides``; every quantity {value, unit} in declared units."""
    m = d.model
    record = {"overrides": {o.name: {"value": o.text, "was": o.was} for o in getattr(m, "overrides", ())}}
    if not has_margin(d):
        return {**record, "tolerances": [], "sensitivities": []}
    mg = d.margin
    record["tolerances"] = [
        {
            "name": _parameter_name(t),
            "nominal": _param_value(t, t.nominal),
            "min": _param_value(t, t.parameter.low),
            "max": _param_value(t, t.parameter.high),
            "as_stated": t.parameter.spread,
        }
        for t in mg.parameters
    ]
    sensitivities = []
    for s in mg.sensitivities:
        probe, t = mg.quantities[s.quantity], _toleranced(mg, s.parameter)
        like = _like(m, probe.criterion)
        unit = ratio_unit(like.unit_text, t.parameter.unit_text)
        sensitivities.append(
            {
                "quantity": quantity_text(probe, m),
                "parameter": _parameter_name(t),
                "derivative": {"value": rounded(s.derivative * like.scale / t.parameter.scale), "unit": unit},
                "normalised": None if s.normalised is None else rounded(s.normalised),
                "method": s.method,
            }
        )
    record["sensitivities"] = sensitivities
    return record


def criteria_margin(d, criteria: list[dict]) -> list[dict]:
    """Each criterion's record with its ``worst_case`` and ``limiting_values``."""
    if not has_margin(d):
        return criteria
    mg, m = d.margin, d.model
    result = []
    for entry, v, w, limits in zip(criteria, d.numbers.verdicts, mg.worst, mg.limits):
        like = _like(m, v.criterion)
        worst = (
            None
            if w is None
            else {
                "value": record_value(w.value, like),
                "verdict": "pass" if w.passed else "fail",
                "margin": None
                if w.margin is None
                else {"value": rounded(w.margin * like.scale), "unit": _difference_unit(like.unit_text)},
                "corner": {_parameter_name(_toleranced(mg, k)): side for k, side in w.corner},
                "method": w.method,
                **({"limit": record_value(w.limit, like)} if w.limit is not None else {}),
            }
        )
        result.append(
            {
                **entry,
                "worst_case": worst,
                "limiting_values": [
                    {
                        "parameter": _parameter_name(_toleranced(mg, lv.parameter)),
                        "value": _param_value(_toleranced(mg, lv.parameter), lv.value),
                        "method": lv.method,
                    }
                    for lv in limits
                ],
            }
        )
    return result


def _param_value(t, si: float | None) -> dict | None:
    if si is None or not math.isfinite(si):
        return None
    return {"value": rounded(t.parameter.shown(si)), "unit": t.parameter.unit_text}
