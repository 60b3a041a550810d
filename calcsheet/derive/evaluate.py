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
import numpy as np
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
    closed_vector: callable  # the same closed form in double precision, for whole grids
    open_parts: list = field(default_factory=list)  # (P(x) numeric, r_i(x) numeric)
    x0: float = 0.0
    log: QuadratureLog = field(default_factory=QuadratureLog)

    def on_grid(self, grid: np.ndarray) -> np.ndarray:
        """y on an ascending grid that starts at x0, quickly: for scanning and plotting.

        Integral terms are carried from one grid point to the next,
        I(x_k+1) = I(x_k) exp(P(x_k) - P(x_k+1)) + integral from x_k to x_k+1, so each
        quadrature covers one short interval. Reported values use the exact call instead.
        """
        with np.errstate(all="ignore"):
            values = np.asarray(self.closed_vector(grid), dtype=complex) * np.ones_like(grid)
        values = np.where(np.abs(values.imag) <= 1e-12 * np.maximum(1.0, np.abs(values.real)), values.real, np.nan)
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
        with mpmath.workdps(30):
            try:
                value = _real(self.closed(mpmath.mpf(x)))
            except (ZeroDivisionError, ValueError, OverflowError, TypeError):
                return math.nan
        for P, r in self.open_parts:
            value += self._quadrature(P, r, self.x0, x)
        return value

    def _quadrature(self, P, r, a: float, b: float) -> float:
        """The integral from a to b of exp(P(s) - P(b)) r(s) ds, its error estimate logged."""
        if a == b:
            return 0.0
        Pb = P(b)
        result, error = integrate.quad(lambda s: math.exp(P(s) - Pb) * r(s), a, b,
                                       epsabs=0.0, epsrel=1e-12, limit=400)
        self.log.evaluations += 1
        self.log.largest_error = max(self.log.largest_error, abs(error))
        return result


def make_evaluator(model: Model, solution: Solution) -> ResponseEvaluator:
    x = model.variable.symbol
    values = {**model.numeric_values(), **solution.initial_values(model)}
    closed_expr = (solution.natural + solution.forced_closed).subs(values)
    closed = sp.lambdify(x, closed_expr, modules="mpmath")
    closed_vector = sp.lambdify(x, closed_expr, modules=["scipy", "numpy"])
    P = sp.lambdify(x, solution.P.subs(values), modules="math")
    open_parts = [(P, sp.lambdify(x, term.subs(values), modules="math")) for term in solution.open_terms]
    return ResponseEvaluator(closed=closed, closed_vector=closed_vector, open_parts=open_parts,
                             x0=model.initial_at.si)


def _real(value) -> float:
    if isinstance(value, mpmath.mpc):
        if abs(value.imag) > 1e-20 * max(1.0, abs(value.real)):
            return math.nan
        value = value.real
    result = float(value)
    return result if math.isfinite(result) else math.nan
