"""Independent verification of the derived solution.

Three checks, none of which reuses the derivation's arithmetic: substitution of the solution
into the equation exactly as the Model states it, the initial condition, and a numerical
integration of the Model's own equation with scipy (an explicit Runge–Kutta method of order 8)
compared with the derived values.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import mpmath
import numpy as np
import sympy as sp
from scipy.integrate import solve_ivp

from calcsheet.derive.budget import SIMPLIFY_SECONDS, within
from calcsheet.derive.integrating_factor import Solution
from calcsheet.derive.safe_numeric import NotFinite, SafeFunction, real_float
from calcsheet.model import Model

RTOL = 1e-11
ATOL_SHARE = 1e-2  # atol = RTOL × ATOL_SHARE × the response's size
AGREEMENT = 1e-6  # largest difference accepted between derived and integrated values (see difference_measure)
RESIDUAL_TOLERANCE = 1e-9
QUAD_PIECES, QUAD_DEGREE = 8, 7  # the bound on the work of an integral in the substitution check
ODE_METHOD = "DOP853"
STIFF_METHOD = "Radau"
STIFF_RATIO = 1e4  # span over the shortest natural scale beyond which an explicit method is not used
MAX_SLOPE_CALLS = 2_000_000  # the bound on the integrator's work

# What a check is (Check.code) and how it was made (Check.how); sheet/checks_words.py words each.
SUBSTITUTION, INITIAL_CONDITION, INTEGRATION = "substitution", "initial_condition", "integration"
EACH_INTERVAL, CONTINUITY, SWITCHED_INTEGRATION = "each_interval", "continuity", "switched_integration"
SYMBOLIC, NUMERIC_POINTS, SYMBOLIC_AND_NUMERIC, NUMERIC, ODE = (
    "symbolic",
    "numeric_points",
    "symbolic_and_numeric",
    "numeric",
    "ode",
)
# Why the independent integration could not be completed (fact "failure").
NOT_FINITE_START, TOO_MUCH_WORK, SLOPE_NOT_FINITE, SOLVER_STOPPED, VALUES_NOT_FINITE, OVERFLOW = (
    "initial_value_not_finite",
    "too_much_work",
    "slope_not_finite",
    "solver_stopped",
    "values_not_finite",
    "overflow",
)


@dataclass(frozen=True)
class Check:
    """One independent check, as facts: what it is, whether it passed, how it was made, what it measured
    against which limit, over how many points, and the other facts its words need (``facts``)."""

    code: str
    passed: bool
    how: str
    measure: float | None = None  # the residual or difference found, where one is measured
    limit: float | None = None
    points: int = 0
    facts: tuple[tuple[str, object], ...] = ()

    def fact(self, name: str, default=None):
        return dict(self.facts).get(name, default)


@dataclass(frozen=True)
class Verification:
    substitution: Check
    initial_condition: Check
    integration: Check
    compared: tuple[tuple[float, float, float], ...]  # (x, derived y, integrated y), SI
    linearisation: Check | None = None  # a linearised model against its non-linear equation (linear_accuracy.py)

    @property
    def checks(self) -> tuple[Check, ...]:
        own = (self.substitution, self.initial_condition, self.integration)
        return own + ((self.linearisation,) if self.linearisation is not None else ())

    @property
    def passed(self) -> bool:
        return all(c.passed for c in self.checks)


def verify(model: Model, solution: Solution, y, points: list[float]) -> Verification:
    return Verification(
        substitution=check_substitution(model, solution, points),
        initial_condition=check_initial_condition(model, solution, y, points),
        **_integration(model, y, points),
    )


def check_substitution(model: Model, solution: Solution, points: list[float]) -> Check:
    """Put y and dy/dx into lhs - rhs of the stated equation; it must vanish."""
    x = model.variable.symbol
    y = solution.particular
    residual = model.residual.subs({model.derivative: sp.diff(y, x), model.unknown.symbol: y})
    zero, done = vanishes(residual)
    if zero:
        return Check(SUBSTITUTION, True, SYMBOLIC)
    values = {**model.numeric_values(), **solution.initial_values(model)}
    terms = sp.Add.make_args(sp.expand(model.residual))
    worst = 0.0
    substituted = [t.subs({model.derivative: sp.diff(y, x), model.unknown.symbol: y}) for t in terms]
    span = max([abs(p) for p in points] + [1e-300])
    for xi in _sample_points(points):
        relative = math.nan
        for at in (xi, xi + 1e-9 * span):  # at a 0/0 point of a term, just beside it
            subs = {**values, x: at}
            total = _number(residual.subs(subs))
            size = sum(abs(_number(t.subs(subs))) for t in substituted)
            relative = abs(total) / size if size else abs(total)
            if math.isfinite(relative):
                break
        worst = max(worst, relative) if math.isfinite(relative) else math.inf
    return Check(
        SUBSTITUTION,
        worst <= RESIDUAL_TOLERANCE,
        NUMERIC_POINTS,
        worst,
        RESIDUAL_TOLERANCE,
        len(_sample_points(points)),
        (("simplify_finished", done),),
    )


def check_initial_condition(model: Model, solution: Solution, y, points: list[float]) -> Check:
    """y(x0) = y0, symbolically and numerically; the gap is relative to the size of the response."""
    x = model.variable.symbol
    gap = solution.particular.subs(x, solution.x0) - solution.y0
    zero, _ = vanishes(gap.doit())
    value = y(model.initial_at.si)
    target = model.initial_value.si
    size = max([abs(target)] + [abs(v) for v in map(y, _sample_points(points)) if math.isfinite(v)])
    numeric_gap = abs(value - target) / max(size, 1e-300)
    names = (("unknown", model.unknown.name), ("x0", str(solution.x0)), ("y0", str(solution.y0)))
    return Check(
        INITIAL_CONDITION,
        numeric_gap <= RESIDUAL_TOLERANCE,
        SYMBOLIC_AND_NUMERIC if zero else NUMERIC,
        numeric_gap,
        RESIDUAL_TOLERANCE,
        1,
        names,
    )


def vanishes(expr: sp.Expr) -> tuple[bool, bool]:
    """(is exactly zero, finished): cheap rewritings first, full simplification within budget last."""
    for rewrite in (sp.expand, lambda e: sp.cancel(sp.together(sp.powsimp(sp.expand(e))))):
        if rewrite(expr) == 0:
            return True, True
    simplified, done = within(SIMPLIFY_SECONDS, lambda: sp.simplify(expr), None)
    return bool(done and simplified == 0), done


def _integration(model: Model, y, points: list[float]) -> dict:
    """Integrate the stated equation numerically and compare with the derived values.

    The integration restarts at every jump of the forcing (a step or a pulse edge), so no step of
    the integrator straddles one, and it uses a stiff method where an explicit one would need a
    step count of the order of the span over the shortest natural scale.
    """
    x0, y0 = model.initial_at.si, model.initial_value.si
    targets = sorted({p for p in points if p >= x0})
    if not targets or targets[-1] == x0:
        targets = sorted(set(targets) | {x0})
    span = targets[-1] - x0
    slope = slope_function(model, scale=max(span, 1e-300))
    ratio = _stiffness(model, slope, targets, span)
    method = STIFF_METHOD if ratio > STIFF_RATIO else ODE_METHOD
    facts = (
        ("integrator", method),
        ("rtol", RTOL),
        ("atol_share", ATOL_SHARE),
        ("restarted", bool(_jumps(model, x0, targets[-1]))),
        ("stiff_ratio", ratio),
    )
    try:
        integrated = integrate_pieces(model, slope, x0, y0, targets, y, method)
    except IntegrationFailed as failure:
        return {
            "integration": Check(INTEGRATION, False, ODE, limit=AGREEMENT, facts=facts + failure.facts),
            "compared": (),
        }
    compared = tuple((xi, y(xi), yi) for xi, yi, _ in integrated)
    worst = difference_measure(compared, [size for _, _, size in integrated])
    return {
        "integration": Check(INTEGRATION, worst <= AGREEMENT, ODE, worst, AGREEMENT, len(compared), facts),
        "compared": compared,
    }


def difference_measure(compared, sizes) -> float:
    """The largest |derived - integrated| / (|integrated| + ATOL_SHARE × size) over the compared points,
    ``size`` being the largest |y| the response has had up to each point.

    This is the mixed error the integrator itself controls (rtol |y| + atol, divided by rtol): a
    relative error where the response is of its own size, an absolute one, against the response's
    size, where it has decayed towards zero (29 time constants out, or the instant a tank runs dry).
    A derived value that is not finite where the integration is counts as infinitely far off.
    """
    worst = 0.0
    for (_, derived, integrated), size in zip(compared, sizes):
        if not (math.isfinite(derived) and math.isfinite(integrated)):
            return math.inf
        worst = max(worst, abs(derived - integrated) / max(abs(integrated) + ATOL_SHARE * size, 1e-300))
    return worst


class IntegrationFailed(Exception):
    """The independent integration could not be completed; ``facts`` say why (a "failure" code)."""

    def __init__(self, failure: str, **more):
        super().__init__(failure)
        self.facts = (("failure", failure),) + tuple(more.items())


def integrate_pieces(
    model: Model, slope, x0: float, y0: float, targets: list[float], size_hint=None, method: str = ODE_METHOD
) -> list[tuple[float, float, float]]:
    """(x, y, size) at each target: the equation integrated from the initial point, restarted at every
    jump of the forcing and at every target, the state carried across.

    size is the largest |y| met so far (the response's overall size, from ``size_hint`` - the derived
    values - while it is still at 0); atol on each piece is RTOL × ATOL_SHARE × that size, so a
    growing response keeps a relative tolerance and a decaying one an absolute tolerance against its
    start.
    """
    if not math.isfinite(y0):
        raise IntegrationFailed(NOT_FINITE_START)
    end = targets[-1]
    edges = sorted({x0, end} | set(_jumps(model, x0, end)) | {t for t in targets if t > x0})
    wanted = set(targets)
    hints = [abs(size_hint(t)) for t in targets] if size_hint is not None else []
    overall = max([abs(y0)] + [h for h in hints if math.isfinite(h)])
    size = abs(y0) or overall or 1.0  # a response that starts at 0 takes its overall size until it moves
    found = [(x0, y0, size)] if x0 in wanted else []
    state = y0
    counted = CountedSlope(slope)
    for a, b in zip(edges[:-1], edges[1:]):
        size = max(size, abs(state))
        with warnings.catch_warnings(record=True) as caught, np.errstate(all="ignore"):
            warnings.simplefilter("always")
            try:
                result = solve_ivp(
                    counted, (a, b), [state], method=method, t_eval=[b], rtol=RTOL, atol=RTOL * ATOL_SHARE * size
                )
            except TooMuchWork:
                raise IntegrationFailed(TOO_MUCH_WORK, calls=MAX_SLOPE_CALLS) from None
            except (ValueError, ArithmeticError):  # an implicit method met a slope that is not finite
                raise IntegrationFailed(SLOPE_NOT_FINITE) from None
        if not result.success:
            raise IntegrationFailed(SOLVER_STOPPED)
        if not np.all(np.isfinite(result.y[0])):
            raise IntegrationFailed(OVERFLOW if caught else VALUES_NOT_FINITE)
        state = float(result.y[0][-1])
        size = max(size, abs(state))
        if b in wanted:
            found.append((float(b), state, size))
    return found


class TooMuchWork(Exception):
    pass


class CountedSlope:
    """The slope with a bound on how often the integrator may call it: work, not time, ends a run."""

    def __init__(self, slope):
        self.slope, self.calls = slope, 0

    def __call__(self, x, state):
        self.calls += 1
        if self.calls > MAX_SLOPE_CALLS:
            raise TooMuchWork()
        return self.slope(x, state)


def _stiffness(model: Model, slope, targets: list[float], span: float) -> float:
    """The span over the shortest natural scale 1/|p| met at the compared points (a 1 ns time constant
    seen over 1 h gives 3.6e12)."""
    if span <= 0:
        return 0.0
    rates = []
    for x in targets:
        try:
            rates.append(abs(slope.rate(x)))
        except NotFinite:
            continue
    rates = [r for r in rates if math.isfinite(r)]
    return span * max(rates, default=0.0)


def _jumps(model: Model, start: float, end: float) -> list[float]:
    """Where the stated equation jumps inside (start, end): the points where a step's argument is 0."""
    x = model.variable.symbol
    numeric = model.residual.subs(model.numeric_values())
    found = set()
    for step in numeric.atoms(sp.Heaviside, sp.sign):
        argument = step.args[0]
        if not argument.has(x):
            continue
        slope = sp.diff(argument, x)
        if slope.has(x) or slope == 0:
            continue  # a step of a non-linear argument: the integrator's step control has to manage it
        at = real_float(-argument.subs(x, 0) / slope)
        if math.isfinite(at) and start < at < end:
            found.add(at)
    return sorted(found)


class Slope:
    """dy/dx = -(b(x) y + c(x)) / a(x) from the stated F(x, y, y') = a y' + b y + c = 0.

    a, b and c are taken from the equation separately, so a growing solution does not lose the
    coefficient a to cancellation (F(x, y, 1) - F(x, y, 0) is a only in exact arithmetic), and each
    is evaluated safely: at a 0/0 point of the forcing its limit is used.
    """

    def __init__(self, model: Model, scale: float = 1.0):
        x, yv, dy = model.variable.symbol, model.unknown.symbol, model.derivative
        residual = model.residual.subs(model.numeric_values())
        parts = (sp.diff(residual, dy), sp.diff(residual, yv), residual.subs({yv: 0, dy: 0}))
        self.a, self.b, self.c = (SafeFunction(part, x, scale=scale, side=1) for part in parts)

    def rate(self, x: float) -> float:
        return self.b(x) / self.a(x)

    def __call__(self, x, state):
        a = self.a(x)
        if a == 0:
            raise NotFinite(float(x), "the coefficient of the derivative vanishes")
        return [-(self.b(x) * state[0] + self.c(x)) / a]


def slope_function(model: Model, scale: float = 1.0) -> Slope:
    """dy/dx from the stated equation F(x, y, y') = 0, which is linear in y'."""
    return Slope(model, scale)


def _sample_points(points: list[float]) -> list[float]:
    chosen = sorted(set(points))
    if len(chosen) > 6:
        chosen = [chosen[int(i)] for i in np.linspace(0, len(chosen) - 1, 6)]
    return chosen


def _number(expr: sp.Expr) -> float:
    """A constant expression in 20 digits; integrals in it by bounded quadrature (see bounded_integral)."""
    integrals = expr.atoms(sp.Integral)
    if integrals:
        expr = expr.xreplace({i: bounded_integral(i) for i in integrals})
        if expr.has(sp.nan):
            return math.nan
    value = complex(sp.N(expr, 20))
    return value.real if abs(value.imag) <= 1e-12 * max(1.0, abs(value.real)) else math.nan


def bounded_integral(
    integral: sp.Integral, digits: int = 20, degree: int = QUAD_DEGREE, tolerance: float = 1e-14
) -> sp.Expr:
    """A definite integral by tanh-sinh quadrature (mpmath) on QUAD_PIECES pieces, each of at most
    ``degree``: the work has a fixed ceiling, so a slow integrand cannot hang a check. NaN when the
    quadrature's own error estimate exceeds ``tolerance`` relative to the value.

    (sympy.N would raise its precision until satisfied, without any bound on the time taken.)
    """
    ((variable, low, high),) = integral.limits
    f = sp.lambdify(variable, integral.function, modules="mpmath", docstring_limit=0)
    with mpmath.workdps(digits):
        a, b = mpmath.mpf(real_float(sp.N(low, digits))), mpmath.mpf(real_float(sp.N(high, digits)))
        if not (mpmath.isfinite(a) and mpmath.isfinite(b)):
            return sp.nan
        nodes = [a + (b - a) * k / QUAD_PIECES for k in range(QUAD_PIECES + 1)]
        try:
            value, error = mpmath.quad(f, nodes, maxdegree=degree, error=True)
        except (ArithmeticError, ValueError, TypeError, NameError):
            return sp.nan
        value = real_float(value)
        if not math.isfinite(value) or float(error) > tolerance * max(abs(value), 1e-300) + 1e-300:
            return sp.nan
    return sp.Float(value, digits)


def bound(value: float) -> str:
    """A measured discrepancy as a power-of-ten bound ('below 1e-9'), stable from run to run."""
    if value == 0:
        return "0"
    if not math.isfinite(value):
        return "not finite"
    return f"below 1e{math.ceil(math.log10(value) + 1e-12)}"
