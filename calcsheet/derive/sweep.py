"""A sweep of one parameter: every asked quantity and every criterion's verdict at evenly spaced values.

Facts only (numbers in SI, status codes); the sheet words them. Each point is the margin study's evaluation
(``margin._Study.outcome``): the nominal symbolic solution evaluated with the parameter replaced, a switched
model's intervals joined as ``derive_piecewise`` joins them, so nothing is solved again per point. Where a
criterion's verdict changes between two neighbouring points, the value where it changes is found by the
margin's own root search between them (``_Study.crossing``).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
import sympy as sp

from calcsheet.derive.margin import Probe, Toleranced, _Study, probes
from calcsheet.derive.safe_numeric import NotFinite
from calcsheet.errors import CalcsheetError
from calcsheet.model import Criterion, Model
from calcsheet.subjects import SUBJECTS, VARIABLE

FAMILY_CURVE_POINTS = 241  # points per response curve of the family plot, as the sheet's own curve
PASS, FAIL = "pass", "fail"
NOT_EVALUATED = "not evaluated"  # the evaluation at this point was refused (e.g. a scale beyond range)
# Flip.method: the value found by Brent's method between the two points, or only the two points
REFINED, BETWEEN_POINTS = "refined", "between_points"


@dataclass(frozen=True)
class Flip:
    """A criterion's verdict changes between two neighbouring points of the sweep."""

    criterion: int  # index into the model's criteria
    between: tuple[float, float]  # the two parameter values (SI) whose verdicts differ
    value: float | None  # the limiting value (SI) found between them; None where the search failed
    holds: str  # "below" or "above": on which side of the value the criterion holds
    method: str


@dataclass(frozen=True)
class Curve:
    """One response of the family: y(x) in SI with the parameter at ``value`` (SI)."""

    value: float
    points: tuple[tuple[float, float], ...]


@dataclass(frozen=True)
class Sweep:
    parameter: str
    values: tuple[float, ...]  # the parameter at each point (SI), rising
    log: bool  # spaced evenly in the logarithm
    quantities: tuple[Criterion, ...]  # the quantities asked for (a Criterion with no limit each)
    table: tuple[tuple[float | None, ...], ...]  # per point, per asked quantity (SI); None: it does not exist
    statuses: tuple[tuple[str, ...], ...]  # per point, per criterion: "pass", "fail", "not assessed", NOT_EVALUATED
    refusals: tuple[str, ...]  # per point: why it could not be evaluated ("" where it was)
    flips: tuple[Flip, ...]
    family: tuple[Curve, ...] = ()


def sweep_values(low: float, high: float, steps: int, log: bool) -> tuple[float, ...]:
    """``steps`` values from low to high, both included, evenly spaced (in the logarithm with ``log``)."""
    grid = np.geomspace(low, high, steps) if log else np.linspace(low, high, steps)
    return tuple(float(v) for v in grid)


def find_sweep(
    derivation,
    name: str,
    low: float,
    high: float,
    steps: int,
    log: bool = False,
    asked: tuple[Criterion, ...] = (),
    family: int = 0,
) -> Sweep:
    """The sweep of parameter ``name`` (of the input's [parameters]) over low..high. ``asked``: the quantities
    to tabulate (default: every criterion's subject, or every evaluated quantity when there are no criteria);
    ``family``: how many response curves to keep, at points spread over the sweep."""
    model: Model = derivation.model
    parameter = next(p for p in model.parameters if p.name == name)
    criteria = tuple(Probe(c, c.subject) for c in model.criteria)
    if not asked:
        asked = tuple(c for c in model.criteria) or tuple(p.criterion for p in probes(model, derivation.numbers))
    study_probes = criteria + tuple(Probe(q, q.subject) for q in asked)
    values = sweep_values(low, high, steps, log)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        try:
            study = _Study(derivation, (Toleranced(name, parameter),), asked=study_probes)
            outcomes = [_outcome(study, v) for v in values]
            table, statuses, refusals = [], [], []
            for outcome in outcomes:
                if isinstance(outcome, str):
                    table.append((None,) * len(asked))
                    statuses.append((NOT_EVALUATED,) * len(criteria))
                    refusals.append(outcome)
                else:
                    table.append(outcome.quantities[len(criteria) :])
                    statuses.append(outcome.statuses)
                    refusals.append("")
            flips = _flips(study, values, statuses)
            curves = _family(study, model, values, outcomes, family) if family else ()
        finally:
            sp.core.cache.clear_cache()  # as find_margin: no 30-digit numbers left in sympy's cache
    return Sweep(name, values, log, asked, tuple(table), tuple(statuses), tuple(refusals), flips, curves)


def _outcome(study: _Study, value: float):
    """The evaluation at one point, or the refusal's message where the point cannot be evaluated."""
    try:
        return study.outcome((value,))
    except CalcsheetError as error:
        return error.message
    except NotFinite as failure:
        return failure.what or "the equation is not finite there"


def _flips(study: _Study, values, statuses) -> tuple[Flip, ...]:
    found = []
    for k in range(len(study.model.criteria)):
        for i in range(len(values) - 1):
            a, b = statuses[i][k], statuses[i + 1][k]
            if {a, b} != {PASS, FAIL}:
                continue
            holds = "below" if a == PASS else "above"
            try:
                value, method = study.crossing(k, 0, values[i], values[i + 1]), REFINED
            except (ValueError, RuntimeError, CalcsheetError, NotFinite):
                value, method = None, BETWEEN_POINTS
            if value is not None and not values[i] <= value <= values[i + 1]:
                value, method = None, BETWEEN_POINTS
            found.append(Flip(k, (values[i], values[i + 1]), value, holds, method))
    return tuple(found)


def family_indices(steps: int, count: int) -> tuple[int, ...]:
    """``count`` points spread evenly over the sweep's ``steps`` (its ends included), or every point if fewer."""
    if count >= steps:
        return tuple(range(steps))
    if count == 1:
        return (0,)
    return tuple(sorted({round(i * (steps - 1) / (count - 1)) for i in range(count)}))


def _family(study: _Study, model: Model, values, outcomes, count: int) -> tuple[Curve, ...]:
    chosen = [(values[i], outcomes[i]) for i in family_indices(len(values), count) if not isinstance(outcomes[i], str)]
    if not chosen:
        return ()
    start = model.initial_at.si
    if model.plot_to is not None:
        end = model.plot_to.si
    else:
        end = max([o.numbers.span[1] for _, o in chosen] + [study.d.curve[-1][0]])
    end = max([end] + _criteria_abscissae(model))  # every criterion's point or time limit is on the plot
    grid = np.linspace(start, end, FAMILY_CURVE_POINTS)
    curves = []
    for value, outcome in chosen:
        stop = _curve_end(outcome.numbers, end)
        points = []
        for x in grid:
            if x > stop:
                break
            y = _at(outcome.response, float(x))
            if y is not None:
                points.append((float(x), y))
        curves.append(Curve(value, tuple(points)))
    return tuple(curves)


def _criteria_abscissae(model: Model) -> list[float]:
    """The points on the variable the criteria name: where a value is checked, a time a level must be reached by."""
    found = []
    for c in model.criteria:
        if SUBJECTS[c.subject].argument == VARIABLE:
            found.append(c.argument.si)
        elif SUBJECTS[c.subject].found == VARIABLE and c.subject != "time_constant":
            found.append(c.limit.si)
    return found


def _curve_end(numbers, end: float) -> float:
    """Where this response stops being drawn: the plotted range, or sooner where the solution or the kind's
    model ends."""
    stops = [end]
    if numbers.domain_end is not None:
        stops.append(numbers.domain_end)
    if numbers.valid_until is not None:
        stops.append(numbers.valid_until[0])
    return min(stops)


def _at(response, x: float) -> float | None:
    try:
        y = float(response(x))
    except (ArithmeticError, ValueError, TypeError, NotFinite):
        return None
    return y if math.isfinite(y) else None
