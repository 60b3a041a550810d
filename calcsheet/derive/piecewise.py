"""Switched models: one derivation per interval, joined by continuity of the unknown.

Each interval is an ordinary Model (its own parameters or forcing) whose initial value is the
value the previous interval reaches at the switch. Values, levels and criteria are then taken
across the whole piecewise response, and an independent integration of the switched equations
(scipy, interval after interval, carrying the state across each switch) checks it.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from scipy.integrate import solve_ivp

from calcsheet.derive.derivation import Derivation, derive
from calcsheet.derive.numbers import SEARCH_SCALES, Numbers, ValueAt, reach_for, verdict_for
from calcsheet.derive.verify import AGREEMENT, ODE_METHOD, RTOL, Check, Verification, slope_function, bound
from calcsheet.model import Model, Point
from calcsheet.source.units import from_si, registry


@dataclass(frozen=True)
class Interval:
    start: float  # SI
    end: float | None  # SI; None for the last interval
    text: str  # what happens at its start
    derivation: Derivation


@dataclass(frozen=True)
class PiecewiseDerivation:
    model: Model
    intervals: tuple[Interval, ...]
    numbers: Numbers  # across the whole response
    verification: Verification  # the switched system integrated independently
    curve: tuple[tuple[float, float], ...]

    @property
    def passed(self) -> bool:
        return (self.numbers.all_passed and self.verification.passed
                and all(i.derivation.verification.passed for i in self.intervals))


def derive_piecewise(model: Model) -> PiecewiseDerivation:
    intervals = _derive_intervals(model)
    grid, samples = _scan(intervals)
    y = _Joined(intervals)
    last = intervals[-1].derivation.numbers
    values = tuple(ValueAt(p, y(p.si)) for p in model.evaluate_at)
    reaches = tuple(reach_for(level, y, grid, samples, last.final_value, model) for level in model.reach)
    verdicts = tuple(verdict_for(c, y, grid, samples, last.time_constant, last.final_value, model) for c in model.criteria)
    curve = tuple(point for i in intervals for point in i.derivation.curve)
    span = (model.initial_at.si, curve[-1][0])
    numbers = replace(last, values=values, reach=reaches, verdicts=verdicts, span=span, sine=None)
    checked = sorted({v.at.si for v in values} | {x for x, _ in curve[:: max(len(curve) // 16, 1)]})
    return PiecewiseDerivation(model, intervals, numbers, _switched_integration(model, intervals, y, checked), curve)


def _derive_intervals(model: Model) -> tuple[Interval, ...]:
    models = [model] + [s.model for s in model.switches]
    starts = [model.initial_at.si] + [s.at.si for s in model.switches]
    ends = starts[1:] + [None]
    texts = ["start"] + [s.text for s in model.switches]
    unit = model.unknown.unit
    intervals, y_start = [], model.initial_value
    for k, (local, start, end, text) in enumerate(zip(models, starts, ends, texts)):
        inside = tuple(p for p in model.evaluate_at if p.si >= start and (end is None or p.si < end))
        plot_to = _point(end, model.variable) if end is not None else model.plot_to
        local = replace(local, initial_value=y_start, evaluate_at=inside, reach=(), criteria=(),
                        plot_to=plot_to, switches=())
        d = derive(local)
        intervals.append(Interval(start, end, text, d))
        if end is not None:
            value = d.response(end)
            shown = from_si(value, unit)
            y_start = Point(f"{shown:.6g} {model.unknown.unit_text} (end of interval {k + 1})",
                            registry().Quantity(shown, unit), value)
    return tuple(intervals)


def _point(si: float, declared) -> Point:
    shown = from_si(si, declared.unit)
    return Point(f"{shown:.6g} {declared.unit_text}", registry().Quantity(shown, declared.unit), si)


class _Joined:
    """y(x) of the whole switched response: each x is answered by the interval it falls in."""

    def __init__(self, intervals):
        self.intervals = intervals

    def __call__(self, x: float) -> float:
        for interval in self.intervals:
            if interval.end is None or x < interval.end:
                return interval.derivation.response(x)
        return self.intervals[-1].derivation.response(x)


def _scan(intervals) -> tuple[np.ndarray, np.ndarray]:
    """A grid over every interval (the last searched for many natural scales) and y on it."""
    grids, samples = [], []
    for interval in intervals:
        numbers = interval.derivation.numbers
        end = interval.end if interval.end is not None else interval.start + SEARCH_SCALES * numbers.scale
        grid = np.linspace(interval.start, end, 801)
        values = interval.derivation.response.on_grid(grid)
        keep = np.isfinite(values)
        grids.append(grid[keep])
        samples.append(values[keep])
    return np.concatenate(grids), np.concatenate(samples)


def _switched_integration(model: Model, intervals, y, points: list[float]) -> Verification:
    """Integrate each interval's own equation with scipy, carrying the state across the switches."""
    state, compared = model.initial_value.si, []
    scale = max([abs(state)] + [abs(y(p)) for p in points] + [1e-300])  # for the absolute tolerance
    for interval in intervals:
        local = interval.derivation.model
        inside = [p for p in points if p >= interval.start and (interval.end is None or p < interval.end)]
        stop = interval.end if interval.end is not None else max(inside + [interval.start])
        targets = sorted(set(inside) | {stop})
        if stop > interval.start:
            result = solve_ivp(slope_function(local), (interval.start, stop), [state], method=ODE_METHOD,
                               t_eval=targets, rtol=RTOL, atol=RTOL * scale * 1e-2)
            if not result.success:
                failed = Check("switched integration", False, ODE_METHOD, f"the integrator failed: {result.message}")
                return Verification(failed, failed, failed, ())
            compared += [(float(x), y(float(x)), float(v)) for x, v in zip(result.t, result.y[0]) if x in inside]
            state = float(result.y[0][-1])
    size = max((abs(n) for _, _, n in compared), default=1.0)
    worst = max((abs(d - n) / max(abs(n), 1e-9 * size) for _, d, n in compared), default=0.0)
    method = (f"scipy solve_ivp, {ODE_METHOD}, rtol {RTOL:.0e}, on each interval's equation as stated, the state "
              "carried across every switch")
    check = Check("switched integration", worst <= AGREEMENT, method,
                  f"largest relative difference {bound(worst)} over {len(compared)} points (limit {AGREEMENT:.0e})",
                  worst)
    return Verification(_per_interval(intervals), _continuity(intervals, size), check, tuple(compared))


def _per_interval(intervals) -> Check:
    passed = all(i.derivation.verification.passed for i in intervals)
    return Check("each interval", passed, "substitution, initial condition and integration per interval",
                 "all intervals verified (see each interval's verification step)" if passed
                 else "an interval failed its own verification")


def _continuity(intervals, size: float) -> Check:
    """The unknown does not jump at a switch: the end of one interval is the start of the next."""
    worst = 0.0
    for before, after in zip(intervals, intervals[1:]):
        left = before.derivation.response(before.end)
        right = after.derivation.response(after.start)
        worst = max(worst, abs(left - right) / max(abs(left), 1e-9 * size, 1e-300))
    return Check("continuity at the switches", worst <= 1e-9, "numeric, both sides of every switch",
                 f"largest relative jump {bound(worst)} (limit 1e-09)", worst)
