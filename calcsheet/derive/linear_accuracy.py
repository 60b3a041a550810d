"""How far a linearised response strays from the non-linear model it stands for.

Why: a linearised result is an approximation, and its validity is a fact to measure, not to assume.
The non-linear equation as stated is integrated with scipy from the same initial condition, sharing
nothing with the linearisation (not its point, not its terms, not its solution), and compared with
the linearised response on the plot's grid and at every evaluated point. The difference is measured
as a share of the non-linear response's change over the range, so a body cooling from 400 K to 300 K
is judged on its 100 K of change, not flattered by its 400 K of absolute temperature.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
import sympy as sp
from scipy.integrate import solve_ivp

from calcsheet.derive.verify import ODE, Check, CountedSlope, TooMuchWork
from calcsheet.derive.numbers import OPERATORS
from calcsheet.model import Model

LINEARISATION = "linearisation"  # Check.code
RTOL = 1e-10
ATOL_SHARE = 1e-3  # atol = RTOL × ATOL_SHARE × the largest |y| of the linearised response
METHOD, STIFF = "DOP853", "Radau"
FLOOR_SHARE = 1e-6  # a response that hardly changes is measured against this share of its size
# Why the non-linear integration could not be completed (Accuracy.failure).
STOPPED, NOT_FINITE = "stopped", "not_finite"


@dataclass(frozen=True)
class Accuracy:
    """Facts: the linearised and the non-linear values side by side, and the largest difference."""

    rows: tuple[tuple[float, float, float, float], ...]  # (x, linearised, non-linear, share) at evaluated points
    curve: tuple[tuple[float, float], ...]  # the non-linear response on the plot's grid, SI
    worst: float  # the largest share over the grid and the evaluated points
    worst_at: float
    scale: float  # what each difference is divided by (the non-linear response's change), SI
    tolerance: float
    method: str
    failure: str = ""  # "" when the integration reached the end of the range
    failed_at: float | None = None
    # each criterion on the non-linear response: (criterion, found in SI or None, passed or None when not evaluated)
    criteria: tuple[tuple[object, float | None, bool | None], ...] = ()

    @property
    def passed(self) -> bool:
        return not self.failure and self.worst <= self.tolerance

    def check(self) -> Check:
        facts = (("integrator", self.method), ("rtol", RTOL), ("atol_share", ATOL_SHARE), ("failure", self.failure))
        return Check(LINEARISATION, self.passed, ODE, self.worst, self.tolerance, len(self.curve), facts)


def measure(original: Model, curve, response, tolerance: float) -> Accuracy:
    """Integrate ``original`` (non-linear, as stated) on ``curve``'s grid and at its evaluated points and
    compare with the linearised values (``curve``, ``response``: y(x) of the linear solution)."""
    x0, y0 = original.initial_at.si, original.initial_value.si
    inside = lambda x: curve[0][0] <= x <= curve[-1][0]  # noqa: E731
    evaluated = sorted({p.si for p in original.evaluate_at if inside(p.si)})
    grid = sorted({x for x, _ in curve} | set(evaluated) | {x for x in _criterion_points(original) if inside(x)})
    slope = _slope(original)
    size_hint = max([abs(y0)] + [abs(y) for _, y in curve if math.isfinite(y)])
    method, values, failed_at = _integrate(slope, x0, y0, grid, size_hint)
    reached = dict(zip(grid, values))
    if failed_at is not None:
        return Accuracy((), (), math.inf, failed_at, 0.0, tolerance, method, STOPPED, failed_at)
    if not all(math.isfinite(v) for v in values):
        return Accuracy((), (), math.inf, x0, 0.0, tolerance, method, NOT_FINITE, x0)
    size = max(abs(v) for v in values)
    scale = max(max(abs(v - y0) for v in values), FLOOR_SHARE * max(size, 1e-300))
    linear = {x: y for x, y in curve}
    for x in evaluated:
        linear.setdefault(x, float(response(x)))
    shares = [(abs(linear[x] - reached[x]) / scale, x) for x in grid]
    worst, worst_at = max(shares, key=lambda s: (s[0], -s[1]))
    rows = tuple((x, linear[x], reached[x], abs(linear[x] - reached[x]) / scale) for x in evaluated)
    nonlinear_curve = tuple((x, reached[x]) for x, _ in curve)
    criteria = tuple((c, *_on_nonlinear(c, grid, reached)) for c in original.criteria)
    return Accuracy(rows, nonlinear_curve, worst, worst_at, scale, tolerance, method, criteria=criteria)


def _criterion_points(model: Model) -> list[float]:
    """Where a criterion on the unknown needs the non-linear value: its point, or its window's ends."""
    points = []
    for c in model.criteria:
        if c.of:
            continue
        if c.subject == "value":
            points.append(c.argument.si)
        if c.subject in ("max", "min") and c.window is not None:
            points += [end.si for end in (c.window.start, c.window.end) if end is not None]
    return points


def _on_nonlinear(criterion, grid: list[float], reached: dict) -> tuple[float | None, bool | None]:
    """A criterion's quantity on the non-linear response, at the integrated points (an extreme or a level
    reached between them is taken on the grid, to its spacing); None for what only the linear model has
    (a time constant, a final value) and for derived quantities."""
    if criterion.of or criterion.subject not in ("value", "max", "min", "reach"):
        return None, None
    if criterion.subject == "value":
        found = reached.get(criterion.argument.si)
    elif criterion.subject == "reach":
        found = _first_crossing(criterion.argument.si, grid, reached)
    else:
        window = criterion.window
        start = grid[0] if window is None or window.start is None else window.start.si
        end = grid[-1] if window is None or window.end is None else window.end.si
        values = [reached[x] for x in grid if start <= x <= end]
        found = (max if criterion.subject == "max" else min)(values) if values else None
    if found is None and criterion.subject != "reach":
        return None, None
    compared = math.inf if found is None else found
    return found, bool(OPERATORS[criterion.operator](compared, criterion.limit.si))


def _first_crossing(level: float, grid: list[float], reached: dict) -> float | None:
    """Where the non-linear response first reaches ``level``, by linear interpolation between grid points."""
    for a, b in zip(grid[:-1], grid[1:]):
        ya, yb = reached[a] - level, reached[b] - level
        if ya == 0:
            return a
        if ya * yb < 0:
            return a + (b - a) * ya / (ya - yb)
    return grid[-1] if reached[grid[-1]] == level else None


def _slope(model: Model):
    """dy/dx from F(x, y, y') = a(x, y) y' + g(x, y) = 0, the stated equation (linear in y' by the
    linearisation's own refusal), as plain-float functions of the Model's checked expressions."""
    x, y, dy = model.variable.symbol, model.unknown.symbol, model.derivative
    residual = model.residual.subs(model.numeric_values())
    a = sp.lambdify((x, y), sp.diff(residual, dy), modules="math", docstring_limit=0)
    g = sp.lambdify((x, y), residual.subs(dy, 0), modules="math", docstring_limit=0)

    def slope(at, state):
        value = float(state[0])
        try:
            return [-g(float(at), value) / a(float(at), value)]
        except (ValueError, ArithmeticError, TypeError):
            return [math.nan]

    return slope


def _integrate(slope, x0: float, y0: float, grid: list[float], size: float):
    """(method, values on grid, x where it stopped or None): an explicit method of order 8 first, and an
    implicit one if the explicit one cannot finish within the bound on work (a stiff equation)."""
    end = grid[-1]
    failed_at = x0
    for method in (METHOD, STIFF):
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            counted = _Counted(slope)
            try:
                result = solve_ivp(
                    counted,
                    (x0, end),
                    [y0],
                    method=method,
                    t_eval=grid,
                    rtol=RTOL,
                    atol=RTOL * ATOL_SHARE * max(size, 1e-300),
                )
            except (TooMuchWork, ValueError, ArithmeticError):
                continue
        values = [float(v) for v in result.y[0]] if result.y.size else []
        if result.success and len(values) == len(grid) and all(math.isfinite(v) for v in values):
            return method, values, None
        failed_at = float(result.t[-1]) if len(result.t) else x0
    return STIFF, [], failed_at


class _Counted(CountedSlope):
    """verify.py's bounded slope (work, not time, ends a run that does not finish), refusing a value that is
    not finite so that the integrator stops where the non-linear model leaves the real numbers."""

    def __call__(self, x, state):
        value = super().__call__(x, state)
        if not math.isfinite(value[0]):
            raise ValueError("slope not finite")
        return value
