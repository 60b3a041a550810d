"""Derived quantities: a function g of the response, its derivative, the variable and the parameters.

On a solution of the equation dy/dx = r - p y, so g is a function of x and y alone, G(x, y); its slope is
dG/dx = dG/dx|y + dG/dy (r - p y). Both hold whether the solution is in closed form or keeps an integral,
so values, extremes and integrals need only y(x). Where y has a closed form, substituting it gives g's
closed form (shown on the sheet), its derivative (solved for zero by extremes.py) and its integral over a
window (sympy within a budget; else adaptive quadrature with its error estimate). Facts only: numbers in SI.
"""

from __future__ import annotations

import functools
import math
import warnings
from dataclasses import dataclass, replace

import mpmath
import numpy as np
import sympy as sp
from scipy import integrate

from calcsheet.derive import by_shape
from calcsheet.derive.budget import BUDGET_EXCEEDED, INTEGRATE_SECONDS, LIMIT_SECONDS, NO_CLOSED_FORM, within
from calcsheet.derive.extremes import NOISE, Extreme, ExtremeSearch, Piece, precise_at
from calcsheet.derive.safe_numeric import NotFinite, SafeFunction, bound, bound_vector, has_infinity, real_float
from calcsheet.model import DerivedQuantity, Model, Point, Window

# How an integral over a window was found (WindowIntegral.method); the sheet words each one.
CLOSED_FORM, QUADRATURE = "closed_form", "quadrature"
QUAD_RTOL = 1e-10  # relative tolerance asked of QUADPACK for an integral of a derived quantity
QUAD_SUBINTERVALS = 400  # its bound on the work per stretch between jumps
DIGITS = 30  # mpmath digits for a closed form at a point


@dataclass(frozen=True)
class WindowIntegral:
    """The integral of a derived quantity over a window of the variable, in SI."""

    of: str
    start: float
    end: float
    value: float | None  # None when it does not exist
    method: str  # CLOSED_FORM or QUADRATURE
    error: float = 0.0  # QUADPACK's estimate of the absolute error (0 for a closed form)
    fallback: str = ""  # why not in closed form: a budget code, "" when closed or no closed form of g exists
    antiderivative: sp.Expr | None = None  # with numbers, in the variable
    text: str = ""  # the request as written
    pieces: tuple[WindowIntegral, ...] = ()  # across switches: the integral over each interval, summed
    bounds: object = None  # IntegralBounds (integral_bounds.py) for the integrals a sheet shows; None elsewhere

    @property
    def key(self) -> tuple:
        return self.of, self.start, self.end


@dataclass(frozen=True)
class DerivedValues:
    """What the sheet shows of one derived quantity: its closed form and its values at the points asked for."""

    quantity: DerivedQuantity
    of_response: sp.Expr  # G(x, y): the derivative replaced by r - p y (symbols, not numbers)
    closed: sp.Expr | None  # g(x) with the particular solution substituted, numbers in SI; None: no closed form
    values: tuple[tuple[Point, float | None], ...]


class DerivedCurve:
    """One derived quantity along the response: g(x), its slope, its extremes and integrals over windows."""

    def __init__(
        self, quantity: DerivedQuantity, model: Model, solution, cls, y, piece: Piece, analysed, scale, compiled=False
    ):
        """``compiled``: g and its slope compiled once per form with the parameters as arguments
        (safe_numeric.bound), for the margin study's many evaluations of one solution."""
        x, ys = model.variable.symbol, model.unknown.symbol
        self.quantity, self.x, self.y, self.analysed = quantity, x, y, analysed
        values = {**model.numeric_values(), **solution.initial_values(model)}
        p = solution.p if solution.p is not None else cls.p
        r = solution.r if solution.r is not None else cls.r
        slope = r - p * ys
        self.of_response = quantity.expr.subs(model.derivative, slope)
        numeric = self.of_response.subs(values)
        if compiled:
            self._g = bound(self.of_response, (x, ys), values, scale=scale)
            self._g_grid = bound_vector(self.of_response, (x, ys), values)
            self._slope = bound(_slope_along(self.of_response, slope, x, ys), (x, ys), values, scale=scale)
        else:
            total = sp.diff(numeric, x) + sp.diff(numeric, ys) * slope.subs(values)
            self._g = SafeFunction(numeric, (x, ys), scale=scale)
            self._g_grid = sp.lambdify((x, ys), numeric, modules=["scipy", "numpy"], docstring_limit=0)
            self._slope = SafeFunction(total, (x, ys), scale=scale)
        self.closed = None
        if solution.closed_form:
            particular = solution.particular.subs(values)
            closed = numeric.subs(ys, particular)
            if not has_infinity(closed):
                self.closed = closed
        self.piece = _DerivedPiece(self, piece)
        self._search = None
        self._antiderivative: tuple[sp.Expr | None, str] | None = None

    def __call__(self, at: float) -> float:
        try:
            return self._g(at, self.y(at))
        except NotFinite:
            return math.nan

    def on_grid(self, grid: np.ndarray) -> np.ndarray:
        ys = self.y.on_grid(np.asarray(grid, dtype=float))
        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            try:
                values = np.asarray(self._g_grid(grid, ys), dtype=float) * np.ones_like(grid)
            except (ArithmeticError, ValueError, TypeError):
                values = np.full(len(grid), np.nan)
        return values

    def slope(self, at: float) -> float:
        try:
            return self._slope(at, self.y(at))
        except NotFinite:
            return math.nan

    # ------------------------------------------------------------------ extremes
    def search(self) -> ExtremeSearch:
        if self._search is None:
            self._search = ExtremeSearch([self.piece], self, self.analysed, self.final)
        return self._search

    def extreme(self, kind: str, window: Window | None, text: str = "") -> Extreme:
        return replace(self.search().find(kind, window, text), of=self.quantity.name)

    def final(self) -> float | None:
        """g as the variable grows without bound, from its closed form; None where there is none. Costly (a
        symbolic limit): the extreme search calls it once, and only when an open-ended window asks."""
        if self.closed is None:
            return None
        settled = self.closed.replace(sp.Heaviside, lambda *args: _settled_step(args[0], self.x))
        limit, done = within(LIMIT_SECONDS, lambda: sp.limit(settled, self.x, sp.oo), None)
        if done and limit is not None and limit.is_number and limit.is_finite and limit.is_real:
            return float(limit)
        return None

    # ------------------------------------------------------------------ integrals
    def integral(self, window: Window, text: str = "") -> WindowIntegral:
        """Over [start, end]: the closed form's antiderivative where sympy finds one within its budget, else
        adaptive Gauss-Kronrod quadrature (QUADPACK) between the jumps of the forcing, with its error estimate."""
        return self.between(window.start.si, window.end.si, text)

    def between(self, a: float, b: float, text: str = "") -> WindowIntegral:
        """The integral from a to b (SI), found as ``integral`` finds it."""
        antiderivative, fallback = self.antiderivative()
        if antiderivative is not None:
            value = _difference(antiderivative, self.x, a, b)
            if math.isfinite(value):
                return WindowIntegral(self.quantity.name, a, b, value, CLOSED_FORM, 0.0, "", antiderivative, text)
        value, error = self._quadrature(a, b)
        return WindowIntegral(self.quantity.name, a, b, value, QUADRATURE, error, fallback, None, text)

    def antiderivative(self) -> tuple[sp.Expr | None, str]:
        """sympy's antiderivative of the closed form, once; (None, why) when it has none within the budget."""
        if self._antiderivative is None:
            if self.closed is None:
                self._antiderivative = (None, "")
            else:
                found, done = by_shape.integrate(self.closed, self.x, INTEGRATE_SECONDS)
                if not done:
                    self._antiderivative = (None, BUDGET_EXCEEDED)
                elif found is None or found.has(sp.Integral) or has_infinity(found):
                    self._antiderivative = (None, NO_CLOSED_FORM)
                else:
                    self._antiderivative = (found, "")
        return self._antiderivative

    def _quadrature(self, a: float, b: float) -> tuple[float | None, float]:
        cuts = sorted({a, b} | {c for c in self.piece.corners if a < c < b})
        total, error = 0.0, 0.0
        for u, v in zip(cuts, cuts[1:]):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                part, estimate = integrate.quad(self, u, v, epsabs=0.0, epsrel=QUAD_RTOL, limit=QUAD_SUBINTERVALS)
            total, error = total + part, error + abs(estimate)
        return (total, error) if math.isfinite(total) else (None, error)


class _DerivedPiece:
    """What extremes.py asks of a stretch of the response, for a derived quantity: its jumps, its slope on a
    grid with the band where the sign is noise, and the closed form's derivative for sympy to solve."""

    def __init__(self, curve: DerivedCurve, base: Piece):
        self.curve, self.x, self.start, self.end, self.corners = curve, base.x, base.start, base.end, base.corners
        self.derivative = None
        if curve.closed is not None:
            derivative = sp.diff(curve.closed, curve.x).replace(sp.DiracDelta, lambda *args: sp.S.Zero)
            if not has_infinity(derivative):
                self.derivative = derivative
                self._precise = by_shape.precise_function(derivative, curve.x)

    def slope(self, at: float) -> float:
        if self.derivative is not None:
            value = precise_at(self._precise, at)
            if math.isfinite(value):
                return value
        return self.curve.slope(at)

    def slopes(self, grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        d = np.array([self.slope(float(v)) for v in grid])
        finite = d[np.isfinite(d)]
        return d, NOISE * np.max(np.abs(finite), initial=0.0) * np.ones_like(d)


def derived_values(model: Model, curves: dict[str, DerivedCurve], applies) -> tuple[DerivedValues, ...]:
    """Each derived quantity's closed form and its value at every ``[evaluate] at`` point (None past a kind's
    validity limit, where ``applies`` says the point does not apply)."""
    return tuple(
        DerivedValues(
            q,
            curves[q.name].of_response,
            curves[q.name].closed,
            tuple((pt, curves[q.name](pt.si) if applies(pt) else None) for pt in model.evaluate_at),
        )
        for q in model.derived
    )


def _difference(antiderivative: sp.Expr, x: sp.Symbol, a: float, b: float) -> float:
    """F(b) - F(a) in 30 digits; NaN where F has no finite value at an end."""
    f = by_shape.precise_function(antiderivative, x)
    with mpmath.workdps(DIGITS):
        try:
            return real_float(f(mpmath.mpf(b)) - f(mpmath.mpf(a)))
        except (ArithmeticError, ValueError, TypeError, ZeroDivisionError):
            return math.nan


@functools.lru_cache(maxsize=64)
def _slope_along(g: sp.Expr, slope: sp.Expr, x: sp.Symbol, y: sp.Symbol) -> sp.Expr:
    """dG/dx along a solution, dG/dx|y + dG/dy (r - p y), in symbols: once per form."""
    return sp.diff(g, x) + sp.diff(g, y) * slope


def _settled_step(argument: sp.Expr, x: sp.Symbol) -> sp.Expr:
    """Far along x a step of a linear argument has switched: 1 for a rising argument, 0 for a falling one."""
    slope = sp.diff(argument, x)
    if slope.is_number and slope != 0:
        return sp.S.One if slope > 0 else sp.S.Zero
    return sp.Heaviside(argument)
