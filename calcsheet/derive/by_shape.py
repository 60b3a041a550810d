"""Symbolic work done once per shape of an expression, not once per set of numbers in it.

The margin study evaluates one sheet at many parameter sets; each gives a derived quantity's closed form with
other numbers in the same places (680.0*exp(-0.0967*t) beside 701.2*exp(-0.0921*t)). sympy's antiderivative
of such a form costs a few tenths of a second each time. Here every number becomes a positive symbol (its sign
kept outside), the shape is integrated once per process, and the numbers are put back.

The result is the same function: the symbols stand for the magnitudes of the numbers, so declaring them
positive (which keeps sympy from splitting into cases such as c = 0) is true by construction. Whether sympy
finished within its budget is kept with the shape, so every set of numbers of one shape is treated alike.
"""

from __future__ import annotations

import mpmath
import sympy as sp

from calcsheet.derive.budget import within

_NUMBER = "_by_shape_c"  # input names start with a letter (source/expressions.py NAME_PATTERN)
_integrals: dict[tuple[str, str, float], tuple[sp.Expr | None, bool]] = {}


def as_shape(expr: sp.Expr) -> tuple[sp.Expr, dict[sp.Symbol, sp.Float]]:
    """``expr`` with each distinct non-zero Float magnitude replaced by a positive symbol, numbered in the
    order a preorder walk meets them, and the symbols' values."""
    magnitudes: dict[sp.Float, sp.Symbol] = {}
    for node in sp.preorder_traversal(expr):
        if isinstance(node, sp.Float) and node != 0 and abs(node) not in magnitudes:
            magnitudes[abs(node)] = sp.Symbol(f"{_NUMBER}{len(magnitudes)}", positive=True)
    floats = {f for f in expr.atoms(sp.Float) if f != 0}
    shape = expr.xreplace({f: (magnitudes[abs(f)] if f > 0 else -magnitudes[abs(f)]) for f in floats})
    return shape, {symbol: magnitude for magnitude, symbol in magnitudes.items()}


def integrate(expr: sp.Expr, x: sp.Symbol, seconds: float) -> tuple[sp.Expr | None, bool]:
    """sympy's antiderivative of ``expr`` in ``x`` under a budget of ``seconds``, as ``budget.within`` gives
    it: (antiderivative, True), or (None, False) when the budget ran out. Found once per shape."""
    if expr.free_symbols - {x}:  # only numbers besides x can be made symbols safely
        return within(seconds, lambda: _antiderivative(expr, x), None)
    shape, numbers = as_shape(expr)
    key = (sp.srepr(shape), sp.srepr(x), seconds)
    if key not in _integrals:
        _integrals[key] = within(seconds, lambda: _antiderivative(shape, x), None)
    found, done = _integrals[key]
    return (found.xreplace(numbers) if found is not None else None), done


def _antiderivative(expr: sp.Expr, x: sp.Symbol) -> sp.Expr | None:
    """sympy's antiderivative, or None where sympy fails with an error of its own (seen: a TypeError between
    polynomial elements in its Risch code on the square of a sine-forced response): the caller then integrates
    numerically, as it does where no closed form exists. A budget running out is a BaseException and passes."""
    try:
        return sp.integrate(expr, x)
    except Exception:
        return None


_functions: dict[tuple[sp.Expr, sp.Symbol], tuple[tuple[sp.Symbol, ...], object]] = {}
_FUNCTIONS_KEPT = 256  # a bound on the entries kept, for a process that builds many sheets


def precise_function(expr: sp.Expr, x: sp.Symbol):
    """lambdify(x, expr, modules="mpmath"), compiled once per shape: the numbers become arguments, each made an
    mpf from its Float's exact binary form at every call, as the printed code would make it, so a call in a
    higher working precision (mpmath.workdps) computes as the substituted code did, up to the order of
    operations, which the working precision's rounding makes invisible in a double."""
    shape, numbers = as_shape(expr)
    key = (shape, x)
    if key not in _functions:
        if len(_functions) >= _FUNCTIONS_KEPT:
            _functions.clear()
        symbols = tuple(sorted(numbers, key=lambda s: s.name))
        _functions[key] = (symbols, sp.lambdify((x, *symbols), shape, modules="mpmath", docstring_limit=0))
    symbols, function = _functions[key]
    exact = tuple(numbers[s]._mpf_ for s in symbols)
    return lambda at: function(at, *(mpmath.mpf(e) for e in exact))
