"""The words of derived quantities: the step "Derived quantities" and their part of the JSON record.

derive/derived.py gives the facts (closed forms, values, extremes, integrals in SI, methods as codes); this
module words them and shows each number in the unit its quantity is declared in (sheet/quantities.py).
"""

from __future__ import annotations

import sympy as sp

from calcsheet.derive.budget import BUDGET_EXCEEDED, INTEGRATE_SECONDS, NO_CLOSED_FORM
from calcsheet.derive.derived import CLOSED_FORM, QUAD_RTOL, QUAD_SUBINTERVALS, QUADRATURE
from calcsheet.derive.verify import bound
from calcsheet.mathtext import latex, plain
from calcsheet.sheet.document import Paragraph, Section, Table
from calcsheet.sheet.hand_checks import integral_bound_blocks, integral_bounds_record
from calcsheet.sheet.quantities import in_units, numeric_expression, record_value

INTEGRAL_METHOD_WORDS = {
    CLOSED_FORM: "closed form: F(b) - F(a), F the antiderivative sympy found",
    QUADRATURE: f"adaptive Gauss–Kronrod quadrature (QUADPACK via scipy.integrate.quad), relative tolerance "
    f"{QUAD_RTOL:.0e}, at most {QUAD_SUBINTERVALS} subintervals between the jumps of the forcing",
}
_FALLBACK_WORDS = {
    NO_CLOSED_FORM: "sympy found no antiderivative of the closed form",
    BUDGET_EXCEEDED: f"symbolic integration did not finish within its budget of {INTEGRATE_SECONDS:g} s",
    "": "the response keeps an integral, so the quantity has no closed form",
}


def has_derived(d) -> bool:
    return bool(d.numbers.derived or d.numbers.integrals)


def derived_section(d, n) -> Section:
    """Each quantity's definition and closed form, its values at the points asked for, its extremes and the
    integrals over windows."""
    m, num = d.model, d.numbers
    y, x = m.unknown.name, m.variable.name
    blocks = [
        Paragraph(
            f"Each derived quantity is a function of {y}, d{y}/d{x}, {x} and the parameters. On the solution, "
            f"d{y}/d{x} = r - p {y} (the standard form); substituting the particular solution gives its closed "
            f"form, in SI units ({x} in {_si(m.variable)})."
        )
    ]
    for dv in num.derived:
        q = dv.quantity
        names = {m.derivative: n.names[m.derivative]}
        definition = (latex(q.expr, names), q.expression_text)
        rights = [definition]
        if dv.closed is not None:
            rights.append(numeric_expression(dv.closed, {}))
        unit = f", in {q.declared.unit_text}" if q.declared.unit_text else ", a pure number"
        offered = " (offered by the model kind)" if q.offered_by else ""
        blocks.append(Paragraph(f"{q.name}: {q.text or 'as defined'}{unit}{offered}."))
        blocks.append(n.eq(latex(sp.Symbol(q.name)), q.name, *rights, label="definition"))
    if m.evaluate_at and num.derived:
        header = (x,) + tuple(dv.quantity.name for dv in num.derived)
        rows = tuple(
            (point.text,)
            + tuple(
                "does not apply" if dv.values[k][1] is None else _shown(dv.values[k][1], dv.quantity.declared)
                for dv in num.derived
            )
            for k, point in enumerate(m.evaluate_at)
        )
        blocks.append(Table(header, rows, "Values of the derived quantities"))
    extremes = [e for e in num.extremes if e.of]
    if extremes:
        blocks.append(_extremes_table(m, extremes))
    for integral in num.integrals:
        if integral.antiderivative is not None:
            blocks.append(
                n.eq(
                    rf"\int {latex(sp.Symbol(integral.of))}\, d{latex(m.variable.symbol)}",
                    f"integral of {integral.of} d{x}",
                    numeric_expression(integral.antiderivative, {}),
                    label=f"antiderivative of {integral.of}, SI units",
                )
            )
    if num.integrals:
        blocks.append(_integrals_table(m, num.integrals))
        blocks += integral_bound_blocks(m, num.integrals)
    return Section("derived", "Derived quantities", tuple(blocks))


def switched_derived_blocks(sd) -> list:
    """Across the switches: the values from the interval in force, each quantity on both sides of every switch,
    the extremes over both sides of the switches, and the integrals summed over the intervals."""
    from calcsheet.sheet.compose import difference  # compose imports this module

    m, num = sd.model, sd.numbers
    x = m.variable.name
    blocks = [
        Paragraph(
            "Each interval evaluates the derived quantities with its own parameters (their closed forms are in "
            "each interval's step). The unknown is continuous at a switch, but a derived quantity can jump there: "
            "at a switch instant the value shown is the one just after it, from the interval that starts there."
        )
    ]
    if m.evaluate_at:
        header = (x,) + tuple(dv.quantity.name for dv in num.derived)
        rows = tuple(
            (point.text,) + tuple(_shown(dv.values[k][1], dv.quantity.declared) for dv in num.derived)
            for k, point in enumerate(m.evaluate_at)
        )
        blocks.append(Table(header, rows, "Values of the derived quantities across the switches"))
    if sd.derived_at_switches:
        rows = tuple(
            (
                in_units(a.at, m.variable),
                a.of,
                _shown(a.before, m.quantity(a.of)),
                _shown(a.after, m.quantity(a.of)),
                difference(a.after - a.before, m.quantity(a.of)),
            )
            for a in sd.derived_at_switches
        )
        blocks.append(
            Table(
                (f"Switch at {x} =", "Quantity", "Just before", "Just after", "Jump"),
                rows,
                "Derived quantities on both sides of each switch",
            )
        )
    extremes = [e for e in num.extremes if e.of]
    if extremes:
        blocks.append(_extremes_table(m, extremes))
    if num.integrals:
        blocks.append(_integrals_table(m, num.integrals))
        blocks += integral_bound_blocks(m, num.integrals)
    return blocks


def _extremes_table(m, extremes) -> Table:
    from calcsheet.sheet.compose import EXTREME_METHOD_WORDS, extreme_window  # compose imports this module

    rows = tuple(
        (
            f"{'largest' if e.kind == 'max' else 'smallest'} {e.of}",
            extreme_window(e, m),
            _shown(e.value, m.quantity(e.of)) if e.value is not None else "does not exist",
            in_units(e.at, m.variable) if e.at is not None else "-",
            EXTREME_METHOD_WORDS[e.method],
        )
        for e in extremes
    )
    return Table(
        ("Extreme", f"Over {m.variable.name}", "Value", f"At {m.variable.name} =", "Given by"),
        rows,
        f"Extremes of the derived quantities: stationary points (d/d{m.variable.name} = 0), jumps in the forcing and "
        "the window's ends compared",
    )


def _integrals_table(m, integrals) -> Table:
    rows = []
    for i in integrals:
        unit = m.derived_named(i.of).integral
        method = INTEGRAL_METHOD_WORDS[i.method]
        if i.pieces:
            method = "sum over the intervals: " + "; ".join(
                f"{_shown(p.value, unit) if p.value is not None else 'does not exist'} from "
                f"{in_units(p.start, m.variable)} to {in_units(p.end, m.variable)} by "
                f"{'closed form' if p.method == CLOSED_FORM else 'quadrature'}"
                for p in i.pieces
            )
            method += f" ({INTEGRAL_METHOD_WORDS[CLOSED_FORM if i.method == CLOSED_FORM else QUADRATURE]})"
        if i.method == QUADRATURE:
            method += (
                f"; error estimate {bound(i.error)} {unit.unit_text}".rstrip() + f" ({_FALLBACK_WORDS[i.fallback]})"
            )
        rows.append(
            (
                f"integral of {i.of}",
                f"{in_units(i.start, m.variable)} to {in_units(i.end, m.variable)}",
                _shown(i.value, unit) if i.value is not None else "does not exist",
                method,
            )
        )
    return Table(("Quantity", f"Over {m.variable.name}", "Value", "Found by"), tuple(rows), "Integrals over windows")


def _shown(si: float, declared) -> str:
    return in_units(si, declared)


def _si(declared) -> str:
    from calcsheet.source.units import coherent_si, unit_label

    return unit_label(coherent_si(declared.unit)) or "no unit"


def derived_record(d) -> dict:
    """``derived``: each quantity with its values in its declared unit; ``integrals``: each integral found."""
    m, num = d.model, d.numbers
    return {
        "derived": [
            {
                "name": dv.quantity.name,
                "unit": dv.quantity.declared.unit_text,
                "text": dv.quantity.text,
                "expression": dv.quantity.expression_text,
                "offered_by_kind": bool(dv.quantity.offered_by),
                "closed_form": None if dv.closed is None else plain(numeric_expression(dv.closed, {})),
                "values": [
                    {"at": record_value(point.si, m.variable), "value": record_value(value, dv.quantity.declared)}
                    for point, value in dv.values
                ],
            }
            for dv in num.derived
        ],
        "integrals": [
            {
                "of": i.of,
                "from": record_value(i.start, m.variable),
                "to": record_value(i.end, m.variable),
                "value": record_value(i.value, m.derived_named(i.of).integral),
                "method": i.method,
                "error_estimate": None if i.method == CLOSED_FORM else bound(i.error),
                "text": i.text,
                "bounds": integral_bounds_record(i, m),
                **({"pieces": [_piece_record(m, p) for p in i.pieces]} if i.pieces else {}),
            }
            for i in num.integrals
        ],
    }


def _piece_record(m, i) -> dict:
    """One interval's share of an integral across switches."""
    return {
        "from": record_value(i.start, m.variable),
        "to": record_value(i.end, m.variable),
        "value": record_value(i.value, m.derived_named(i.of).integral),
        "method": i.method,
        "error_estimate": None if i.method == CLOSED_FORM else bound(i.error),
    }


def switched_derived_record(sd) -> dict:
    """Across the switches: each derived quantity's values from the interval in force, the integrals (summed
    over the intervals, with ``pieces``), and ``at_switches``: each quantity just before and just after."""
    m = sd.model
    return {
        **derived_record(sd),
        "at_switches": [
            {
                "of": a.of,
                "at": record_value(a.at, m.variable),
                "before": record_value(a.before, m.quantity(a.of)),
                "after": record_value(a.after, m.quantity(a.of)),
            }
            for a in sd.derived_at_switches
        ],
    }
