"""Integrals known by their form to have no closed form, decided before sympy spends seconds failing.

A bell-shaped (Lorentzian) forcing under an exponential integrating factor gives
exp(a x) (n1 x + n0) / Q(x), Q a quadratic with no real root. Its antiderivative is not elementary
(Liouville: it would be exp(a x) S(x) with S rational and S' + a S = (n1 x + n0)/Q; S' + a S has
poles of order k + 1 wherever S has poles of order k, never the simple poles Q gives), and its
special-function form needs the exponential integral at complex arguments, which sympy does not
give. sympy's rule-based integrator and then its full algorithm take about 5 CPU s to return the
integral unevaluated; the answer is the same, decided here from the form alone, so it no longer
depends on how fast the machine is against the time budget.

Narrow on purpose: anything outside this form goes to sympy as before.
"""

from __future__ import annotations

import sympy as sp


def lorentzian_under_exponential(expr: sp.Expr, x: sp.Symbol) -> bool:
    """Is ``expr`` c exp(a x + b) (n1 x + n0) / (A x^2 + B x + C), with c, a, b, n1, n0, A, B, C free of x,
    a provably non-zero, n1 x + n0 not identically zero and 4 A C - B^2 provably positive?"""
    constant, dependent = expr.as_independent(x, as_Add=False)
    if constant == 0:
        return False
    exponents, rest = [], []
    for factor in sp.Mul.make_args(dependent):
        (exponents if isinstance(factor, sp.exp) else rest).append(factor)
    if len(exponents) != 1:
        return False
    rate = sp.diff(exponents[0].args[0], x)
    if rate.has(x) or sp.diff(exponents[0].args[0], x, 2) != 0 or rate.is_zero is not False:
        return False
    rational = sp.Mul(*rest)
    if not rational.is_rational_function(x):
        return False
    numerator, denominator = sp.fraction(sp.together(rational))
    if not (numerator.is_polynomial(x) and denominator.is_polynomial(x)):
        return False
    top, bottom = sp.Poly(numerator, x), sp.Poly(denominator, x)
    if top.is_zero or top.degree() > 1 or bottom.degree() != 2:
        return False
    A, B, C = bottom.all_coeffs()
    return sp.factor(4 * A * C - B**2).is_positive is True
