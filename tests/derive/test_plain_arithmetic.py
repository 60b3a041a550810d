"""A SafeFunction of plain arithmetic runs on Python floats (derive/safe_numeric.py::in_plain_arithmetic) instead
of mpmath numbers at 53 bits; the route it replaces is mpmath's, compared here bit for bit.

Why equality and not a tolerance: each operation allowed (sum, product, quotient, square) is rounded once to
nearest, ties to even, by IEEE 754 double arithmetic and by mpmath at 53 bits alike (mpmath's integer arithmetic
is the same on every machine), so the two give the same double; anything that could round differently (a
function from the C library, a power other than a square or a reciprocal, a constant that is not exactly a
double) is refused. A square of floats alone is float ** 2 in both routes (the C library's pow, on the same
machine); a square the mpmath route rounds once is a product of doubles in the plain route."""

from __future__ import annotations

import random

import pytest
import sympy as sp

from calcsheet.derive.safe_numeric import SafeFunction, in_plain_arithmetic

t, y = sp.symbols("t y", real=True)
F = sp.Float

PLAIN = [
    F(70.0) / (6 * (1 + ((t - 20) / 5) ** 2)),  # the bell-shaped forcing of the probe demo, as substituted
    t / F(6.0),
    F(0.0023) * y**2 - F(1.7e-3) * t * y + sp.Rational(3, 7),
    (F(480.0) - y) / (F(1.25) * (t + F(0.1))) - 1 / (t + 3) + (t - 4) ** 2 * (y + 1) ** 2,
    F(1.0e-300) * t**2 + F(3.3e299) / (1 + y**2),
]
NOT_PLAIN = [
    sp.exp(-t / F(6.0)),
    t**3,
    t ** F(0.5),
    (1 + t**2) ** -2,
    F(0.8) / (t + F(0.1)) ** 2,
    sp.Float("0.1", 30) * t,  # 100 bits: not one double
    sp.Integer(2**60) * t,
    sp.sin(t) / t,
    sp.Abs(t),
]


@pytest.mark.parametrize("expr", PLAIN, ids=range(len(PLAIN)))
def test_plain_arithmetic_gives_mpmaths_bits(expr):
    assert in_plain_arithmetic(expr) is not None
    fast = SafeFunction(expr, (t, y), scale=10.0)
    mpmath_route = sp.lambdify((t, y), expr, modules=["math", "mpmath"])
    draw = random.Random(13)
    for _ in range(4000):
        a, b = draw.uniform(-50.0, 50.0), draw.uniform(-1e3, 1e3) * 10.0 ** draw.randint(-8, 8)
        assert fast(a, b) == float(mpmath_route(a, b))


@pytest.mark.parametrize("expr", NOT_PLAIN, ids=range(len(NOT_PLAIN)))
def test_anything_else_keeps_the_mpmath_route(expr):
    assert in_plain_arithmetic(expr) is None


def test_a_removable_point_still_takes_its_limit():
    # t/t written unsimplified: 0/0 in floats at t = 0 raises, and the limit is taken as before
    ratio = sp.Mul(t, sp.Pow(t, -1, evaluate=False), evaluate=False)
    assert in_plain_arithmetic(ratio) is not None
    assert SafeFunction(ratio, t)(0.0) == pytest.approx(1.0, rel=1e-12)
