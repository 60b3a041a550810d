"""Classification of the stated equation, and the standard form y' + p(x) y = r(x).

Writes F(x, y, y') = lhs - rhs as a y' + b y + c and refuses anything that does not fit that
shape (a term non-linear in y or y', or a derivative that cancels out).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import sympy as sp

from calcsheet.derive.budget import SIMPLIFY_SECONDS, within
from calcsheet.derive.safe_numeric import has_infinity
from calcsheet.derive.readable import simplified
from calcsheet.errors import ModelRefused
from calcsheet.mathtext import plain
from calcsheet.model import Model


@dataclass(frozen=True)
class Classification:
    """A model classify accepts is first-order and linear by construction (anything else is refused)."""

    homogeneous: bool
    constant_coefficients: bool
    a: sp.Expr  # coefficient of y'
    b: sp.Expr  # coefficient of y
    c: sp.Expr  # everything else
    p: sp.Expr  # b / a
    r: sp.Expr  # -c / a
    homogeneous_with_values: bool = False  # r vanishes once the stated values are put in (a source of 0 V)


def classify(model: Model) -> Classification:
    y, dy, x = model.unknown.symbol, model.derivative, model.variable.symbol
    _refuse_singular_values(model)
    residual = sp.expand(model.residual)
    _refuse_nonlinear_terms(residual, y, dy, model)
    a = sp.expand(sp.diff(residual, dy))
    b = sp.expand(sp.diff(residual, y))
    c = model.residual.subs({y: 0, dy: 0})  # F(x, 0, 0): the forcing as written, not expanded
    if _is_zero(a):
        raise ModelRefused(
            f"the derivative d{model.unknown.name}/d{model.variable.name} cancels out: "
            "the equation is algebraic, not differential",
            "model.equation",
        )
    if a.subs(model.numeric_values()).is_zero:
        raise ModelRefused(
            f"with the stated values the coefficient of d{model.unknown.name}/d{model.variable.name}, "
            f"{plain(a)}, is zero: the equation is algebraic, not differential",
            "model.equation",
        )
    p = tidy(b / a)
    _refuse_bad_coefficient(p, model)
    r = sp.Add(*(tidy(term) for term in sp.Add.make_args(sp.expand(-c / a, deep=False))))
    homogeneous = _is_zero(r)
    with_values = homogeneous or _is_zero(r.subs(model.numeric_values()))
    return Classification(
        homogeneous=homogeneous,
        constant_coefficients=x not in p.free_symbols,
        a=a,
        b=b,
        c=c,
        p=p,
        r=r,
        homogeneous_with_values=with_values,
    )


def tidy(expr: sp.Expr) -> sp.Expr:
    """The shortest of the coefficient as divided out, cancelled, and simplified (within budget).

    Ties keep the earlier form, so a term stays as the engineer wrote it unless a rewrite is
    really shorter: (t - t_p)^2 + w^2 is not expanded into t^2 - 2 t t_p + ...
    """
    quick = sp.cancel(sp.together(expr))
    shorter, done = within(SIMPLIFY_SECONDS, lambda: simplified(quick), quick)
    candidates = [expr, quick] + ([shorter] if done else [])
    return min(candidates, key=sp.count_ops)


def _refuse_nonlinear_terms(residual: sp.Expr, y: sp.Symbol, dy: sp.Symbol, model: Model) -> None:
    for term in sp.Add.make_args(residual):
        for wrt in (y, dy):
            slope = sp.diff(term, wrt)
            if slope.has(y) or slope.has(dy):
                only_in_y = not sp.diff(term, dy).has(y) and not sp.diff(term, dy).has(dy)
                raise ModelRefused(
                    f"term '{plain(term)}' is not linear in {model.unknown.name} and "
                    f"d{model.unknown.name}/d{model.variable.name}; the integrating-factor method "
                    "needs a linear equation"
                    + (
                        '; add a [linearise] table (about = "steady state" or an operating point) to solve it '
                        "linearised about a point"
                        if only_in_y
                        else ""
                    ),
                    "model.equation",
                )


def _refuse_singular_values(model: Model) -> None:
    """A stated value that makes a term infinite or complex (R = 0 under a divisor, the root of a
    negative number) is refused before any arithmetic, naming the parameter and the term."""
    values = model.numeric_values()
    for p in model.parameters:
        if not math.isfinite(p.si):
            raise ModelRefused(f"parameter {p.name} = {p.text} is not finite", f"parameters.{p.name}")
    for side in (model.lhs, model.rhs):
        for term in sp.Add.make_args(side):
            numeric = term.subs(values)
            if has_infinity(numeric):
                zeros = [p.name for p in model.parameters if p.si == 0 and p.symbol in term.free_symbols]
                named = f"{', '.join(f'{n} = 0' for n in zeros)} makes" if zeros else "the stated values make"
                raise ModelRefused(
                    f"{named} the equation singular: the term {plain(term)} is infinite or undefined",
                    f"parameters.{zeros[0]}" if zeros else "model.equation",
                )
            if numeric.has(sp.I):
                raise ModelRefused(
                    f"the stated values make the term {plain(term)} complex; every term must be real", "model.equation"
                )


def _refuse_bad_coefficient(p: sp.Expr, model: Model) -> None:
    numeric = p.subs(model.numeric_values())
    if has_infinity(numeric) or numeric.has(sp.I):
        raise ModelRefused(
            f"with the stated values the coefficient p = {plain(p)} of {model.unknown.name} is "
            "infinite, undefined or complex",
            "model.equation",
        )


def _is_zero(expr: sp.Expr) -> bool:
    """Exactly zero? Cheap rewritings first; a value at a rational point shown non-zero (nonzero_at_a_point)
    proves it is not; full simplification (within budget) only if neither decides."""
    if expr == 0 or sp.expand(expr) == 0 or sp.cancel(sp.together(expr)) == 0:
        return True
    if not expr.free_symbols or nonzero_at_a_point(expr):
        return False
    result, done = within(SIMPLIFY_SECONDS, lambda: sp.simplify(expr), expr)
    return done and result == 0


# Where a value proves an expression not identically zero; two points, since one may sit on a root by chance.
# Each symbol gets its own value (a - b must not vanish by coincidence), of the sign its assumptions allow.
_POINTS = (sp.Rational(3, 7), sp.Rational(29, 17))


def nonzero_at_a_point(expr: sp.Expr) -> bool:
    """Shown not to be identically zero: its exact value at a rational point is non-zero to 15 digits that sympy
    guarantees (``evalf(strict=True)`` raises rather than guess, as for a value that is really zero). False means
    "not shown", and the caller simplifies. A symbolic simplify of a non-zero expression only to learn that it
    is non-zero cost most of the classification (a second for a plain sheet)."""
    symbols = sorted(expr.free_symbols, key=sp.default_sort_key)
    if any(s.is_integer or s.is_zero for s in symbols):
        return False
    for base in _POINTS:
        point = {s: (-1 if s.is_nonpositive else 1) * (base + sp.Rational(i, 13)) for i, s in enumerate(symbols)}
        try:
            value = sp.N(expr.xreplace(point), 15, strict=True)
        except (sp.core.evalf.PrecisionExhausted, ArithmeticError, TypeError, ValueError):
            continue
        if value.is_number and value.is_finite and value != 0:
            return True
    return False
