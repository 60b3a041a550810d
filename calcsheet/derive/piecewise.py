"""Switched models: one derivation per interval, joined by continuity of the unknown.

The loader gives the law in force after each switch (``Switch.law``) but no start value: that is
the value the previous interval reaches at the switch, so each interval's Model is built here, once
the interval before it has been derived. Values, levels and criteria are then taken across the
whole piecewise response, and ``switched_checks`` verifies it independently.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from calcsheet.derive.derivation import Derivation, derive
from calcsheet.derive.extremes import ExtremeSearch, Piece
from calcsheet.derive.integral_bounds import bounded
from calcsheet.derive.numbers import (
    SEARCH_SCALES,
    Numbers,
    ValueAt,
    asks_for_extremes,
    extremes_shown,
    integrals_shown,
    reach_for,
    verdict_for,
)
from calcsheet.derive.switched_checks import SwitchedVerification, verify_switched
from calcsheet.derive.switched_derived import AtSwitch, across_values, at_switches, joined_curves
from calcsheet.model import Model, Point


@dataclass(frozen=True)
class Interval:
    start: float  # SI
    end: float | None  # SI; None for the last interval
    text: str  # what happens at its start
    derivation: Derivation  # of the interval's own Model: the law in force, started from the value carried over
    carried: tuple[tuple[str, str], ...] = ()  # states of the kind's law carried over the switch, as shown


@dataclass(frozen=True)
class SwitchedDerivation:
    model: Model  # as loaded: the first interval's law, the input's initial condition, the switches
    intervals: tuple[Interval, ...]
    numbers: Numbers  # across the whole response: values, levels and criteria; the last interval's tau and final value
    verification: SwitchedVerification
    curve: tuple[tuple[float, float], ...]
    margin: object = None  # derive/margin.py's Margin, when parameters have ranges (set by the pipeline)
    derived_at_switches: tuple[AtSwitch, ...] = ()  # each derived quantity just before and just after each switch

    @property
    def passed(self) -> bool:
        return self.numbers.all_passed and self.verification.passed and (self.margin is None or self.margin.passed)


INTERVAL_SCAN_POINTS = 801  # each interval is scanned at this many points for the levels it reaches


def derive_piecewise(model: Model) -> SwitchedDerivation:
    intervals = _derive_intervals(model)
    grid, samples = _scan(intervals)
    y = Joined(intervals)
    last = intervals[-1].derivation.numbers
    values = tuple(ValueAt(p, y(p.si)) for p in model.evaluate_at)
    reaches = tuple(reach_for(level, y, grid, samples, last.final_value) for level in model.reach)
    search = _extreme_search(model, intervals, y, grid, last.final_value) if asks_for_extremes(model) else None
    asked = tuple(search.find(e.kind, e.window, e.text) for e in model.extremes)
    curves = joined_curves(model, intervals, (model.initial_at.si, float(grid[-1])))
    integrals = tuple(curves[i.of].integral(i.window, i.text) for i in model.integrals)
    verdicts = tuple(
        verdict_for(c, y, grid, samples, last.time_constant, last.final_value, search=search, derived=curves)
        for c in model.criteria
    )
    curve = tuple(point for i in intervals for point in i.derivation.curve)
    span = (model.initial_at.si, curve[-1][0])
    numbers = replace(
        last,
        values=values,
        reach=reaches,
        verdicts=verdicts,
        span=span,
        sine=None,
        extremes=extremes_shown(asked, verdicts),
        derived=across_values(model, curves),
        integrals=bounded(integrals_shown(integrals, verdicts), curves),
    )
    checked = sorted({v.at.si for v in values} | {x for x, _ in curve[:: max(len(curve) // 16, 1)]})
    verification = verify_switched(model, intervals, y, checked)
    return SwitchedDerivation(
        model,
        _with_final_quadrature(intervals),
        numbers,
        verification,
        curve,
        derived_at_switches=at_switches(model, curves),
    )


def interval_model(model: Model, index: int, start_value: Point) -> Model:
    """The Model of interval ``index`` (0 is the first): the law in force from its switch, started at the
    switch from ``start_value``; the requests across the whole response stay with the switched model."""
    if index == 0:
        local = replace(model, initial_value=start_value)
    else:
        switch = model.switches[index - 1]
        local = replace(model, **switch.law.fields(), initial_at=switch.at, initial_value=start_value)
    return replace(local, evaluate_at=(), reach=(), extremes=(), criteria=(), integrals=(), switches=())


def _derive_intervals(model: Model) -> tuple[Interval, ...]:
    starts = [model.initial_at.si] + [s.at.si for s in model.switches]
    ends = starts[1:] + [None]
    texts = ["start"] + [s.text for s in model.switches]
    carried = [()] + [s.carried for s in model.switches]
    intervals, y_start = [], model.initial_value
    for k, (start, end, text) in enumerate(zip(starts, ends, texts)):
        inside = tuple(p for p in model.evaluate_at if p.si >= start and (end is None or p.si < end))
        plot_to = _point(end, model.variable) if end is not None else model.plot_to
        d = derive(replace(interval_model(model, k, y_start), evaluate_at=inside, plot_to=plot_to))
        intervals.append(Interval(start, end, text, d, carried[k]))
        if end is not None:
            y_start = Point.derived(d.response(end), model.unknown, f"end of interval {k + 1}")
    return tuple(intervals)


def _extreme_search(model: Model, intervals, y, grid, final) -> ExtremeSearch:
    """Extremes across the switches: each interval searched with its own law, the switch instants compared too."""
    pieces = [
        Piece(
            i.derivation.model,
            i.derivation.solution,
            i.derivation.classification,
            i.derivation.response,
            i.start,
            i.end,
            scale=i.derivation.numbers.scale,
        )
        for i in intervals
    ]
    return ExtremeSearch(
        pieces, y, (model.initial_at.si, float(grid[-1])), final, switches=tuple(s.at.si for s in model.switches)
    )


def _with_final_quadrature(intervals) -> tuple[Interval, ...]:
    """Each interval with its quadrature log as it stands once every evaluation across the switches is done."""
    return tuple(
        i
        if i.derivation.quadrature is None
        else replace(i, derivation=replace(i.derivation, quadrature=i.derivation.response.log))
        for i in intervals
    )


def _point(si: float, declared) -> Point:
    return Point.derived(si, declared)


class Joined:
    """y(x) of the whole switched response: each x is answered by the interval it falls in (a switch
    instant by the interval that starts there)."""

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
        grid = np.linspace(interval.start, end, INTERVAL_SCAN_POINTS)
        values = interval.derivation.response.on_grid(grid)
        keep = np.isfinite(values)
        grids.append(grid[keep])
        samples.append(values[keep])
    return np.concatenate(grids), np.concatenate(samples)
