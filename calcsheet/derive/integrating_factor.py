"""The integrating-factor solution of y' + p y = r, kept symbolic in the parameters.

mu = exp(∫p dx); d(mu y)/dx = mu r; y = (∫mu r dx + K)/mu. The forcing is integrated term by
term: a term whose integral has no closed form (or whose integration runs out of its time
budget) stays a definite integral from the initial point and is evaluated by quadrature.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

from calcsheet.derive import exp_sinusoid
from calcsheet.derive.budget import BUDGET_EXCEEDED, INTEGRATE_SECONDS, NO_CLOSED_FORM, NOT_FINITE_AT_START, within
from calcsheet.derive.classify import Classification
from calcsheet.derive.no_elementary import lorentzian_under_exponential
from calcsheet.derive.readable import choose_branches, compact, decided, exp_of_logs_to_powers
from calcsheet.errors import ModelRefused
from calcsheet.mathtext import plain
from calcsheet.model import Model


@dataclass(frozen=True)
class Solution:
    x0: sp.Expr  # the initial abscissa: 0 or a symbol such as t_0
    y0: sp.Symbol  # the initial value, e.g. v_0
    P: sp.Expr  # ∫ p dx (no constant)
    mu: sp.Expr
    mu_r: sp.Expr
    antiderivative: sp.Expr  # ∫ mu r dx; open terms stay as Integral
    open_terms: tuple[sp.Expr, ...]  # terms of r whose ∫ mu r_i dx has no closed form
    constant: sp.Symbol  # K
    general: sp.Expr
    constant_value: sp.Expr
    particular: sp.Expr
    natural: sp.Expr
    forced: sp.Expr
    forced_closed: sp.Expr  # the part of the forced response that has a closed form
    branches: tuple[str, ...]  # sympy case splits decided by the stated values
    fallback_codes: tuple[str, ...] = ()  # why terms stayed integrals: budget.NO_CLOSED_FORM or BUDGET_EXCEEDED
    special_case: tuple[tuple[str, str], ...] = ()  # (symbol, value) the stated values force, e.g. q_in = q_out
    # the conditions on the parameters this form was chosen under (sympy's cases, a special case's equality):
    # where other values break one, another form holds there (solution_at)
    chosen_under: tuple[sp.Basic, ...] = ()
    p: sp.Expr = None  # p and r as solved (the classification's, unless a special case applies)
    r: sp.Expr = None

    @property
    def closed_form(self) -> bool:
        return not self.open_terms

    def initial_values(self, model: Model) -> dict[sp.Symbol, float]:
        values = {self.y0: model.initial_value.si}
        if isinstance(self.x0, sp.Symbol):
            values[self.x0] = model.initial_at.si
        return values


def solve(model: Model, cls: Classification, forcing_seconds: float = INTEGRATE_SECONDS) -> Solution:
    """The solution; each forcing term's integral gets ``forcing_seconds`` before it falls back."""
    x = model.variable.symbol
    values = model.numeric_values()
    x0, y0 = _initial_symbols(model)
    p, r = cls.p, cls.r
    conditions: list = []
    P, closed, why = _integrate(p, x, values, INTEGRATE_SECONDS, conditions)
    special = _special_case(P, values) if closed else {}
    if special:  # e.g. q_in = q_out: the general integral divides by their difference
        p, r = p.subs(special), r.subs(special)
        conditions = [sp.Eq(k, v) for k, v in special.items()]
        P, closed, why = _integrate(p, x, values, INTEGRATE_SECONDS, conditions)
    if not closed:
        raise ModelRefused(
            f"the integrating factor needs the integral of p = {p}, and {_REASONS[why]}; "
            "this tool does not handle that case yet",
            "model.equation",
        )
    mu = exp_of_logs_to_powers(sp.exp(P))
    taken = {p.name for p in model.parameters}
    K = sp.Symbol(next(n for n in ("K", "K_c", "C_K", "K_int") if n not in taken))
    s = sp.Dummy(f"{model.variable.name}'")  # a Dummy can never clash with a parameter name
    closed_parts, open_terms, singular, reasons, notes = [], [], [], [], []
    start = {**values, x0: model.initial_at.si} if isinstance(x0, sp.Symbol) else values
    for term in sp.Add.make_args(r) if not cls.homogeneous else ():
        integral, done, reason = _integrate(sp.powsimp(mu * term), x, values, forcing_seconds, conditions)
        if done and not _finite_at(integral, x, x0, start):
            done, reason = False, NOT_FINITE_AT_START
        if done:
            closed_parts.append(integral)
        elif reason == NOT_FINITE_AT_START:
            singular.append(term)
        else:
            open_terms.append(term)
            reasons.append(reason)
    if singular:  # kept as one integral: apart, terms such as 1/t and -exp(-t/T)/t diverge at t = 0
        combined = sp.factor_terms(sp.together(sp.Add(*singular)))
        _refuse_unless_finite_at_start(sp.powsimp(mu * combined), x, start, model)
        open_terms.append(combined)
        reasons.append(NOT_FINITE_AT_START)
    F, branch_notes = choose_branches(compact(sp.Add(*closed_parts)), values, conditions)
    notes.extend(branch_notes)
    k_value = compact(y0 * mu.subs(x, x0) - F.subs(x, x0))
    natural = compact(k_value / mu)
    forced_closed = compact(F / mu)
    forced = forced_closed + sp.Add(
        *(sp.Integral(compact(mu.subs(x, s) * term.subs(x, s) / mu), (s, x0, x)) for term in open_terms)
    )
    antiderivative = F + sp.Add(*(sp.Integral(sp.powsimp(mu * term), x) for term in open_terms))
    return Solution(
        x0=x0,
        y0=y0,
        P=P,
        mu=mu,
        mu_r=sp.powsimp(mu * r),
        antiderivative=antiderivative,
        open_terms=tuple(open_terms),
        constant=K,
        general=(antiderivative + K) / mu,
        constant_value=k_value,
        particular=natural + forced,
        natural=natural,
        forced=forced,
        forced_closed=forced_closed,
        branches=tuple(notes),
        fallback_codes=tuple(sorted(set(reasons))),
        special_case=tuple((plain(k), plain(v)) for k, v in special.items()),
        p=p,
        r=r,
        chosen_under=tuple(dict.fromkeys(c for c in conditions if c.free_symbols)),
    )


# Solutions solved anew where the nominal form does not hold, by the form and the verdicts on its conditions
_SOLVED_AT: dict = {}
_SOLVED_AT_KEPT = 64


def solution_at(model: Model, cls: Classification, solution: Solution) -> Solution:
    """The solution whose form holds at this Model's values: ``solution`` itself where every condition it was
    chosen under still holds (or cannot be decided), else the one solved anew for these values, once per
    combination of verdicts. A tolerance or sweep that reaches T_1 = T_2 from a sheet stated with T_1 != T_2 (or
    leaves it from one stated with equality) must not evaluate the other case's formula there."""
    if not solution.chosen_under:
        return solution
    values = model.numeric_values()
    verdicts = tuple(decided(c.subs(values)) for c in solution.chosen_under)
    if False not in verdicts:
        return solution
    key = (solution, verdicts)
    if key not in _SOLVED_AT:
        if len(_SOLVED_AT) >= _SOLVED_AT_KEPT:
            _SOLVED_AT.clear()
        _SOLVED_AT[key] = solve(model, cls)
    return _SOLVED_AT[key]


_REASONS = {  # for the refusal when p itself cannot be integrated; the sheet's words are in compose
    NO_CLOSED_FORM: "sympy found no closed form for this integral",
    BUDGET_EXCEEDED: f"symbolic integration did not finish within its budget of {INTEGRATE_SECONDS:g} s",
}


def _refuse_unless_finite_at_start(integrand: sp.Expr, x: sp.Symbol, start, model: Model) -> None:
    """The integral from the initial point exists only where mu r has a finite limit there (T/t has none)."""
    from calcsheet.derive.safe_numeric import NotFinite, SafeFunction

    x0 = model.initial_at.si
    scale = max(abs(x0), max((abs(p.si) for p in model.evaluate_at), default=1.0), 1e-300)
    try:
        SafeFunction(integrand.subs(start), x, scale=scale, side=1).limit(x0)
    except NotFinite:
        raise ModelRefused(
            "the forcing has no finite limit at the initial point, so the response cannot start "
            "there: the integral of mu*r from the initial point does not exist",
            "model.equation",
        ) from None


def _finite_at(antiderivative: sp.Expr, x: sp.Symbol, x0: sp.Expr, values) -> bool:
    """Has F a finite real value at the initial point, with the stated values? (Ei(a t) - Ei(b t) at
    t = 0 has not: each term is infinite, and only their limit is finite.)"""
    try:
        value = complex(sp.N(antiderivative.subs(values).subs(x, x0.subs(values)), 15))
    except (TypeError, ValueError, ArithmeticError):
        return False
    return all(map(_is_finite, (value.real, value.imag))) and abs(value.imag) <= 1e-12 * max(1.0, abs(value.real))


def _is_finite(number: float) -> bool:
    return number == number and abs(number) != float("inf")


def _special_case(P: sp.Expr, values) -> dict:
    """Where the general integral divides by a combination the stated values make zero, the
    substitution that gives the special case instead (q_in - q_out = 0 -> {q_in: q_out})."""
    if not P.subs(values).has(sp.zoo, sp.nan, sp.oo, -sp.oo):
        return {}
    denominators = {sp.fraction(sp.together(term))[1] for term in sp.preorder_traversal(P) if isinstance(term, sp.Expr)}
    for denominator in sorted(denominators, key=sp.default_sort_key):
        for factor in sp.Mul.make_args(sp.factor(denominator)):
            base = factor.as_base_exp()[0]
            if base.free_symbols and base.subs(values).is_zero:
                symbol = sorted(base.free_symbols, key=lambda s: s.name)[0]
                roots = sp.solve(base, symbol)
                if roots:
                    return {symbol: roots[0]}
    return {}


def _initial_symbols(model: Model) -> tuple[sp.Expr, sp.Symbol]:
    taken = {p.name for p in model.parameters}
    y0 = sp.Symbol(_free_name(f"{model.unknown.name}_0", taken), real=True)
    if model.initial_at.si == 0:
        return sp.Integer(0), y0
    return sp.Symbol(_free_name(f"{model.variable.name}_0", taken), real=True), y0


def _free_name(name: str, taken: set[str]) -> str:
    while name in taken:
        name += "i"
    return name


def _integrate(
    expr: sp.Expr, x: sp.Symbol, values, seconds: float, conditions: list | None = None
) -> tuple[sp.Expr, bool, str]:
    """∫ expr dx under the time budget: (result, closed, the code of why not closed); the conditions of the cases
    the values chose are added to ``conditions``.

    A sinusoid times an exponential is written down (exp_sinusoid.py), and a form known to have no closed form
    (no_elementary.py) is not tried; otherwise the quick rule-based integrator goes first, the full algorithm only
    when it fails.
    """
    if lorentzian_under_exponential(expr, x):
        return sp.Integral(expr, x), False, NO_CLOSED_FORM

    def attempt() -> sp.Expr:
        known = exp_sinusoid.antiderivative(expr, x)
        if known is not None:
            return known
        result = sp.integrate(expr, x, manual=True)
        if result.has(sp.Integral):
            result = sp.integrate(expr, x)
        return result

    result, done = within(seconds, attempt, None)
    if not done:
        return sp.Integral(expr, x), False, BUDGET_EXCEEDED
    result, _ = choose_branches(result, values, conditions)
    if result.has(sp.Integral) or result.has(sp.Piecewise):
        return sp.Integral(expr, x), False, NO_CLOSED_FORM
    return result, True, ""
