"""Numeric evaluation of expressions a user may legally write, safe where double precision is not.

``sin(w*t)/(w*t)`` at t = 0 is 0/0 in floats although its limit is 1, and ``exp`` of a large
argument overflows although the expression it sits in is finite. A SafeFunction tries double
precision first; where that raises or gives a non-finite number, it takes the limit: the expression
at points nudged off the point, in 50-digit arithmetic. A limit is accepted as finite only if the
nudged values settle as the nudge shrinks (1/t and log t do not). Where there is no finite limit,
NotFinite names the point, for the caller to turn into a refusal.

The work is bounded: at most six extra evaluations per point, whatever the expression.
"""

from __future__ import annotations

import copy
import math
import warnings

import mpmath
import sympy as sp

NUDGE = 1e-15  # the nearest nudge, relative to |x| + scale
STEPS = (1.0, 1e3, 1e6)  # nudges as multiples of the nearest; the values must settle along them
DIGITS = 50
SETTLED = 1e-2  # the last change must be this fraction of the one before it, or below round-off


class NotFinite(ArithmeticError):
    """The expression has no finite value (nor a finite limit) at ``x``."""

    def __init__(self, x: float, what: str = ""):
        super().__init__(f"not finite at {x!r}" + (f" ({what})" if what else ""))
        self.x = x
        self.what = what


def real_float(value) -> float:
    """A real number as a float; NaN for complex values (beyond round-off), for None, or for failures."""
    try:
        if isinstance(value, (mpmath.mpc, complex)):
            if abs(value.imag) > 1e-20 * max(1.0, abs(value.real)):
                return math.nan
            value = value.real
        result = float(value)
    except (TypeError, ValueError, OverflowError, ArithmeticError):
        return math.nan
    return result


class SafeFunction:
    """f(args) for a sympy expression, with a limit where double precision cannot give a value.

    ``position`` is the argument that is nudged (the independent variable), ``side`` the direction
    from which the point is approached (+1 from above, -1 from below, 0 either), ``scale`` the
    natural size of that argument, so a nudge is small at x = 0 too.
    """

    def __init__(self, expr: sp.Expr, symbols, position: int = 0, scale: float = 1.0, side: int = 0):
        symbols = tuple(symbols) if isinstance(symbols, (tuple, list)) else (symbols,)
        self.expr = expr
        # docstring_limit=0 everywhere in derive/: sympy otherwise prints the whole expression into each
        # function's docstring, about half of lambdify's time, and the margin study lambdifies thousands.
        plain = in_plain_arithmetic(expr)
        self._plain = plain is not None
        if plain is not None:  # the same numbers as mpmath at 53 bits, some ten times faster (see the function)
            self.fast = sp.lambdify(
                symbols, plain, modules=[_PLAIN_NAMES, "mpmath"], printer=_plain_printer(), docstring_limit=0
            )
        else:
            self.fast = sp.lambdify(symbols, expr, modules=["math", "mpmath"], docstring_limit=0)
        self.precise = sp.lambdify(symbols, expr, modules="mpmath", docstring_limit=0)
        self.position, self.side = position, side
        self.scale = abs(scale) if scale and math.isfinite(scale) else 1.0

    def with_scale(self, scale: float) -> "SafeFunction":
        """The same compiled function with another natural size of the nudged argument."""
        other = copy.copy(self)
        other.scale = abs(scale) if scale and math.isfinite(scale) else 1.0
        return other

    def __call__(self, *args) -> float:
        if self._plain and all(type(a) is float for a in args):  # float arithmetic raises, it never warns
            try:
                value = real_float(self.fast(*args))
            except (ArithmeticError, ValueError, TypeError, NameError):
                value = math.nan
            return value if math.isfinite(value) else self.limit(*args)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                value = real_float(self.fast(*args))
        except (ArithmeticError, ValueError, TypeError, NameError):
            value = math.nan
        if math.isfinite(value):
            return value
        return self.limit(*args)

    def limit(self, *args) -> float:
        x = float(args[self.position])
        nearest = NUDGE * (abs(x) + self.scale)
        sides = (self.side,) if self.side else (1, -1)
        found = [v for v in (self._settled(args, x, s * nearest) for s in sides) if v is not None]
        if not found:
            raise NotFinite(x)
        if len(found) == 2 and abs(found[0] - found[1]) > 1e-9 * max(abs(found[0]), abs(found[1]), 1e-300):
            return 0.5 * (found[0] + found[1])  # a jump: the mean of the two one-sided limits
        return found[0]

    def _settled(self, args, x: float, nearest: float) -> float | None:
        values = []
        with mpmath.workdps(DIGITS):
            for step in STEPS:
                shifted = list(args)
                shifted[self.position] = mpmath.mpf(x) + mpmath.mpf(nearest) * step
                try:
                    values.append(real_float(self.precise(*shifted)))
                except (ArithmeticError, ValueError, TypeError, NameError):
                    return None
        if not all(math.isfinite(v) for v in values):
            return None
        near, middle, far = values
        change, before = abs(near - middle), abs(middle - far)
        if change <= 1e-13 * max(abs(near), 1e-300) or change <= SETTLED * before:
            return near
        return None


def has_infinity(expr: sp.Expr) -> bool:
    """Does the expression hold zoo, oo or nan (a parameter of 0 in a divisor, say)?"""
    return any(expr.has(atom) for atom in (sp.zoo, sp.oo, -sp.oo, sp.nan))


class BoundFunction:
    """A SafeFunction of (arguments, parameters) with the parameters fixed: called, and its limit taken, in the
    arguments alone, as the SafeFunction of the expression with the values substituted would be."""

    def __init__(self, function: SafeFunction, values: tuple[float, ...]):
        self.function, self.values = function, values

    def __call__(self, *args) -> float:
        return self.function(*args, *self.values)

    def limit(self, *args) -> float:
        return self.function.limit(*args, *self.values)


_COMPILED: dict[tuple, SafeFunction | None] = {}
_COMPILED_KEPT = 256  # a bound on the entries kept, for a process that builds many sheets


def bound(expr: sp.Expr, symbols, values: dict, scale: float = 1.0) -> SafeFunction | BoundFunction:
    """SafeFunction(expr.subs(values), symbols, scale=scale), compiled once per expression: the margin study
    evaluates one expression at many parameter sets, and compiling is most of the cost of each.

    The values enter as arguments instead of numbers in the expression, so numbers the parameters make (1/R,
    say) are computed at each call instead of rounded to a double once: the two agree to about 1e-16 relative.
    Where the expression holds a symbol the values do not give, or an infinity as written, it is substituted
    and compiled as before."""
    symbols, known, function = _compiled_once(_COMPILED, expr, symbols, values, SafeFunction)
    if function is None:
        return SafeFunction(expr.subs(values), symbols, scale=scale)
    return BoundFunction(function.with_scale(scale), tuple(float(values[s]) for s in known))


_VECTOR: dict[tuple, object] = {}


def bound_vector(expr: sp.Expr, symbols, values: dict):
    """lambdify(symbols, expr.subs(values), ["scipy", "numpy"]) for whole grids, compiled once per expression as
    ``bound`` is (the same conditions, the same agreement)."""

    def vector(e, arguments):
        return sp.lambdify(arguments, e, modules=["scipy", "numpy"], docstring_limit=0)

    symbols, known, function = _compiled_once(_VECTOR, expr, symbols, values, vector)
    if function is None:
        return vector(expr.subs(values), symbols)
    fixed = tuple(float(values[s]) for s in known)
    return lambda *args: function(*args, *fixed)


def _compiled_once(cache: dict, expr: sp.Expr, symbols, values: dict, compile_):
    """(symbols, the value symbols after them, ``compile_(expr, symbols + those)`` kept in ``cache``), the
    compiled function None where the values do not give every symbol or the expression holds an infinity."""
    symbols = tuple(symbols) if isinstance(symbols, (tuple, list)) else (symbols,)
    known = tuple(sorted((s for s in values if s not in symbols), key=lambda s: s.name))
    key = (expr, symbols, known)
    if key not in cache:
        if len(cache) >= _COMPILED_KEPT:
            cache.clear()
        usable = expr.free_symbols <= {*symbols, *known} and not has_infinity(expr)
        cache[key] = compile_(expr, symbols + known) if usable else None
    return symbols, known, cache[key]


# ----------------------------------------------------------------------------- plain arithmetic in doubles
# The fast function above is compiled with mpmath's printer (mpmath is among its modules), so it computes in
# mpmath numbers at the working precision, 53 bits: each sum, product, quotient and square rounded once, to
# nearest with ties to even, as IEEE double arithmetic rounds each operation. For an expression made of those
# operations alone, the same code run on Python floats gives the same bits, about ten times faster (a forcing
# term under quadrature is called some 10^5 times on one sheet). A square that the mpmath route computes in
# mpmath (rounded once) is written as a product, since float ** 2 goes through the C library's pow, which need
# not round once; a square of floats alone stays float ** 2, as it is in the mpmath route. Anything else (a
# function, another power, a number that is not exactly a double) keeps the mpmath route.
_SQUARE = sp.Function("_calcsheet_square")
_DOUBLE_INTEGER = 2**53
_SMALLEST_NORMAL, _LARGEST = 2.2250738585072014e-308, 1.7976931348623157e308


def _exact_double(value) -> float:
    """mpmath's mpf(...) of the printed code, for the constants the check below lets through: an integer, or a
    Float's (sign, mantissa, exponent, bits) with at most 53 bits, which is exactly one double."""
    if isinstance(value, tuple):
        sign, mantissa, exponent, _ = value
        return math.ldexp(-mantissa if sign else mantissa, exponent)
    return float(value)


_PLAIN_NAMES = {"mpf": _exact_double, "_calcsheet_square": lambda v: v * v}


def _plain_printer():
    """mpmath's printer with each Float written as the double it is (repr gives it back exactly) and each
    fraction as p/q (rounded once, as mpf(p)/mpf(q) is at 53 bits): constants folded when the code is compiled,
    not converted at every call."""
    from sympy.printing.pycode import MpmathPrinter

    class PlainPrinter(MpmathPrinter):
        def _print_Float(self, e):
            return repr(float(e))

        def _print_Rational(self, e):
            return f"({e.p}/{e.q})"

    return PlainPrinter({"fully_qualified_modules": False, "inline": True, "allow_unknown_functions": True})


def in_plain_arithmetic(expr: sp.Expr) -> sp.Expr | None:
    """``expr`` with each square computed in mpmath as _SQUARE, when it holds only symbols, sums, products,
    quotients, squares, integers and rationals below 2^53 and Floats that are normal doubles; None otherwise."""
    for node in sp.preorder_traversal(expr):
        if isinstance(node, (sp.Symbol, sp.Add, sp.Mul)):
            continue
        if isinstance(node, sp.Pow):
            if node.exp in (2, -1):
                continue
            return None
        if isinstance(node, sp.Integer):
            if abs(int(node)) < _DOUBLE_INTEGER:
                continue
            return None
        if isinstance(node, sp.Rational):
            if abs(node.p) < _DOUBLE_INTEGER and node.q < _DOUBLE_INTEGER:
                continue
            return None
        if isinstance(node, sp.Float):
            if node._prec <= 53 and (node == 0 or _SMALLEST_NORMAL <= abs(float(node)) <= _LARGEST):
                continue
            return None
        return None
    squared_in_mpmath = lambda e: isinstance(e, sp.Pow) and e.exp == 2 and _in_mpmath(e.base)  # noqa: E731
    return expr.replace(squared_in_mpmath, lambda e: _SQUARE(e.base))


def _in_mpmath(expr: sp.Expr) -> bool:
    """Does the mpmath route compute ``expr`` in mpmath numbers? Only where it holds a constant printed as one (a
    Float, a fraction): the arguments are floats and integers stay integers, so a square of those is float ** 2
    there too, which the plain route then computes the same way."""
    return any(not isinstance(n, sp.Integer) for n in expr.atoms(sp.Number))
