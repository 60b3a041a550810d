"""Design quantities: time constant, final value, values at points, levels reached, criteria."""

from __future__ import annotations

import math
import operator
from dataclasses import dataclass, replace

import numpy as np
import sympy as sp
from scipy import optimize

from calcsheet.derive.budget import LIMIT_SECONDS, within
from calcsheet.derive.classify import Classification
from calcsheet.derive.evaluate import ResponseEvaluator
from calcsheet.derive.integrating_factor import Solution
from calcsheet.derive.readable import compact
from calcsheet.model import Criterion, Model, Point

SEARCH_SCALES = 60  # how many natural scales past the initial point a level is searched for
OPERATORS = {"<=": operator.le, "<": operator.lt, ">=": operator.ge, ">": operator.gt}


@dataclass(frozen=True)
class ValueAt:
    at: Point
    y: float  # SI


@dataclass(frozen=True)
class Reach:
    level: Point
    x: float | None  # SI; None when not reached
    note: str = ""


@dataclass(frozen=True)
class Verdict:
    criterion: Criterion
    actual: float | None  # SI value of the checked quantity; None when it does not exist
    passed: bool
    note: str = ""


@dataclass(frozen=True)
class SteadySine:
    """Steady-state response of a constant-coefficient lag to a sinusoid (common practice, no source)."""

    omega: float  # rad per unit of the variable (SI)
    amplitude_ratio: float  # 1/sqrt(1 + (omega tau)^2)
    phase_lag_deg: float  # atan(omega tau)
    settled_after: float  # tau ln 100: the transient has fallen below 1 % of its initial size


@dataclass(frozen=True)
class Numbers:
    time_constant: float | None  # SI
    time_constant_expr: sp.Expr | None
    time_constant_note: str
    final_value: float | None  # SI
    final_value_note: str
    scale: float  # natural scale of the variable (SI): tau, or 1/|p(x0)|
    span: tuple[float, float]  # a sensible range to show the response over (SI)
    domain_end: float | None  # where the solution stops existing, if inside the searched range
    values: tuple[ValueAt, ...]
    reach: tuple[Reach, ...]
    verdicts: tuple[Verdict, ...]
    sine: SteadySine | None = None
    valid_until: tuple[float, str] | None = None  # (SI, what happens) where a kind's model stops holding

    @property
    def all_passed(self) -> bool:
        return all(v.passed for v in self.verdicts)


def compute_numbers(model: Model, cls: Classification, solution: Solution, y: ResponseEvaluator) -> Numbers:
    x = model.variable.symbol
    values = model.numeric_values()
    cls = _as_solved(cls, solution, model)
    p_value = cls.p.subs(values)
    x0 = model.initial_at.si
    tau, tau_expr, tau_note = _time_constant(cls, p_value, model)
    scale = tau if tau else _natural_scale(p_value, x, x0, model)
    farthest = max([x0] + [pt.si for pt in _abscissae(model)])
    span_end = x0 + max(5 * scale, (farthest - x0) * 1.05)
    grid = np.linspace(x0, x0 + max(SEARCH_SCALES * scale, 1.5 * (farthest - x0)), 2001)
    limit = _model_limit(model, x0)
    if limit is not None:  # levels are searched only where the model holds
        grid = grid[grid <= limit[0]]
    singular = _singular_point(cls, values, x, grid)
    if singular is not None:
        grid = grid[grid < singular]
    samples, domain_end = _sample(y, grid)
    if singular is not None and (domain_end is None or singular < domain_end):
        domain_end = singular
    final, final_note = _final_value(model, cls, solution, values, p_value)
    if model.plot_to is not None:
        span_end = model.plot_to.si
    if domain_end is not None:
        span_end = min(span_end, domain_end)
    limit = _model_limit(model, x0)
    if limit is not None:
        span_end = min(span_end, limit[0])
    points = tuple(ValueAt(pt, y(pt.si)) for pt in model.evaluate_at)
    reaches = tuple(reach_for(level, y, grid[: len(samples)], samples, final, model) for level in model.reach)
    verdicts = tuple(verdict_for(c, y, grid[: len(samples)], samples, tau, final, model) for c in model.criteria)
    return Numbers(time_constant=tau, time_constant_expr=tau_expr, time_constant_note=tau_note,
                   final_value=final, final_value_note=final_note, scale=scale, span=(x0, span_end),
                   domain_end=domain_end, values=points, reach=reaches, verdicts=verdicts,
                   sine=_steady_sine(model, tau), valid_until=limit)


def _model_limit(model: Model, x0: float) -> tuple[float, str] | None:
    """The kind's own end of validity (a tank overflowing), when it lies after the initial point."""
    limit = getattr(model.kind, "limit", None) if model.kind else None
    return limit if limit is not None and limit[0] > x0 else None


def _steady_sine(model: Model, tau: float | None) -> SteadySine | None:
    """For a sinusoidal [forcing] of a model with a time constant: gain, lag and settling."""
    name = getattr(model.kind, "frequency", "") if model.kind else ""
    if not name or tau is None:
        return None
    frequency = next(p.si for p in model.parameters if p.name == name)
    omega = 2 * math.pi * frequency
    return SteadySine(omega, 1 / math.sqrt(1 + (omega * tau) ** 2), math.degrees(math.atan(omega * tau)),
                      tau * math.log(100))


def _as_solved(cls: Classification, solution: Solution, model: Model) -> Classification:
    """The classification with p and r as solved: a special case of the stated values (q_in = q_out)
    can turn a varying coefficient into a constant one."""
    if not solution.special_case:
        return cls
    x = model.variable.symbol
    return replace(cls, p=solution.p, r=solution.r, constant_coefficients=x not in solution.p.free_symbols)


def _time_constant(cls: Classification, p_value: sp.Expr, model: Model):
    word = "time constant" if _is_time(model) else "length constant"
    if not cls.constant_coefficients:
        return None, None, f"p varies with {model.variable.name}, so there is no single {word}"
    p_num = float(p_value)
    if p_num <= 0:
        return None, None, f"p = {p_num:g} is not positive: the natural response does not decay, so there is no {word}"
    return 1.0 / p_num, compact(1 / cls.p), ""


def _is_time(model: Model) -> bool:
    from calcsheet.source.units import registry
    return registry().Quantity(1, model.variable.unit).dimensionality == registry().Quantity(1, "s").dimensionality


def _natural_scale(p_value: sp.Expr, x: sp.Symbol, x0: float, model: Model) -> float:
    try:
        p0 = abs(float(p_value.subs(x, x0)))
    except (TypeError, ValueError):
        p0 = 0.0
    if p0 > 0 and math.isfinite(p0):
        return 1.0 / p0
    farthest = max([pt.si for pt in _abscissae(model)], default=x0)
    return farthest - x0 if farthest > x0 else 1.0


def _abscissae(model: Model) -> list[Point]:
    points = list(model.evaluate_at)
    for c in model.criteria:
        if c.subject == "value":
            points.append(c.argument)
        elif c.subject in ("reach", "time_constant"):
            points.append(c.limit)
    return points


def _singular_point(cls: Classification, values, x: sp.Symbol, grid: np.ndarray) -> float | None:
    """The first point past x0 where p = b/a has a pole (its denominator changes sign or vanishes)."""
    if cls.constant_coefficients:
        return None
    _, denominator = sp.fraction(sp.together(cls.p.subs(values)))
    if x not in denominator.free_symbols:
        return None
    f = sp.lambdify(x, denominator, modules="math")
    previous = f(float(grid[0]))
    for a, b in zip(grid[:-1], grid[1:]):
        current = f(float(b))
        if current == 0:
            return float(b)
        if np.sign(current) != np.sign(previous):
            return float(optimize.brentq(f, float(a), float(b), xtol=1e-12 * float(b - a)))
        previous = current
    return None


def _sample(y: ResponseEvaluator, grid: np.ndarray) -> tuple[np.ndarray, float | None]:
    """y on the grid, stopped at the first point where the solution is not finite."""
    values = y.on_grid(grid)
    bad = np.nonzero(~np.isfinite(values))[0]
    if len(bad) == 0:
        return values, None
    first = int(bad[0])
    return values[:first], float(grid[first]) if first else None


def _final_value(model: Model, cls: Classification, solution: Solution, values, p_value) -> tuple[float | None, str]:
    x = model.variable.symbol
    if cls.constant_coefficients and float(p_value) <= 0:
        return None, "none: the natural response does not decay (p is not positive)"
    if solution.closed_form:
        expr = solution.particular.subs({**values, **solution.initial_values(model)})
        how = f"limit of the particular solution as {model.variable.name} grows without bound"
    elif cls.constant_coefficients:
        expr = (cls.r / cls.p).subs(values)
        how = f"limit of r/p as {model.variable.name} grows without bound, p being constant and positive"
    else:
        return None, "not determined: varying coefficient and no closed form"
    expr = _steps_settled(expr, x)
    limit, done = within(LIMIT_SECONDS, lambda: sp.limit(expr, x, sp.oo), None)
    if not done or limit is None:
        return None, "not determined: the limit did not finish within its time budget"
    if isinstance(limit, sp.AccumBounds):
        return None, "none: the response keeps oscillating and does not settle"
    if limit.is_finite and limit.is_real and limit.is_number:
        return float(limit), how
    if limit in (sp.oo, -sp.oo):
        return None, "none: the response grows without bound"
    return None, "none: the response keeps oscillating or does not settle"


def _steps_settled(expr: sp.Expr, x: sp.Symbol) -> sp.Expr:
    """Far along x every switched step has switched: step(a x + b) is 1 for a > 0, 0 for a < 0.

    sympy's limit is slow on step functions; their arguments here are linear in x.
    """
    def settle(argument):
        slope = sp.diff(argument, x)
        if slope.is_number and not slope.has(x) and slope != 0:
            return sp.Integer(1) if slope > 0 else sp.Integer(0)
        return sp.Heaviside(argument)

    return expr.replace(sp.Heaviside, lambda *args: settle(args[0]))


def reach_for(level: Point, y, grid, samples, final, model: Model) -> Reach:
    x = first_crossing(level.si, y, grid, samples)
    if x is not None:
        return Reach(level, x)
    searched = f"up to {SEARCH_SCALES} natural scales past the initial point"
    if final is not None:
        return Reach(level, None, f"not reached {searched}; the response settles at its final value")
    return Reach(level, None, f"not reached {searched}")


def first_crossing(level: float, y, grid, samples) -> float | None:
    if len(samples) == 0:
        return None
    gap = samples - level
    if gap[0] == 0:
        return float(grid[0])
    signs = np.sign(gap)
    changes = np.nonzero(signs[1:] != signs[0])[0]
    if len(changes) == 0:
        return None
    i = int(changes[0])
    if gap[i + 1] == 0:
        return float(grid[i + 1])
    span = grid[i + 1] - grid[i]
    return float(optimize.brentq(lambda s: y(s) - level, grid[i], grid[i + 1], xtol=1e-13 * max(span, 1e-300), rtol=1e-14))


def verdict_for(criterion: Criterion, y, grid, samples, tau, final, model: Model) -> Verdict:
    note = ""
    if criterion.subject == "value":
        actual = y(criterion.argument.si)
    elif criterion.subject == "reach":
        actual = first_crossing(criterion.argument.si, y, grid, samples)
        if actual is None:
            note = "level not reached; taken as never"
    elif criterion.subject == "time_constant":
        actual = tau
    else:
        actual = final
    if actual is None and criterion.subject != "reach":
        return Verdict(criterion, None, False, "the quantity does not exist for this response")
    compared = math.inf if actual is None else actual
    return Verdict(criterion, actual, bool(OPERATORS[criterion.operator](compared, criterion.limit.si)), note)
