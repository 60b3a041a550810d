"""The words of a linearisation: the step "Linearisation", the comparison with the non-linear model in
the verification step, and the record's ``linearisation``.

derive/linearise.py and derive/linear_accuracy.py give the facts (terms, point, expansions, differences
in SI, methods as codes); this module alone words them.
"""

from __future__ import annotations

from calcsheet.derive import linear_accuracy as acc
from calcsheet.derive import linearise as lin
from calcsheet.mathtext import latex, plain, symbol_latex
from calcsheet.sheet.document import Equation, Math, Note, Paragraph, Section, Table
from calcsheet.sheet.quantities import number, quantity_latex, record_value, rounded
from calcsheet.source.units import coherent_si, registry, si_unit, unit_label

POINT_METHOD_WORDS = {
    lin.STATED: "as stated in the input",
    lin.SYMBOLIC: "the steady state, solved symbolically (sympy solve, each root checked in the equation)",
    lin.NUMERIC: (
        f"the steady state, solved numerically: Brent's method (scipy brentq) between the sign changes of a scan "
        f"over {lin.SCAN_DECADES} decades either side of zero, each root checked in the equation"
    ),
}
CHOICE_WORDS = {
    lin.ONLY_ROOT: "it is the only real root",
    lin.ONLY_STABLE: "it is the only root about which a disturbance decays (the linear coefficient p is positive)",
    lin.NEAREST_STABLE: "of the roots about which a disturbance decays, it is the nearest to the initial value",
    lin.NEAREST: "no root is stable; it is the nearest to the initial value",
}
INTEGRATOR_WORDS = {
    acc.METHOD: "DOP853 (explicit Runge–Kutta of order 8)",
    acc.STIFF: "Radau (implicit Runge–Kutta of order 5, for stiff equations)",
}
FAILURE_WORDS = {
    acc.STOPPED: "the integration of the non-linear equation stopped at {at}",
    acc.NOT_FINITE: "the integration of the non-linear equation gave values that are not finite",
}


NONLINEAR_DIGITS = 6  # numbers from the non-linear integration (rtol 1e-10) in the record: no digit it cannot vouch for


def coarse(value: float) -> float:
    return float(f"{value:.{NONLINEAR_DIGITS}g}")


def _coarse_value(si: float, declared) -> dict:
    shown = record_value(si, declared)
    return {**shown, "value": coarse(shown["value"])}


def percent(share: float) -> str:
    return f"{number(100 * share)} %"


def _names(d, n) -> dict:
    found, m = d.linearisation, d.model
    name = symbol_latex(m.unknown.name)
    return {
        **n.names,
        found.deviation: rf"\Delta {name}",
        found.deviation_derivative: rf"\frac{{d\Delta {name}}}{{d{symbol_latex(m.variable.name)}}}",
    }


def slope_unit(term, m) -> str:
    """The SI unit of a slope df/dy: the unit of the term over the unit of the unknown, as the record writes
    units ('m^2/s' for an orifice's outflow over a level)."""
    units = {p.symbol: p.si_unit for p in m.parameters} | {m.unknown.symbol: si_unit(m.unknown.unit)}
    found = _unit_of(term, units)
    return "" if found is None else unit_label(coherent_si(si_unit(found / si_unit(m.unknown.unit))))


def _unit_of(expr, units: dict):
    """The SI unit of a sympy expression of symbols with the given units; None if a symbol's is unknown."""
    if expr.is_Symbol:
        return units.get(expr)
    if expr.is_Number or not expr.free_symbols:
        return registry().dimensionless
    if expr.is_Add:
        return _unit_of(expr.args[0], units)
    if expr.is_Mul:
        result = registry().dimensionless
        for factor in expr.args:
            unit = _unit_of(factor, units)
            if unit is None:
                return None
            result = result * unit
        return result
    if expr.is_Pow and expr.exp.is_number:
        unit = _unit_of(expr.base, units)
        return None if unit is None else unit ** float(expr.exp)
    return registry().dimensionless  # a function of a dimensionless argument (units were checked)


def _tex(expr, names) -> str:
    return latex(expr, names)


def linearisation_section(d, n) -> Section:
    """What is non-linear, the operating point, each term's expansion, the linear model in Δy and in y."""
    found, m = d.linearisation, d.linearisation.original
    names = _names(d, n)
    y, x = m.unknown.name, m.variable.name
    point = found.point
    y0_text = m.unknown.text_of(point.si)
    terms = ", ".join(f"'{plain(t.term)}'" for t in found.terms)
    blocks = [
        Paragraph(
            f"The equation as stated is not linear in {y}: in the term{'s' if len(found.terms) > 1 else ''} {terms} "
            f"the slope with respect to {y} still depends on {y}. The integrating-factor method needs a linear "
            f"equation, so each such term f({y}) is replaced by its first-order Taylor expansion about an operating "
            f"point {y}_op, f({y}) ≈ f({y}_op) + f'({y}_op) ({y} - {y}_op). The result is an approximation: its "
            "difference from the non-linear model is measured in the verification step."
        ),
        Table(
            ("Term", "Non-linear in", f"Slope d/d{y}"),
            tuple(
                (Math(_tex(t.term, names), plain(t.term)), y, Math(_tex(t.slope, names), plain(t.slope)))
                for t in found.terms
            ),
            "Non-linear terms",
        ),
    ]
    y0_symbol = Math(symbol_latex(f"{y}_op"), f"{y}_op")
    blocks.append(Paragraph(f"Operating point: {POINT_METHOD_WORDS[point.method]}."))
    if point.solved is not None:
        blocks.append(
            Equation(
                Math(rf"{_tex(point.solved, names)} = 0", f"{plain(point.solved)} = 0"),
                f"steady state, d{y}/d{x} = 0",
            )
        )
    y0_tex = quantity_latex(f"{number(m.unknown.shown(point.si))} {m.unknown.unit_text}")
    rights = (
        [(y0_tex, y0_text)]
        if point.method != lin.SYMBOLIC
        else [(_tex(point.expr, names), plain(point.expr)), (y0_tex, y0_text)]
    )
    blocks.append(n.eq(y0_symbol.latex, y0_symbol.text, *rights, label="operating point"))
    if len(point.roots) > 1:
        roots = ", ".join(m.unknown.text_of(r) for r in point.roots)
        blocks.append(Paragraph(f"Real roots: {roots}. Chosen: {y0_text}, because {CHOICE_WORDS[point.choice]}."))
    elif point.roots:
        blocks.append(Paragraph(f"Chosen: {y0_text}, because {CHOICE_WORDS[point.choice]}."))
    if point.parameter is not None and point.method == lin.NUMERIC:
        blocks.append(Paragraph(f"The linear model writes this point as the parameter {point.parameter.name}."))
    blocks.append(Paragraph(f"Deviation variable: Δ{y} = {y} - {y}_op, the distance from the operating point."))
    rows = tuple(
        (
            Math(_tex(t.term, names), plain(t.term)),
            Math(_tex(t.value_at, names), plain(t.value_at)),
            Math(_tex(t.slope_at, names), plain(t.slope_at)),
            f"{number(t.slope_si)} {slope_unit(t.term, m)}".rstrip(),
        )
        for t in found.terms
    )
    blocks.append(
        Table(
            ("Term f", f"f({y}_op)", f"f'({y}_op)", f"f'({y}_op), SI"),
            rows,
            f"First-order Taylor expansion of each non-linear term about {y}_op = {y0_text}",
        )
    )
    for t in found.terms:
        blocks.append(
            Equation(
                Math(rf"{_tex(t.term, names)} \approx {_tex(t.linear, names)}", f"{plain(t.term)} ≈ {plain(t.linear)}"),
                "first order",
            )
        )
    blocks.append(Paragraph(f"The linear model in the deviation variable Δ{y}:"))
    blocks.append(
        Equation(
            Math(
                f"{_tex(found.deviation_lhs, names)} = {_tex(found.deviation_rhs, names)}",
                f"{plain(found.deviation_lhs)} = {plain(found.deviation_rhs)}",
            ),
            "in deviations",
        )
    )
    if point.method == lin.NUMERIC:
        blocks.append(
            Paragraph(
                f"The terms free of Δ{y} are the steady-state equation at {y}_op, so with the values they cancel "
                f"({y}_op is its root); they are kept in symbols above."
            )
        )
    lm = found.model
    blocks.append(Paragraph(f"And in {y} itself, the equation the following steps solve:"))
    blocks.append(
        Equation(
            Math(f"{_tex(lm.lhs, names)} = {_tex(lm.rhs, names)}", f"{plain(lm.lhs)} = {plain(lm.rhs)}"),
            "linearised",
        )
    )
    request = found.request
    where = "as stated in the input" if request.tolerance_stated else "the default, as no tolerance was stated"
    blocks.append(
        Note(
            "method",
            f"Validity threshold: the linearised response may differ from the non-linear one by at most "
            f"{request.tolerance_text} of the non-linear response's change over the range ({where}); verification "
            "fails beyond it.",
        )
    )
    return Section("linearisation", "Linearisation", tuple(blocks))


def accuracy_blocks(d) -> tuple:
    """The comparison with the non-linear model, for the verification step."""
    a, m = d.accuracy, d.linearisation.original
    y, x = m.unknown.name, m.variable.name
    if a.failure:
        words = FAILURE_WORDS[a.failure].format(at=m.variable.text_of(a.failed_at))
        return (Note("warning", f"The linearised model could not be compared with the non-linear model: {words}."),)
    blocks = [
        Paragraph(
            f"The non-linear equation as stated, integrated with scipy solve_ivp, {INTEGRATOR_WORDS[a.method]}, rtol "
            f"{acc.RTOL:.0e}, atol {acc.RTOL * acc.ATOL_SHARE:.0e} × the response's size, from the same initial "
            f"condition, independently of the linearisation. Each difference is shown as a share of the non-linear "
            f"response's change over the range, {_change(a.scale, m.unknown)}."
        ),
        Paragraph(summary_line(d)),
    ]
    if a.rows:
        blocks.append(
            Table(
                (x, f"{y}, linearised", f"{y}, non-linear", "Difference"),
                tuple(
                    (m.variable.text_of(at), m.unknown.text_of(lv), m.unknown.text_of(nv), percent(share))
                    for at, lv, nv, share in a.rows
                ),
                "Linearised against non-linear model at the evaluated points",
                row_status=tuple("pass" if share <= a.tolerance else "fail" for *_, share in a.rows),
                status_column=3,
            )
        )
    blocks += _criteria_blocks(d)
    return tuple(blocks)


def _found(criterion, si, m) -> str:
    if si is None:
        return "never reached" if criterion.subject == "reach" else "n/a"
    return (m.variable if criterion.subject == "reach" else m.unknown).text_of(si)


def _criteria_blocks(d) -> list:
    """Each criterion's verdict on the linearised model (the sheet's method) beside its verdict on the
    non-linear integration, so that a checker sees both."""
    a, m = d.accuracy, d.linearisation.original
    if not a.criteria:
        return []
    rows, differ = [], []
    for criterion, found, passed in a.criteria:
        verdict = next((v for v in d.numbers.verdicts if v.criterion.check == criterion.check), None)
        linear_cell = "n/a" if verdict is None else f"{_found(criterion, verdict.actual, m)}: {_pass(verdict.passed)}"
        if passed is None:
            non_linear = "not evaluated (a property of the linear model only)"
        else:
            non_linear = f"{_found(criterion, found, m)}: {_pass(passed)}"
            if verdict is not None and verdict.passed != passed:
                differ.append(criterion.check)
        rows.append((criterion.check, linear_cell, non_linear))
    blocks = [
        Table(
            ("Criterion", "Linearised model (the sheet's verdict)", "Non-linear model"),
            tuple(rows),
            "Criteria on both models (non-linear: on the integrated points, extremes and crossings to their spacing)",
        )
    ]
    if differ:
        blocks.append(
            Note(
                "warning",
                f"The verdicts differ between the linearised and the non-linear model for: {', '.join(differ)}. "
                "Do not rely on the linearised verdict there; check the design on the non-linear model.",
            )
        )
    return blocks


def _pass(passed: bool) -> str:
    return "PASS" if passed else "FAIL"


def _change(si: float, declared) -> str:
    """A change of the unknown in its declared unit (a temperature change in degC is a difference)."""
    shown = f"{number(si * declared.scale)} {declared.unit_text}".rstrip()
    return shown + (" (a difference)" if declared.offset else "")


def summary_line(d) -> str:
    a, m = d.accuracy, d.linearisation.original
    where = f"largest at {m.variable.name} = {m.variable.text_of(a.worst_at)}"
    if a.passed:
        return (
            f"The linearised model is within {percent(a.worst)} of the non-linear model over the range analysed "
            f"({where}; threshold {d.linearisation.request.tolerance_text}): passed."
        )
    return (
        f"The linearised model differs from the non-linear model by up to {percent(a.worst)} over the range "
        f"analysed ({where}), more than the threshold of {d.linearisation.request.tolerance_text}: FAILED. The "
        "operating point is too far from the response for a linear model."
    )


def check_detail(check) -> str:
    """The verification table's detail for the linearisation check."""
    if check.fact("failure"):
        return "the non-linear integration did not reach the end of the range"
    return (
        f"largest difference {percent(check.measure)} of the non-linear response's change over {check.points} points "
        f"(threshold {100 * check.limit:g} %)"
    )


def check_method() -> str:
    return "scipy solve_ivp on the non-linear equation as stated, independently of the linearisation"


def linearisation_record(d) -> dict:
    """The record's ``linearisation``: about, derivatives, model, max_difference, tolerance, passed."""
    found, a, m = d.linearisation, d.accuracy, d.linearisation.original
    point = found.point
    return {
        "about": found.request.about,
        "operating_point": {
            **record_value(point.si, m.unknown),
            "method": point.method,
            "expression": plain(point.expr),
            "roots": [record_value(r, m.unknown) for r in point.roots],
            "choice": point.choice,
        },
        "derivatives": [
            {
                "term": plain(t.term),
                "derivative": plain(t.slope),
                "at_point": plain(t.slope_at),
                "value_si": rounded(t.slope_si),
                "value_of_term_si": rounded(t.value_si),
            }
            for t in found.terms
        ],
        "model": {
            "deviation": f"{plain(found.deviation_lhs)} = {plain(found.deviation_rhs)}",
            "original_variable": f"{plain(found.model.lhs)} = {plain(found.model.rhs)}",
        },
        "compared": [
            {
                "at": record_value(at, m.variable),
                "linearised": record_value(lv, m.unknown),
                "non_linear": _coarse_value(nv, m.unknown),
                "difference": coarse(share),
            }
            for at, lv, nv, share in a.rows
        ],
        "criteria": [
            {
                "check": criterion.check,
                "non_linear_found": None
                if found is None
                else _coarse_value(found, m.variable if criterion.subject == "reach" else m.unknown),
                "non_linear_passed": passed,
            }
            for criterion, found, passed in a.criteria
        ],
        "max_difference": None if a.failure else coarse(a.worst),
        "max_difference_at": record_value(a.worst_at, m.variable),
        "tolerance": found.request.tolerance,
        "tolerance_stated": found.request.tolerance_stated,
        "integrator": a.method,
        "passed": a.passed,
    }
