"""Rewrites that make sympy's results read the way an engineer writes them."""

from __future__ import annotations

import functools
from typing import Mapping

import sympy as sp

from calcsheet.derive.budget import SIMPLIFY_SECONDS, within


def exp_of_logs_to_powers(expr: sp.Expr) -> sp.Expr:
    """exp(a*log(u) + b) -> u**a * exp(b): powers rather than exponentials of logarithms."""

    def rewrite(e: sp.Expr) -> sp.Expr:
        powers, rest = sp.Integer(1), []
        for term in sp.Add.make_args(sp.expand(e.args[0])):
            coeff, logs = term.as_independent(sp.log, as_Add=False)
            if isinstance(logs, sp.log):
                powers *= logs.args[0] ** coeff
            else:
                rest.append(term)
        return powers * sp.exp(sp.Add(*rest))

    return expr.replace(lambda e: isinstance(e, sp.exp), rewrite)


def compact(expr: sp.Expr, seconds: float = SIMPLIFY_SECONDS) -> sp.Expr:
    """The shortest of a few standard forms, found within a time budget. Remembered per expression within
    a process: the design-margin evaluations and the sheets of one build ask for the same forms again."""
    return _compact(expr, seconds)


@functools.lru_cache(maxsize=1024)
def _compact(expr: sp.Expr, seconds: float) -> sp.Expr:
    candidates = [expr]
    for transform in (lambda e: sp.powsimp(sp.expand(e)), simplified):
        result, done = within(seconds, lambda: transform(expr), None)
        if done and result is not None:
            candidates.append(exp_of_logs_to_powers(result))
    return min(candidates, key=lambda e: (sp.count_ops(e), len(sp.srepr(e))))


def simplified(expr: sp.Expr) -> sp.Expr:
    """sympy's simplify; where the expression is linear in its sines and cosines (a sinusoidal forcing's
    response), with each of them held as a symbol.

    simplify's trigonometric pass (trigsimp) tries identity after identity and factors at each step: most of
    a second per expression, several on larger ones, for a response of a * sin + b * cos where no identity
    shortens anything but a numeric ratio of a to b. Every other pass still runs, and an identity with the
    sines held as symbols holds for any values of them, so the result equals the expression. Its form may
    differ from full simplify's (a common factor taken out or not); the sine-forced demos and test sheets
    read the same either way (checked by building them with both).
    """
    trig = sorted(expr.atoms(sp.sin, sp.cos), key=sp.default_sort_key)
    if not trig:
        return sp.simplify(expr)
    taken = {s.name for s in expr.free_symbols}
    names = (f"trig{k}" for k in range(len(trig) + len(taken) + 1))
    free = (n for n in names if n not in taken)
    held = {f: sp.Symbol(next(free), **({"real": True} if f.is_real else {})) for f in trig}
    abstracted = expr.xreplace(held)
    symbols = list(held.values())
    if any(sp.diff(abstracted, u, v) != 0 for i, u in enumerate(symbols) for v in symbols[i:]):
        return sp.simplify(expr)  # a product or power of sines, or one in a denominator: identities may help
    return sp.simplify(abstracted).xreplace({s: f for f, s in held.items()})


def choose_branches(
    expr: sp.Expr, values: Mapping[sp.Symbol, float], taken: list | None = None
) -> tuple[sp.Expr, tuple[str, ...]]:
    """Replace each Piecewise by the branch that holds for the stated parameter values.

    sympy splits cases such as ``a*tau != 1``; the stated numbers decide which case applies, and
    the sheet says which one was taken. A branch whose condition cannot be decided is left alone.
    ``taken``, where given, receives each condition the choice rests on (the chosen branch's, and the negation
    of each branch passed over), so that values elsewhere can be checked against the form chosen here.
    """
    notes: list[str] = []

    def pick(piecewise: sp.Piecewise) -> sp.Expr:
        passed_over = []
        for branch, condition in piecewise.args:
            verdict = decided(condition.subs(values)) if condition is not sp.true else True
            if verdict is True:
                if condition is not sp.true:
                    notes.append(sp.sstr(condition).replace("**", "^"))
                if taken is not None:
                    taken.extend([*passed_over, *([condition] if condition is not sp.true else [])])
                return branch
            if verdict is None:
                return piecewise
            passed_over.append(sp.Not(condition))
        return piecewise

    return expr.replace(lambda e: isinstance(e, sp.Piecewise), pick), tuple(notes)


def decided(condition) -> bool | None:
    """A sympy condition with numbers put in: True, False, or None where it is still undecided."""
    if condition is sp.true or condition == True:  # noqa: E712  (sympy booleans)
        return True
    if condition is sp.false or condition == False:  # noqa: E712
        return False
    return None
