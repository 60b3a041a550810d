"""Numeric evaluation of the derived particular solution.

Closed-form parts are evaluated in 30-digit arithmetic (mpmath), so differences of nearly
equal exponentials do not lose digits. Terms left as definite integrals are evaluated by
adaptive Gauss–Kronrod quadrature (QUADPACK via scipy.integrate.quad), integrating
exp(P(s) - P(x)) r(s), whose exponential never exceeds 1 for a decaying system.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import mpmath
import sympy as sp
from scipy import integrate

from calcsheet.derive.integrating_factor import Solution
from calcsheet.model import Model

QUAD_METHOD = ("adaptive Gauss–Kronrod quadrature (QUADPACK QAGS via scipy.integrate.quad), "
               "relative tolerance 1e-12")


@dataclass
class QuadratureLog:
    """The largest error estimate quadrature reported, over every evaluation made."""

    evaluations: int = 0
    largest_error: float = 0.0


@dataclass
class ResponseEvaluator:
    """y(x) in SI units for the particular solution; non-finite outside its domain."""

    closed: callable
    open_parts: list = field(default_factory=list)  # (P(x) numeric, r_i(x) numeric)
    x0: float = 0.0
    log: QuadratureLog = field(default_factory=QuadratureLog)

    def __call__(self, x: float) -> float:
        with mpmath.workdps(30):
            try:
                value = _real(self.closed(mpmath.mpf(x)))
            except (ZeroDivisionError, ValueError, OverflowError, TypeError):
                return math.nan
        for P, r in self.open_parts:
            value += self._quadrature(P, r, x)
        return value

    def _quadrature(self, P, r, x: float) -> float:
        if x == self.x0:
            return 0.0
        Px = P(x)
        result, error = integrate.quad(lambda s: math.exp(P(s) - Px) * r(s), self.x0, x,
                                       epsabs=0.0, epsrel=1e-12, limit=400)
        self.log.evaluations += 1
        self.log.largest_error = max(self.log.largest_error, abs(error))
        return result


def make_evaluator(model: Model, solution: Solution) -> ResponseEvaluator:
    x = model.variable.symbol
    values = {**model.numeric_values(), **solution.initial_values(model)}
    closed_expr = (solution.natural + solution.forced_closed).subs(values)
    closed = sp.lambdify(x, closed_expr, modules="mpmath")
    P = sp.lambdify(x, solution.P.subs(values), modules="math")
    open_parts = [(P, sp.lambdify(x, term.subs(values), modules="math")) for term in solution.open_terms]
    return ResponseEvaluator(closed=closed, open_parts=open_parts, x0=model.initial_at.si)


def _real(value) -> float:
    if isinstance(value, mpmath.mpc):
        if abs(value.imag) > 1e-20 * max(1.0, abs(value.real)):
            return math.nan
        value = value.real
    result = float(value)
    return result if math.isfinite(result) else math.nan
