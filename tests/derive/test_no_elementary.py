"""Forms decided to have no closed form (derive/no_elementary.py) against sympy's own integrate, the path the
rule replaces: for each form the rule accepts, sympy's rule-based integrator and then its full algorithm
return the integral unevaluated, as the rule says; forms just outside it are left to sympy."""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy as sp

from calcsheet.derive import integrating_factor
from calcsheet.derive.budget import NO_CLOSED_FORM
from calcsheet.derive.classify import classify
from calcsheet.derive.no_elementary import lorentzian_under_exponential
from calcsheet.load.loader import load_model

t = sp.Symbol("t", real=True)
a, b, c = sp.symbols("a b c", positive=True)

# sympy 1.x takes 1 to 5 CPU s on each of these to give up; two cases keep the test short
CHECKED_WITH_SYMPY = [
    sp.exp(2 * t) * (3 * t + 1) / (t**2 + t + 1),
    c * sp.exp(t / a) * t / (t**2 + 2 * b * t + b**2 + c**2),
]
ACCEPTED = CHECKED_WITH_SYMPY + [
    sp.exp(-t / a) / (b**2 + t**2),
    sp.Float(70.0) * sp.exp(t / sp.Float(6.0)) / (sp.Float(6.0) * (1 + ((t - 20) / 5) ** 2)),
]
LEFT_TO_SYMPY = [
    1 / (1 + t**2),  # no exponential: atan
    sp.exp(t) / (1 - t**2),  # real roots: Ei of real arguments, a closed form sympy finds
    sp.exp(t) * t**2 / (1 + t**2),  # numerator of degree 2: a polynomial part first
    sp.exp(t**2) / (1 + t**2),  # exponent not linear
    sp.exp(a * t) / (t**2 + b * t + c),  # 4c - b^2 of unknown sign
    sp.exp(t) / (1 + t**2) ** 2,  # double poles
    sp.exp(t) * sp.sin(t) / (1 + t**2),
]


@pytest.mark.parametrize("form", CHECKED_WITH_SYMPY, ids=range(len(CHECKED_WITH_SYMPY)))
def test_sympy_finds_no_closed_form_for_the_forms_the_rule_accepts(form):
    assert lorentzian_under_exponential(form, t)
    found = sp.integrate(form, t, manual=True)
    if found.has(sp.Integral):
        found = sp.integrate(form, t)
    assert found.has(sp.Integral)


@pytest.mark.parametrize("form", ACCEPTED, ids=range(len(ACCEPTED)))
def test_the_rule_accepts_an_exponential_over_a_quadratic_with_no_real_root(form):
    assert lorentzian_under_exponential(form, t)


@pytest.mark.parametrize("form", LEFT_TO_SYMPY, ids=range(len(LEFT_TO_SYMPY)))
def test_forms_outside_the_rule_are_left_to_sympy(form):
    assert not lorentzian_under_exponential(form, t)


SPIKE = """
[sheet]
title = "spike test"
[model]
equation = "tau*dT/dt + T = T_b + T_pk/(1 + ((t - t_p)/w)^2)"
unknown = "T [degC]"
variable = "t [s]"
[parameters]
tau = { value = "4 s", source = "test" }
T_b = { value = "25 degC", source = "test" }
T_pk = { value = "30 K", source = "test" }
t_p = { value = "12 s", source = "test" }
w = { value = "3 s", source = "test" }
[initial]
at = "0 s"
value = "25 degC"
[evaluate]
at = ["12 s"]
"""


def test_a_bell_shaped_forcing_stays_an_integral_without_asking_sympy(tmp_path: Path, monkeypatch):
    path = tmp_path / "spike.toml"
    path.write_text(SPIKE, encoding="utf-8")
    model = load_model(path)
    asked = []
    integrate = sp.integrate

    def counting(expr, *args, **kwargs):
        asked.append(expr)
        return integrate(expr, *args, **kwargs)

    monkeypatch.setattr(integrating_factor.sp, "integrate", counting)
    solution = integrating_factor.solve(model, classify(model))
    assert solution.fallback_codes == (NO_CLOSED_FORM,)
    w = next(p.symbol for p in model.parameters if p.name == "w")
    assert len(solution.open_terms) == 1 and solution.open_terms[0].has(w)
    assert not any(lorentzian_under_exponential(expr, model.variable.symbol) for expr in asked)
