"""A non-linear first-order equation linearised about an operating point, before it is classified.

Why: the integrating-factor method needs a linear equation, and the trade's answer for a tank that
drains through an orifice or a body that also radiates is a first-order Taylor expansion about an
operating point. By hand that step is where the derivative, the deviation variable or the sign of
the slope go wrong; here it is done once, as facts (which terms, the point and how it was found,
each term's expansion), and returns the linear Model the rest of derive solves unchanged. How far
the linearised response strays from the non-linear one is measured elsewhere
(``derive/linear_accuracy.py``), on the stated equation itself.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import sympy as sp
from scipy.optimize import brentq

from calcsheet.derive.budget import SIMPLIFY_SECONDS, within
from calcsheet.derive.classify import tidy
from calcsheet.derive.safe_numeric import has_infinity, real_float
from calcsheet.errors import ModelRefused
from calcsheet.mathtext import plain
from calcsheet.model import LineariseRequest, Model, Parameter
from calcsheet.source import units

# How the operating point was found (OperatingPoint.method) and why a root was chosen (.choice).
STATED, SYMBOLIC, NUMERIC = "stated", "symbolic", "numeric"
ONLY_ROOT, ONLY_STABLE, NEAREST_STABLE, NEAREST = "only_root", "only_stable", "nearest_stable", "nearest"
MAX_SYMBOLIC_DEGREE = 2  # a cubic's or quartic's closed-form roots help no checker: those are found numerically
SCAN_DECADES, SCAN_POINTS = 6, 241  # the bracket scan for a numeric root: 1e-6 .. 1e6 × the reference size
ROOT_RTOL = 4 * np.finfo(float).eps
STEADY_RESIDUAL = 1e-9  # a root whose residual exceeds this share of the terms' size is spurious
KINKS = (sp.Abs, sp.sign, sp.Heaviside)


@dataclass(frozen=True)
class Term:
    """One non-linear term f(y) of a side, with its first-order expansion f(y0) + f'(y0) (y - y0)."""

    term: sp.Expr
    slope: sp.Expr  # df/dy
    value_at: sp.Expr  # f(y0), symbolic
    slope_at: sp.Expr  # f'(y0), symbolic
    value_si: float
    slope_si: float
    linear: sp.Expr


@dataclass(frozen=True)
class OperatingPoint:
    si: float
    expr: sp.Expr  # y0: in the parameters' symbols when solved symbolically, else the symbol of a new parameter
    method: str  # STATED, SYMBOLIC or NUMERIC
    roots: tuple[float, ...] = ()  # every real root of the steady state, in SI
    choice: str = ""  # why ``si`` among ``roots`` (ONLY_ROOT ...)
    solved: sp.Expr | None = None  # the steady-state equation f(y) = 0 that was solved (dy/dx = 0)
    parameter: Parameter | None = None  # the point as a parameter of the linear model (stated or numeric)


@dataclass(frozen=True)
class Linearisation:
    original: Model  # as stated, non-linear
    request: LineariseRequest
    point: OperatingPoint
    terms: tuple[Term, ...]
    deviation: sp.Symbol  # Δy = y - y0
    deviation_derivative: sp.Symbol
    deviation_lhs: sp.Expr
    deviation_rhs: sp.Expr
    model: Model  # the linear Model in the original unknown


def linearise(model: Model) -> Linearisation:
    """The linear Model about the requested point, with the facts a checker needs to follow it."""
    request = model.linearise
    y, dy = model.unknown.symbol, model.derivative
    _refuse_nonlinear_derivative(model)
    found = _nonlinear_terms(model)
    if not found:
        raise ModelRefused(
            f"[linearise] is given, but the equation is already linear in {model.unknown.name}; remove [linearise]",
            "linearise",
        )
    point = _operating_point(model, request)
    values = model.numeric_values()
    if point.parameter is not None:
        values[point.parameter.symbol] = point.si
    terms = tuple(_expand(term, model, point, values) for term in found)
    by_term = {t.term: t.linear for t in terms}
    lhs, rhs = (_replaced(side, by_term) for side in (model.lhs, model.rhs))
    coefficient = sp.diff(lhs - rhs, y)
    if sp.expand(coefficient.subs(values)) == 0:
        flat = [t for t in terms if t.slope_si == 0] or list(terms)
        raise ModelRefused(
            f"the term '{plain(flat[0].term)}' has zero slope at {_point_words(model, point)}, so the linearised "
            f"equation has no {model.unknown.name} in it (its linear coefficient is zero); choose another "
            "operating point",
            "linearise.about",
        )
    parameters = model.parameters + ((point.parameter,) if point.parameter is not None else ())
    linear = replace(model, lhs=lhs, rhs=rhs, parameters=parameters)
    name = model.unknown.name
    delta = sp.Symbol(f"Δ{name}", real=True)
    delta_rate = sp.Symbol(f"dΔ{name}/d{model.variable.name}", real=True)
    dev_lhs, dev_rhs = (_in_deviation(side, y, dy, point.expr, delta, delta_rate) for side in (lhs, rhs))
    return Linearisation(model, request, point, terms, delta, delta_rate, dev_lhs, dev_rhs, linear)


# ------------------------------------------------------------------------------------------- terms
def _nonlinear_terms(model: Model) -> list[sp.Expr]:
    """The terms, side by side, whose slope in the unknown still holds the unknown."""
    y = model.unknown.symbol
    found = []
    for side in (model.lhs, model.rhs):
        for term in _terms(side):
            if sp.diff(term, y).has(y) and term not in found:
                found.append(term)
    return found


def _terms(side: sp.Expr) -> tuple[sp.Expr, ...]:
    """A side's additive terms; a product holding a sum is multiplied out (eps*A*(T^4 - T_s^4)), nothing
    else is rewritten, so the linear terms stay as written."""
    out = []
    for term in sp.Add.make_args(side):
        spread = sp.expand(term, power_exp=False, power_base=False, log=False)
        out.extend(sp.Add.make_args(spread) if spread != term else (term,))
    return tuple(out)


def _replaced(side: sp.Expr, by_term: dict) -> sp.Expr:
    """The side with each non-linear term replaced by its expansion (terms gathered as ``_terms`` splits them)."""
    return sp.Add(*(by_term.get(term, term) for term in _terms(side)))


def _refuse_nonlinear_derivative(model: Model) -> None:
    y, dy = model.unknown.symbol, model.derivative
    for side in (model.lhs, model.rhs):
        for term in _terms(side):
            rate = sp.diff(term, dy)
            if rate.has(dy) or rate.has(y):
                raise ModelRefused(
                    f"the term '{plain(term)}' is not linear in d{model.unknown.name}/d{model.variable.name}: only "
                    f"terms non-linear in {model.unknown.name} alone are linearised",
                    "model.equation",
                )


def _expand(term: sp.Expr, model: Model, point: OperatingPoint, values: dict) -> Term:
    """f(y0) + f'(y0) (y - y0), refused where f has no derivative at y0 (|y| or sqrt(y) at 0)."""
    y = model.unknown.symbol
    where = _point_words(model, point)
    for kink in term.atoms(*KINKS):
        argument = kink.args[0]
        if argument.has(y) and abs(real_float(sp.N(argument.subs(y, point.expr).subs(values), 20))) <= 1e-12 * (
            1 + abs(point.si)
        ):
            raise ModelRefused(
                f"the term '{plain(term)}' is not differentiable at {where} ({plain(kink)} has a corner there)",
                "linearise.about",
            )
    slope = sp.diff(term, y)
    value_at = tidy(term.subs(y, point.expr))
    slope_at = tidy(slope.subs(y, point.expr))
    value_si, slope_si = (_number(e, values) for e in (value_at, slope_at))
    if not math.isfinite(value_si):
        raise ModelRefused(f"the term '{plain(term)}' is not real and finite at {where}", "linearise.about")
    if not math.isfinite(slope_si):
        raise ModelRefused(
            f"the term '{plain(term)}' is not differentiable at {where}: its slope {plain(slope)} is infinite there",
            "linearise.about",
        )
    linear = value_at + slope_at * (y - point.expr)
    return Term(term, slope, value_at, slope_at, value_si, slope_si, linear)


def _in_deviation(side, y, dy, y0, delta, delta_rate) -> sp.Expr:
    """A linear side in Δy = y - y0: its value at the point, plus its slopes times Δy and dΔy/dx."""
    constant = tidy(side.subs({y: y0, dy: 0}))
    return sp.diff(side, dy) * delta_rate + tidy(sp.diff(side, y)) * delta + constant


def _number(expr: sp.Expr, values: dict) -> float:
    numeric = expr.subs(values)
    if has_infinity(numeric):
        return math.nan
    return real_float(complex(sp.N(numeric, 20)))


def _point_words(model: Model, point: OperatingPoint) -> str:
    return f"{model.unknown.name} = {model.unknown.text_of(point.si)}"


# ---------------------------------------------------------------------------------- operating point
def _operating_point(model: Model, request: LineariseRequest) -> OperatingPoint:
    if request.point is not None:
        parameter = _point_parameter(model, request.point.si, request.point.text)
        return OperatingPoint(request.point.si, parameter.symbol, STATED, parameter=parameter)
    return _steady_state(model)


def _point_parameter(model: Model, si: float, text: str) -> Parameter:
    """The operating point as a parameter of the linear model (y_op; y_0 is the initial value), so its
    equations stay in symbols."""
    taken = {p.name for p in model.parameters} | {model.unknown.name, model.variable.name}
    name = next(
        n
        for n in (f"{model.unknown.name}_op", f"{model.unknown.name}_lin", f"{model.unknown.name}_point")
        if n not in taken
    )
    unit = units.si_unit(model.unknown.unit)
    positive, negative = si > 0, si < 0
    symbol = (
        sp.Symbol(name, positive=True)
        if positive
        else sp.Symbol(name, negative=True)
        if negative
        else sp.Symbol(name, real=True)
    )
    return Parameter(
        name=name,
        text=text,
        quantity=units.registry().Quantity(si, unit),
        si=si,
        si_unit=unit,
        symbol=symbol,
        note="operating point of the linearisation",
        unit_text=model.unknown.unit_text,
        scale=model.unknown.scale,
        offset=model.unknown.offset,
    )


def _steady_state(model: Model) -> OperatingPoint:
    """f(y) = 0 with dy/dx = 0: symbolically for a polynomial of degree at most two or a root-law (sqrt),
    else by Brent's method between the sign changes of a scan; the root chosen is the stable one
    (disturbances decay: the linear coefficient p is positive there), nearest the initial value if several."""
    y, dy, x = model.unknown.symbol, model.derivative, model.variable.symbol
    steady = model.residual.subs(dy, 0)
    if steady.has(x):
        raise ModelRefused(
            f"the steady state needs an equation that does not change with {model.variable.name}; state the "
            f'operating point instead (about = "{model.unknown.name} = <value>")',
            "linearise.about",
        )
    values = model.numeric_values()
    rate = sp.diff(model.residual, dy).subs(values)
    symbolic = _symbolic_roots(steady, y, values)
    method = SYMBOLIC if symbolic else NUMERIC
    candidates = symbolic or [(sp.Float(r), r) for r in _numeric_roots(steady.subs(values), y, model)]
    if not candidates:
        raise ModelRefused(
            f"the steady state {plain(steady)} = 0 has no real root for {model.unknown.name}; state the "
            "operating point instead",
            "linearise.about",
        )
    slope = sp.diff(steady, y).subs(values)
    stable = [(e, r) for e, r in candidates if _number(slope.subs(y, r) / rate, {}) > 0]
    start = model.initial_value.si
    if len(candidates) == 1:
        chosen, choice = candidates[0], ONLY_ROOT
    elif len(stable) == 1:
        chosen, choice = stable[0], ONLY_STABLE
    elif stable:
        chosen, choice = min(stable, key=lambda c: (abs(c[1] - start), c[1])), NEAREST_STABLE
    else:
        chosen, choice = min(candidates, key=lambda c: (abs(c[1] - start), c[1])), NEAREST
    roots = tuple(sorted(r for _, r in candidates))
    expr, si = chosen
    parameter = None
    if method == NUMERIC:
        parameter = _point_parameter(model, si, model.unknown.text_of(si) + " (steady state)")
        expr = parameter.symbol
    return OperatingPoint(si, expr, method, roots, choice, steady, parameter)


def _symbolic_roots(steady: sp.Expr, y: sp.Symbol, values: dict) -> list[tuple[sp.Expr, float]]:
    """Real roots in closed form, each checked numerically against the equation; [] when none is found so."""
    try:
        degree = sp.Poly(steady, y).degree()
    except sp.PolynomialError:
        degree = 0  # not a polynomial in y (sqrt(y)): solve may still invert it
    if degree > MAX_SYMBOLIC_DEGREE:
        return []
    solved, done = within(SIMPLIFY_SECONDS, lambda: sp.solve(steady, y), [])
    if not done:
        return []
    roots = []
    for root in solved:
        si = _number(root, values)
        if math.isfinite(si) and _is_root(steady.subs(values), y, si):
            roots.append((tidy(root), si))
    return sorted(roots, key=lambda r: r[1])


def _numeric_roots(steady: sp.Expr, y: sp.Symbol, model: Model) -> list[float]:
    """Every sign change on a scan over twelve decades either side of zero, refined by brentq."""
    f = sp.lambdify(y, steady, modules="math", docstring_limit=0)

    def value(v: float) -> float:
        try:
            return real_float(f(v))
        except (ValueError, ArithmeticError, TypeError):
            return math.nan

    reference = max(abs(model.initial_value.si), 1.0)
    magnitudes = reference * np.logspace(-SCAN_DECADES, SCAN_DECADES, SCAN_POINTS)
    grid = [float(v) for v in np.concatenate((-magnitudes[::-1], [0.0], magnitudes))]
    found = []
    for a, b in zip(grid[:-1], grid[1:]):
        fa, fb = value(a), value(b)
        if not (math.isfinite(fa) and math.isfinite(fb)):
            continue
        if fa == 0:
            found.append(a)
        elif fa * fb < 0:
            found.append(float(brentq(value, a, b, rtol=ROOT_RTOL, xtol=1e-300 + 1e-15 * abs(b - a))))
    if grid and value(grid[-1]) == 0:
        found.append(grid[-1])
    return sorted(set(r for r in found if _is_root(steady, y, r)))


def _is_root(steady: sp.Expr, y: sp.Symbol, at: float) -> bool:
    """|f(at)| small against the size of f's terms there (a spurious root of a squared equation is not)."""
    terms = [abs(_number(t, {y: at})) for t in sp.Add.make_args(sp.expand(steady))]
    total = _number(steady, {y: at})
    return math.isfinite(total) and abs(total) <= STEADY_RESIDUAL * max(terms + [1e-300])
