"""The groups that carry the physics, named where the derivation uses them: tau, n, V(t).

Written out, exp(R t/L) and (V_0 + q_in t - q_out t)^(q_out/(q_in - q_out)) put fractions and subscripts
inside exponents, which print at 4 pt, and hide what a checker looks for. A constant coefficient p gives
the time constant tau = 1/p, so every exponential reads exp(-(t - t_0)/tau); a coefficient k/L(t) with L
linear in t (a tank that fills or drains) gives the exponent n = k/L'(t) of mu = L(t)^n, and L is named
after the parameter it starts from (V_0 -> V(t)). The sheet introduces each name with a "where" line.
Only what is shown changes: the derivation keeps its own expressions.
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy as sp

TAU = "tau"
EXPONENT = "n"


@dataclass(frozen=True)
class Groups:
    """The names found for one derivation; each ``show`` rewrites an expression with them."""

    x: sp.Symbol
    p: sp.Expr | None = None  # a constant coefficient, when tau names 1/p
    tau: sp.Symbol | None = None
    tau_is_parameter: bool = False  # 1/p is already a parameter of the model (tau, k): no "where" line
    n: sp.Symbol | None = None
    n_value: sp.Expr | None = None
    line: sp.Expr | None = None  # L(x), linear in x
    line_name: sp.Expr | None = None  # V(t)
    line_start: sp.Symbol | None = None  # V_0

    def show(self, expr):
        """The expression as the sheet writes it: exponentials joined and written with tau, L(x)^n."""
        if not isinstance(expr, sp.Basic):
            return expr
        expr = expr.replace(_has_two_exponentials, lambda e: sp.powsimp(e, combine="exp"))
        if self.n is not None:
            expr = expr.replace(lambda e: isinstance(e, sp.Pow), self._power)
            expr = expr.replace(lambda e: isinstance(e, sp.exp), self._exp_of_log)
            if self.line_name is not None:
                expr = expr.xreplace({self.line: self.line_name})
        if self.tau is not None:
            expr = expr.replace(lambda e: isinstance(e, sp.exp), lambda e: self._exp_in_tau(e))
        return expr

    def show_clock(self, expr, tau: sp.Symbol):
        """Only the exponentials joined and written with ``tau``: the form the numbers are put into. A symbol
        of its own, so that a parameter k that is also the time constant is not kept as a number elsewhere."""
        if self.tau is None or not isinstance(expr, sp.Basic):
            return expr
        expr = expr.replace(_has_two_exponentials, lambda e: sp.powsimp(e, combine="exp"))
        return expr.replace(lambda e: isinstance(e, sp.exp), lambda e: self._exp_in_tau(e, tau))

    def _exp_in_tau(self, e, tau: sp.Symbol | None = None):
        tau = self.tau if tau is None else tau
        ratio = sp.expand(sp.cancel(sp.together(e.args[0] / self.p)))  # p a sum over a product cancels too
        if ratio.free_symbols & self.p.free_symbols or ratio == 0:
            return e
        lead = ratio.coeff(self.x) if ratio.has(self.x) else ratio
        negative = lead.could_extract_minus_sign()
        clock = sp.expand(-ratio) if negative else ratio
        over = sp.Mul(clock, sp.Pow(tau, -1), evaluate=False)
        return sp.exp(sp.Mul(-1, over, evaluate=False) if negative else over, evaluate=False)

    def _named_exponent(self, exponent):
        offset = sp.simplify(exponent - self.n_value)
        if offset.is_Integer:
            return self.n + offset
        return None

    def _power(self, e):
        base, exponent = e.args
        if exponent.is_Number or not exponent.free_symbols:
            return e
        named = self._named_exponent(exponent)
        if named is None:
            named = self._named_exponent(-exponent)
            return e if named is None else sp.Pow(sp.Pow(base, named, evaluate=False), -1, evaluate=False)
        return sp.Pow(base, named, evaluate=False)

    def _exp_of_log(self, e):
        argument = e.args[0]
        logs = [f for f in sp.Mul.make_args(argument) if isinstance(f, sp.log)]
        if len(logs) != 1:
            return e
        named = self._named_exponent(sp.simplify(argument / logs[0]))
        if named is None:
            return e
        return sp.exp(sp.Mul(named, logs[0], evaluate=False), evaluate=False)

    def where(self) -> list[tuple[str, sp.Expr, sp.Expr]]:
        """(what, name, expression) for each name the sheet introduces, in the order they appear."""
        lines = []
        if self.tau is not None and not self.tau_is_parameter:
            lines.append(("time constant", self.tau, sp.simplify(1 / self.p)))
        if self.line_name is not None:
            lines.append(("volume law", self.line_name, self.line))
        if self.n is not None:
            lines.append(("exponent", self.n, self.n_value))
        return lines


def _has_two_exponentials(e) -> bool:
    return isinstance(e, sp.Mul) and sum(isinstance(f, sp.exp) for f in e.args) >= 2


def groups_for(p: sp.Expr, x: sp.Symbol, taken: set[str]) -> Groups:
    """The names for a coefficient p of x; ``taken`` are the names already used on the sheet."""
    if p is None or p == 0:
        return Groups(x)
    if not p.has(x):
        inverse = sp.simplify(1 / p)
        if isinstance(inverse, sp.Symbol):
            return Groups(x, p=p, tau=inverse, tau_is_parameter=True)
        if TAU in taken:
            return Groups(x)
        return Groups(x, p=p, tau=sp.Symbol(TAU, positive=True))
    numerator, denominator = sp.fraction(sp.together(p))
    line = sp.expand(denominator)
    if numerator.has(x) or not line.is_polynomial(x) or sp.degree(line, x) != 1 or EXPONENT in taken:
        return Groups(x)
    n_value = sp.simplify(numerator / line.diff(x))
    name, start = _line_name(line, x, taken)
    return Groups(x, n=sp.Symbol(EXPONENT), n_value=n_value, line=line, line_name=name, line_start=start)


def _line_name(line, x, taken):
    """V(t) for a line that starts from a parameter V_0 (its value at the start of the clock)."""
    for start in sorted(line.free_symbols, key=str):
        stem, _, tail = start.name.rpartition("_")
        if tail != "0" or not stem or stem in taken:
            continue
        rest = sp.expand(line - start)
        if not rest.has(start) and rest.diff(x) != 0:
            return sp.Function(stem)(x), start
    return None, None
