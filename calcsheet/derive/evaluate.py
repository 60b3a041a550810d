"""Numeric evaluation of the derived particular solution.

Closed-form parts are evaluated in 30-digit arithmetic (mpmath), so differences of nearly
equal exponentials do not lose digits. Terms left as definite integrals are evaluated by
adaptive Gauss–Kronrod quadrature (QUADPACK via scipy.integrate.quad), integrating
exp(P(s) - P(x)) r(s), whose exponential never exceeds 1 for a decaying system.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import mpmath
import numpy as np
import sympy as sp
from scipy import integrate

from calcsheet.derive.integrating_factor import Solution
from calcsheet.derive.safe_numeric import BoundFunction, NotFinite, SafeFunction, has_infinity, real_float
from calcsheet.errors import ModelRefused
from calcsheet.model import Model

QUAD_RTOL = 1e-12
FLOAT_RANGE = 1.7e308  # just inside the largest double (about 1.797e308)
QUAD_SUBINTERVALS = 400  # QUADPACK's bound on its work: at most this many subdivisions per integral


@dataclass(frozen=True)
class QuadratureLog:
    """The largest error estimate quadrature reported, over the evaluations made so far.

    Immutable: each evaluation gives a new log, so a Derivation keeps the log as it stood when its
    evaluation was done, and nothing evaluated later changes what it holds.
    """

    evaluations: int = 0
    largest_error: float = 0.0
    troubled: int = 0  # evaluations where QUADPACK warned (subdivision limit, round-off): the value may be off

    def adding(self, error: float, troubled: bool) -> "QuadratureLog":
        """This log with one more evaluation, whose error estimate is ``error``."""
        return QuadratureLog(
            self.evaluations + 1, max(self.largest_error, abs(error)), self.troubled + (1 if troubled else 0)
        )


@dataclass
class ResponseEvaluator:
    """y(x) in SI units for the particular solution; non-finite outside its domain."""

    closed: callable
    closed_vector: callable  # the same closed form in double precision, for whole grids
    open_parts: list = field(default_factory=list)  # (P(x) numeric, r_i(x) numeric)
    x0: float = 0.0
    log: QuadratureLog = field(default_factory=QuadratureLog)  # replaced by a new log at each quadrature
    closed_limit: object = None  # a SafeFunction of the closed form, for limits at 0/0 points

    def on_grid(self, grid: np.ndarray) -> np.ndarray:
        """y on an ascending grid that starts at x0, quickly: for scanning and plotting.

        Integral terms are carried from one grid point to the next,
        I(x_k+1) = I(x_k) exp(P(x_k) - P(x_k+1)) + integral from x_k to x_k+1, so each
        quadrature covers one short interval. Reported values use the exact call instead.
        """
        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            try:
                values = np.asarray(self.closed_vector(grid), dtype=complex) * np.ones_like(grid)
            except (ArithmeticError, ValueError, TypeError):
                values = np.full(len(grid), np.nan, dtype=complex)
        values = np.where(np.abs(values.imag) <= 1e-12 * np.maximum(1.0, np.abs(values.real)), values.real, np.nan)
        for k in np.nonzero(~np.isfinite(values))[0]:  # 0/0 or overflow in double: the precise value, or its limit
            values[k] = self._closed_at(float(grid[k]))
        for P, r in self.open_parts:
            values = values + self._carried(P, r, grid)
        return values

    def _carried(self, P, r, grid: np.ndarray) -> np.ndarray:
        carried, total = [0.0], 0.0
        for a, b in zip(grid[:-1], grid[1:]):
            total = total * math.exp(P(a) - P(b)) + self._quadrature(P, r, a, b)
            carried.append(total)
        return np.array(carried)

    def __call__(self, x: float) -> float:
        value = self._closed_at(x)
        for P, r in self.open_parts:
            value += self._quadrature(P, r, self.x0, x)
        return value

    def _closed_at(self, x: float) -> float:
        """The closed-form part in 30 digits; at a 0/0 point its limit; NaN where it has none."""
        with mpmath.workdps(30):
            try:
                value = _real(self.closed(mpmath.mpf(x)))
            except (ArithmeticError, ValueError, TypeError):
                value = math.nan
        if math.isfinite(value) or self.closed_limit is None:
            return value
        try:
            return self.closed_limit.limit(x)
        except NotFinite:
            return math.nan

    def overflows_at(self, x: float) -> bool:
        """Is the closed-form part at x beyond the floating-point range (mpmath's exponent is unbounded,
        so a growing response there is a huge number, not a missing one)?"""
        with mpmath.workdps(30):
            try:
                value = self.closed(mpmath.mpf(x))
                return bool(mpmath.isinf(value) or abs(value) > FLOAT_RANGE)
            except (ArithmeticError, ValueError, TypeError):
                return False

    def _quadrature(self, P, r, a: float, b: float) -> float:
        """The integral from a to b of exp(P(s) - P(b)) r(s) ds, its error estimate logged.

        The work is bounded by QUADPACK's subdivision limit; a warning from it (limit reached, round-off
        detected) is counted, so the sheet can say that the value may be off, and nothing is printed.
        """
        if a == b:
            return 0.0
        Pb = P(b)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result, error = integrate.quad(
                lambda s: _growth(P(s) - Pb) * r(s), a, b, epsabs=0.0, epsrel=QUAD_RTOL, limit=QUAD_SUBINTERVALS
            )
        troubled = any(issubclass(w.category, (integrate.IntegrationWarning, RuntimeWarning)) for w in caught)
        self.log = self.log.adding(error, troubled)
        return result


def make_evaluator(model: Model, solution: Solution, scale: float = 1.0) -> ResponseEvaluator:
    """Numeric y(x); ``scale`` is the natural size of the variable, for limits at 0/0 points."""
    x = model.variable.symbol
    values = {**model.numeric_values(), **solution.initial_values(model)}
    closed_expr = (solution.natural + solution.forced_closed).subs(values)
    if has_infinity(closed_expr):
        closed_expr = _constant_as_limit(model, solution, values, scale)
    closed = sp.lambdify(x, closed_expr, modules="mpmath", docstring_limit=0)
    closed_vector = sp.lambdify(x, closed_expr, modules=["scipy", "numpy"], docstring_limit=0)
    P = SafeFunction(solution.P.subs(values), x, scale=scale)
    open_parts = [(P, SafeFunction(term.subs(values), x, scale=scale)) for term in solution.open_terms]
    return ResponseEvaluator(
        closed=closed,
        closed_vector=closed_vector,
        open_parts=open_parts,
        x0=model.initial_at.si,
        closed_limit=SafeFunction(closed_expr, x, scale=scale),
    )


# Compiled once per solution (the margin study and a sweep evaluate one solution at many parameter sets); a
# bound on the entries kept, for a process that builds many sheets.
_COMPILED: dict[tuple, "_Compiled | None"] = {}
_COMPILED_KEPT = 64


@dataclass(frozen=True)
class _Compiled:
    """make_evaluator's functions of one solution, with the parameters as arguments after the variable."""

    arguments: tuple[sp.Symbol, ...]
    closed: callable
    closed_vector: callable
    closed_limit: SafeFunction
    P: SafeFunction
    open_terms: tuple[SafeFunction, ...]


def evaluator_for(model: Model, solution: Solution, scale: float = 1.0) -> ResponseEvaluator:
    """make_evaluator's evaluator for a Model whose parameters moved, without substituting and compiling anew:
    the solution is compiled once with its parameters as arguments and called with this Model's values.

    The same functions, so the same values up to rounding: substituting first rounds each number the
    parameters make (R*C, say) to a double before the 30-digit evaluation, this route computes them in the
    evaluation, so the two agree to about 1e-16 relative, far inside the 1e-10 the margin study relies on
    (margin.EVALUATION_PRECISION). Where the values make the closed form infinite or undefined at the
    initial point (a divisor that vanishes there), make_evaluator decides, as it would have.
    """
    x = model.variable.symbol
    values = {**model.numeric_values(), **solution.initial_values(model)}
    compiled = _compiled(solution, x, tuple(sorted(values, key=lambda s: s.name)))
    if compiled is None:
        return make_evaluator(model, solution, scale)
    floats = tuple(float(values[a]) for a in compiled.arguments)
    precise = tuple(mpmath.mpf(v) for v in floats)
    evaluator = ResponseEvaluator(
        closed=lambda at: compiled.closed(at, *precise),
        closed_vector=lambda grid: compiled.closed_vector(grid, *floats),
        open_parts=[
            (BoundFunction(compiled.P.with_scale(scale), floats), BoundFunction(term.with_scale(scale), floats))
            for term in compiled.open_terms
        ],
        x0=model.initial_at.si,
        closed_limit=BoundFunction(compiled.closed_limit.with_scale(scale), floats),
    )
    start = evaluator._closed_at(model.initial_at.si)
    if not math.isfinite(start):
        return make_evaluator(model, solution, scale)
    return evaluator


def _compiled(solution: Solution, x: sp.Symbol, known: tuple[sp.Symbol, ...]) -> "_Compiled | None":
    """The compiled functions of ``solution``; None where its closed form holds an infinity as written, or a
    symbol the values do not give."""
    key = (solution, x, known)
    if key not in _COMPILED:
        if len(_COMPILED) >= _COMPILED_KEPT:
            _COMPILED.clear()
        closed = solution.natural + solution.forced_closed
        parts = (closed, solution.P, *solution.open_terms)
        if has_infinity(closed) or not set().union(*(e.free_symbols for e in parts)) <= {x, *known}:
            _COMPILED[key] = None
        else:
            arguments = (x, *known)
            _COMPILED[key] = _Compiled(
                arguments=known,
                closed=sp.lambdify(arguments, closed, modules="mpmath", docstring_limit=0),
                closed_vector=sp.lambdify(arguments, closed, modules=["scipy", "numpy"], docstring_limit=0),
                closed_limit=SafeFunction(closed, arguments),
                P=SafeFunction(solution.P, arguments),
                open_terms=tuple(SafeFunction(term, arguments) for term in solution.open_terms),
            )
    return _COMPILED[key]


def _constant_as_limit(model: Model, solution: Solution, values: dict, scale: float) -> sp.Expr:
    """The closed part with its constant fixed by a limit: (y0 mu(x0) - F(x0+)) / mu + F / mu.

    A forcing such as (1 - exp(-t/T))/t has an antiderivative F with terms (Ei, log) that are each
    infinite at t = 0 while F has a finite limit there; the constant then comes from that limit.
    """
    x = model.variable.symbol
    x0, y0 = model.initial_at.si, model.initial_value.si
    mu = solution.mu.subs(values)
    forced = solution.forced_closed.subs(values)
    try:
        f0 = SafeFunction(forced * mu, x, scale=scale, side=1).limit(x0)
        mu0 = SafeFunction(mu, x, scale=scale, side=1)(x0)
    except NotFinite:
        raise ModelRefused(
            "the stated values make the derived solution singular at the initial point, with no finite limit there",
            "model.equation",
        ) from None
    return sp.Float(y0 * mu0 - f0, 20) / mu + forced


def _growth(exponent: float) -> float:
    """exp of P(s) - P(b), which stays at or below 0 for a decaying system; an overflow is infinite."""
    try:
        return math.exp(exponent)
    except OverflowError:
        return math.inf


def _real(value) -> float:
    result = real_float(value)
    return result if math.isfinite(result) else math.nan
