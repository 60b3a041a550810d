"""Functions compiled once per form with the parameters as arguments (derive/safe_numeric.py::bound and
bound_vector), against the route they replace in the margin study (the values substituted, then compiled), and
against closed forms by hand; and a derived quantity's curve built either way on a demo with its parameters moved.

Tolerance 1e-13 relative: the two routes differ only in whether the numbers the parameters make (1/R, say) are
rounded to doubles first, about 1e-16 relative per number."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

from calcsheet.derive import safe_numeric
from calcsheet.derive.derivation import derive
from calcsheet.derive.margin import _with_values
from calcsheet.derive.safe_numeric import SafeFunction, bound, bound_vector
from calcsheet.load.loader import load_model

INPUTS = Path(__file__).resolve().parents[2] / "inputs"
t, y = sp.symbols("t y", real=True)
R, C, w, V = sp.symbols("R C w V", positive=True)

FORMS = [
    V * sp.exp(-t / (R * C)),
    y**2 / R + C * sp.sin(w * t),
    sp.sin(w * t) / (w * t),  # 0/0 at t = 0: its limit, 1, either way
    (1 - sp.exp(-t / (R * C))) / t * V,
]
VALUES = [{R: 1200.0, C: 4.7e-4, w: 3.0, V: 48.0}, {R: 0.35, C: 12.0, w: 0.02, V: -5.5}]


@pytest.mark.parametrize("form", FORMS, ids=range(len(FORMS)))
@pytest.mark.parametrize("values", VALUES, ids=range(len(VALUES)))
def test_bound_agrees_with_the_function_of_the_substituted_form(form, values):
    old = SafeFunction(form.subs(values), (t, y), scale=5.0)
    new = bound(form, (t, y), values, scale=5.0)
    old_grid = sp.lambdify((t, y), form.subs(values), modules=["scipy", "numpy"])
    new_grid = bound_vector(form, (t, y), values)
    for at, level in ((0.0, 2.0), (0.37, -1.5), (4.0, 0.25)):
        assert new(at, level) == pytest.approx(old(at, level), rel=1e-13, abs=1e-300)
    grid = np.linspace(0.1, 6.0, 13)
    assert np.allclose(new_grid(grid, 0.5 * grid), old_grid(grid, 0.5 * grid), rtol=1e-13, atol=0.0)


def test_the_limit_at_a_removable_point_is_the_one_by_hand():
    found = bound(sp.sin(w * t) / (w * t), t, {w: 2.5}, scale=1.0)
    assert found(0.0) == pytest.approx(1.0, rel=1e-12)
    assert found(0.4) == pytest.approx(math.sin(1.0) / 1.0, rel=1e-14)


def test_a_form_with_a_symbol_the_values_do_not_give_is_substituted_as_before():
    # T is left free: the route substitutes what it has, as SafeFunction of the substituted form would
    T = sp.Symbol("T", positive=True)
    found = bound(R * t + T, t, {R: 2.0}, scale=1.0)
    assert isinstance(found, SafeFunction)


def test_one_form_is_compiled_once_whatever_its_values(monkeypatch):
    form = V * sp.exp(-t / (R * C)) + y
    bound(form, (t, y), VALUES[0], scale=3.0)
    compiled = []
    lambdify = sp.lambdify
    monkeypatch.setattr(safe_numeric.sp, "lambdify", lambda *a, **k: compiled.append(a) or lambdify(*a, **k))
    for factor in (0.9, 1.1, 1.3):
        moved = {k: v * factor for k, v in VALUES[0].items()}
        found = bound(form, (t, y), moved, scale=3.0)
        expected = moved[V] * math.exp(-2.0 / (moved[R] * moved[C])) + 1.0
        assert found(2.0, 1.0) == pytest.approx(expected, rel=1e-14)
    assert compiled == []


@pytest.mark.parametrize("factor", [1.0, 0.95, 1.08])
def test_a_derived_quantitys_curve_is_the_same_either_way(factor):
    from calcsheet.derive.derived import DerivedCurve
    from calcsheet.derive.evaluate import make_evaluator
    from calcsheet.derive.extremes import Piece

    d = derive(load_model(INPUTS / "discharge-resistor-rating.toml"))
    model = d.model
    model = replace(model, parameters=_with_values(model.parameters, [(p, p.si * factor) for p in model.parameters]))
    yv = make_evaluator(model, d.solution, scale=10.0)
    end = 5 * d.numbers.time_constant
    grid = np.linspace(0.0, end, 21)
    pieces = [
        Piece(model, d.solution, d.classification, yv, 0.0, None, scale=10.0, compiled=compiled)
        for compiled in (False, True)
    ]
    for at in (0.0, 0.2 * end, end):  # the equation's p and r, which the search falls back on
        assert pieces[1].p(at) == pytest.approx(pieces[0].p(at), rel=1e-13)
        assert pieces[1].r(at) == pytest.approx(pieces[0].r(at), rel=1e-13, abs=1e-300)
    assert model.derived
    for q in model.derived:
        old, new = (
            DerivedCurve(q, model, d.solution, d.classification, yv, piece, (0.0, end), 10.0, compiled)
            for piece, compiled in zip(pieces, (False, True))
        )
        size = float(np.max(np.abs(old.on_grid(grid))))
        assert np.allclose(new.on_grid(grid), old.on_grid(grid), rtol=1e-13, atol=1e-13 * size)
        for at in (0.0, 0.2 * end, end):
            assert new(at) == pytest.approx(old(at), rel=1e-13, abs=1e-13 * size)
            assert new.slope(at) == pytest.approx(old.slope(at), rel=1e-12, abs=1e-13 * size / end)
