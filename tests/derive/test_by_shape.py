"""Antiderivatives found once per shape (derive/by_shape.py) against sympy's own antiderivative of the form with
its numbers in place, and against the integrand itself (the antiderivative's derivative, evaluated by mpmath).
The forms are those a derived quantity takes on a first-order response: powers and products of decaying
exponentials, sines, offsets, with negative numbers among them."""

from __future__ import annotations

import math

import mpmath
import pytest
import sympy as sp

from calcsheet.derive import by_shape

t = sp.Symbol("t", real=True)
F = sp.Float

FORMS = [
    F(34.2) * sp.exp(-F(0.413) * t),
    (F(24.0) - F(18.5) * sp.exp(-F(2.5) * t)) ** 2 / F(20.0),
    F(3.1) * sp.exp(-F(0.2) * t) * sp.sin(F(6.28) * t) + F(-1.5),
    F(-0.75) * t * sp.exp(-F(1.25) * t) + F(0.5) * sp.cos(F(3.0) * t),
]


@pytest.mark.parametrize("form", FORMS, ids=range(len(FORMS)))
def test_the_antiderivative_by_shape_is_sympys_with_the_numbers_in_place(form):
    found, done = by_shape.integrate(form, t, 40.0)
    assert done and found is not None and not found.has(sp.Integral)
    direct = sp.integrate(form, t)
    for a, b in ((0.0, 1.5), (0.3, 7.0)):
        by_shape_value = float(found.subs(t, b) - found.subs(t, a))
        direct_value = float(direct.subs(t, b) - direct.subs(t, a))
        quadrature = float(mpmath.quad(sp.lambdify(t, form, "mpmath"), [a, b]))
        assert by_shape_value == pytest.approx(direct_value, rel=1e-12, abs=1e-12)
        assert by_shape_value == pytest.approx(quadrature, rel=1e-12, abs=1e-12)


def test_one_shape_is_integrated_once_whatever_its_numbers():
    first = F(12.5) * sp.exp(-F(0.75) * t) ** 2
    second = F(13.1) * sp.exp(-F(0.71) * t) ** 2
    by_shape.integrate(first, t, 40.0)
    seen = len(by_shape._integrals)
    found, done = by_shape.integrate(second, t, 40.0)
    assert len(by_shape._integrals) == seen  # no new shape
    assert float(sp.diff(found, t).subs(t, 0.4)) == pytest.approx(float(second.subs(t, 0.4)), rel=1e-12)


def test_a_number_and_its_negative_share_one_symbol_with_the_sign_kept():
    shape, numbers = by_shape.as_shape(F(2.5) * sp.exp(-F(2.5) * t) - F(0.5))
    assert len(numbers) == 2
    assert shape.xreplace(numbers) == F(2.5) * sp.exp(-F(2.5) * t) - F(0.5)


def test_a_form_with_other_symbols_is_integrated_as_it_is():
    k = sp.Symbol("k", positive=True)
    found, done = by_shape.integrate(F(2.0) * sp.exp(-k * t), t, 40.0)
    assert done and sp.simplify(sp.diff(found, t) - F(2.0) * sp.exp(-k * t)) == 0


def test_an_error_inside_sympy_means_no_antiderivative_not_a_crash(monkeypatch):
    def broken(*args, **kwargs):
        raise TypeError("unsupported operand type(s) for *: 'PolyElement' and 'PolyElement'")

    monkeypatch.setattr(by_shape.sp, "integrate", broken)
    monkeypatch.setattr(by_shape, "_integrals", {})  # what is found here must not stay for other tests
    assert by_shape.integrate(F(7.5) * sp.sin(F(1.7) * t) ** 3, t, 40.0) == (None, True)


PRECISE = FORMS + [
    sp.Float("0.1234567890123456789", 20) * sp.exp(-F(0.05) * t),  # 67 bits: exact only above 53 bits
    F(-2.0) * t * sp.exp(-F(0.75) * t) * sp.cos(F(2.0) * t - F(0.3)),
]


@pytest.mark.parametrize("form", PRECISE, ids=range(len(PRECISE)))
def test_a_function_compiled_by_shape_is_the_one_compiled_with_its_numbers_in_place(form):
    # both in 30 digits, as derive/ calls them: they differ only in the order of operations, each rounded at
    # 30 digits, so 1e-25 relative holds with room
    direct = sp.lambdify(t, form, modules="mpmath")
    by_form = by_shape.precise_function(form, t)
    with mpmath.workdps(30):
        for at in ("0", "0.37", "2.5", "11.0"):
            a, b = direct(mpmath.mpf(at)), by_form(mpmath.mpf(at))
            assert abs(a - b) <= mpmath.mpf("1e-25") * max(abs(a), mpmath.mpf("1e-300"))


def test_one_shape_is_compiled_once_whatever_its_numbers(monkeypatch):
    by_shape.precise_function(F(3.5) * sp.exp(-F(0.25) * t) + F(1.5), t)
    compiled = []
    lambdify = sp.lambdify
    monkeypatch.setattr(by_shape.sp, "lambdify", lambda *a, **k: compiled.append(a) or lambdify(*a, **k))
    found = by_shape.precise_function(F(4.25) * sp.exp(-F(0.5) * t) + F(1.75), t)
    with mpmath.workdps(30):
        assert float(found(mpmath.mpf(2))) == pytest.approx(4.25 * math.exp(-1.0) + 1.75, rel=1e-15)
    assert compiled == []
