"""The written-down antiderivative of exp(a x) sin(b x + phi) (derive/exp_sinusoid.py) and the sine-held
simplification (derive/readable.py) against sympy: differentiation back to the integrand, sympy's own
integrator, and dsolve/checkodesol on whole sine- and cosine-forced models (phase, offset, zero offset)."""

from __future__ import annotations

from pathlib import Path

import pytest
import sympy as sp

from calcsheet.derive import exp_sinusoid, readable
from calcsheet.derive.classify import classify
from calcsheet.derive.integrating_factor import solve
from calcsheet.load.loader import load_model

t = sp.Symbol("t", real=True)
k, w, A, c = sp.symbols("k w A c", positive=True)
phi = sp.Symbol("phi", real=True)

SHAPES = [
    A * sp.exp(t / k) * sp.sin(w * t + phi),
    A * sp.exp(t / k) * sp.cos(w * t + phi),
    sp.exp(t / k + c) * sp.sin(2 * sp.pi * w * t),  # a constant inside the exponential
    -3 * A * sp.exp(2 * t / k) * sp.cos(w * t - sp.pi / 7),
    A * sp.sin(w * t + phi),  # no exponential: a = 0, b != 0
    sp.Rational(3, 2) * sp.exp(sp.Rational(1, 4) * t) * sp.sin(5 * t + 1),  # numbers only
]


@pytest.mark.parametrize("shape", SHAPES, ids=range(len(SHAPES)))
def test_the_written_antiderivative_differentiates_back_to_the_integrand(shape):
    found = exp_sinusoid.antiderivative(shape, t)
    assert found is not None and not found.has(sp.Integral)
    assert sp.simplify(sp.expand_trig(sp.diff(found, t) - shape)) == 0


@pytest.mark.parametrize("shape", [SHAPES[0], SHAPES[1], SHAPES[3], SHAPES[4]], ids=range(4))
def test_the_written_antiderivative_is_sympys_own(shape):
    # the same tree sympy's integrator returns, so a sheet's forms do not change with the shortcut (mu = exp(P)
    # has no constant in its exponent; sympy writes exp(c + t/k) as exp(c)*exp(t/k), the shortcut keeps it whole)
    assert exp_sinusoid.antiderivative(shape, t) == sp.integrate(shape, t)


@pytest.mark.parametrize(
    "shape",
    [
        sp.exp(t / k) * sp.sin(w * t) ** 2,  # a power of the sinusoid
        sp.exp(t / k) * sp.sin(w * t) * sp.cos(w * t),  # a product of two
        t * sp.exp(t / k) * sp.sin(w * t),  # a polynomial factor
        sp.exp(t**2) * sp.sin(w * t),  # not linear in the exponent
        sp.exp(t / k) * sp.sin(w * t**2),  # not linear in the angle
        sp.exp(sp.Symbol("a") * t) * sp.sin(sp.Symbol("b") * t),  # a^2 + b^2 may vanish (complex a, b)
        sp.exp(-t / k) * sp.sin(w * t),  # a < 0: sympy writes exp(t/k) into the denominators
        sp.sin(sp.Symbol("b", real=True) * t),  # a = 0 and b may be 0
        sp.exp(t / k),  # no sinusoid
    ],
)
def test_other_shapes_are_left_to_sympy(shape):
    assert exp_sinusoid.antiderivative(shape, t) is None


SINE_RC = """
[sheet]
title = "sine-forced lag"
[model]
equation = "tau*dy/dt + y = {forcing}"
unknown = "y [V]"
variable = "t [s]"
[parameters]
tau = "0.5 s"
Y_o = "{offset}"
Y_a = "2 V"
f = "0.8 Hz"
phi = "{phase}"
[initial]
value = "1.5 V"
[evaluate]
at = ["1 s"]
"""

FORCED = [
    ("Y_o + Y_a*sin(2*pi*f*t + phi)", "3 V", "0.6 rad"),
    ("Y_o + Y_a*sin(2*pi*f*t + phi)", "0 V", "0.6 rad"),  # zero offset
    ("Y_o + Y_a*cos(2*pi*f*t + phi)", "3 V", "-1.2 rad"),
    ("Y_o + Y_a*cos(2*pi*f*t + phi)", "-1 V", "0 rad"),  # zero phase, negative offset
    ("Y_a*sin(2*pi*f*t) + Y_o*cos(2*pi*f*t + phi)", "1 V", "0.3 rad"),  # two sinusoids
]


@pytest.mark.parametrize("forcing,offset,phase", FORCED, ids=range(len(FORCED)))
def test_the_particular_solution_satisfies_the_equation_by_checkodesol(tmp_path: Path, forcing, offset, phase):
    path = tmp_path / "m.toml"
    path.write_text(SINE_RC.format(forcing=forcing, offset=offset, phase=phase), encoding="utf-8")
    model = load_model(path)
    cls = classify(model)
    solution = solve(model, cls)
    assert solution.closed_form
    x = model.variable.symbol
    y = sp.Function("y")
    values = {**model.numeric_values(), **solution.initial_values(model)}
    exact = {s: sp.nsimplify(v, rational=True) for s, v in values.items()}  # exact numbers for sympy's check
    particular = solution.particular.subs(exact)
    equation = sp.Eq(y(x).diff(x) + cls.p.subs(exact) * y(x), cls.r.subs(exact))
    assert sp.checkodesol(equation, sp.Eq(y(x), particular), y(x)) == (True, 0)
    assert sp.nsimplify(particular.subs(x, 0)) == sp.nsimplify(exact[solution.y0])
    # and dsolve's solution through the same initial value gives the same numbers at three points
    reference = sp.dsolve(equation, y(x), ics={y(0): exact[solution.y0]}).rhs
    for point in (sp.Rational(1, 3), 1, sp.Rational(17, 4)):
        assert sp.N(particular.subs(x, point) - reference.subs(x, point), 30) == pytest.approx(0, abs=1e-25)


def test_a_response_linear_in_its_sines_is_simplified_with_them_held_and_equals_the_expression():
    response = (
        A * (-2 * sp.pi * w * k**2 * sp.exp(t / k) * sp.cos(w * t + phi) / (4 * sp.pi**2 * w**2 * k**2 + 1))
        + A * k * sp.exp(t / k) * sp.sin(w * t + phi) / (4 * sp.pi**2 * w**2 * k**2 + 1)
        + c * k * sp.exp(t / k)
    )
    held = readable.simplified(response)
    assert sp.simplify(sp.expand(held - response)) == 0
    # one fraction over the common denominator, no longer than sympy's full simplify makes it (which takes
    # the common factor c out or not: the form may differ, the count of operations does not)
    assert sp.count_ops(held) == sp.count_ops(sp.simplify(response)) < sp.count_ops(response)


def test_an_expression_with_a_square_of_a_sine_keeps_the_full_simplification():
    # sin^2 + cos^2 = 1 needs the trigonometric identities: the sines are not held as symbols here
    assert readable.simplified(A * sp.sin(w * t) ** 2 + A * sp.cos(w * t) ** 2) == A
