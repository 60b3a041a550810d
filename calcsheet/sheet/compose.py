"""Compose a Derivation into a Sheet: every word, number format and ordering decision lives here."""

from __future__ import annotations

import string

import sympy as sp

from calcsheet.derive.derivation import Derivation
from calcsheet.derive.numbers import (
    APPROACHES_FINAL,
    MODEL_STOPS,
    MOVES_AWAY,
    OVERFLOWS,
    SETTLES_SHORT,
    SOLUTION_ENDS,
    SEARCH_SCALES,
)
from calcsheet.derive.budget import BUDGET_EXCEEDED, INTEGRATE_SECONDS, NO_CLOSED_FORM, NOT_FINITE_AT_START
from calcsheet.derive.numbers import (
    FINAL_GROWS,
    FINAL_LIMIT_OF_R_OVER_P,
    FINAL_LIMIT_OF_SOLUTION,
    FINAL_NOT_DECAYING,
    FINAL_OSCILLATES,
    FINAL_OUT_OF_TIME,
    FINAL_UNDETERMINED,
    FINAL_UNSETTLED,
    TAU_VARYING,
)
from calcsheet.derive.extremes import BEFORE_SWITCH, FINAL_VALUE, FORCING_JUMP, STATIONARY, SWITCH, WINDOW_END
from calcsheet.derive.verify import bound
from calcsheet.kinds.base import INVALID, START_SLOT, WARNING, Note as KindNote
from calcsheet.mathtext import derivative_latex, latex, plain
from calcsheet.sheet import cautions
from calcsheet.sheet.as_written import equation_latex
from calcsheet.sheet.dimensions_table import dimension_blocks
from calcsheet.sheet.criterion_numbers import criterion_numbers, found_text, margin_text, utilisation_text
from calcsheet.sheet.check_words import check_row, checks_lead, quadrature_words
from calcsheet.sheet.document import (
    Equation,
    Field,
    ItemList,
    Labels,
    Math,
    Note,
    Outcome,
    Paragraph,
    Review,
    Section,
    Sheet,
    SignOffLine,
    Table,
    TitleBlock,
)
from calcsheet.sheet.quantities import (
    duration,
    in_units,
    number,
    numeric_expression,
    quantity_latex,
    reproducing_expression,
)
from calcsheet.sheet.figure import response_figure
from calcsheet.sheet.hand_checks import reach_blocks
from calcsheet.sheet.margin_words import has_margin, margin_section, outcome_words, whatif_words
from calcsheet.sheet.derived_words import derived_section, has_derived
from calcsheet.sheet.linearise_words import accuracy_blocks, linearisation_section
from calcsheet.sheet.record import build_record
from calcsheet.sheet.named_groups import groups_for
from calcsheet.sheet.printed_symbols import printed_symbols
from calcsheet.sheet.worked_values import check_cell, hand_check_blocks, parameter_source, source_cell
from calcsheet.source.units import coherent_si, parse_unit, same_dimension, unit_label
from calcsheet.subjects import INTEGRAL, SUBJECTS, UNKNOWN


class _Notation:
    """How this model's symbols are written: y, x, y(x), dy/dx, mu."""

    def __init__(self, d: Derivation):
        m = d.model
        self.y, self.x = m.unknown.symbol, m.variable.symbol
        self.names = {m.derivative: derivative_latex(m.unknown.name, m.variable.name)}
        self.dy = Math(self.names[m.derivative], f"d{m.unknown.name}/d{m.variable.name}")
        self.yx_latex = rf"{latex(self.y)}\left({latex(self.x)}\right)"
        self.yx_text = f"{m.unknown.name}({m.variable.name})"
        self.step_numbers: dict[str, int] = {}  # section key -> step number, set by compose before any step is built
        taken = {p.name for p in m.parameters} | {m.unknown.name, m.variable.name}
        p = d.solution.p
        decays = p is not None and (p.has(self.x) or d.numbers.time_constant is not None)  # no tau for p <= 0
        self.groups = groups_for(p if decays else None, self.x, taken)

    def show(self, expr):
        """An expression of the solution steps with its named groups (tau, n, V(t))."""
        return self.groups.show(expr)

    def tex(self, expr) -> str:
        return latex(expr, self.names)

    def eq(self, left_tex: str, left_text: str, *rights, label: str = "") -> Equation:
        """left = right1 = right2 ..., each right a sympy expression or a (latex, text) pair."""
        tex_parts, text_parts = [left_tex], [left_text]
        for right in rights:
            if isinstance(right, tuple):
                tex_parts.append(right[0])
                text_parts.append(right[1])
            else:
                tex_parts.append(self.tex(right))
                text_parts.append(plain(right))
        return Equation(Math(" = ".join(tex_parts), " = ".join(text_parts)), label)


def compose(d: Derivation) -> Sheet:
    n = _Notation(d)
    shown = [(key, build) for key, build in STEPS if key not in OPTIONAL_STEPS or OPTIONAL_STEPS[key](d)]
    n.step_numbers = {key: k for k, (key, _) in enumerate(shown, start=1)}  # for cross-references between steps
    steps = [build(d, n) for _, build in shown]
    if [s.key for s in steps] != [key for key, _ in shown]:
        raise AssertionError("a step builder's section key differs from its place in STEPS")
    numbered = tuple(Section(s.key, s.title, s.blocks, n.step_numbers[s.key]) for s in steps)
    response = Section("response", "Response at a glance", (response_figure(d),))
    sections = (response, _basis(d)) + numbered
    return Sheet(
        title_block=title_block(d.model.sheet),
        labels=sheet_labels(),
        outcome=_outcome(d),
        sections=sections,
        cautions=(cautions.GENERAL,)
        + cautions.hazard_notes(d.model, _response_and_input(d), numbers=d.numbers)
        + cautions.input_beyond_response(d.model, d.driving),
        signoff=tuple(SignOffLine(s.role, s.name, s.date) for s in d.model.sheet.signoff),
        revisions=d.model.sheet.revisions,
        metadata=_metadata(d),
        record=build_record(d, n),
        source_name=d.model.path,
        style=d.model.sheet.style,
        symbols=printed_symbols(d.model, sections),
    )


def _metadata(d: Derivation) -> tuple[tuple[str, str], ...]:
    info = d.model.sheet
    revision = f", revision {info.revision}" if info.revision else ""
    subject = f"Calculation {info.number}{revision}" if info.number else ""
    date = info.date or max((r.date for r in info.revisions if r.date), default="")
    pairs = (
        ("title", info.title),
        ("author", info.originator),
        ("subject", subject),
        ("keywords", info.number),
        ("date", date),
    )
    return tuple((k, v) for k, v in pairs if v)


# ----------------------------------------------------------------------------- review state
_STATE_WORDS = {"current": "current", "stale": "STALE", "unsigned": "unsigned"}
STALE_MARK = "SIGN-OFF OUT OF DATE"


def reviewed(sheet: Sheet, info, fingerprint: str, states, blockers) -> Sheet:
    """The sheet with its fingerprint and each sign-off's state in words (facts from calcsheet/review/)."""
    shown = fingerprint[:12]
    stale = [s for s in states if s.state == "stale"]
    lines = tuple(
        SignOffLine(
            s.signoff.role,
            s.signoff.name,
            s.signoff.date,
            s.state,
            _STATE_WORDS[s.state],
            _stale_reason(s.signoff, fingerprint) if s.state == "stale" else "",
        )
        for s in states
    )
    head = ""
    if stale:
        roles = " and ".join(s.role for s in stale)
        head = (
            f"NOT CHECKED: the content changed after the {roles} sign-off{'s' if len(stale) > 1 else ''}; "
            "those signatures do not cover these results."
        )
    problem = ""
    if blockers:
        missing = ", ".join(f"{s.role} is {s.state}" for s in blockers)
        problem = (
            f"marked issued, but {missing}: an issued sheet needs current prepared, checked and approved sign-offs"
        )
        head = " ".join(part for part in (head, f"NOT FOR ISSUE: {problem}.") if part)
    outcome = sheet.outcome if not head else Outcome(False, f"{head} {sheet.outcome.text}", sheet.outcome.lines)
    keywords = ", ".join(part for part in (info.number, f"fingerprint {fingerprint}") if part)
    metadata = tuple(pair for pair in sheet.metadata if pair[0] != "keywords") + (("keywords", keywords),)
    record = {
        **sheet.record,
        "fingerprint": fingerprint,
        "status": info.status,
        "signoff": [
            {
                "role": s.role,
                "name": s.signoff.name,
                "date": s.signoff.date,
                "state": s.state,
                "signed_fingerprint": s.signoff.fingerprint,
            }
            for s in states
        ],
    }
    from dataclasses import replace

    return replace(
        sheet,
        signoff=lines,
        outcome=outcome,
        metadata=metadata,
        record=record,
        review=Review(fingerprint, shown, bool(stale), STALE_MARK if stale else "", problem),
    )


def _stale_reason(signoff, fingerprint: str) -> str:
    return (
        f"content changed since signed on {signoff.date or 'an unstated date'} "
        f"(signed {signoff.fingerprint[:12]}…, now {fingerprint[:12]}…): re-check required"
    )


# ----------------------------------------------------------------------------- front matter
def title_block(info) -> TitleBlock:
    """The sheet's identity from the input's [sheet] table, each entry with its label."""
    return TitleBlock(
        info.title,
        number=Field("Calculation", info.number),
        revision=Field("Revision", info.revision),
        project=Field("Project", info.project),
        originator=Field("Originator", info.originator),
        status=Field("Status", info.status),
    )


def sheet_labels() -> Labels:
    """The words every writer shows around the content (headings, table heads, running heads)."""
    return Labels(
        sheet="Calculation sheet",
        outcome="Outcome",
        step="Step",
        revisions="Revisions",
        revision_columns=("Revision", "Date", "Description"),
        signoff="Sign-off",
        signoff_columns=("Role", "Name", "Date", "Signature"),
        cautions="Caution",
        notes=(("caution", "Caution"), ("warning", "Warning"), ("method", "Method")),
        figure="Figure",
        figure_summary="{title}: {y_label} against {x_label}, from {first:.4g} to {last:.4g}; {curve} curve points, "
        "{independent} independent points, {levels} horizontal and {limits} vertical guides",
        page="Page",
        of="of",
        footer="Prepared with calcsheet. Review by a licensed engineer governs any use.",
        signoff_state="State",
        fingerprint="Fingerprint",
    )


def _response_and_input(d) -> tuple[float, ...]:
    """The values the hazard notes look at: the response, and the forcing as a value of the unknown where it
    exists (a probe's reading peaks lower than the gas it sits in; the gas is what is hot)."""
    if d.driving is None:
        return tuple(y for _, y in d.curve)
    peaks = tuple(p.value for p in (d.driving.largest, d.driving.smallest) if p.value is not None)  # found exactly
    return tuple(y for _, y in d.curve) + tuple(v for _, v in d.driving.samples) + peaks


def _outcome(d: Derivation) -> Outcome:
    verdicts = d.numbers.verdicts
    not_valid = getattr(d.numbers, "not_valid", ())
    failed = [v for v in verdicts if _status(v) == "fail"]
    unassessed = [v for v in verdicts if _status(v) == "not assessed"]
    verified = d.verification.passed
    if not_valid:
        head = (
            "The model is not valid for this case: "
            + " ".join(finding_text(n, d.model.kind) for n in not_valid)
            + (" The criteria are not assessed." if verdicts else "")
        )
    elif not verdicts:
        head = "No acceptance criteria stated."
    elif failed or unassessed:
        head = " ".join(
            part
            for part in (
                f"{len(failed)} of {len(verdicts)} criteria FAIL." if failed else "",
                f"{len(unassessed)} of {len(verdicts)} criteria not assessed: they depend on the response after the "
                "model stops holding."
                if unassessed
                else "",
            )
            if part
        )
    else:
        head = "The criterion passes." if len(verdicts) == 1 else f"All {len(verdicts)} criteria pass."
    worst, held = outcome_words(d)
    if worst:  # "2 criteria pass at nominal; 1 of them fails at worst case (...)" says what the pass line said
        head = worst if not (failed or unassessed or not_valid) else f"{head} {worst}"
    head = whatif_words(d.model) + head
    head += " Verification passed." if verified else " Verification FAILED: do not rely on these results."
    lines = tuple(f"{_STATUS_WORDS[_status(v)]}: {v.criterion.text}" for v in verdicts)
    return Outcome(passed=not not_valid and not failed and not unassessed and verified and held, text=head, lines=lines)


_STATUS_WORDS = {"pass": "PASS", "fail": "FAIL", "not assessed": "NOT ASSESSED"}
_NOT_ASSESSED_WHY = {"model_not_valid": "model not valid", "past_validity_limit": "past the validity limit"}


def _status(verdict) -> str:
    """pass, fail or not assessed (a verdict of a switched model may predate the assessed flag)."""
    return getattr(verdict, "status", "pass" if verdict.passed else "fail")


def _basis(d: Derivation) -> Section:
    info = d.model.sheet
    blocks = []
    if info.purpose:
        blocks.append(Paragraph(f"Purpose: {info.purpose}"))
    if info.references:
        blocks += [Paragraph("References:"), ItemList(info.references)]
    if info.assumptions:
        blocks += [Paragraph("Assumptions:"), ItemList(info.assumptions)]
    if not blocks:
        blocks.append(Paragraph("No purpose, references or assumptions were stated in the input."))
    return Section("basis", "Basis of the calculation", tuple(blocks))


# --------------------------------------------------------------------------------- steps
def _governing(d: Derivation, n: _Notation) -> Section:
    m = d.model
    rows = tuple(
        (
            Math(latex(p.symbol), p.name),
            p.text,
            f"{number(p.si)} {_si_text(p)}".rstrip(),
            parameter_source(p),
            p.note,
        )
        for p in m.parameters
    )
    blocks = _kind_blocks(m.kind) if m.kind else []
    blocks += [
        Paragraph(
            f"The model {'this gives' if m.kind else 'as stated in the input'}, with {m.unknown.name} in "
            f"{m.unknown.unit_text or 'no unit'} as the unknown and {m.variable.name} in "
            f"{m.variable.unit_text or 'no unit'} as the variable:"
        ),
        Equation(Math(equation_latex(m.equation), m.equation_text), "from the law" if m.kind else "as stated"),
        Table(("Symbol", "Value", "SI value", "Source", "Note"), rows, "Parameters", key="parameters"),
        *hand_check_blocks(m.parameters),
        Table(
            ("Condition", "Value"),
            (
                (
                    Math(rf"{latex(n.y)}\left({latex(d.solution.x0)}\right)", f"{m.unknown.name}({d.solution.x0})"),
                    f"{m.unknown.name} = {m.initial_value.text} at {m.variable.name} = {m.initial_at.text}",
                ),
            ),
            "Initial condition",
        ),
        *dimension_blocks(m),
    ]
    unused = [name for name in m.unused_parameters if not (m.kind and name in m.kind.slot_names)]
    if unused:
        blocks.append(Note("warning", f"Stated but not used in the equation: {', '.join(unused)}."))
    return Section("governing", "Governing equation and data", tuple(blocks))


def _kind_blocks(use) -> list:
    """The governing law of a model kind, derived down to its equation, with its assumptions."""
    blocks = [Paragraph(f"Model kind: {use.title} ({use.name}). Governing law: {use.law}.")]
    blocks += [Equation(Math(tex, text), "law" if i == 0 else "") for i, (tex, text) in enumerate(use.law_steps)]
    if use.forcing:
        blocks.append(Paragraph(f"Forcing: {use.forcing}."))
    blocks += [Paragraph("Assumptions of this kind:"), ItemList(use.assumptions)]
    blocks += [_kind_note(note, use) for note in use.notes]
    return blocks


def _kind_note(note: KindNote, use) -> Note:
    """A kind's finding on the sheet: a warning box for warnings and for a model not valid here."""
    text = finding_text(note, use)
    if note.severity == INVALID:
        return Note("warning", f"Model not valid for this case: {text}")
    return Note("warning" if note.severity == WARNING else "method", text)


def limit_words(use, code: str) -> str:
    """Why a kind's model stops holding, in the kind's words ("the tank overflows")."""
    return dict(use.findings).get(f"limit.{code}", "validity limit") if use is not None else "validity limit"


def finding_text(note: KindNote, use) -> str:
    """A kind's finding in words: the kind's template for its code, every number formatted the sheet's way."""
    return _FindingWords(note.values).format(dict(use.findings)[note.code], **note.values)


class _FindingWords(string.Formatter):
    """Fills a finding template (our own text, never the input's). Format specs: none for a number to the
    sheet's significant figures, a digit for that many, "duration" for a time in s, "clock" for a law's clock
    started at the field's value (t, or t - t_V), "since" for a time with how long after t_V it is."""

    def __init__(self, values: dict[str, float]):
        super().__init__()
        self.start = values.get(START_SLOT, 0.0)

    def format_field(self, value, spec: str) -> str:
        if spec == "duration":
            return duration(value)
        if spec == "clock":
            return "t" if value == 0 else f"(t - {START_SLOT})"
        if spec == "since":
            if self.start == 0:
                return f"t = {duration(value)} after the start"
            return f"t = {duration(value)}, {duration(value - self.start)} after {START_SLOT} = {duration(self.start)}"
        return number(value, int(spec)) if spec else number(value)


def _si_text(p) -> str:
    return unit_label(coherent_si(p.quantity.units))


def _classification(d: Derivation, n: _Notation) -> Section:
    c, m = d.classification, d.model
    y, x = m.unknown.name, m.variable.name
    rows = (
        ("Order", "1", f"the highest derivative is d{y}/d{x}"),
        (
            "Linearity",
            "linear",
            f"{y} and d{y}/d{x} appear only to the first power, never multiplied together or inside a function"
            + (f" (the model linearised in step {n.step_numbers['linearisation']})" if d.linearisation else ""),
        ),
        _forcing_row(c, m),
        (
            "Coefficients",
            "constant" if c.constant_coefficients else "varying",
            f"p does not depend on {x}" if c.constant_coefficients else f"p depends on {x}",
        ),
    )
    return Section(
        "classification",
        "Classification",
        (
            Table(("Property", "Finding", "Reason"), rows),
            Paragraph(
                "A first-order linear ordinary differential equation: it is solved by the integrating-factor method."
            ),
        ),
    )


def _forcing_row(c, m) -> tuple[str, str, str]:
    """Homogeneous or forced, as written; and, where the stated values make the forcing vanish (a source of
    0 V), said so beside the symbolic form's classification."""
    y, x = m.unknown.name, m.variable.name
    if c.homogeneous:
        return "Forcing", "homogeneous", f"r({x}) = 0: no term free of {y}"
    if c.homogeneous_with_values:
        zeros = ", ".join(
            f"{p.name} = {p.text}"
            for p in m.parameters
            if p.si == 0 and sp.Symbol(p.name) in {sp.Symbol(s.name) for s in c.r.free_symbols}
        )
        return (
            "Forcing",
            "forced as written; homogeneous with the stated values",
            f"r({x}) = {plain(c.r)} has a term free of {y}, which is 0 with the stated values"
            + (f" ({zeros})" if zeros else "")
            + ": the response is the natural response alone",
        )
    return "Forcing", "forced", f"a term free of {y} drives the response"


def _standard_form(d: Derivation, n: _Notation) -> Section:
    c = d.classification
    p, r = sp.Symbol("p"), sp.Symbol("r")
    return Section(
        "standard_form",
        "Standard form",
        (
            Paragraph(
                f"Divide by the coefficient of {n.dy.text}, a = {plain(c.a)}, and collect the terms in "
                f"{d.model.unknown.name} on the left (from this step on, terms and factors are in the order the "
                "algebra gives them, no longer as written):"
            ),
            n.eq(rf"{n.dy.latex} + p\,{latex(n.y)}", f"{n.dy.text} + p*{n.y}", (r"r", "r"), label="form"),
            n.eq(latex(p), "p", c.p),
            n.eq(latex(r), "r", c.r),
            n.eq(
                rf"{n.dy.latex} + {n.tex(_times(c.p, n.y))}",
                f"{n.dy.text} + {plain(_times(c.p, n.y))}",
                c.r,
                label="standard form",
            ),
        ),
    )


def _integrating_factor(d: Derivation, n: _Notation) -> Section:
    s, x = d.solution, n.x
    mu = sp.Symbol("mu")
    blocks = []
    if s.special_case:
        taken = ", ".join(f"{k} = {v}" for k, v in s.special_case)
        blocks.append(
            Note(
                "method",
                f"The general integral of p divides by a quantity that the stated values make "
                f"zero; the solution therefore takes {taken}, which gives p = {plain(s.p)} and "
                f"r = {plain(s.r)}.",
            )
        )
    blocks += [
        Paragraph(f"The integrating factor is the exponential of the integral of p over {x}:"),
        n.eq(
            latex(mu),
            "mu",
            (rf"\exp{{\left(\int p\,d{latex(x)}\right)}}", f"exp(integral of p d{x})"),
            *_distinct(n.show(sp.exp(s.P, evaluate=False)), n.show(s.mu)),
        ),
        *_where_blocks(d, n),
        Paragraph(
            f"Since dμ/d{x} = p μ, multiplying the standard form by μ turns its left side into an exact derivative:"
        ),
        n.eq(
            rf"\frac{{d}}{{d{latex(x)}}}\left(\mu\,{latex(n.y)}\right)",
            f"d(mu*{n.y})/d{x}",
            (r"\mu\,r", "mu*r"),
            n.show(s.mu_r),
        ),
    ]
    return Section("integrating_factor", "Integrating factor", tuple(blocks))


_NUMBER_TAU = sp.Symbol("tau_number")  # the time constant inside the numeric equation's exponentials


def _kept_tau(n: _Notation, values: dict) -> dict:
    """tau with its value in SI, kept as a number in the numeric equation (exp(-t/0.04), not exp(-25 t))."""
    g = n.groups
    if g.tau is None:
        return {}
    value = sp.N((1 / g.p).subs(values), 15)
    return {_NUMBER_TAU: float(value)} if value.is_Number and value > 0 else {}


def _line_form(line, n: _Notation) -> tuple[str, str]:
    """A line in the variable written as the kinds write their volume law: V_0 + (q_in - q_out) (t - t_V)."""
    g = n.groups
    rest = sp.expand(line - g.line_start) if g.line_start is not None else line
    slope = sp.factor(rest.diff(n.x))
    clock = sp.factor(rest / slope)
    start = (n.tex(g.line_start) + " + ", plain(g.line_start) + " + ") if g.line_start is not None else ("", "")
    slope_tex, slope_text = (
        (rf"\left({n.tex(slope)}\right)", f"({plain(slope)})") if slope.is_Add else (n.tex(slope), plain(slope))
    )
    clock_tex, clock_text = (
        (rf"\left({n.tex(clock)}\right)", f"({plain(clock)})") if clock.is_Add else (n.tex(clock), plain(clock))
    )
    return f"{start[0]}{slope_tex}\\,{clock_tex}", f"{start[1]}{slope_text}*{clock_text}"


def _where_blocks(d: Derivation, n: _Notation) -> list:
    """The "where" lines that introduce the names the solution steps use: where tau = 1/p = L/R = 40 ms."""
    m, blocks = d.model, []
    for what, name, expr in n.groups.where():
        rights = [_line_form(expr, n) if expr.has(n.x) else expr]
        if what == "time constant":
            rights.insert(0, (r"\frac{1}{p}", "1/p"))
            if d.numbers.time_constant is not None:
                shown = in_units(d.numbers.time_constant, m.variable)
                rights.append((quantity_latex(shown), shown))
        elif not expr.has(n.x):
            value = sp.N(expr.subs(m.numeric_values()), 15)
            if value.is_Number:
                rights.append((number(float(value)), number(float(value))))
        word = "and" if blocks else "where"
        blocks.append(n.eq(rf"\text{{{word}}}\quad {n.tex(name)}", f"{word} {plain(name)}", *rights, label=what))
    return blocks


def _integration(d: Derivation, n: _Notation) -> Section:
    s, x = d.solution, n.x
    blocks = [
        Paragraph(f"Integrate both sides over {x}; {s.constant} is the constant of integration:"),
        n.eq(
            rf"\mu\,{latex(n.y)}",
            f"mu*{n.y}",
            (rf"\int \mu\,r\,d{latex(x)} + {latex(s.constant)}", f"integral of mu*r d{x} + {s.constant}"),
            n.show(s.antiderivative + s.constant),
        ),
        Paragraph("Divide by μ for the general solution:"),
        n.eq(n.yx_latex, n.yx_text, n.show(s.general), label="general solution"),
    ]
    if not s.closed_form:
        reasons = "; ".join(_FALLBACK_WORDS[code] for code in s.fallback_codes)
        blocks.append(
            Note(
                "method",
                f"No closed form for part of the integral: {reasons}. That part is "
                "kept as a definite integral from the initial point and evaluated numerically "
                f"(step {n.step_numbers['numbers']}).",
            )
        )
    if s.branches:
        blocks.append(
            Note(
                "method",
                "sympy split the integral into cases; the stated values select the case " + "; ".join(s.branches) + ".",
            )
        )
    return Section("integration", "Integration and general solution", tuple(blocks))


def _initial_condition(d: Derivation, n: _Notation) -> Section:
    s, m = d.solution, d.model
    y0 = (latex(s.y0), s.y0.name)
    blocks = [
        Paragraph(
            f"The input gives {m.unknown.name} = {m.initial_value.text} at {m.variable.name} = "
            f"{m.initial_at.text}; write it {s.y0.name}"
            + ("" if s.x0 == 0 else f" at {s.x0}")
            + f" and solve the general solution there for {s.constant}:"
        ),
        n.eq(rf"{latex(n.y)}\left({latex(s.x0)}\right)", f"{m.unknown.name}({s.x0})", y0),
        n.eq(latex(s.constant), s.constant.name, n.show(s.constant_value)),
        Paragraph("The particular solution:"),
        n.eq(n.yx_latex, n.yx_text, n.show(s.particular), label="particular solution"),
    ]
    return Section("initial_condition", "Initial condition and particular solution", tuple(blocks))


def _split(d: Derivation, n: _Notation) -> Section:
    s, m, num = d.solution, d.model, d.numbers
    name = m.unknown.name
    blocks = [
        Paragraph(
            f"Natural response: the part of the form {s.constant}/μ, fixed by the initial condition, that the "
            "system produces on its own. Forced response: the part sustained by the forcing r."
        ),
        n.eq(rf"{latex(n.y)}_{{n}}\left({latex(n.x)}\right)", f"{name}_n({n.x})", n.show(s.natural), label="natural"),
        n.eq(rf"{latex(n.y)}_{{f}}\left({latex(n.x)}\right)", f"{name}_f({n.x})", n.show(s.forced), label="forced"),
    ]
    how = _FINAL_WORDS[num.final_value_note].format(x=m.variable.name)
    if num.final_value is None and num.valid_until is not None:  # not "grows without bound": the model ends first
        at, why = num.valid_until
        how = (
            f"none within the model: {limit_words(m.kind, why)} at {m.variable.name} = "
            f"{in_units(at, m.variable)}, and the model says nothing after that"
        )
    if num.final_value is not None:
        blocks.append(Paragraph(f"Final value: {name} tends to {in_units(num.final_value, m.unknown)} ({how})."))
    else:
        blocks.append(Paragraph(f"Final value: {how}."))
    return Section("split", "Natural and forced response", tuple(blocks))


def _numbers(d: Derivation, n: _Notation) -> Section:
    m, num, s = d.model, d.numbers, d.solution
    values = {**m.numeric_values(), **s.initial_values(m)}
    si_y, si_x = _si_unit_text(m.unknown), _si_unit_text(m.variable)
    blocks = [
        Paragraph(
            f"Values substituted in SI units ({m.variable.name} in {si_x or 'no unit'}, "
            f"{m.unknown.name} in {si_y or 'no unit'}); results are converted back to the units asked for."
        ),
        n.eq(
            n.yx_latex,
            n.yx_text,
            reproducing_expression(
                n.groups.show_clock(s.particular, _NUMBER_TAU),
                values,
                n.x,
                [(v.at.si, in_units(v.y, m.unknown)) for v in num.values],
                m.unknown,
                _kept_tau(n, values),
            ),
        ),
    ]
    blocks += _time_constant_blocks(d, n, values)
    if num.sine is not None:
        blocks.append(_steady_sine_table(d))
    if d.quadrature is not None:
        blocks.append(
            Note(
                "method",
                f"The integral term is evaluated by {quadrature_words()}. Largest error "
                "estimate over every evaluation made for this sheet: "
                f"{bound(d.quadrature.largest_error)} {si_y}".rstrip()
                + ".",
            )
        )
        if getattr(d.quadrature, "troubled", 0):
            blocks.append(
                Note(
                    "warning",
                    f"In {d.quadrature.troubled} of {d.quadrature.evaluations} evaluations the "
                    "quadrature reported that it could not reach its tolerance within its "
                    "bound of work; those values may be less accurate than stated. The "
                    "independent integration in the verification step decides.",
                )
            )
    if num.values:
        blocks.append(values_table(m, num.values))
    if num.reach:
        blocks.append(reach_table(m, num.reach))
    blocks += reach_blocks(d)
    if num.valid_until is not None:
        at, why = num.valid_until
        what = limit_words(m.kind, why)
        late = [v.at.text for v in num.values if v.at.si > at]
        blocks.append(
            Note(
                "warning",
                f"{what.capitalize()} at {m.variable.name} = {in_units(at, m.variable)}; the "
                "model does not hold after that, so the plot and the level search stop there"
                + (f". Values past it ({', '.join(late)}) do not apply." if late else "."),
            )
        )
    if num.domain_end is not None:
        blocks.append(
            Note(
                "warning",
                f"The solution stops existing near {m.variable.name} = "
                f"{in_units(num.domain_end, m.variable)} (a coefficient becomes singular).",
            )
        )
    return Section("numbers", "Numbers", tuple(blocks))


# the steps whose results a criterion may be answered from, in sheet order; the criteria step comes after all
_ANSWERED_FROM = (("numbers", "Numbers"), ("extremes", "Extremes"), ("derived", "Derived quantities"))


def _criteria(d: Derivation, n: _Notation) -> Section:
    """The criteria in a step of their own, after every step that works out a value they are answered from
    (values and levels, extremes, derived quantities), so a checker never meets a value before its step."""
    steps = [f"step {n.step_numbers[key]} ({title})" for key, title in _ANSWERED_FROM if key in n.step_numbers]
    lead = (
        "Each criterion of the input, answered from the results of "
        + (", ".join(steps[:-1]) + " and " + steps[-1] if len(steps) > 1 else steps[0])
        + ":"
    )
    return Section("criteria", "Acceptance criteria", (Paragraph(lead), criteria_table(d.model, d.numbers.verdicts)))


PAST_LIMIT = "past the validity limit: does not apply"


def values_table(m, values) -> Table:
    rows = tuple((v.at.text + _also(v.at, m.variable), in_units(v.y, m.unknown)) for v in values)
    past = [not getattr(v, "applies", True) for v in values]
    if not any(past):
        return Table((m.variable.name, m.unknown.name), rows, f"Values of {m.unknown.name}", key="values")
    return Table(
        (m.variable.name, m.unknown.name, "Remark"),
        tuple(row + (PAST_LIMIT if late else "",) for row, late in zip(rows, past)),
        f"Values of {m.unknown.name}",
        row_status=tuple("fail" if late else "" for late in past),
        status_column=2,
        key="values",
    )


def reach_table(m, reaches) -> Table:
    return Table(
        ("Level", f"First reached at {m.variable.name} =", "Remark"),
        tuple(
            (r.level.text, in_units(r.x, m.variable) if r.x is not None else "not reached", _reach_remark(r, m))
            for r in reaches
        ),
        "Levels reached after the initial point",
        key="reach",
    )


def _reach_remark(r, m) -> str:
    """Why a level is not reached, in the sheet's words (the rule is in numbers.reach_for)."""
    code = getattr(r, "code", "")
    if r.x is not None:
        return ""
    searched = f"up to {SEARCH_SCALES} natural scales past the initial point"
    if code == MODEL_STOPS:
        return (
            f"not reached before {m.variable.name} = {in_units(r.stop, m.variable)}, where the model stops "
            f"holding ({limit_words(m.kind, m.kind.limit[1] if m.kind and m.kind.limit else '')}); the model says "
            "nothing after that"
        )
    if code == OVERFLOWS:
        return (
            f"not reached before {m.variable.name} = {in_units(r.stop, m.variable)}, where the response grows "
            "past the floating-point range"
        )
    if code == SOLUTION_ENDS:
        return f"not reached before the solution stops existing near {m.variable.name} = {in_units(r.stop, m.variable)}"
    if code == APPROACHES_FINAL:
        return "not reached: this is the final value, which the response approaches but never reaches"
    if code == SETTLES_SHORT:
        return f"not reached {searched}; the response settles at its final value short of it"
    if code == MOVES_AWAY:
        return (
            "not reached after the initial point: the response starts on this level and leaves it without "
            "coming back across it"
        )
    return f"not reached {searched}"


def criteria_table(m, verdicts) -> Table:
    return Table(
        ("Criterion", "Check", "Source of limit", "Found", "Margin", "Use of limit", "Result"),
        tuple(
            (
                v.criterion.text,
                check_cell(v.criterion),
                source_cell(v.criterion),
                _found(v, m),
                *_margin_cells(v),
                _result(v),
            )
            for v in verdicts
        ),
        "Acceptance criteria",
        row_status=tuple({"pass": "pass", "fail": "fail"}.get(_status(v), "") for v in verdicts),
        key="criteria",
    )


def _result(verdict) -> str:
    status = _status(verdict)
    if status == "not assessed":
        return f"not assessed ({_NOT_ASSESSED_WHY.get(verdict.code, 'see the record')})"
    return _STATUS_WORDS[status]


def checks_table(checks, caption: str = "") -> Table:
    return Table(
        ("Check", "Method", "Result", "Detail"),
        tuple(check_row(c) for c in checks),
        caption,
        row_status=tuple("pass" if c.passed else "fail" for c in checks),
        status_column=2,
    )


def _time_constant_blocks(d: Derivation, n: _Notation, values) -> list:
    num, m = d.numbers, d.model
    if num.time_constant is None:
        word = _constant_word(d)
        why = (
            f"p varies with {m.variable.name}, so there is no single {word}"
            if num.time_constant_note == TAU_VARYING
            else f"p is not positive: the natural response does not decay, so there is no {word}"
        )
        return [Paragraph(f"{word.capitalize()}: none; {why}.")]
    shown = in_units(num.time_constant, m.variable)
    tau = sp.Symbol("tau")
    by_hand = _by_hand(num.time_constant_expr, m)
    return [
        n.eq(
            latex(tau),
            "tau",
            (r"\frac{1}{p}", "1/p"),
            *_distinct(tau, num.time_constant_expr)[1:],
            *([by_hand] if by_hand else []),
            (quantity_latex(shown), shown),
            label=_constant_word(d),
        )
    ]


def _by_hand(expr, m):
    """A product or quotient of parameters with the values as the input states them, for a checker to
    multiply out by hand: R*C -> 4.7 kohm × 2200 uF. None for any other form."""
    if expr is None:
        return None
    texts = {sp.Symbol(p.name, positive=True): p.text for p in m.parameters}
    texts.update({sp.Symbol(p.name): p.text for p in m.parameters})
    up, down = [], []
    for factor in sp.Mul.make_args(expr):
        base, power = factor.as_base_exp()
        if base not in texts or power not in (1, -1):
            return None
        (up if power == 1 else down).append(texts[base])
    if not up or len(up) + len(down) < 2:
        return None
    text = " × ".join(up) + ("" if not down else " / " + (down[0] if len(down) == 1 else f"({' × '.join(down)})"))
    times = r" \times "
    tex = times.join(quantity_latex(t) for t in up)
    if down:
        below = times.join(quantity_latex(t) for t in down)
        tex = rf"\frac{{{tex}}}{{{below}}}"
    return tex, text


def _steady_sine_table(d: Derivation) -> Table:
    sine, m = d.numbers.sine, d.model
    rows = (
        ("Angular frequency", "ω = 2π f", f"{number(sine.omega)} rad/{_si_unit_text(m.variable)}"),
        ("Amplitude ratio", "1/√(1 + (ωτ)²)", number(sine.amplitude_ratio)),
        ("Phase lag", "atan(ωτ)", f"{number(sine.phase_lag_deg)} deg"),
        ("Transient below 1 %", "τ ln 100", in_units(sine.settled_after, m.variable)),
    )
    return Table(
        ("Quantity", "Formula", "Value"),
        rows,
        "Steady sinusoidal response of the lag, per unit static gain (first-order lag; common practice)",
    )


def _constant_word(d: Derivation) -> str:
    return "time constant" if same_dimension(d.model.variable.unit, parse_unit("s")) else "length constant"


_FALLBACK_WORDS = {
    NO_CLOSED_FORM: "sympy found no closed form for this integral",
    BUDGET_EXCEEDED: f"symbolic integration did not finish within its budget of {INTEGRATE_SECONDS:g} s",
    NOT_FINITE_AT_START: "the antiderivative found has no finite value at the initial point, so the constant of "
    "integration cannot be taken from it there",
}
_FINAL_WORDS = {
    FINAL_LIMIT_OF_SOLUTION: "limit of the particular solution as {x} grows without bound",
    FINAL_LIMIT_OF_R_OVER_P: "limit of r/p as {x} grows without bound, p being constant and positive",
    FINAL_NOT_DECAYING: "none: the natural response does not decay (p is not positive)",
    FINAL_UNDETERMINED: "not determined: varying coefficient and no closed form",
    FINAL_OUT_OF_TIME: "not determined: the limit did not finish within its time budget",
    FINAL_OSCILLATES: "none: the response keeps oscillating and does not settle",
    FINAL_GROWS: "none: the response grows without bound",
    FINAL_UNSETTLED: "none: the response keeps oscillating or does not settle",
}


def _found(v, m) -> str:
    """The found value in the unit of the criterion's own limit (and where an extreme was taken)."""
    subject = SUBJECTS[v.criterion.subject]
    if v.actual is None:
        return "not reached" if subject.absent_is_never else "does not exist"
    numbers = criterion_numbers(v)
    found = found_text(numbers) if numbers else in_units(v.actual, measured_like(m, v.criterion))
    extreme = getattr(v, "extreme", None)
    return found if extreme is None else f"{found} {_extreme_where(extreme, m)}"


def measured_like(m, criterion):
    """The Declared a criterion's found value is measured like: the unknown or a derived quantity, the variable,
    or a derived quantity's integral."""
    found = SUBJECTS[criterion.subject].found
    if found == UNKNOWN:
        return m.quantity(criterion.of)
    if found == INTEGRAL:
        return m.derived_named(criterion.of).integral
    return m.variable


def _margin_cells(v) -> tuple[str, str]:
    """How far inside the limit the found value is, and how much of the limit it uses (sheet/criterion_numbers)."""
    numbers = criterion_numbers(v) if getattr(v, "status", "") != "not assessed" else None
    return (margin_text(numbers), utilisation_text(numbers)) if numbers else ("", "")


def difference(si: float, declared) -> str:
    """A difference of two values of ``declared`` (for degC, in K: an offset cancels in a difference)."""
    shown = si * declared.scale  # the offset of degC or degF cancels in a difference
    unit = "K" if declared.offset and declared.scale == 1 else declared.unit_text
    return f"{number(shown)} {unit}".rstrip()


# How an extreme was found (derive/extremes.py codes), in the sheet's and the record's words.
EXTREME_METHOD_WORDS = {
    STATIONARY: "stationary point",
    FORCING_JUMP: "jump in the forcing",
    SWITCH: "switch",
    BEFORE_SWITCH: "just before a switch",
    WINDOW_END: "end of window",
    FINAL_VALUE: "final value",
}
_EXTREME_KIND_WORDS = {"max": "largest", "min": "smallest"}


def _extreme_where(e, m) -> str:
    """'at t = 23.30 s (stationary point)', or for a final value that decides, that it is approached."""
    if e.method == FINAL_VALUE:
        return "(the final value: approached, never reached)"
    return f"at {m.variable.name} = {in_units(e.at, m.variable)} ({EXTREME_METHOD_WORDS[e.method]})"


def extreme_window(e, m) -> str:
    """The window as the sheet writes it: '0 s to 60.00 s', or 'from 5 s on' for an open window."""
    start = in_units(e.start, m.variable)
    if e.open_ended:
        return f"{m.variable.name} >= {start}"
    return f"{start} to {in_units(e.end, m.variable)}"


def extremes_blocks(m, extremes, slope_equations=()) -> list:
    """The Extremes step's content: the derivative, the stationary points, each extreme with how it was found."""
    y, x = m.unknown.name, m.variable.name
    blocks = [
        Paragraph(
            f"Over a window, {y} is largest or smallest where d{y}/d{x} = 0 (a stationary point), where "
            f"d{y}/d{x} jumps (a step or pulse edge in the forcing, a switch), or at an end of the window. "
            + (
                "The derivative of the particular solution:"
                if slope_equations
                else "Each interval's particular solution gives d{y}/d{x} there, and the switch instants are "
                "compared too.".format(y=y, x=x)
            )
        ),
        *slope_equations,
    ]
    corners = sorted({(c, how) for e in extremes for c, how in e.corners})
    if corners:
        blocks.append(
            Paragraph(
                f"d{y}/d{x} jumps at "
                + ", ".join(f"{x} = {in_units(c, m.variable)} ({EXTREME_METHOD_WORDS[how]})" for c, how in corners)
                + "; the response is compared there too."
            )
        )
    points = sorted({(s.at, s.value, s.root) for e in extremes for s in e.stationary}, key=lambda p: p[0])
    solved = all(e.solved for e in extremes)
    how = (
        "sympy solved d{y}/d{x} = 0 between the jumps"
        if solved
        else "the sign changes of d{y}/d{x} were bracketed on a grid between the jumps and each refined by Brent's "
        "method (scipy brentq)"
    ).format(y=y, x=x)
    if points:
        rows = tuple(
            (
                in_units(at, m.variable),
                in_units(value, m.unknown),
                plain(root) if root is not None else "bracketed and refined",
            )
            for at, value, root in points
        )
        blocks.append(Table((f"{x}", f"{y}", f"Root of d{y}/d{x} = 0 (SI)"), rows, f"Stationary points: {how}"))
    else:
        blocks.append(Paragraph(f"No stationary point inside the windows: {how}, and found none."))
    rows = []
    for e in extremes:
        value = in_units(e.value, m.unknown) if e.value is not None else "does not exist (grows without bound)"
        at = in_units(e.at, m.variable) if e.at is not None else "-"
        rows.append(
            (f"{_EXTREME_KIND_WORDS[e.kind]} {y}", extreme_window(e, m), value, at, EXTREME_METHOD_WORDS[e.method])
        )
    blocks.append(
        Table(
            ("Extreme", f"Over {x}", "Value", f"At {x} =", "Given by"), tuple(rows), f"Extremes of {y}", key="extremes"
        )
    )
    for e in extremes:
        if e.open_ended:
            blocks.append(_tail_note(e, m))
    return blocks


def _tail_note(e, m) -> Note:
    """Why an open window is settled by the analysed range: past the last stationary point and jump, the
    response is monotone, so it lies between its value there and its final value."""
    y, x = m.unknown.name, m.variable.name
    tail = in_units(e.tail_from, m.variable)
    lead = (
        f"For {x} >= {in_units(e.start, m.variable)}: past {x} = {tail} (the last stationary point, jump or the "
        f"window's start) d{y}/d{x} keeps one sign, so {y} is monotone there and lies between its value at "
        f"{x} = {tail} and its limit."
    )
    if e.method == FINAL_VALUE and e.value is not None:
        return Note(
            "method",
            f"{lead} It moves towards its final value, {in_units(e.value, m.unknown)}, up to the end "
            f"of the analysed range ({x} = {in_units(e.end, m.variable)}): the final value decides "
            f"the {_EXTREME_KIND_WORDS[e.kind]} value, approached but never reached.",
        )
    if e.method == FINAL_VALUE:
        return Note("warning", f"{lead} It has no final value: the {_EXTREME_KIND_WORDS[e.kind]} value does not exist.")
    return Note(
        "method",
        f"{lead} The {_EXTREME_KIND_WORDS[e.kind]} value is taken before the tail, at {x} = "
        f"{in_units(e.at, m.variable)}.",
    )


def _extremes(d: Derivation, n: _Notation) -> Section:
    m, s, c = d.model, d.solution, d.classification
    values = {**m.numeric_values(), **s.initial_values(m)}
    if s.closed_form:
        slope = sp.diff(s.particular, n.x).replace(sp.DiracDelta, lambda *args: sp.S.Zero)
        equations = [
            n.eq(
                n.dy.latex,
                n.dy.text,
                numeric_expression(slope, values),
                label="derivative" + (" away from the jumps" if s.particular.has(sp.Heaviside) else ""),
            )
        ]
    else:
        p, r = (s.p if s.p is not None else c.p), (s.r if s.r is not None else c.r)
        equations = [
            n.eq(
                n.dy.latex,
                n.dy.text,
                (rf"r - p\,{latex(n.y)}", f"r - p*{n.y}"),
                numeric_expression(r - p * n.y, values),
                label="from the standard form",
            )
        ]
    shown = tuple(e for e in d.numbers.extremes if not e.of)  # a derived quantity's are in its own step
    return Section("extremes", "Extremes", tuple(extremes_blocks(m, shown, equations)))


def _also(point, declared) -> str:
    """'5 min' also shown in the declared unit when written in another one."""
    return "" if point.quantity.units == declared.unit else f" ({in_units(point.si, declared)})"


def _distinct(*exprs):
    """Drop a repeated right-hand side (exp(P) that needed no rewriting)."""
    kept = []
    for e in exprs:
        if not kept or plain(e) != plain(kept[-1]):
            kept.append(e)
    return kept


def _times(coefficient, y):
    """p*y with p kept together, so the coefficient reads as one factor."""
    if not coefficient.is_Add:
        return coefficient * y
    return sp.Mul(coefficient, y, evaluate=False)


def _si_unit_text(declared) -> str:
    return unit_label(coherent_si(declared.unit))


def _verification(d: Derivation, n: _Notation) -> Section:
    return Section(
        "verification",
        "Verification",
        (
            Paragraph(checks_lead(len(d.verification.checks))),
            checks_table(d.verification.checks),
            *(accuracy_blocks(d) if d.linearisation is not None else ()),
        ),
    )


# The numbered steps in their order: (section key, builder). Cross-references use the numbers this gives.
STEPS = (
    ("governing", _governing),
    ("linearisation", linearisation_section),
    ("classification", _classification),
    ("standard_form", _standard_form),
    ("integrating_factor", _integrating_factor),
    ("integration", _integration),
    ("initial_condition", _initial_condition),
    ("split", _split),
    ("numbers", _numbers),
    ("extremes", _extremes),
    ("derived", derived_section),
    ("criteria", _criteria),
    ("margin", lambda d, n: margin_section(d)),
    ("verification", _verification),
)
# shown only when the input asks for them (extremes, derived quantities, criteria), or gives parameters ranges
# (margin)
OPTIONAL_STEPS = {
    "linearisation": lambda d: getattr(d, "linearisation", None) is not None,
    "extremes": lambda d: any(not e.of for e in d.numbers.extremes),
    "derived": has_derived,
    "criteria": lambda d: bool(d.numbers.verdicts),
    "margin": has_margin,
}
