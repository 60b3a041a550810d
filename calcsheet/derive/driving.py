"""The forcing as a value of the unknown: r/p, what the unknown would settle at if the forcing held still.

For a lag (a probe in a gas whose temperature spikes) the checker wants the input beside the reading: the
reading's peak is later and lower than the input's, and a sheet that shows only the reading hides how high
the input went. Written as dy/dx + p y = r, the forcing in the unknown's own dimension is r/p, for any
linear first-order model with a constant, non-zero p (for tau dT/dt + T = u it is u itself). This module returns facts
in SI: r/p sampled where the plotted curve is, and the largest and smallest values of r/p and of the
response over the plotted range, each refined from the best sample by a bounded scalar search.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy as sp

from calcsheet.derive.safe_numeric import NotFinite, SafeFunction

REFINE_TOL = 1e-9  # abscissa tolerance of the peak search, relative to the plotted range


@dataclass(frozen=True)
class Peak:
    at: float  # SI
    value: float  # SI


@dataclass(frozen=True)
class Driving:
    """r/p over the plotted range (SI), whether it changes with the variable, and both sides' extremes."""

    samples: tuple[tuple[float, float], ...]
    varies: bool  # r/p depends on the variable (a constant is just the final value)
    largest: Peak
    smallest: Peak
    response_largest: Peak
    response_smallest: Peak


def driving_value(model, cls, y, curve) -> Driving | None:
    """None where p is zero or changes with the variable, where r/p is not finite over the plotted range, or
    where there is no curve."""
    if len(curve) < 3:
        return None
    x = model.variable.symbol
    values = model.numeric_values()
    p, r = sp.sympify(cls.p).subs(values), sp.sympify(cls.r).subs(values)
    # with p changing along the variable (a tank whose volume grows) r/p is a drifting quasi-steady value, not an
    # input anyone set: drawing it would suggest a forcing that is not there
    if p.is_zero or p.free_symbols or not r.free_symbols <= {x}:
        return None
    expr = r / p
    xs = [c[0] for c in curve]
    f = SafeFunction(expr, x, scale=xs[-1] - xs[0])
    try:
        samples = tuple((xi, f(xi)) for xi in xs)
    except NotFinite:
        return None
    if not all(math.isfinite(v) for _, v in samples):
        return None
    response = [(c[0], c[1]) for c in curve]
    return Driving(
        samples=samples,
        varies=x in expr.free_symbols,
        largest=_refined(f, samples, 1),
        smallest=_refined(f, samples, -1),
        response_largest=_refined(y, response, 1),
        response_smallest=_refined(y, response, -1),
    )


def _refined(g, samples, sign) -> Peak:
    """The largest (sign 1) or smallest (sign -1) value of g: the best sample, then a bounded search between
    its neighbours (scipy's Brent-type bounded method). The better of the two is kept, so a search that
    wanders can only improve on the samples."""
    from scipy.optimize import minimize_scalar

    i = max(range(len(samples)), key=lambda k: (sign * samples[k][1], -k))
    best = Peak(*samples[i])
    lo, hi = samples[max(i - 1, 0)][0], samples[min(i + 1, len(samples) - 1)][0]
    if hi > lo:
        span = samples[-1][0] - samples[0][0]
        found = minimize_scalar(
            lambda t: -sign * float(g(t)), bounds=(lo, hi), method="bounded", options={"xatol": REFINE_TOL * span}
        )
        value = float(g(float(found.x)))
        if math.isfinite(value) and sign * value > sign * best.value:
            best = Peak(float(found.x), value)
    return best
