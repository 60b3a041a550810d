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
from calcsheet.derive.derived import DerivedCurve, DerivedValues, WindowIntegral, derived_values
from calcsheet.derive.extremes import Extreme, ExtremeSearch, Piece
from calcsheet.derive.integral_bounds import bounded
from calcsheet.derive.integrating_factor import Solution
from calcsheet.derive.readable import compact
from calcsheet.errors import ModelRefused
from calcsheet.model import Criterion, Model, Point
from calcsheet.subjects import SUBJECTS, VARIABLE, WINDOW

SEARCH_SCALES = 60  # how many natural scales past the initial point a level is searched for
SEARCH_POINTS = 2001
# A sample within this fraction of the response's size of a level is taken as on the level: the grid values
# are double precision, so nearer than this their side of the level is round-off, not the response.
AT_LEVEL = 1e-10
ROOT_ITERATIONS = 200  # Brent's method converges in far fewer on a bracket found by the scan
OPERATORS = {"<=": operator.le, "<": operator.lt, ">=": operator.ge, ">": operator.gt}


@dataclass(frozen=True)
class ValueAt:
    at: Point
    y: float  # SI
    applies: bool = True  # False for a point past the kind's validity limit


# Why a level is not reached (Reach.code); the sheet words each one.
REACHED, MODEL_STOPS, SOLUTION_ENDS, APPROACHES_FINAL, SETTLES_SHORT, MOVES_AWAY, NOT_IN_RANGE, OVERFLOWS = (
    "reached",
    "model_stops",
    "solution_ends",
    "approaches_final",
    "settles_short",
    "starts_on_level",
    "not_in_range",
    "overflows",
)


@dataclass(frozen=True)
class Reach:
    level: Point
    x: float | None  # SI; None when not reached
    code: str = REACHED  # why it is not reached, when it is not (see the codes above)
    stop: float | None = None  # SI: where the search stopped, for model_stops and solution_ends
    bracket: tuple[float, float] | None = None  # SI: the scan's samples either side of the crossing
    refined: str = ""  # how the crossing was located in its bracket: BRENT or INTERPOLATED


# How a crossing is located between the two scanned samples that bracket it (Reach.refined).
BRENT, INTERPOLATED = "brent", "interpolated"
# Brent's method stops when the bracket is narrower than ROOT_XTOL times its first width plus ROOT_RTOL
# times the root (scipy.optimize.brentq's xtol and rtol).
ROOT_XTOL, ROOT_RTOL = 1e-13, 1e-14


@dataclass(frozen=True)
class Verdict:
    criterion: Criterion
    actual: float | None  # SI value of the checked quantity; None when it does not exist
    passed: bool  # False also when the criterion could not be assessed
    assessed: bool = True  # False: the model is not valid for the case, or the criterion needs points past its limit
    code: str = ""  # why not assessed: "model_not_valid" or "past_validity_limit"
    extreme: Extreme | None = None  # for max and min: the extreme that decides it, and how it was found
    integral: WindowIntegral | None = None  # for integral: how it was found

    @property
    def status(self) -> str:
        return "not assessed" if not self.assessed else "pass" if self.passed else "fail"


MODEL_NOT_VALID, PAST_VALIDITY_LIMIT = "model_not_valid", "past_validity_limit"


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
    time_constant_note: str  # why there is none: TAU_VARYING or TAU_NOT_DECAYING ("" when there is one)
    final_value: float | None  # SI
    final_value_note: str  # how it was found, or why there is none: a FINAL_* code
    scale: float  # natural scale of the variable (SI): tau, or 1/|p(x0)|
    span: tuple[float, float]  # a sensible range to show the response over (SI)
    domain_end: float | None  # where the solution stops existing, if inside the searched range
    values: tuple[ValueAt, ...]
    reach: tuple[Reach, ...]
    verdicts: tuple[Verdict, ...]
    sine: SteadySine | None = None
    valid_until: tuple[float, str] | None = None  # (SI, what happens) where a kind's model stops holding
    not_valid: tuple[str, ...] = ()  # the kind's findings that the model does not hold for this case
    extremes: tuple[Extreme, ...] = ()  # those asked for in [evaluate], then those criteria compare, each once
    derived: tuple[DerivedValues, ...] = ()  # each derived quantity's closed form and values
    integrals: tuple[WindowIntegral, ...] = ()  # those asked for in [evaluate], then those criteria compare, each once

    @property
    def all_passed(self) -> bool:
        return not self.not_valid and all(v.passed for v in self.verdicts)


def compute_numbers(
    model: Model,
    cls: Classification,
    solution: Solution,
    y: ResponseEvaluator,
    final: tuple[float | None, str] | None = None,
    bound_integrals: bool = False,
    compiled: bool = False,
) -> Numbers:
    """``final``: the final value and its code when the caller already has them (derive/margin.py evaluates one
    symbolic limit for every set of parameter values). ``bound_integrals``: give each integral shown its bounds
    (integral_bounds.py), which only the sheet's own derivation needs. ``compiled``: the functions of the
    equation and of derived quantities compiled once per form with the parameters as arguments
    (safe_numeric.bound), for derive/margin.py, which evaluates one solution at many parameter sets."""
    x = model.variable.symbol
    values = model.numeric_values()
    cls = _as_solved(cls, solution, model)
    p_value = cls.p.subs(values)
    x0 = model.initial_at.si
    tau, tau_expr, tau_note = _time_constant(cls, p_value, model)
    scale = tau if tau else _natural_scale(p_value, x, x0, model)
    if not (math.isfinite(scale) and scale > 0):  # a time constant beyond the floating-point range
        raise ModelRefused(
            f"the natural scale of the response, 1/p = {scale:g} {_si_unit(model)}, is beyond the "
            "range this tool computes in; restate the parameters",
            "parameters",
        )
    farthest = max([x0] + [pt.si for pt in _abscissae(model)])
    span_end = x0 + max(5 * scale, (farthest - x0) * 1.05)
    grid = np.linspace(x0, x0 + max(SEARCH_SCALES * scale, 1.5 * (farthest - x0)), SEARCH_POINTS)
    # The singular point is looked for over the whole grid, before the kind's limit cuts it: a tank that
    # runs empty has both at the same instant, and the solution's end must be known there too.
    searched_to = float(grid[-1])
    singular = _singular_point(cls, values, x, grid)
    if singular is not None:
        grid = grid[grid < singular]
    limit = _model_limit(model, x0)
    if limit is not None:  # levels are searched only where the model holds
        grid = grid[grid <= limit[0]]
    samples, domain_end = _sample(y, grid)
    overflow = (
        domain_end is not None and (singular is None or domain_end < singular) and _overflows(y, samples, domain_end)
    )
    if overflow:
        domain_end = _overflow_point(y, float(grid[len(samples) - 1]) if len(samples) else x0, domain_end)
        _refuse_overflow_before(farthest, domain_end, model)
    if singular is not None and (domain_end is None or singular < domain_end):
        domain_end = singular
    final, final_note = final if final is not None else _final_value(model, cls, solution, values, p_value)
    if model.plot_to is not None:
        span_end = model.plot_to.si
    if domain_end is not None:
        span_end = min(span_end, domain_end)
    if limit is not None:
        span_end = min(span_end, limit[0])
    if not span_end > x0:
        span_end = x0 + scale
    not_valid = tuple(model.kind.not_valid) if model.kind is not None else ()
    points = tuple(ValueAt(pt, y(pt.si), applies=limit is None or pt.si <= limit[0]) for pt in model.evaluate_at)
    searched = grid[: len(samples)]
    stop = (OVERFLOWS, domain_end) if overflow else _stop(limit, domain_end, searched_to)
    reaches = tuple(reach_for(level, y, searched, samples, final, stop=stop) for level in model.reach)
    analysed = (x0, float(searched[-1]) if len(searched) else x0 + scale)
    needs_piece = asks_for_extremes(model) or model.derived
    piece = Piece(model, solution, cls, y, x0, None, scale=scale, compiled=compiled) if needs_piece else None
    search = ExtremeSearch([piece], y, analysed, final) if asks_for_extremes(model) else None
    asked = tuple(search.find(e.kind, e.window, e.text) for e in model.extremes)
    curves = {
        q.name: DerivedCurve(q, model, solution, cls, y, piece, analysed, scale, compiled=compiled)
        for q in model.derived
    }
    integrals = tuple(curves[i.of].integral(i.window, i.text) for i in model.integrals)
    verdicts = tuple(
        verdict_for(
            c, y, searched, samples, tau, final, valid_until=limit, not_valid=not_valid, search=search, derived=curves
        )
        for c in model.criteria
    )
    return Numbers(
        time_constant=tau,
        time_constant_expr=tau_expr,
        time_constant_note=tau_note,
        final_value=final,
        final_value_note=final_note,
        scale=scale,
        span=(x0, span_end),
        domain_end=domain_end,
        values=points,
        reach=reaches,
        verdicts=verdicts,
        sine=_steady_sine(model, tau),
        valid_until=limit,
        not_valid=not_valid,
        extremes=extremes_shown(asked, verdicts),
        derived=derived_values(model, curves, lambda pt: limit is None or pt.si <= limit[0]),
        integrals=bounded(integrals_shown(integrals, verdicts), curves)
        if bound_integrals
        else integrals_shown(integrals, verdicts),
    )


def asks_for_extremes(model: Model) -> bool:
    """Does the input ask for an extreme of the unknown ([evaluate] extremes, or a criterion over a window)? The
    search is built only then: it differentiates and compiles the solution, which a sheet without one need not
    pay for."""
    return bool(model.extremes) or any(SUBJECTS[c.subject].argument == WINDOW and not c.of for c in model.criteria)


def integrals_shown(asked, verdicts) -> tuple[WindowIntegral, ...]:
    """The integrals asked for, then those the criteria compare, each quantity and window once."""
    shown = {}
    for integral in list(asked) + [v.integral for v in verdicts if v.integral is not None]:
        shown.setdefault(integral.key, integral)
    return tuple(shown.values())


def extremes_shown(asked, verdicts) -> tuple[Extreme, ...]:
    """The extremes asked for, then those the criteria compare, each window and kind once."""
    shown = {}
    for extreme in list(asked) + [v.extreme for v in verdicts if v.extreme is not None]:
        shown.setdefault(extreme.key, extreme)
    return tuple(shown.values())


OVERFLOW_SIZE = 1e200  # a response this large (SI) just before it stops being finite has overflowed


def _overflows(y: ResponseEvaluator, samples: np.ndarray, at: float) -> bool:
    """Did the response stop being finite because it grew past the floating-point range (rather than
    at a point where the solution itself ends, such as a log of zero)? Either it was already huge, or
    the precise evaluation there gives an infinity rather than no number at all."""
    if len(samples) and float(np.max(np.abs(samples))) > OVERFLOW_SIZE:
        return True
    return y.overflows_at(at)


def _overflow_point(y: ResponseEvaluator, finite: float, beyond: float) -> float:
    """Where the response passes the floating-point range, between a point where it is finite and one
    beyond; bisection to a relative width of 1e-6, a bounded number of halvings."""
    for _ in range(60):
        if beyond - finite <= 1e-6 * abs(beyond):
            break
        middle = 0.5 * (finite + beyond)
        finite, beyond = (finite, middle) if y.overflows_at(middle) else (middle, beyond)
    return beyond


def _refuse_overflow_before(farthest: float, at: float, model: Model) -> None:
    """A response that grows past the floating-point range before a point the input asks about has no
    number to give there: refused, naming where, rather than shown as a value that is not finite."""
    if farthest < at:
        return
    x = model.variable
    raise ModelRefused(
        f"the response grows without bound and passes the floating-point range (about 1e308) near "
        f"{x.name} = {x.text_of(at)}, before {x.name} = {x.text_of(farthest)}, the farthest point asked "
        "about; check the signs of the parameters (a negative loss coefficient makes the response "
        "grow) or ask about earlier points",
        "evaluate",
    )


def _stop(limit, domain_end, searched_to: float) -> tuple[str, float] | None:
    """Where the level search ended early, and why: the model stops holding, or the solution ends."""
    ends = ([(limit[0], MODEL_STOPS)] if limit is not None else []) + (
        [(domain_end, SOLUTION_ENDS)] if domain_end is not None else []
    )
    ends = [(at, code) for at, code in ends if at <= searched_to]
    if not ends:
        return None
    at, code = min(ends)
    return code, at


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
    return SteadySine(
        omega, 1 / math.sqrt(1 + (omega * tau) ** 2), math.degrees(math.atan(omega * tau)), tau * math.log(100)
    )


def _as_solved(cls: Classification, solution: Solution, model: Model) -> Classification:
    """The classification with p and r as solved: a special case of the stated values (q_in = q_out)
    can turn a varying coefficient into a constant one."""
    if not solution.special_case:
        return cls
    x = model.variable.symbol
    return replace(cls, p=solution.p, r=solution.r, constant_coefficients=x not in solution.p.free_symbols)


# Why there is no time constant, or how the final value was found or why there is none (the sheet words each).
TAU_VARYING, TAU_NOT_DECAYING = "p_varies", "p_not_positive"
FINAL_LIMIT_OF_SOLUTION, FINAL_LIMIT_OF_R_OVER_P = "limit_of_solution", "limit_of_r_over_p"
FINAL_NOT_DECAYING, FINAL_UNDETERMINED, FINAL_OUT_OF_TIME = "p_not_positive", "varying_and_open", "limit_budget"
FINAL_OSCILLATES, FINAL_GROWS, FINAL_UNSETTLED = "oscillates", "grows", "does_not_settle"


def _time_constant(cls: Classification, p_value: sp.Expr, model: Model):
    """(tau, its expression, why there is none): a code from above, "" when there is one."""
    if not cls.constant_coefficients:
        return None, None, TAU_VARYING
    if float(p_value) <= 0:
        return None, None, TAU_NOT_DECAYING
    return 1.0 / float(p_value), compact(1 / cls.p), ""


def _si_unit(model: Model) -> str:
    return "s" if _is_time(model) else "SI units"


def _is_time(model: Model) -> bool:
    return model.variable.is_time


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
    windows = [e.window for e in model.extremes] + [c.window for c in model.criteria if c.window is not None]
    points += [end for w in windows for end in (w.start, w.end) if end is not None]
    for c in model.criteria:
        subject = SUBJECTS[c.subject]
        if subject.argument == VARIABLE:
            points.append(c.argument)
        elif subject.found == VARIABLE:
            points.append(c.limit)
    return points


def _singular_point(cls: Classification, values, x: sp.Symbol, grid: np.ndarray) -> float | None:
    """The first point past x0 where p = b/a has a pole (its denominator changes sign or vanishes)."""
    if cls.constant_coefficients:
        return None
    _, denominator = sp.fraction(sp.together(cls.p.subs(values)))
    if x not in denominator.free_symbols:
        return None
    f = safe_function(sp.lambdify(x, denominator, modules="math", docstring_limit=0))
    previous = f(float(grid[0]))
    for a, b in zip(grid[:-1], grid[1:]):
        current = f(float(b))
        if current == 0:
            return float(b)
        if math.isfinite(current) and math.isfinite(previous) and current * previous < 0:
            return float(
                optimize.brentq(f, float(a), float(b), xtol=1e-12 * float(b - a), maxiter=ROOT_ITERATIONS, disp=False)
            )
        if math.isfinite(current):
            previous = current
    return None


def safe_function(f):
    """f(x) as a float, NaN where it cannot be evaluated (a log of a negative number, an overflow)."""

    def call(value: float) -> float:
        try:
            result = complex(f(value))
        except (ArithmeticError, ValueError, TypeError):
            return math.nan
        return result.real if result.imag == 0 else math.nan

    return call


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
        return None, FINAL_NOT_DECAYING
    if solution.closed_form:
        expr = solution.particular.subs({**values, **solution.initial_values(model)})
        how = FINAL_LIMIT_OF_SOLUTION
    elif cls.constant_coefficients:
        expr = (cls.r / cls.p).subs(values)
        how = FINAL_LIMIT_OF_R_OVER_P
    else:
        return None, FINAL_UNDETERMINED
    expr = _steps_settled(expr, x)
    limit, done = within(LIMIT_SECONDS, lambda: sp.limit(expr, x, sp.oo), None)
    if not done or limit is None:
        return None, FINAL_OUT_OF_TIME
    if isinstance(limit, sp.AccumBounds):
        return None, FINAL_OSCILLATES
    if limit.is_finite and limit.is_real and limit.is_number:
        return float(limit), how
    if limit in (sp.oo, -sp.oo):
        return None, FINAL_GROWS
    return None, FINAL_UNSETTLED


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


def reach_for(level: Point, y, grid, samples, final, stop: tuple[str, float] | None = None) -> Reach:
    """Where the response first crosses ``level`` after the initial point, or why it does not.

    The rule: a level is reached at the first point where the response passes from one side of it to
    the other, each side by more than AT_LEVEL of the response's size. The initial point is never the
    answer: a response that starts on the level reaches it only if it leaves it and comes back across
    it; a level the response only approaches (its final value) is not reached.
    """
    found = crossing(level.si, y, grid, samples)
    if found is not None:
        x, bracket, refined = found
        return Reach(level, x, bracket=bracket, refined=refined)
    if stop is not None:
        return Reach(level, None, stop[0], stop[1])
    size = max([abs(level.si)] + [abs(float(v)) for v in samples[:1]] + ([abs(final)] if final is not None else []))
    start = float(samples[0]) if len(samples) else None
    if final is not None and abs(level.si - final) <= AT_LEVEL * max(size, 1e-300):
        return Reach(level, None, APPROACHES_FINAL)
    if final is not None and start is not None and (level.si - final) * (start - final) < 0:
        return Reach(level, None, SETTLES_SHORT)
    if start is not None and abs(level.si - start) <= AT_LEVEL * max(size, 1e-300):
        return Reach(level, None, MOVES_AWAY)
    return Reach(level, None, NOT_IN_RANGE)


def first_crossing(level: float, y, grid, samples) -> float | None:
    """The first crossing of ``level`` on the scanned grid, located with y itself (see reach_for)."""
    found = crossing(level, y, grid, samples)
    return None if found is None else found[0]


def crossing(level: float, y, grid, samples) -> tuple[float, tuple[float, float], str] | None:
    """The first crossing, the two scanned points that bracket it, and how it was located between them."""
    samples = np.asarray(samples, dtype=float)
    if len(samples) < 2:
        return None
    gap = samples - level
    # the response's size so far (as in the integration check): a response growing through many orders of
    # magnitude is not measured against the size it reaches only later
    size = np.maximum(np.maximum.accumulate(np.abs(samples)), max(abs(level), 1e-300))
    side = np.where(gap > AT_LEVEL * size, 1, np.where(gap < -AT_LEVEL * size, -1, 0))
    clear = np.nonzero(side)[0]
    if len(clear) == 0:
        return None
    first_side = int(side[clear[0]])
    across = np.nonzero(side == -first_side)[0]
    if len(across) == 0:
        return None
    j = int(across[0])
    i = int(clear[clear < j][-1])
    a, b = float(grid[i]), float(grid[j])
    root, refined = _root(lambda s: y(s) - level, a, b, float(gap[i]), float(gap[j]))
    return root, (a, b), refined


def _root(g, a: float, b: float, ga_scan: float, gb_scan: float) -> tuple[float, str]:
    """The root of g in [a, b], where the scan saw a clear sign change; Brent's method, bounded in steps.

    Should the precise evaluation disagree with the scan at an end (it cannot by more than round-off,
    which the band excludes), the crossing is taken where the scanned values interpolate to zero.
    """
    ga, gb = g(a), g(b)
    if math.isfinite(ga) and math.isfinite(gb) and ga * gb < 0:
        root, info = optimize.brentq(
            g,
            a,
            b,
            xtol=ROOT_XTOL * max(b - a, 1e-300),
            rtol=ROOT_RTOL,
            maxiter=ROOT_ITERATIONS,
            full_output=True,
            disp=False,
        )
        return float(root), BRENT
    return a + (b - a) * ga_scan / (ga_scan - gb_scan), INTERPOLATED


def verdict_for(
    criterion: Criterion,
    y,
    grid,
    samples,
    tau,
    final,
    valid_until: tuple[float, str] | None = None,
    not_valid: tuple[str, ...] = (),
    search: ExtremeSearch | None = None,
    derived: dict | None = None,
) -> Verdict:
    """PASS or FAIL, or not assessed: when the model is not valid for the case, or the criterion needs
    the response past the kind's validity limit (a tank that has overflowed)."""
    verdict = _verdict(criterion, Response(y, grid, samples, tau, final, search, derived or {}))
    if not_valid:
        return replace(verdict, passed=False, assessed=False, code=MODEL_NOT_VALID)
    if valid_until is not None and _needs_past(criterion, verdict, valid_until[0]):
        return replace(verdict, passed=False, assessed=False, code=PAST_VALIDITY_LIMIT)
    return verdict


@dataclass(frozen=True)
class Response:
    """What a criterion's quantity is computed from: y(x), the scanned grid and samples, tau and the final value."""

    y: object
    grid: np.ndarray
    samples: np.ndarray
    tau: float | None
    final: float | None
    search: ExtremeSearch | None = None  # extremes over windows
    derived: dict | None = None  # name -> DerivedCurve

    def curve(self, of: str):
        """The unknown's y(x), or a derived quantity's g(x)."""
        return self.derived[of] if of else self.y

    def extreme(self, kind: str, criterion: Criterion) -> Extreme:
        if criterion.of:
            return self.derived[criterion.of].extreme(kind, criterion.window, criterion.check)
        return self.search.find(kind, criterion.window, criterion.check)


# One function per subject of calcsheet/subjects.py: the quantity a criterion compares, in SI, or None; or an
# Extreme, whose value is the quantity and which the sheet shows as what decided the criterion.
QUANTITIES = {
    "value": lambda c, r: r.curve(c.of)(c.argument.si),
    "reach": lambda c, r: first_crossing(c.argument.si, r.y, r.grid, r.samples),
    "time_constant": lambda c, r: r.tau,
    "final_value": lambda c, r: r.final,
    "max": lambda c, r: r.extreme("max", c),
    "min": lambda c, r: r.extreme("min", c),
    "integral": lambda c, r: r.derived[c.of].integral(c.window, c.check),
}


def _verdict(criterion: Criterion, response: Response) -> Verdict:
    subject = SUBJECTS[criterion.subject]
    found = QUANTITIES[subject.name](criterion, response)
    extreme = found if isinstance(found, Extreme) else None
    integral = found if isinstance(found, WindowIntegral) else None
    actual = found.value if extreme is not None or integral is not None else found
    if actual is not None and not math.isfinite(actual):
        actual = None
    if actual is None and not subject.absent_is_never:  # the quantity does not exist for this response
        return Verdict(criterion, None, False, extreme=extreme, integral=integral)
    compared = math.inf if actual is None else actual  # a level never reached is reached at infinity
    return Verdict(
        criterion,
        actual,
        bool(OPERATORS[criterion.operator](compared, criterion.limit.si)),
        extreme=extreme,
        integral=integral,
    )


def _needs_past(criterion: Criterion, verdict: Verdict, limit: float) -> bool:
    """Does the verdict rest on the response after ``limit``?

    A value past it, or the final value (the response as the variable grows without bound), does. A
    level not reached before the limit may be reached after it: that decides the criterion only when
    its limit lies beyond the validity limit (reach <= 20 min with the tank full at 80 min fails either way).
    """
    subject = SUBJECTS[criterion.subject]
    if subject.depends_on_whole_response:
        return True
    if subject.argument == WINDOW:  # an extreme over a window that runs past the limit
        window = criterion.window
        return window.open_ended or (window.end is not None and window.end.si > limit)
    if subject.argument == VARIABLE:  # a quantity at a point: past the limit or not
        return criterion.argument.si > limit
    if subject.absent_is_never and verdict.actual is None:
        return criterion.limit.si > limit
    return False
