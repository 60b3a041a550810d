"""The classification's quick proof that an expression is not identically zero (derive/classify.py,
``nonzero_at_a_point``) never calls a zero non-zero: checked against sympy's own ``simplify`` on expressions
that are zero only through an identity, zero only under their symbols' assumptions, or not zero at all."""

from __future__ import annotations

import pytest
import sympy as sp

from calcsheet.derive.classify import _is_zero, nonzero_at_a_point

x, y = sp.symbols("x y", positive=True)
t = sp.Symbol("t", real=True)
n = sp.Symbol("n", negative=True)
z = sp.Symbol("z")
k = sp.Symbol("k", integer=True, positive=True)

ZERO = [
    sp.exp(x) * sp.sin(x) ** 2 + sp.exp(x) * sp.cos(x) ** 2 - sp.exp(x),
    sp.log(x * y) - sp.log(x) - sp.log(y),
    sp.sin(t) ** 2 + sp.cos(t) ** 2 - 1,
    sp.sqrt(n**2) + n,  # zero only for a negative n
    sp.cosh(t) ** 2 - sp.sinh(t) ** 2 - 1,
    (x**2 - y**2) / (x - y) - x - y,
    sp.exp(sp.log(x) * 2) - x**2,
]
NONZERO = [
    x - y,
    t * x - 1,
    sp.I * x,
    sp.exp(-t / x) / x,
    (x - 1) ** 2,  # zero at x = 1, not elsewhere
    sp.sin(2 * sp.pi * t / x),  # zero at t = 0 and along lines, not everywhere
    1 / (x - y),
]
NOT_SHOWN = [
    sp.Abs(z) - z,  # zero for the positive values tried, not for every z: left to simplify
    sp.factorial(k) - sp.gamma(k + 1),  # integer symbols are not sampled
]


@pytest.mark.parametrize("expr", ZERO)
def test_a_zero_is_never_shown_nonzero(expr):
    assert sp.simplify(expr) == 0  # the reference: these really are zero
    assert not nonzero_at_a_point(expr)
    assert _is_zero(expr)


@pytest.mark.parametrize("expr", NONZERO)
def test_a_nonzero_is_shown_without_simplifying(expr, monkeypatch):
    assert sp.simplify(expr) != 0
    assert nonzero_at_a_point(expr)

    def refuse(*args, **kwargs):
        raise AssertionError("simplify was called")

    monkeypatch.setattr(sp, "simplify", refuse)
    assert not _is_zero(expr)


@pytest.mark.parametrize("expr", NOT_SHOWN)
def test_what_a_point_cannot_show_is_left_to_simplify(expr):
    assert not nonzero_at_a_point(expr)
    assert _is_zero(expr) == (sp.simplify(expr) == 0)
