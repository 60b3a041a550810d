"""Design margin: how the results move with the toleranced parameters, and whether the criteria still hold.

Facts only (numbers in SI, method codes); the sheet words them. Every evaluation away from the nominal
values is the derive stage's own numeric evaluation of a Model whose parameters are replaced: the symbolic
solution, which holds for every value in the ranges (the loader gives each symbol the sign of its whole
range), is evaluated with the new numbers, so no corner is solved again. Sensitivities are derivatives of
the closed form where there is one (reach times by implicit differentiation, an extreme by the derivative
of the response at the point that gives it), else central differences of that numeric evaluation.
"""

from __future__ import annotations

import itertools
import math
import warnings
from dataclasses import dataclass, replace

import sympy as sp
from scipy import optimize

from calcsheet.derive.budget import within
from calcsheet.derive.numbers import OPERATORS, compute_numbers
from calcsheet.model import Criterion, Model, Parameter, Point
from calcsheet.subjects import SUBJECTS
from calcsheet.source.expressions import names_in
from calcsheet.source.value_expressions import si_value, sympy_form

MAX_CORNERS_PARAMETERS = 10  # 2^10 corners; beyond that the box is searched instead
INTERIOR_POINTS = 16  # interior points of the box compared with its corners (a Halton sequence: no randomness)
DIFFERENCE_STEP = 1e-5  # central differences: the step as a fraction of the parameter's value
# The relative precision of one numeric evaluation of a quantity, at its coarsest (a derived quantity's
# integral by QUADPACK, asked for 1e-10 in derived.py). Two evaluations closer than this differ by rounding
# and quadrature error alone, which vary with the machine's libraries: their difference is no slope.
EVALUATION_PRECISION = 1e-10
SEARCH_EVALUATIONS = 200  # bound on the numeric search of the box where an extreme may lie inside it
BRACKET_DOUBLINGS = 8  # a limiting value is bracketed by steps of the range's width doubling this often
ROOT_ITERATIONS = 100
SOLVE_SECONDS = 10.0  # sympy's diff and solve on a closed form; only a guard against a hang
DIGITS = 30

# Methods (Sensitivity.method, LimitingValue.method, WorstCase.method); the sheet words each.
SYMBOLIC, IMPLICIT, AT_EXTREME, DIFFERENCE = "symbolic", "implicit", "symbolic_at_extreme", "central_difference"
FLAT = "central_difference_flat"  # the two evaluations agree to within their precision: no slope to report
SOLVED, BRACKETED, NOT_IN_REACH, HOLDS_THROUGHOUT, FAILS_THROUGHOUT = (
    "solved",
    "bracketed",
    "not_bracketed",
    "holds_throughout",
    "fails_throughout",
)
CORNERS, SEARCHED, TOO_MANY = "corners", "searched", "too_many_parameters"
MIN, MAX = "min", "max"


@dataclass(frozen=True)
class Toleranced:
    """A parameter varied over its range; ``interval`` 0 for the input's, k for one a switch k sets anew."""

    key: str  # "R", or "R@2" for the value switch 1 sets (interval 2)
    parameter: Parameter
    interval: int = 0

    @property
    def nominal(self) -> float:
        return self.parameter.si


@dataclass(frozen=True)
class Probe:
    """A quantity the sheet evaluates, asked as a criterion with no limit, so one evaluation gives them all."""

    criterion: Criterion
    subject: str


@dataclass(frozen=True)
class Outcome:
    """One evaluation away from nominal: each probe's quantity (SI), each criterion's verdict, and what gave them."""

    quantities: tuple[float | None, ...]
    passed: tuple[bool, ...]
    statuses: tuple[str, ...]  # each criterion's Verdict.status: "pass", "fail" or "not assessed"
    numbers: object  # derive.numbers.Numbers
    response: object  # y(x) in SI: the ResponseEvaluator, or the intervals joined for a switched model


@dataclass(frozen=True)
class Sensitivity:
    quantity: int  # index into Margin.quantities
    parameter: str  # Toleranced.key
    derivative: float  # SI per SI
    normalised: float | None  # dy/dp * p / y; None where y is zero
    method: str
    expression: sp.Expr | None = None  # dy/dp in the parameters' symbols (tau, final value), when short


@dataclass(frozen=True)
class WorstCase:
    value: float | None  # SI; None: the quantity does not exist there (a level never reached)
    passed: bool
    margin: float | None  # SI, positive when it holds: limit - value for <=, value - limit for >=
    corner: tuple[tuple[str, str], ...]  # (key, MIN or MAX); a searched point gives (key, SI value as text)
    method: str  # CORNERS or SEARCHED (signs change over the box), TOO_MANY
    point: tuple[tuple[str, float], ...] = ()  # the parameter values (SI) at the worst point
    limit: float | None = None  # SI: a limit written in terms of parameters, worked out at the worst point


@dataclass(frozen=True)
class LimitingValue:
    parameter: str
    value: float | None  # SI
    method: str
    equation: sp.Expr | None = None  # parameter = this, where solved in symbols
    direction: str = ""  # "rise" or "fall": which way from nominal the criterion stops holding
    searched: tuple[float, float] | None = None  # SI range searched, when nothing was found


@dataclass(frozen=True)
class Margin:
    parameters: tuple[Toleranced, ...]
    quantities: tuple[Probe, ...]
    nominal: tuple[float | None, ...]  # each quantity at the nominal values (SI)
    sensitivities: tuple[Sensitivity, ...]
    worst: tuple[WorstCase | None, ...]  # per criterion; None when not assessed at nominal
    limits: tuple[tuple[LimitingValue, ...], ...]  # per criterion, per toleranced parameter
    switched: bool = False
    interior_points: int = INTERIOR_POINTS

    @property
    def passed(self) -> bool:
        return all(w is None or w.passed for w in self.worst)


def find_margin(derivation) -> Margin | None:
    """The margin of a derivation (plain or switched); None when no parameter has a range."""
    model = derivation.model
    toleranced = toleranced_parameters(model)
    if not toleranced:
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        try:
            return _Study(derivation, toleranced).margin()
        finally:
            # 30-digit numbers made here must not come back from sympy's cache into the sheet's expressions
            sp.core.cache.clear_cache()


def toleranced_parameters(model: Model) -> tuple[Toleranced, ...]:
    """Each parameter with a range, once: a switch that leaves it as it was shares it; one that sets it anew
    with its own range adds its own."""
    found: list[Toleranced] = [Toleranced(p.name, p) for p in model.parameters if p.toleranced]
    for k, switch in enumerate(model.switches, start=2):
        for p in switch.law.parameters:
            if p.toleranced and not any(t.parameter == p for t in found):
                found.append(Toleranced(f"{p.name}@{k}", p, k))
    return tuple(found)


def probes(model: Model, numbers) -> tuple[Probe, ...]:
    """The criteria first (their verdicts), then every other evaluated quantity once."""
    dummy = Point("", None, 0.0)
    result, seen = [], set()

    def add(criterion: Criterion):
        key = (criterion.subject, criterion.argument.si if criterion.argument else None, _window_key(criterion.window))
        if key not in seen or criterion in model.criteria:
            seen.add(key)
            result.append(Probe(criterion, criterion.subject))

    for c in model.criteria:
        add(c)
    for p in model.evaluate_at:
        add(Criterion("", "", "value", p, "<=", dummy))
    for level in model.reach:
        add(Criterion("", "", "reach", level, "<=", dummy))
    if numbers.time_constant is not None:
        add(Criterion("", "", "time_constant", None, "<=", dummy))
    if numbers.final_value is not None:
        add(Criterion("", "", "final_value", None, "<=", dummy))
    for e in model.extremes:
        add(Criterion("", e.text, e.kind, None, "<=", dummy, window=e.window))
    return tuple(result)


def _window_key(window) -> tuple | None:
    if window is None:
        return None
    return (window.start.si if window.start else None, window.end.si if window.end else None, window.open_ended)


class _Study:
    def __init__(self, derivation, toleranced: tuple[Toleranced, ...], asked: tuple[Probe, ...] | None = None):
        """``asked``: the quantities to evaluate, the model's criteria first (default: ``probes``)."""
        self.d = derivation
        self.model = derivation.model
        self.toleranced = toleranced
        self.switched = bool(self.model.switches)
        self.probes = asked if asked is not None else probes(self.model, derivation.numbers)
        self.nominal_values = tuple(t.nominal for t in toleranced)
        self._cache: dict = {}
        self._limits: dict = {}  # each criterion's limit at the values (it moves where written in parameters)
        self.chain = derived_chain(self.model.parameters)
        pieces = [i.derivation for i in derivation.intervals] if self.switched else [derivation]
        self.final_forms = [final_form(d) for d in pieces]
        self.nominal = self.evaluate(self.nominal_values)

    # ------------------------------------------------------------------ evaluation
    def evaluate(self, values: tuple[float, ...]) -> tuple[tuple[float | None, ...], tuple[bool, ...]]:
        """Every probe's quantity (SI) and every criterion's verdict with the toleranced parameters at ``values``."""
        found = self.outcome(values)
        return found.quantities, found.passed

    def outcome(self, values: tuple[float, ...]) -> Outcome:
        """The evaluation at ``values`` in full: quantities, verdicts, the numbers and the response y(x)."""
        values = tuple(float(v) for v in values)
        if values in self._cache:
            return self._cache[values]
        moved = self._replaced(values)
        model = replace(moved, criteria=_limits_at(tuple(p.criterion for p in self.probes), moved.parameters))
        if self.switched:
            numbers, y = _switched_numbers(model, self.d, self.final_forms)
        else:
            from calcsheet.derive.evaluate import evaluator_for
            from calcsheet.derive.integrating_factor import solution_at

            reach = [abs(p.si) for p in model.evaluate_at] + [abs(model.initial_at.si)]
            solution = solution_at(model, self.d.classification, self.d.solution)
            y = evaluator_for(model, solution, scale=max(reach + [1.0]))
            nominal_form = solution is self.d.solution
            final = self.final_forms[0](model) if self.final_forms[0] and nominal_form else None
            numbers = compute_numbers(model, self.d.classification, solution, y, final=final, compiled=True)
        criteria = numbers.verdicts[: len(self.model.criteria)]
        found = Outcome(
            quantities=tuple(_finite(v.actual) for v in numbers.verdicts),
            passed=tuple(v.passed for v in criteria),
            statuses=tuple(v.status for v in criteria),
            numbers=numbers,
            response=y,
        )
        self._cache[values] = found
        self._limits[values] = tuple(c.limit.si for c in model.criteria[: len(self.model.criteria)])
        return found

    def limit_at(self, values, k: int) -> float:
        """Criterion k's limit with the parameters at ``values`` (its own where written in terms of them)."""
        values = tuple(float(v) for v in values)
        self.evaluate(values)
        return self._limits[values][k]

    def against(self, values, k: int) -> float | None:
        """Criterion k's quantity measured against its nominal limit: moved by as much as its limit moves at
        ``values``, so every comparison with the nominal limit is the comparison with the limit there."""
        found = self.quantity(values, k)
        if found is None:
            return None
        return found - (self.limit_at(values, k) - self.model.criteria[k].limit.si)

    def _replaced(self, values) -> Model:
        """The Model with each toleranced parameter at its value (a switch's own ones in its law)."""
        pairs = [(t.parameter, v) for t, v in zip(self.toleranced, values)]
        model = self.model
        params = _with_values(model.parameters, pairs)
        model = replace(model, parameters=params, kind=_kind_at(model.kind, params))
        switches = []
        for switch in model.switches:
            law_params = _with_values(switch.law.parameters, pairs)
            switches.append(
                replace(
                    switch, law=replace(switch.law, parameters=law_params, kind=_kind_at(switch.law.kind, law_params))
                )
            )
        return replace(model, switches=tuple(switches))

    def quantity(self, values, index: int) -> float | None:
        return self.evaluate(tuple(values))[0][index]

    # ------------------------------------------------------------------ the margin
    def margin(self) -> Margin:
        sensitivities = tuple(s for q in range(len(self.probes)) for s in self.sensitivities(q))
        worst = tuple(self.worst_case(k) for k in range(len(self.model.criteria)))
        limits = tuple(
            tuple(self.limiting_value(k, j) for j in range(len(self.toleranced)))
            for k in range(len(self.model.criteria))
        )
        return Margin(self.toleranced, self.probes, self.nominal[0], sensitivities, worst, limits, self.switched)

    # ------------------------------------------------------------------ sensitivities
    def sensitivities(self, q: int) -> list[Sensitivity]:
        y0 = self.nominal[0][q]
        if y0 is None:
            return []
        result = []
        for j, t in enumerate(self.toleranced):
            found = self.symbolic(q, t)
            if found is None:
                slope = self.difference(q, j)
                found = (slope, FLAT if slope == 0.0 else DIFFERENCE, None)
            derivative, method, expression = found
            if derivative is None:
                continue
            normalised = derivative * t.nominal / y0 if y0 != 0 else None
            result.append(Sensitivity(q, t.key, derivative, normalised, method, expression))
        return result

    def difference(self, q: int, j: int) -> float | None:
        t = self.toleranced[j]
        h = DIFFERENCE_STEP * (abs(t.nominal) or (t.parameter.high - t.parameter.low))
        up, down = list(self.nominal_values), list(self.nominal_values)
        up[j] += h
        down[j] -= h
        a, b = self.quantity(up, q), self.quantity(down, q)
        if a is None or b is None:
            return None
        if abs(a - b) <= 2 * EVALUATION_PRECISION * max(abs(a), abs(b)):
            return 0.0
        return (a - b) / (2 * h)

    def symbolic(self, q: int, t: Toleranced):
        """(dy/dp, method, expression) from the closed form, or None where there is none to differentiate."""
        d = self.d
        probe = self.probes[q]
        if self.switched or not d.solution.closed_form or t.interval or probe.criterion.of:
            return None  # a derived quantity's sensitivity is by central differences
        if any(isinstance(c, sp.Eq) for c in d.solution.chosen_under):
            return None  # a form that holds only where two values are equal has no slope along either
        found, done = within(SOLVE_SECONDS, lambda: self._symbolic(probe, q, t.parameter.symbol), None)
        return found if done else None

    def _symbolic(self, probe: Probe, q: int, p: sp.Symbol):
        d, model = self.d, self.model
        x = model.variable.symbol
        values = {**model.numeric_values(), **d.solution.initial_values(model)}
        subject = probe.subject
        if subject == "time_constant":
            expr = d.numbers.time_constant_expr
            if expr is None:
                return None
            derivative = sp.diff(expr.xreplace(self.chain), p)
            return _number(derivative.subs(values)), SYMBOLIC, _short(sp.simplify(derivative))
        if subject == "final_value":
            cls = d.classification
            if not cls.constant_coefficients or x in cls.r.free_symbols:
                return None
            derivative = sp.diff((cls.r / cls.p).xreplace(self.chain), p)
            return _number(derivative.subs(values)), SYMBOLIC, _short(sp.simplify(derivative))
        y = (d.solution.natural + d.solution.forced_closed).xreplace(self.chain)
        dy_dp = sp.diff(y, p)
        if subject == "value":
            return _number(dy_dp.subs(values).subs(x, probe.criterion.argument.si)), SYMBOLIC, None
        if subject == "reach":
            at = self.nominal[0][q]
            slope = _number(sp.diff(y, x).subs(values).subs(x, at))
            if slope is None or slope == 0:
                return None
            change = _number(dy_dp.subs(values).subs(x, at))
            return (None if change is None else -change / slope), IMPLICIT, None
        if subject in ("max", "min"):
            extreme = self._extreme(probe)
            if extreme is None or extreme.at is None:
                return None
            return _number(dy_dp.subs(values).subs(x, extreme.at)), AT_EXTREME, None
        return None

    def _extreme(self, probe: Probe):
        for e in self.d.numbers.extremes:
            if e.kind == probe.subject and _same_window(e, probe.criterion.window, self.model):
                return e
        return None

    # ------------------------------------------------------------------ worst case
    def worst_case(self, k: int) -> WorstCase | None:
        criterion = self.model.criteria[k]
        verdict = self.d.numbers.verdicts[k]
        if not getattr(verdict, "assessed", True):
            return None
        n = len(self.toleranced)
        badness = self._badness(criterion)
        if n > MAX_CORNERS_PARAMETERS:
            return self._searched(k, criterion, badness, [self.nominal_values], TOO_MANY)
        corners = list(itertools.product((0, 1), repeat=n))
        points = [self._corner(c) for c in corners]
        scores = [badness(self.against(pt, k)) for pt in points]
        worst = max(range(len(points)), key=lambda i: (scores[i], -i))
        if self._corner_decides(k, corners, scores, badness):
            value = self.quantity(points[worst], k)
            return self._case(
                criterion,
                value,
                points[worst],
                CORNERS,
                tuple((t.key, MAX if c else MIN) for t, c in zip(self.toleranced, corners[worst])),
            )
        return self._searched(k, criterion, badness, points, SEARCHED)

    def _badness(self, criterion: Criterion):
        """How far a value is on the failing side: larger is worse; a quantity that does not exist is never
        (infinitely late) for a level, and worst of all otherwise."""
        subject = SUBJECTS[criterion.subject]
        upper = criterion.operator in ("<=", "<")

        def score(value):
            if value is None:
                return math.inf if (subject.absent_is_never and upper) or not subject.absent_is_never else -math.inf
            return value if upper else -value

        return score

    def _corner(self, corner) -> tuple[float, ...]:
        return tuple(t.parameter.high if c else t.parameter.low for t, c in zip(self.toleranced, corner))

    def _corner_decides(self, k: int, corners, scores, badness) -> bool:
        """Each parameter moves the criterion one way along every edge of the box, and no interior point is worse
        than the worst corner: then the worst case is that corner."""
        index = {c: i for i, c in enumerate(corners)}
        for j in range(len(self.toleranced)):
            signs = set()
            for c in corners:
                if c[j] == 0:
                    other = c[:j] + (1,) + c[j + 1 :]
                    a, b = scores[index[c]], scores[index[other]]
                    if math.isfinite(a) and math.isfinite(b) and a != b:
                        signs.add(b > a)
            if len(signs) > 1:
                return False
        worst = max(scores)
        inside = (self._unit_point(_halton(i + 1, len(self.toleranced))) for i in range(INTERIOR_POINTS))
        return all(badness(self.against(point, k)) <= worst for point in inside)

    def _unit_point(self, u) -> tuple[float, ...]:
        return tuple(t.parameter.low + ui * (t.parameter.high - t.parameter.low) for t, ui in zip(self.toleranced, u))

    def _searched(self, k: int, criterion: Criterion, badness, starts, method: str) -> WorstCase:
        """The box searched numerically (bounded Powell from the worst point seen) where no corner is sure to
        be the worst."""
        seen = list(starts) + [self._unit_point(_halton(i + 1, len(self.toleranced))) for i in range(INTERIOR_POINTS)]
        best = max(seen, key=lambda pt: badness(self.against(pt, k)))
        spans = [t.parameter.high - t.parameter.low for t in self.toleranced]
        lows = [t.parameter.low for t in self.toleranced]

        def objective(u):
            point = tuple(lo + min(max(ui, 0.0), 1.0) * s for lo, ui, s in zip(lows, u, spans))
            score = badness(self.against(point, k))
            return -score if math.isfinite(score) else (-1e300 if score > 0 else 1e300)

        start = [(b - lo) / s for b, lo, s in zip(best, lows, spans)]
        result = optimize.minimize(
            objective,
            start,
            method="Powell",
            bounds=[(0.0, 1.0)] * len(spans),
            options={"maxfev": SEARCH_EVALUATIONS, "xtol": 1e-6, "ftol": 1e-12},
        )
        found = tuple(lo + min(max(ui, 0.0), 1.0) * s for lo, ui, s in zip(lows, result.x, spans))
        if badness(self.against(found, k)) < badness(self.against(best, k)):
            found = best
        corner = tuple((t.key, _side(t, v)) for t, v in zip(self.toleranced, found))
        return self._case(criterion, self.quantity(found, k), found, method, corner)

    def _case(self, criterion: Criterion, value, point, method, corner) -> WorstCase:
        subject = SUBJECTS[criterion.subject]
        limit = self.limit_at(point, self.model.criteria.index(criterion))
        if value is None:
            compared = math.inf if subject.absent_is_never else None
        else:
            compared = value
        passed = compared is not None and bool(OPERATORS[criterion.operator](compared, limit))
        margin = None
        if value is not None:
            margin = limit - value if criterion.operator in ("<=", "<") else value - limit
        return WorstCase(
            value,
            passed,
            margin,
            corner,
            method,
            tuple((t.key, v) for t, v in zip(self.toleranced, point)),
            limit if criterion.limit_node is not None else None,
        )

    # ------------------------------------------------------------------ limiting values
    def limiting_value(self, k: int, j: int) -> LimitingValue:
        criterion, t = self.model.criteria[k], self.toleranced[j]
        solved = self._solved_limit(criterion, t)
        if solved is not None:
            return solved
        return self._bracketed(k, j)

    def _solved_limit(self, criterion: Criterion, t: Toleranced) -> LimitingValue | None:
        """p from y(x_c; p) = limit (a value), y(t_lim; p) = level (a reach time), or tau(p) = limit: sympy's
        solve in symbols within a budget, the root nearest the nominal value taken."""
        d = self.d
        if (
            self.switched
            or t.interval
            or not d.solution.closed_form
            or criterion.subject not in ("value", "reach", "time_constant")
            or criterion.of
            or criterion.limit_node is not None  # a limit that may move with the parameter: bracketed instead
        ):
            return None
        found, done = within(SOLVE_SECONDS, lambda: self._solve_for(criterion, t), None)
        return found if done else None

    def _solve_for(self, criterion: Criterion, t: Toleranced) -> LimitingValue | None:
        d, model = self.d, self.model
        x, p = model.variable.symbol, t.parameter.symbol
        values = {**model.numeric_values(), **d.solution.initial_values(model)}
        if criterion.subject == "time_constant":
            if d.numbers.time_constant_expr is None:
                return None
            left, at, level = d.numbers.time_constant_expr.xreplace(self.chain), {}, criterion.limit.si
        else:
            left = (d.solution.natural + d.solution.forced_closed).xreplace(self.chain)
            if left.has(sp.Heaviside, sp.Piecewise, sp.Integral):
                return None
            if criterion.subject == "value":
                at, level = {x: criterion.argument.si}, criterion.limit.si
            else:
                at, level = {x: criterion.limit.si}, criterion.argument.si
        if not _one_generator(left, p):
            return None  # p both inside and outside an exponential: sympy's Lambert search is slow and rarely ends
        target = limit_symbol(model)
        try:
            roots = sp.solve(sp.Eq(left, target), p)
        except (NotImplementedError, ValueError, TypeError):  # sympy has no method for this equation
            return None
        candidates = []
        for root in roots:
            value = _number(root.subs(values).subs(at).subs(target, level))
            if value is not None and _same_sign(value, t.nominal):
                candidates.append((abs(value - t.nominal), value, root))
        if not candidates:
            return None
        _, value, root = min(candidates, key=lambda c: c[0])
        if not self._holds_at(criterion, t, value):
            return None
        return LimitingValue(t.key, value, SOLVED, _short(root, limit=80), "rise" if value > t.nominal else "fall")

    def _holds_at(self, criterion: Criterion, t: Toleranced, value: float) -> bool:
        """The solved root is where the criterion's quantity meets its limit (a check of sympy's root, and of a
        reach time that is a later crossing than the first)."""
        k = self.model.criteria.index(criterion)
        j = self.toleranced.index(t)
        point = list(self.nominal_values)
        point[j] = value
        found = self.against(point, k)
        return found is not None and math.isclose(
            found, criterion.limit.si, rel_tol=1e-6, abs_tol=1e-9 * max(abs(criterion.limit.si), 1e-300)
        )

    def _bracketed(self, k: int, j: int) -> LimitingValue:
        """Step away from the nominal value in doubling steps (the range's width first) until the criterion
        changes, then Brent's method on the bracket; bounded in evaluations, and kept to the parameter's sign."""
        t = self.toleranced[j]
        g = self.beyond_limit(k, j)
        g0 = g(t.nominal)
        width = t.parameter.high - t.parameter.low
        searched = [t.nominal, t.nominal]
        for direction in (1, -1):
            previous, g_previous = t.nominal, g0
            for n in range(BRACKET_DOUBLINGS):
                value = t.nominal + direction * width * 2**n
                if t.nominal > 0 and value <= 0:
                    value = previous / 2
                if t.nominal < 0 and value >= 0:
                    value = previous / 2
                searched = [min(searched[0], value), max(searched[1], value)]
                g_value = g(value)
                if (g_previous <= 0) != (g_value <= 0):
                    root = self.crossing(k, j, previous, value)
                    return LimitingValue(
                        t.key, float(root), BRACKETED, direction="rise" if root > t.nominal else "fall"
                    )
                previous, g_previous = value, g_value
        code = HOLDS_THROUGHOUT if g0 <= 0 else FAILS_THROUGHOUT
        return LimitingValue(t.key, None, code, searched=(searched[0], searched[1]))

    def beyond_limit(self, k: int, j: int):
        """g(p): how far criterion k's quantity lies on the failing side of its limit with parameter j at p (the
        others nominal); g <= 0 where it holds."""
        criterion = self.model.criteria[k]
        badness = self._badness(criterion)
        limit_score = badness(criterion.limit.si)

        def g(value: float) -> float:
            point = list(self.nominal_values)
            point[j] = value
            score = badness(self.against(point, k)) - limit_score
            return score if math.isfinite(score) else math.copysign(1e300, score)

        return g

    def crossing(self, k: int, j: int, a: float, b: float) -> float:
        """Where criterion k changes between parameter j at a and at b (its verdicts differ there): Brent's
        method, bounded in iterations."""
        return float(
            optimize.brentq(
                self.beyond_limit(k, j),
                min(a, b),
                max(a, b),
                maxiter=ROOT_ITERATIONS,
                xtol=1e-12 * max(abs(a), abs(b)),
                rtol=1e-12,
                disp=False,
            )
        )


# ----------------------------------------------------------------------------- helpers
def _switched_numbers(model: Model, nominal, final_forms):
    """The joined numbers of a switched Model: each interval's symbolic solution (from the nominal derivation)
    evaluated with the new numbers, joined as derive_piecewise joins them, without the verification; and the
    joined response y(x)."""
    from calcsheet.derive.derivation import Derivation
    from calcsheet.derive.evaluate import evaluator_for
    from calcsheet.derive.integrating_factor import solution_at
    from calcsheet.derive.numbers import asks_for_extremes, verdict_for
    from calcsheet.derive.piecewise import Interval, Joined, _extreme_search, _scan, interval_model
    from calcsheet.derive.switched_derived import joined_curves

    intervals, y_start = [], model.initial_value
    for k, done in enumerate(nominal.intervals):
        local = replace(interval_model(model, k, y_start), plot_to=None, derived=())  # joined_curves evaluates them
        d0 = done.derivation
        solution = solution_at(local, d0.classification, d0.solution)
        y = evaluator_for(local, solution, scale=max(abs(local.initial_at.si), 1.0))
        final = final_forms[k](local) if final_forms[k] and solution is d0.solution else None
        numbers = compute_numbers(local, d0.classification, solution, y, final=final, compiled=True)
        d = Derivation(local, d0.classification, solution, numbers, None, (), None, y)
        intervals.append(Interval(done.start, done.end, done.text, d, done.carried))
        if done.end is not None:
            y_start = Point.derived(y(done.end), model.unknown)
    grid, samples = _scan(intervals)
    joined = Joined(intervals)
    last = intervals[-1].derivation.numbers
    search = _extreme_search(model, intervals, joined, grid, last.final_value) if asks_for_extremes(model) else None
    curves = joined_curves(model, intervals, (model.initial_at.si, float(grid[-1])))
    verdicts = tuple(
        verdict_for(c, joined, grid, samples, last.time_constant, last.final_value, search=search, derived=curves)
        for c in model.criteria
    )
    return replace(last, verdicts=verdicts), joined


def final_form(d):
    """The final value as a function of a Model's numbers: one symbolic limit of the particular solution, its
    parameters left as symbols (their signs hold over the whole ranges), instead of one limit per evaluation.
    None where the derivation's own final value was not such a limit; each evaluation then takes its own."""
    from calcsheet.derive.numbers import FINAL_LIMIT_OF_SOLUTION, _steps_settled

    if d.numbers.final_value_note != FINAL_LIMIT_OF_SOLUTION or not d.solution.closed_form:
        return None
    model, x = d.model, d.model.variable.symbol
    start = d.solution.initial_values(model)
    y0 = list(start)
    expr = _steps_settled(d.solution.particular, x)
    limit, done = within(SOLVE_SECONDS, lambda: sp.limit(expr, x, sp.oo), None)
    if not done or limit is None or not (limit.is_finite and limit.is_real) or limit.has(x):
        return None

    def at(local: Model):
        values = {**local.numeric_values(), **{s: v for s, v in d.solution.initial_values(local).items() if s in y0}}
        found = _number(limit.subs(values))
        if found is None:
            return None
        return found, FINAL_LIMIT_OF_SOLUTION

    nominal = at(model)
    if nominal is None or not math.isclose(
        nominal[0], d.numbers.final_value, rel_tol=1e-9, abs_tol=1e-12 * max(abs(d.numbers.final_value), 1e-300)
    ):
        return None  # the symbolic limit does not reproduce the derivation's: take each evaluation's own
    return at


def _with_values(parameters, pairs: list[tuple[Parameter, float]]):
    """Each toleranced parameter at its value; one a switch inherits unchanged is the same Parameter and moves
    with it; one written in terms of others is worked out again from their new values."""
    return worked_again(tuple(next((replace(p, si=v) for q, v in pairs if q == p), p) for p in parameters))


def _kind_at(kind, parameters):
    if kind is None:
        return None
    from calcsheet.kinds.expand import kind_checks

    return kind_checks(kind, parameters)


def _one_generator(expr: sp.Expr, p: sp.Symbol) -> bool:
    """Whether p enters only through exponentials or only outside them (cheap forms to solve first)."""
    inside = [e for e in expr.atoms(sp.exp) if p in e.free_symbols]
    outside = expr.subs({e: sp.Dummy() for e in inside})
    return not inside or p not in outside.free_symbols


def limit_symbol(model: Model) -> sp.Symbol:
    """The level a solved limiting value is written with: the unknown's name with the subscript lim."""
    return sp.Symbol(f"{model.unknown.name}_lim", real=True)


def _finite(value) -> float | None:
    return value if value is not None and math.isfinite(value) else None


def _number(expr) -> float | None:
    try:
        value = complex(sp.N(expr, DIGITS))
    except (TypeError, ValueError, ArithmeticError):
        return None
    if abs(value.imag) > 1e-12 * max(abs(value.real), 1e-300) or not math.isfinite(value.real):
        return None
    return value.real


def _short(expr, limit: int = 60):
    """An expression worth showing: short enough to read."""
    return expr if expr is not None and sp.count_ops(expr) <= limit else None


def _same_sign(a: float, b: float) -> bool:
    return (a > 0) == (b > 0) and a != 0 if b != 0 else True


def _same_window(extreme, window, model: Model) -> bool:
    start = window.start.si if window is not None and window.start else model.initial_at.si
    return math.isclose(extreme.start, start, rel_tol=0, abs_tol=1e-12 * max(abs(start), 1.0)) and (
        window is None or window.end is None or math.isclose(extreme.end, window.end.si, rel_tol=1e-12)
    )


def _side(t: Toleranced, value: float) -> str:
    low, high = t.parameter.low, t.parameter.high
    if math.isclose(value, low, rel_tol=1e-9):
        return MIN
    if math.isclose(value, high, rel_tol=1e-9):
        return MAX
    return f"{float(value):.10g}"  # ten figures, as the record rounds every value (numpy's repr names its type)


def _halton(index: int, dimensions: int) -> tuple[float, ...]:
    """The index-th point of the Halton sequence in the unit box: spread evenly, the same on every run."""
    primes = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71]
    point = []
    for d in range(dimensions):
        base, f, r, i = primes[d % len(primes)], 1.0, 0.0, index
        while i > 0:
            f /= base
            r += f * (i % base)
            i //= base
        point.append(r)
    return tuple(point)


def worked_again(parameters: tuple[Parameter, ...]) -> tuple[Parameter, ...]:
    """The parameters written as expressions ("tau = R*C") worked out again from the values of the others."""
    if not any(p.node is not None for p in parameters):
        return parameters
    by_name, done = {p.name: p for p in parameters}, {}

    def value(name: str) -> float:
        if name not in done:
            p = by_name[name]
            done[name] = p.si if p.node is None else si_value(p.node, value)
        return done[name]

    return tuple(p if p.node is None else replace(p, si=value(p.name)) for p in parameters)


def derived_chain(parameters: tuple[Parameter, ...]) -> dict:
    """Each parameter written as an expression, as that expression in the symbols of the parameters it comes
    from, so a derivative with respect to R reaches tau = R*C (the chain rule)."""
    by_name, done = {p.name: p for p in parameters}, {}

    def form(name: str) -> sp.Expr:
        if name not in done:
            p = by_name[name]
            used = names_in(p.node) & set(by_name) if p.node is not None else set()
            if not used:  # a stated value, or one worked out from numbers only ("4 * 550 uF"): it does not vary
                done[name] = p.symbol
            else:
                done[name] = sympy_form(p.node, {n: form(n) for n in used})
        return done[name]

    return {p.symbol: form(p.name) for p in parameters if p.node is not None}


def _limits_at(criteria: tuple[Criterion, ...], parameters: tuple[Parameter, ...]) -> tuple[Criterion, ...]:
    """Each criterion whose limit is written in terms of parameters, with that limit worked out at their values."""
    values = {p.name: p.si for p in parameters}
    return tuple(
        c if c.limit_node is None else replace(c, limit=replace(c.limit, si=si_value(c.limit_node, values.__getitem__)))
        for c in criteria
    )
