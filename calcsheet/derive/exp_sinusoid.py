"""The antiderivative of C exp(a x + c) sin(b x + phi) (or cos) written down, without a search.

mu r for a sinusoidal forcing of a constant-coefficient law has this shape. sympy's integrator finds
the same antiderivative, but spends most of a second (several on larger coefficients) searching for it;
the form is a textbook one: for a^2 + b^2 != 0,

    ∫ exp(a x) sin(b x + phi) dx = exp(a x) (a sin(b x + phi) - b cos(b x + phi)) / (a^2 + b^2)
    ∫ exp(a x) cos(b x + phi) dx = exp(a x) (a cos(b x + phi) + b sin(b x + phi)) / (a^2 + b^2)

(differentiate either to check), written term by term as sympy's integrator writes it, so that a sheet
reads the same with or without this shortcut. Only a > 0 (mu of a decaying law) or a = 0 with b != 0, by
the symbols' assumptions: for a < 0 sympy writes exp(-a x) into the denominators instead, and an a of
unknown sign may make a^2 + b^2 vanish. Anything else is left to sympy (None).
"""

from __future__ import annotations

import sympy as sp


def antiderivative(expr: sp.Expr, x: sp.Symbol) -> sp.Expr | None:
    """∫ expr dx when expr is C exp(a x + c) sin(b x + phi) or C exp(a x + c) cos(b x + phi) with C, a, b,
    c, phi free of x, b real, and a positive or a zero and b nonzero by their assumptions; None otherwise."""
    constant, varying = expr.as_independent(x, as_Add=False)
    exponentials = [f for f in sp.Mul.make_args(varying) if isinstance(f, sp.exp)]
    sinusoids = [f for f in sp.Mul.make_args(varying) if isinstance(f, (sp.sin, sp.cos))]
    if len(sinusoids) != 1 or len(exponentials) > 1 or len(exponentials) + 1 != len(sp.Mul.make_args(varying)):
        return None
    growth = exponentials[0].args[0] if exponentials else sp.Integer(0)
    sinusoid = sinusoids[0]
    a, b = _slope(growth, x), _slope(sinusoid.args[0], x)
    if a is None or b is None or not b.is_real or not (a.is_positive or (a.is_zero and b.is_nonzero)):
        return None
    angle, exponential, size = sinusoid.args[0], sp.exp(growth), a**2 + b**2
    same, other = (sp.sin(angle), -sp.cos(angle)) if isinstance(sinusoid, sp.sin) else (sp.cos(angle), sp.sin(angle))
    # each coefficient as one fraction, as sympy's integrator writes it (k/(w^2 k^2 + 1), not (1/k)/(w^2 + k^-2))
    return constant * (sp.cancel(a / size) * exponential * same + sp.cancel(b / size) * exponential * other)


def _slope(linear: sp.Expr, x: sp.Symbol) -> sp.Expr | None:
    """d/dx of an expression linear in x (a x + c), or None when it is not linear in x."""
    slope = sp.diff(linear, x)
    return None if slope.has(x) else slope
