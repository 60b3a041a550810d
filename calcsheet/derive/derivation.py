"""One call from a Model to everything the sheet needs: the stage ``derive``."""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, replace

import numpy as np

from calcsheet.derive.classify import Classification, classify
from calcsheet.derive.driving import Driving, driving_value
from calcsheet.derive.evaluate import QuadratureLog, make_evaluator
from calcsheet.derive.integrating_factor import Solution, solve
from calcsheet.derive.numbers import Numbers, compute_numbers
from calcsheet.derive.safe_numeric import NotFinite
from calcsheet.derive.verify import Verification, verify
from calcsheet.errors import ModelRefused
from calcsheet.model import Model

CURVE_POINTS = 241


@dataclass(frozen=True)
class Derivation:
    model: Model
    classification: Classification
    solution: Solution
    numbers: Numbers
    verification: Verification
    curve: tuple[tuple[float, float], ...]  # (x, y) in SI over numbers.span, for plots
    quadrature: QuadratureLog | None
    response: object = None  # the ResponseEvaluator: y(x) in SI, for intervals that follow this one
    margin: object = None  # derive/margin.py's Margin, when parameters have ranges (set by the pipeline)
    linearisation: object = None  # derive/linearise.py's Linearisation, when the stated equation was non-linear
    accuracy: object = None  # derive/linear_accuracy.py's Accuracy: the linearised against the non-linear response
    driving: Driving | None = None  # the forcing as a value of the unknown (r/p) over the plotted range

    @property
    def passed(self) -> bool:
        """Every criterion holds, at worst case too where parameters have ranges, and verification passed."""
        return self.numbers.all_passed and self.verification.passed and (self.margin is None or self.margin.passed)


def derive(model: Model) -> Derivation:
    if model.linearise is not None:
        return _linearised(model)
    if not math.isfinite(model.initial_value.si) or not math.isfinite(model.initial_at.si):
        raise ModelRefused("the initial condition is not a finite number", "initial")
    cls = classify(model)
    solution = solve(model, cls)
    try:
        with warnings.catch_warnings():
            # numpy's floating-point warnings are handled where they matter (evaluate.py, verify.py);
            # any left are not the user's to read
            warnings.simplefilter("ignore", RuntimeWarning)
            return _numeric(model, cls, solution)
    except NotFinite as failure:
        raise ModelRefused(_not_finite_message(model, failure), "model.equation") from None


def _linearised(model: Model) -> Derivation:
    """Linearise, derive the linear model as any other, then measure it against the non-linear equation."""
    from calcsheet.derive.linear_accuracy import measure
    from calcsheet.derive.linearise import linearise

    found = linearise(model)
    inner = derive(replace(found.model, linearise=None))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        accuracy = measure(model, inner.curve, inner.response, model.linearise.tolerance)
    verification = replace(inner.verification, linearisation=accuracy.check())
    return replace(inner, verification=verification, linearisation=found, accuracy=accuracy)


def _numeric(model: Model, cls: Classification, solution: Solution) -> Derivation:
    reach = [abs(p.si) for p in model.evaluate_at] + [abs(model.initial_at.si)]
    y = make_evaluator(model, solution, scale=max(reach + [1.0]))
    numbers = compute_numbers(model, cls, solution, y, bound_integrals=True)
    start, end = numbers.span
    xs = np.linspace(start, end, CURVE_POINTS)
    curve = tuple((float(x), float(v)) for x, v in zip(xs, y.on_grid(xs)))
    checked = [v.at.si for v in numbers.values if v.applies] + [r.x for r in numbers.reach if r.x is not None]
    checked += [x for x in np.linspace(start, end, 13)[1:]]
    if numbers.domain_end is not None:
        checked = [x for x in checked if x < numbers.domain_end]
    if numbers.valid_until is not None:
        checked = [x for x in checked if x <= numbers.valid_until[0]]
    verification = verify(model, solution, y, [float(x) for x in checked])
    return Derivation(
        model=model,
        classification=cls,
        solution=solution,
        numbers=numbers,
        verification=verification,
        curve=curve,
        quadrature=None if solution.closed_form else y.log,
        response=y,
        driving=driving_value(model, cls, y, curve),
    )


def _not_finite_message(model: Model, failure: NotFinite) -> str:
    where = model.variable.text_of(failure.x)
    why = failure.what or "a term of it is infinite there and has no finite limit"
    return (
        f"the equation is not finite at {model.variable.name} = {where} ({why}); the response cannot be "
        "computed through that point"
    )
