"""Bounds a checker can redo by hand on an integral over a window: the integrand lies between its smallest and
its largest value over the window, so the integral lies between those values times the window's length.

The extremes are the ones extremes.py finds for any max or min criterion (stationary points, jumps, switches,
the window's ends), so the bounds hold for the integrand itself, not for a sampling of it. Facts only; the sheet
words them (sheet/hand_checks.py).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from calcsheet.derive.derived import WindowIntegral
from calcsheet.derive.extremes import MAX, MIN
from calcsheet.model import Point, Window


@dataclass(frozen=True)
class IntegralBounds:
    smallest: float  # SI: the integrand's smallest value over the window
    largest: float  # SI: its largest value there
    length: float  # SI: the window's length

    @property
    def lower(self) -> float:
        return self.smallest * self.length

    @property
    def upper(self) -> float:
        return self.largest * self.length

    def holds(self, value: float) -> bool:
        """The integral lies between the bounds, within the round-off of the two products and the sum."""
        slack = 1e-12 * max(abs(self.lower), abs(self.upper), abs(value))
        return self.lower - slack <= value <= self.upper + slack


def bounded(integrals: tuple[WindowIntegral, ...], curves) -> tuple[WindowIntegral, ...]:
    """Each integral with its bounds, from ``curves`` (name -> DerivedCurve or JoinedDerived)."""
    return tuple(replace(i, bounds=bounds_of(curves[i.of], i)) for i in integrals)


def bounds_of(curve, integral: WindowIntegral) -> IntegralBounds | None:
    """None where the integrand has no finite extreme over the window (it grows without bound there)."""
    if integral.value is None or not integral.end > integral.start:
        return None
    window = Window(Point("", None, integral.start), Point("", None, integral.end))
    smallest, largest = curve.extreme(MIN, window).value, curve.extreme(MAX, window).value
    if smallest is None or largest is None:
        return None
    return IntegralBounds(smallest, largest, integral.end - integral.start)
