"""Independent checks of a switched response: each interval, continuity at the switches, and the
switched system integrated numerically.

None of them trusts the evaluator that carried the unknown over a switch: continuity evaluates the
previous interval's particular solution anew with sympy and mpmath from its own Model and Solution,
and the integration uses only each interval's equation as stated (``verify.integrate_pieces``, with
the error measure the integrator controls, ``verify.difference_measure``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy as sp

from calcsheet.derive.safe_numeric import NotFinite
from calcsheet.derive.verify import (
    AGREEMENT,
    ATOL_SHARE,
    CONTINUITY,
    EACH_INTERVAL,
    ODE,
    ODE_METHOD,
    RTOL,
    STIFF_METHOD,
    STIFF_RATIO,
    SWITCHED_INTEGRATION,
    Check,
    IntegrationFailed,
    difference_measure,
    bounded_integral,
    integrate_pieces,
    slope_function,
)
from calcsheet.model import Model

CONTINUITY_LIMIT = 1e-9  # both sides are the same closed form to about 1e-12 (QUADPACK's rtol for integral terms)
DIGITS = 30  # working precision of the independent evaluation at a switch
QUAD_DEGREE = 8  # the bound on the work of an integral term at a switch (verify.bounded_integral)


@dataclass(frozen=True)
class SwitchedVerification:
    each_interval: Check  # every interval's own three checks passed
    continuity: Check  # the previous interval's solution at each switch equals the next interval's start value
    integration: Check  # the switched equations integrated across every switch, compared with the response
    compared: tuple[tuple[float, float, float], ...]  # (x, derived y, integrated y), SI

    @property
    def checks(self) -> tuple[Check, ...]:
        return (self.each_interval, self.continuity, self.integration)

    @property
    def passed(self) -> bool:
        return all(c.passed for c in self.checks)


def verify_switched(model: Model, intervals, y, points: list[float]) -> SwitchedVerification:
    integration, compared = check_switched_integration(model, intervals, y, points)
    return SwitchedVerification(
        check_each_interval(intervals), check_continuity(model, intervals), integration, compared
    )


def check_each_interval(intervals) -> Check:
    failed = tuple(k for k, i in enumerate(intervals, start=1) if not i.derivation.verification.passed)
    return Check(EACH_INTERVAL, not failed, "per_interval", points=len(intervals), facts=(("failed", failed),))


# ----------------------------------------------------------------------------- continuity
def check_continuity(model: Model, intervals) -> Check:
    """At every switch, the previous interval's particular solution, evaluated there on its own, against
    the value the next interval starts from; measured as the integrator measures its error."""
    compared, sizes, size = [], [], abs(model.initial_value.si)
    for before, after in zip(intervals, intervals[1:]):
        size = max([size] + [abs(v) for _, v in before.derivation.curve if math.isfinite(v)])
        left = particular_at(before.derivation.model, before.derivation.solution, before.end)
        right = after.derivation.model.initial_value.si
        compared.append((before.end, right, left))
        sizes.append(max(size, abs(left) if math.isfinite(left) else 0.0))
    worst = difference_measure(compared, sizes)
    return Check(
        CONTINUITY,
        worst <= CONTINUITY_LIMIT,
        "closed_form_at_switch",
        worst,
        CONTINUITY_LIMIT,
        len(compared),
        (("digits", DIGITS), ("atol_share", ATOL_SHARE)),
    )


def particular_at(model: Model, solution, x: float) -> float:
    """y(x) from the Solution's particular form and the Model's own values, by substitution: no code of
    the evaluator that computed the derived values. NaN where it gives no finite real number."""
    exact = {
        symbol: sp.Float(value, DIGITS)
        for symbol, value in {**model.numeric_values(), **solution.initial_values(model)}.items()
    }
    exact[model.variable.symbol] = sp.Float(x, DIGITS)
    expr = solution.particular.subs(exact)
    integrals = expr.atoms(sp.Integral)
    if integrals:
        expr = expr.xreplace({i: bounded_integral(i, DIGITS, QUAD_DEGREE, tolerance=1e-12) for i in integrals})
    try:
        value = complex(sp.N(expr, DIGITS))
    except (TypeError, ValueError, ArithmeticError):
        return math.nan
    if not (math.isfinite(value.real) and abs(value.imag) <= 1e-12 * max(1.0, abs(value.real))):
        return math.nan
    return value.real


# ----------------------------------------------------------------------------- switched integration
def check_switched_integration(model: Model, intervals, y, points: list[float]):
    """(Check, compared): each interval's own equation integrated from the state the integration reached
    at its switch, restarted at every jump of the forcing inside it; compared with the derived response y
    at ``points``, each difference against |y| + ATOL_SHARE × the largest |y| so far."""
    state, compared, sizes, size = model.initial_value.si, [], [], abs(model.initial_value.si)
    methods = []
    for k, interval in enumerate(intervals, start=1):
        local = interval.derivation.model
        inside = [p for p in points if p >= interval.start and (interval.end is None or p < interval.end)]
        stop = interval.end if interval.end is not None else max(inside + [interval.start])
        if stop <= interval.start:
            continue
        targets = sorted(set(inside) | {interval.start, stop})
        slope = slope_function(local, scale=stop - interval.start)
        method = _method(slope, targets, stop - interval.start)
        methods.append((k, method))
        try:
            found = integrate_pieces(local, slope, interval.start, state, targets, y, method)
        except IntegrationFailed as failure:
            return Check(
                SWITCHED_INTEGRATION,
                False,
                ODE,
                limit=AGREEMENT,
                facts=_facts(methods) + failure.facts + (("interval", k),),
            ), ()
        for x, integrated, reached in found:
            size = max(size, reached)
            if x in inside:
                compared.append((x, y(x), integrated))
                sizes.append(size)
        state = found[-1][1]
    worst = difference_measure(compared, sizes)
    return Check(
        SWITCHED_INTEGRATION, worst <= AGREEMENT, ODE, worst, AGREEMENT, len(compared), _facts(methods)
    ), tuple(compared)


def _method(slope, targets: list[float], span: float) -> str:
    """The explicit method, or the stiff one where the span is more than STIFF_RATIO natural scales."""
    rates = []
    for x in targets:
        try:
            rates.append(abs(slope.rate(x)))
        except NotFinite:
            continue
    ratio = span * max((r for r in rates if math.isfinite(r)), default=0.0)
    return STIFF_METHOD if ratio > STIFF_RATIO else ODE_METHOD


def _facts(methods: list[tuple[int, str]]) -> tuple[tuple[str, object], ...]:
    """The integrators used (explicit first), the intervals given the stiff one, and the tolerances."""
    used = tuple(sorted({m for _, m in methods}, key=[ODE_METHOD, STIFF_METHOD].index)) or (ODE_METHOD,)
    stiff = tuple(k for k, m in methods if m == STIFF_METHOD)
    return (("integrators", used), ("stiff_intervals", stiff), ("rtol", RTOL), ("atol_share", ATOL_SHARE))
