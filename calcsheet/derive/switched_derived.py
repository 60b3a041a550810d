"""Derived quantities across the switches of a switched model.

Each interval has its own law and parameters, so each evaluates a derived quantity g with its own numbers
(a switch that changes R changes P_R = v^2/R). The unknown is continuous at a switch; g need not be (the coil
voltage L di/dt jumps when R changes), so the joined curve answers a switch instant from the interval that
starts there (just after) and ``before`` from the one that ends there. Extremes compare both sides of every
switch; an integral across switches is the sum of each interval's own (closed form or quadrature). Facts only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from calcsheet.derive.derived import CLOSED_FORM, QUADRATURE, DerivedCurve, DerivedValues, WindowIntegral
from calcsheet.derive.extremes import Extreme, ExtremeSearch, Piece
from calcsheet.model import Model, Window


@dataclass(frozen=True)
class AtSwitch:
    """A derived quantity on both sides of a switch, in SI."""

    of: str
    at: float
    before: float
    after: float


class JoinedDerived:
    """g(x) of the whole switched response, one DerivedCurve per interval; the interface of a DerivedCurve
    that criteria use (a value, an extreme over a window, an integral over a window)."""

    def __init__(self, curves: list[DerivedCurve], starts: list[float], ends: list, analysed, switches):
        self.curves, self.starts, self.ends = curves, starts, ends
        self.quantity = curves[0].quantity
        self.analysed, self.switches = analysed, tuple(switches)
        self._search = None

    def _index(self, x: float) -> int:
        return next((k for k, end in enumerate(self.ends) if end is None or x < end), len(self.ends) - 1)

    def __call__(self, x: float) -> float:
        return self.curves[self._index(x)](x)

    def before(self, x: float) -> float:
        """Just before x: at a switch instant, the interval that ends there; elsewhere g(x)."""
        k = next((k for k, end in enumerate(self.ends) if end is not None and end == x), None)
        return self.curves[k](x) if k is not None else self(x)

    def search(self) -> ExtremeSearch:
        if self._search is None:
            self._search = ExtremeSearch(
                [c.piece for c in self.curves], self, self.analysed, self.curves[-1].final, switches=self.switches
            )
        return self._search

    def extreme(self, kind: str, window: Window | None, text: str = "") -> Extreme:
        return replace(self.search().find(kind, window, text), of=self.quantity.name)

    def integral(self, window: Window, text: str = "") -> WindowIntegral:
        """The sum over the intervals the window covers, each found in closed form where it has one."""
        a, b = window.start.si, window.end.si
        pieces = []
        for curve, start, end in zip(self.curves, self.starts, self.ends):
            u, v = max(a, start), min(b, end if end is not None else math.inf)
            if v > u:
                pieces.append(curve.between(u, v))
        if not pieces:
            return WindowIntegral(self.quantity.name, a, b, 0.0, CLOSED_FORM, text=text)
        values = [p.value for p in pieces]
        total = None if any(v is None for v in values) else math.fsum(values)
        closed = all(p.method == CLOSED_FORM for p in pieces)
        fallback = next((p.fallback for p in pieces if p.method == QUADRATURE and p.fallback), "")
        return WindowIntegral(
            self.quantity.name,
            a,
            b,
            total,
            CLOSED_FORM if closed else QUADRATURE,
            sum(p.error for p in pieces),
            fallback,
            pieces[0].antiderivative if len(pieces) == 1 else None,
            text,
            tuple(pieces) if len(pieces) > 1 else (),
        )


def joined_curves(model: Model, intervals, analysed: tuple[float, float]) -> dict[str, JoinedDerived]:
    """Each derived quantity of ``model`` across the switched response, name -> JoinedDerived."""
    if not model.derived:
        return {}
    starts = [i.start for i in intervals]
    ends = [i.end for i in intervals]
    per_interval = []
    for i in intervals:
        d = i.derivation
        scale = d.numbers.scale
        piece = Piece(d.model, d.solution, d.classification, d.response, i.start, i.end, scale=scale)
        local = {q.name: q for q in d.model.derived}
        per_interval.append(
            {
                q.name: DerivedCurve(
                    local.get(q.name, q), d.model, d.solution, d.classification, d.response, piece, analysed, scale
                )
                for q in model.derived
            }
        )
    switches = [s.at.si for s in model.switches]
    return {
        q.name: JoinedDerived([c[q.name] for c in per_interval], starts, ends, analysed, switches)
        for q in model.derived
    }


def across_values(model: Model, curves: dict[str, JoinedDerived]) -> tuple[DerivedValues, ...]:
    """Each derived quantity's value at every ``[evaluate] at`` point, from the interval in force there; no
    single closed form (each interval's is on its own step)."""
    return tuple(
        DerivedValues(
            q,
            curves[q.name].curves[0].of_response,
            None,
            tuple((pt, curves[q.name](pt.si)) for pt in model.evaluate_at),
        )
        for q in model.derived
    )


def at_switches(model: Model, curves: dict[str, JoinedDerived]) -> tuple[AtSwitch, ...]:
    """Every derived quantity just before and just after every switch."""
    return tuple(
        AtSwitch(q.name, s.at.si, curves[q.name].before(s.at.si), curves[q.name](s.at.si))
        for s in model.switches
        for q in model.derived
    )
