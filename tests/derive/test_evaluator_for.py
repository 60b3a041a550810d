"""The margin study's evaluator, compiled once per solution (derive/evaluate.py::evaluator_for), against the path
it replaces (make_evaluator: the values substituted, then compiled) on demos with their parameters moved: closed
forms, a switched interval, a forcing term left as an integral, and values that make the closed form singular.

Tolerances: both routes evaluate the same closed form in 30 digits; they differ only in whether the numbers the
parameters make (R*C, say) are rounded to doubles first, about 1e-16 relative, so 1e-13 holds with room. A term
left as an integral is QUADPACK's, asked for 1e-12 relative (evaluate.QUAD_RTOL): 1e-10 there."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

from calcsheet.derive import evaluate
from calcsheet.derive.derivation import derive
from calcsheet.derive.evaluate import evaluator_for, make_evaluator
from calcsheet.derive.margin import _with_values
from calcsheet.load.loader import load_model

INPUTS = Path(__file__).resolve().parents[2] / "inputs"


def moved(model, factor: float):
    """The model with every parameter's SI value times ``factor`` (a toleranced point away from nominal)."""
    pairs = [(p, p.si * factor) for p in model.parameters if not p.node]
    return replace(model, parameters=_with_values(model.parameters, pairs))


def agree(model, solution, points, grid, rel):
    """The two routes agree within ``rel`` of the response's size over ``grid`` (near a zero of the response,
    rounding is relative to its size, not to the value there)."""
    old, new = make_evaluator(model, solution, scale=10.0), evaluator_for(model, solution, scale=10.0)
    expected = old.on_grid(grid)
    size = float(np.max(np.abs(expected)))
    assert np.allclose(new.on_grid(grid), expected, rtol=rel, atol=rel * size)
    for at in points:
        assert new(at) == pytest.approx(old(at), rel=rel, abs=rel * size)


@pytest.mark.parametrize("demo", ["bus-capacitor-bleed-down", "feeder-cable-heating", "flange-cool-down"])
@pytest.mark.parametrize("factor", [1.0, 0.97, 1.04])
def test_closed_forms_agree_with_the_substituted_route(demo, factor):
    d = derive(load_model(INPUTS / f"{demo}.toml"))
    model = moved(d.model, factor)
    end = 4 * (d.numbers.time_constant or 1.0)
    agree(model, d.solution, [0.0, 0.3 * end, end], np.linspace(0.0, end, 41), rel=1e-13)


def test_each_interval_of_a_switched_model_agrees():
    from calcsheet.derive.piecewise import derive_piecewise, interval_model

    switched = derive_piecewise(load_model(INPUTS / "valve-coil-economiser.toml"))
    model = moved(switched.model, 1.03)
    for k, done in enumerate(switched.intervals):
        local = interval_model(model, k, model.initial_value)
        start = local.initial_at.si
        agree(local, done.derivation.solution, [start, start + 0.01], np.linspace(start, start + 0.05, 11), 1e-13)


def test_a_term_left_as_an_integral_agrees_within_the_quadrature_tolerance():
    d = derive(load_model(INPUTS / "probe-lag-gas-spike.toml"))
    assert d.solution.open_terms
    agree(moved(d.model, 1.02), d.solution, [10.0, 20.0, 45.0], np.linspace(0.0, 40.0, 9), rel=1e-10)


TWO_LAGS = """
[sheet]
title = "two time constants"
[model]
equation = "T_1*dy/dt + y = exp(-t/T_2)"
unknown = "y [1]"
variable = "t [s]"
[parameters]
T_1 = { value = "2 s", source = "test" }
T_2 = { value = "3 s", source = "test" }
[initial]
at = "0 s"
value = "0"
[evaluate]
at = ["1 s"]
"""


def test_values_that_leave_the_compiled_form_undefined_at_the_start_go_to_make_evaluator(tmp_path, monkeypatch):
    # the general form divides by T_1 - T_2: with T_1 = T_2 it is 0/0 at every point, and make_evaluator, which
    # sees the infinity after substituting, decides what to do (the compiled route must not return NaN)
    path = tmp_path / "two.toml"
    path.write_text(TWO_LAGS, encoding="utf-8")
    d = derive(load_model(path))
    T_1 = next(p for p in d.model.parameters if p.name == "T_1")
    sent = object()
    monkeypatch.setattr(evaluate, "make_evaluator", lambda *args, **kwargs: sent)
    at = {v: replace(d.model, parameters=_with_values(d.model.parameters, [(T_1, v)])) for v in (2.5, 3.0)}
    assert evaluator_for(at[3.0], d.solution, scale=3.0) is sent
    found = evaluator_for(at[2.5], d.solution, scale=3.0)
    assert found is not sent
    # y = (exp(-t/T_2) - exp(-t/T_1)) T_2/(T_2 - T_1), with y(0) = 0: the closed form by hand
    assert found(2.0) == pytest.approx((np.exp(-2.0 / 3.0) - np.exp(-2.0 / 2.5)) * 3.0 / 0.5, rel=1e-13)


def test_a_solution_is_compiled_once_whatever_its_values(monkeypatch):
    d = derive(load_model(INPUTS / "feeder-cable-heating.toml"))
    evaluator_for(moved(d.model, 1.01), d.solution, scale=7.0)
    compiled = []
    lambdify = sp.lambdify
    monkeypatch.setattr(evaluate.sp, "lambdify", lambda *a, **k: compiled.append(a) or lambdify(*a, **k))
    for factor in (0.98, 1.02, 1.05):
        evaluator_for(moved(d.model, factor), d.solution, scale=7.0)(100.0)
    assert compiled == []
