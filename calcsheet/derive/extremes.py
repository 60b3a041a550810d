"""The largest and smallest value of the response over a window, and the point that gives each.

A continuous response takes its extreme over a closed window at one of three kinds of point: where
its derivative is zero (a stationary point), where the derivative jumps (an edge of a step or pulse
in the forcing, a switch of the law: a lag driven by a pulse peaks at the pulse's end, where the
derivative is not zero), or at an end of the window. So the derivative of the particular solution is
solved for zero between those points, by sympy where it can within a budget, else by bracketing its
sign changes on a grid and refining each with Brent's method; the response is then compared at
every candidate. Facts only: numbers in SI and codes; the sheet words them.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable
from dataclasses import dataclass

import mpmath
import numpy as np
import sympy as sp
from scipy import optimize

from calcsheet.derive import by_shape
from calcsheet.derive.budget import within
from calcsheet.derive.safe_numeric import NotFinite, SafeFunction, bound, real_float
from calcsheet.derive.verify import _jumps as forcing_jumps
from calcsheet.model import Model, Window

MAX, MIN = "max", "min"
# How an extreme was found (Extreme.method); the sheet words each one.
STATIONARY, FORCING_JUMP, SWITCH, WINDOW_END, FINAL_VALUE, BEFORE_SWITCH = (
    "stationary_point",
    "forcing_jump",
    "switch",
    "window_end",
    "final_value",
    "before_switch",  # a derived quantity that jumps at a switch, taken just before it (SWITCH: just after)
)
SOLVE_SECONDS = 10.0  # sympy's solveset on one stretch of the derivative; only a guard against a hang
SCAN_POINTS = 2001  # sign-scan points of dy/dx over the whole analysed range, shared out by length
MIN_STRETCH_POINTS = 65  # at least this many on each stretch between jumps, however short
# dy/dx of a term kept as an integral is r - p*y, a difference of two computed numbers: a value within this
# fraction of their size has no sign we can trust (the quadrature's tolerance is 1e-12)
NOISE = 1e-9
ROOT_ITERATIONS = 200
DIGITS = 30  # mpmath digits for a closed-form derivative
INWARD = 1e-9  # the scan starts this fraction of a grid step inside each stretch, off the jump itself


def precise_at(precise, at: float) -> float:
    """A closed form lambdified for mpmath, at one point in DIGITS digits; nan where it has no real value there
    (the caller then falls back on the equation)."""
    with mpmath.workdps(DIGITS):
        try:
            return real_float(precise(mpmath.mpf(at)))
        except (ArithmeticError, ValueError, TypeError):
            return math.nan


@dataclass(frozen=True)
class Stationary:
    at: float  # SI
    value: float  # SI
    root: sp.Expr | None = None  # the root as sympy gave it (numbers substituted); None when bracketed


@dataclass(frozen=True)
class Extreme:
    kind: str  # MAX or MIN
    start: float  # SI
    end: float  # SI: the window's end, or the end of the analysed range for an open window
    open_ended: bool
    value: float | None  # SI; None when it does not exist (the response grows without bound)
    at: float | None  # SI; None for a final value the response approaches but never reaches
    method: str  # one of the codes above
    stationary: tuple[Stationary, ...] = ()  # every stationary point inside the window
    corners: tuple[tuple[float, str], ...] = ()  # (x, FORCING_JUMP or SWITCH) inside the window
    solved: bool = False  # the stationary points are sympy's solution on every stretch (else bracketed)
    tail_from: float | None = None  # open window: the response is monotone from here on
    text: str = ""  # the request as written
    of: str = ""  # the derived quantity it is an extreme of; "" for the unknown

    @property
    def key(self) -> tuple:
        return self.of, self.kind, self.start, self.end, self.open_ended


class Piece:
    """One stretch of the response under one law, from ``start`` to ``end`` (None: no end)."""

    def __init__(
        self, model: Model, solution, cls, y, start: float, end: float | None, scale: float = 1.0, compiled=False
    ):
        """``compiled``: p and r compiled once per form with the parameters as arguments (safe_numeric.bound)."""
        x = model.variable.symbol
        self.x, self.y, self.start, self.end, self.x0 = x, y, start, end, model.initial_at.si
        self.corners = tuple(forcing_jumps(model, start, end if end is not None else math.inf)) + _kinks(
            model.residual.subs(model.numeric_values()), x, start, end
        )
        # p, r and the derivative are made when first asked: a derived quantity's curve needs only the corners
        self._values = {**model.numeric_values(), **solution.initial_values(model)}
        self._solution, self._cls, self._scale, self._compiled = solution, cls, scale, compiled

    @functools.cached_property
    def p(self):
        p = self._solution.p if self._solution.p is not None else self._cls.p
        return self._equation_function(p)

    @functools.cached_property
    def r(self):
        r = self._solution.r if self._solution.r is not None else self._cls.r
        return self._equation_function(r)

    def _equation_function(self, expr: sp.Expr):
        if self._compiled:
            return bound(expr, self.x, self._values, scale=self._scale)
        return SafeFunction(expr.subs(self._values), self.x, scale=self._scale)

    @functools.cached_property
    def derivative(self) -> sp.Expr | None:
        """sympy dy/dx of the particular solution, when it is in closed form (None otherwise)."""
        if not self._solution.closed_form:
            return None
        particular = self._solution.particular.subs(self._values)
        expr = sp.diff(particular, self.x).replace(sp.DiracDelta, lambda *args: sp.S.Zero)
        return None if expr.has(sp.oo, -sp.oo, sp.zoo, sp.nan) else expr

    @functools.cached_property
    def _precise(self):
        return by_shape.precise_function(self.derivative, self.x)

    def slope(self, at: float) -> float:
        """dy/dx at a point: the closed form's derivative in 30 digits, else r - p*y from the equation."""
        if self.derivative is not None:
            value = precise_at(self._precise, at)
            if math.isfinite(value):
                return value
        try:
            return self.r(at) - self.p(at) * self.y(at)
        except NotFinite:
            return math.nan

    def slopes(self, grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """dy/dx on an ascending grid inside the piece, and the band about zero where its sign is noise."""
        if self.derivative is not None:
            d = np.array([self.slope(float(v)) for v in grid])
            return d, 1e-20 * np.max(np.abs(d), initial=0.0) * np.ones_like(d)
        ys = self.y.on_grid(np.concatenate([[self.x0], grid]))[1:]
        rs = np.array([_safe(self.r, float(v)) for v in grid])
        ps = np.array([_safe(self.p, float(v)) for v in grid])
        return rs - ps * ys, NOISE * (np.abs(rs) + np.abs(ps * ys))


class ExtremeSearch:
    """Extremes of one response (one Piece, or one per interval of a switched model) over windows."""

    def __init__(
        self,
        pieces: list[Piece],
        y,
        analysed: tuple[float, float],
        final: float | None | Callable[[], float | None],
        switches: tuple[float, ...] = (),
    ):
        """``final``: the value the response approaches as the variable grows without bound, or a function
        that finds it (a symbolic limit, costly), called only when an open-ended window asks for it."""
        self.pieces, self.y, self.analysed, self._final = pieces, y, analysed, final
        self.switches = switches
        self._all: tuple[list[Stationary], bool] | None = None  # every stationary point of the analysed range

    @property
    def final(self) -> float | None:
        if callable(self._final):
            self._final = self._final()
        return self._final

    def find(self, kind: str, window: Window | None, text: str = "") -> Extreme:
        start = window.start.si if window and window.start else self.analysed[0]
        end = window.end.si if window and window.end else self.analysed[1]
        end = min(end, self.analysed[1])
        open_ended = bool(window and window.open_ended)
        corners = sorted(
            {(c, FORCING_JUMP) for p in self.pieces for c in p.corners if start < c < end}
            | {(s, SWITCH) for s in self.switches if start < s < end}
        )
        every, solved = self._every_stationary()
        stationary = [s for s in every if start < s.at < end]
        candidates = (
            [(start, WINDOW_END)]
            + corners
            + [(s.at, STATIONARY) for s in stationary]
            + ([(end, WINDOW_END)] if end > start else [])
        )
        before = getattr(self.y, "before", None)  # a curve that may jump at a switch gives both sides
        if before is not None:
            candidates += [(s, BEFORE_SWITCH) for s in self.switches if start < s <= end]
        better = (lambda a, b: a > b) if kind == MAX else (lambda a, b: a < b)
        best = None
        for at, method in sorted(candidates, key=lambda c: (c[0], c[1] == BEFORE_SWITCH)):
            if method == BEFORE_SWITCH or (before is not None and method == WINDOW_END and at == end > start):
                value = before(at)  # a window ending at a switch ends just before it
            else:
                value = self.y(at)
            if math.isfinite(value) and (best is None or better(value, best[0])):
                best = (value, at, method)
        value, at, method = best if best is not None else (None, None, WINDOW_END)
        tail = max([start] + [c for c, _ in corners] + [s.at for s in stationary]) if open_ended else None
        if open_ended and at == end and end > start:  # the tail decides: it is monotone past `tail`
            value, at, method = (self.final, None, FINAL_VALUE) if self.final is not None else (None, None, FINAL_VALUE)
        return Extreme(
            kind, start, end, open_ended, value, at, method, tuple(stationary), tuple(corners), solved, tail, text
        )

    def _every_stationary(self) -> tuple[list[Stationary], bool]:
        """The stationary points over the whole analysed range, found once for every window: between each pair
        of neighbouring jumps and switches; and whether sympy solved every stretch."""
        if self._all is None:
            start, end = self.analysed
            cuts = sorted(
                {start, end}
                | {c for p in self.pieces for c in p.corners if start < c < end}
                | {s for s in self.switches if start < s < end}
            )
            found, solved = [], True
            for u, v in zip(cuts, cuts[1:]):
                points, exact = self._stationary(u, v)
                found += points
                solved = solved and exact
            self._all = (found, solved)
        return self._all

    def _stationary(self, u: float, v: float) -> tuple[list[Stationary], bool]:
        """The zeros of dy/dx strictly inside (u, v), where dy/dx has no jump; and whether sympy found them."""
        piece = self._piece((u + v) / 2)
        roots = _solved(piece, u, v)
        if roots is not None:
            return [Stationary(float(root), self.y(float(root)), root) for root in roots], True
        span = self.analysed[1] - self.analysed[0]
        count = max(MIN_STRETCH_POINTS, int(SCAN_POINTS * (v - u) / span) if span > 0 else 0)
        step = (v - u) / (count - 1)
        grid = np.linspace(u + INWARD * step, v - INWARD * step, count)
        d, band = piece.slopes(grid)
        side = np.where(d > band, 1, np.where(d < -band, -1, 0))
        side[~np.isfinite(d)] = 0
        clear = np.nonzero(side)[0]
        found = []
        for i, j in zip(clear[:-1], clear[1:]):
            if side[i] != side[j]:
                at = _root(piece.slope, float(grid[i]), float(grid[j]))
                found.append(Stationary(at, self.y(at)))
        return found, False

    def _piece(self, x: float) -> Piece:
        return next((p for p in self.pieces if p.end is None or x < p.end), self.pieces[-1])


def _solved(piece: Piece, u: float, v: float) -> list | None:
    """sympy's zeros of dy/dx in (u, v), each step and kink settled to its side there; None if it gives no list."""
    if piece.derivative is None:
        return None
    settled = _settle(piece.derivative, piece.x, (u + v) / 2)
    if settled is None:
        return None
    if settled == 0:  # at rest on this stretch: no isolated stationary point, its ends give its values
        return []
    found, done = within(SOLVE_SECONDS, lambda: sp.solveset(settled, piece.x, sp.Interval.open(u, v)), None)
    if done and found is sp.S.EmptySet:
        return []
    if not done or not isinstance(found, sp.FiniteSet) or not all(e.is_number and e.is_real for e in found):
        return None
    return sorted(found, key=float)


def _settle(expr: sp.Expr, x: sp.Symbol, inside: float) -> sp.Expr | None:
    """expr with every step, sign and absolute value of a linear argument replaced by its form at ``inside``
    (between the jumps they have no other); None when an argument is not linear in x."""
    for atom in expr.atoms(sp.Heaviside, sp.sign, sp.Abs):
        argument = atom.args[0]
        if not argument.has(x):
            continue
        if sp.diff(argument, x, 2) != 0:
            return None
    side = lambda argument: float(argument.subs(x, inside)) > 0  # noqa: E731

    def settled(a, *rest):
        return sp.Heaviside(a, *rest) if not a.has(x) else sp.S.One if side(a) else sp.S.Zero

    return (
        expr.replace(sp.Heaviside, settled)
        .replace(sp.sign, lambda a: sp.S.One if side(a) else -sp.S.One)
        .replace(sp.Abs, lambda a: a if side(a) else -a)
    )


def _kinks(expr: sp.Expr, x: sp.Symbol, start: float, end: float | None) -> tuple[float, ...]:
    """Where an absolute value of a linear argument turns: the forcing is continuous there, its derivative
    jumps (steps and signs, where the forcing itself jumps, are found by verify's search)."""
    found = set()
    for atom in expr.atoms(sp.Abs):
        argument = atom.args[0]
        slope = sp.diff(argument, x)
        if not argument.has(x) or slope.has(x) or slope == 0:
            continue
        at = real_float(-argument.subs(x, 0) / slope)
        if math.isfinite(at) and start < at < (end if end is not None else math.inf):
            found.add(at)
    return tuple(sorted(found))


def _root(slope, a: float, b: float) -> float:
    """The zero of dy/dx between two scan points of opposite sign: Brent's method, bounded in steps."""
    fa, fb = slope(a), slope(b)
    if math.isfinite(fa) and math.isfinite(fb) and fa * fb < 0:
        return float(
            optimize.brentq(
                slope, a, b, xtol=1e-13 * max(b - a, 1e-300), rtol=1e-14, maxiter=ROOT_ITERATIONS, disp=False
            )
        )
    return 0.5 * (a + b)


def _safe(f, at: float) -> float:
    try:
        return f(at)
    except NotFinite:
        return math.nan
