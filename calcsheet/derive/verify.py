"""Independent verification of the derived solution.

Three checks, none of which reuses the derivation's arithmetic: substitution of the solution
into the equation exactly as the Model states it, the initial condition, and a numerical
integration of the Model's own equation with scipy (an explicit Runge–Kutta method of order 8)
compared with the derived values.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import sympy as sp
from scipy.integrate import solve_ivp

from calcsheet.derive.budget import SIMPLIFY_SECONDS, within
from calcsheet.derive.integrating_factor import Solution
from calcsheet.model import Model

RTOL = 1e-11
AGREEMENT = 1e-6  # largest relative difference accepted between derived and integrated values
RESIDUAL_TOLERANCE = 1e-9
ODE_METHOD = "DOP853"


@dataclass(frozen=True)
class Check:
    name: str
    passed: bool
    method: str
    detail: str
    measure: float | None = None  # the residual or difference found, where one is measured


@dataclass(frozen=True)
class Verification:
    substitution: Check
    initial_condition: Check
    integration: Check
    compared: tuple[tuple[float, float, float], ...]  # (x, derived y, integrated y), SI

    @property
    def checks(self) -> tuple[Check, ...]:
        return (self.substitution, self.initial_condition, self.integration)

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
        return Check("substitution", True, "symbolic", "lhs - rhs simplifies to exactly 0")
    values = {**model.numeric_values(), **solution.initial_values(model)}
    terms = sp.Add.make_args(sp.expand(model.residual))
    worst = 0.0
    for xi in _sample_points(points):
        subs = {**values, x: xi}
        total = _number(residual.subs(subs))
        size = sum(abs(_number(t.subs({model.derivative: sp.diff(y, x), model.unknown.symbol: y}).subs(subs)))
                   for t in terms)
        worst = max(worst, abs(total) / size if size else abs(total))
    passed = worst <= RESIDUAL_TOLERANCE
    reason = "symbolic simplification did not finish in time" if not done else "symbolic simplification did not reach 0"
    return Check("substitution", passed, "numeric at sample points",
                 f"{reason}; largest relative residual {bound(worst)} at {len(_sample_points(points))} points "
                 f"(limit {RESIDUAL_TOLERANCE:.0e})", worst)


def check_initial_condition(model: Model, solution: Solution, y, points: list[float]) -> Check:
    """y(x0) = y0, symbolically and numerically; the gap is relative to the size of the response."""
    x = model.variable.symbol
    gap = solution.particular.subs(x, solution.x0) - solution.y0
    zero, _ = vanishes(gap.doit())
    value = y(model.initial_at.si)
    target = model.initial_value.si
    size = max([abs(target)] + [abs(v) for v in map(y, _sample_points(points)) if math.isfinite(v)])
    numeric_gap = abs(value - target) / max(size, 1e-300)
    if zero:
        return Check("initial condition", numeric_gap <= RESIDUAL_TOLERANCE, "symbolic and numeric",
                     f"{model.unknown.name}({solution.x0}) - {solution.y0} simplifies to 0; numerical relative gap "
                     f"{bound(numeric_gap)}", numeric_gap)
    return Check("initial condition", numeric_gap <= RESIDUAL_TOLERANCE, "numeric",
                 f"relative gap {bound(numeric_gap)} (limit {RESIDUAL_TOLERANCE:.0e})", numeric_gap)


def vanishes(expr: sp.Expr) -> tuple[bool, bool]:
    """(is exactly zero, finished): cheap rewritings first, full simplification within budget last."""
    for rewrite in (sp.expand, lambda e: sp.cancel(sp.together(sp.powsimp(sp.expand(e))))):
        if rewrite(expr) == 0:
            return True, True
    simplified, done = within(SIMPLIFY_SECONDS, lambda: sp.simplify(expr), None)
    return bool(done and simplified == 0), done


def _integration(model: Model, y, points: list[float]) -> dict:
    """Integrate the stated equation numerically and compare with the derived values."""
    f = slope_function(model)
    x0, y0 = model.initial_at.si, model.initial_value.si
    targets = sorted({p for p in points if p >= x0})
    if not targets or targets[-1] == x0:
        targets = sorted(set(targets) | {x0})
    scale = max(abs(y0), max((abs(y(p)) for p in targets), default=0.0), 1e-300)
    result = solve_ivp(f, (x0, targets[-1]), [y0], method=ODE_METHOD, t_eval=targets,
                       rtol=RTOL, atol=RTOL * scale * 1e-2)
    method = (f"scipy solve_ivp, {ODE_METHOD} (explicit Runge–Kutta of order 8), rtol {RTOL:.0e}, "
              f"on the equation as stated")
    if not result.success:
        return {"integration": Check("numerical integration", False, method, f"the integrator failed: {result.message}"),
                "compared": ()}
    compared = tuple((float(xi), y(float(xi)), float(yi)) for xi, yi in zip(result.t, result.y[0]))
    worst = max(abs(d - n) / max(abs(n), 1e-9 * scale) for _, d, n in compared)
    passed = worst <= AGREEMENT
    return {"integration": Check("numerical integration", passed, method,
                                 f"largest relative difference {bound(worst)} over {len(compared)} points "
                                 f"(limit {AGREEMENT:.0e})", worst),
            "compared": compared}


def slope_function(model: Model):
    """dy/dx from the stated equation F(x, y, y') = 0, which is linear in y'."""
    values = model.numeric_values()
    F = sp.lambdify((model.variable.symbol, model.unknown.symbol, model.derivative),
                    model.residual.subs(values), modules="math")

    def slope(x, state):
        yv = state[0]
        at_zero, at_one = F(x, yv, 0.0), F(x, yv, 1.0)
        return [-at_zero / (at_one - at_zero)]

    return slope


def _sample_points(points: list[float]) -> list[float]:
    chosen = sorted(set(points))
    if len(chosen) > 6:
        chosen = [chosen[int(i)] for i in np.linspace(0, len(chosen) - 1, 6)]
    return chosen


def _number(expr: sp.Expr) -> float:
    value = complex(sp.N(expr, 20))
    return value.real if abs(value.imag) <= 1e-12 * max(1.0, abs(value.real)) else math.nan


def bound(value: float) -> str:
    """A measured discrepancy as a power-of-ten bound ('below 1e-9'), stable from run to run."""
    if value == 0:
        return "0"
    if not math.isfinite(value):
        return "not finite"
    return f"below 1e{math.ceil(math.log10(value) + 1e-12)}"
