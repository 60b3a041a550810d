"""One call from a Model to everything the sheet needs: the stage ``derive``."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from calcsheet.derive.classify import Classification, classify
from calcsheet.derive.evaluate import QUAD_METHOD, QuadratureLog, make_evaluator
from calcsheet.derive.integrating_factor import Solution, solve
from calcsheet.derive.numbers import Numbers, compute_numbers
from calcsheet.derive.verify import Verification, verify
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
    quadrature_method: str = QUAD_METHOD
    response: object = None  # the ResponseEvaluator: y(x) in SI, for intervals that follow this one

    @property
    def passed(self) -> bool:
        return self.numbers.all_passed and self.verification.passed


def derive(model: Model) -> Derivation:
    cls = classify(model)
    solution = solve(model, cls)
    y = make_evaluator(model, solution)
    numbers = compute_numbers(model, cls, solution, y)
    start, end = numbers.span
    xs = np.linspace(start, end, CURVE_POINTS)
    curve = tuple((float(x), float(v)) for x, v in zip(xs, y.on_grid(xs)))
    checked = [v.at.si for v in numbers.values] + [r.x for r in numbers.reach if r.x is not None]
    checked += [x for x in np.linspace(start, end, 13)[1:]]
    if numbers.domain_end is not None:
        checked = [x for x in checked if x < numbers.domain_end]
    verification = verify(model, solution, y, [float(x) for x in checked])
    return Derivation(model=model, classification=cls, solution=solution, numbers=numbers,
                      verification=verification, curve=curve,
                      quadrature=None if solution.closed_form else y.log, response=y)
