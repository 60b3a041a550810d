"""Expressions as text: LaTeX for the HTML and PDF, a plain linear form for the record and messages."""

from __future__ import annotations

import sympy as sp
from sympy.core.function import AppliedUndef
from sympy.printing.latex import LatexPrinter
from sympy.printing.str import StrPrinter

from calcsheet.symbol_spelling import symbol_tex


def _positive_first(terms: list) -> list:
    """The terms of a sum with the first term that is not negative moved to the front: v_0 - V_s, not
    -V_s + v_0. A sum of negative terms only keeps its order."""
    for i, term in enumerate(terms):
        if not term.could_extract_minus_sign():
            return [term, *terms[:i], *terms[i + 1 :]]
    return terms


class _PlainPrinter(StrPrinter):
    """sympy's str form, with integrals written out, dummy variables shown by their names, and a sum
    started by a positive term."""

    def _as_ordered_terms(self, expr, order=None):
        return _positive_first(super()._as_ordered_terms(expr, order=order))

    def _print_Dummy(self, expr):
        return expr.name

    def _print_Heaviside(self, expr):
        return f"step({self._print(expr.args[0])})"

    def _print_Integral(self, expr):
        ((variable, *limits),) = expr.limits
        body = self._print(expr.function)
        if not limits:
            return f"integral(({body}) d{self._print(variable)})"
        low, high = (self._print(v) for v in limits)
        return f"integral from {low} to {high} of (({body}) d{self._print(variable)})"


def plain(expr) -> str:
    """A one-line form in the input notation (``^`` for powers), stable for diffs."""
    if isinstance(expr, str):
        return expr
    return _PlainPrinter().doprint(expr).replace("**", "^")


class _SheetLatexPrinter(LatexPrinter):
    """sympy's LaTeX with the habits of hand-written sheets, each for a legible print.

    Every exponential is written exp(...), one notation on a sheet, so its argument is set at full size
    instead of as a superscript whose fraction and subscripts would print at 4 pt. A fraction inside a
    fraction keeps the display size (dfrac) for the same reason. A sum starts with a positive term
    (v_0 - V_s). Every symbol, a function's name too (T_n(t)), is spelled as symbol_spelling.py says: a
    descriptive subscript upright (T_air, c_p), T_inf with the sign infinity, eps as epsilon.
    """

    def _hprint_Function(self, func: str) -> str:
        return symbol_tex(func) or super()._hprint_Function(func)

    def _print_exp(self, expr, exp=None):
        argument = self._on_the_line(expr.args[0])
        body = rf"\exp{{\left({argument}\right)}}"  # braced: ziamath sets no space before the bracket
        return body if exp is None else rf"{body}^{{{exp}}}"

    def _as_ordered_terms(self, expr, order=None):
        return _positive_first(super()._as_ordered_terms(expr, order=order))

    def _print_Pow(self, expr, exp=None):
        # a named function of the variable to a power reads V(t)^n, not sympy's V^n(t)
        if _named_power(expr) and expr.exp != -1 and exp is None:
            return rf"{self._print(expr.base)}^{{{self._print(expr.exp)}}}"
        return super()._print_Pow(expr)

    def _print_Mul(self, expr):
        # V(t)^(-n) is a division by V(t)^n: sympy splits a fraction only where it knows the sign of a power
        below = [f for f in expr.args if _named_power(f) and f.exp.could_extract_minus_sign()]
        if not below:
            return super()._print_Mul(expr)
        above = sp.Mul(*[f for f in expr.args if f not in below])
        under = sp.Mul(*[sp.Pow(f.base, -f.exp, evaluate=False) for f in below], evaluate=False)
        return rf"\frac{{{self._print(above)}}}{{{self._print(under)}}}"

    def doprint(self, expr):
        # a sign just inside a bracket is unary: {-} keeps ziamath from spacing it as a binary minus
        tex = display_inner_fractions(super().doprint(expr))
        return tex.replace(r"\left(- ", r"\left(-").replace(r"\left(-", r"\left({-}")

    def _on_the_line(self, argument) -> str:
        """A product or quotient as a/b on one line, its denominator bracketed when it is more than one
        factor: A h t/(V c_p rho), -(t - t_0)/tau. Anything else as usual, with short fractions folded."""
        if argument.is_Add:  # each term on the line: A h t/(c_p m) + ..., never sympy's folded t / c_p m
            text = ""
            for term in self._as_ordered_terms(argument):
                negative = term.could_extract_minus_sign()
                shown = self._on_the_line(-term if negative else term)
                text += ("-" if negative else "") + shown if not text else (" - " if negative else " + ") + shown
            return text
        factors = _flat_factors(argument)
        if len(factors) < 2 and not (factors and _is_division(factors[0])):
            folded = self._settings["fold_short_frac"]
            self._settings["fold_short_frac"] = True
            try:
                return self._print(argument)
            finally:
                self._settings["fold_short_frac"] = folded
        sign = ""
        up, down = [], []
        for f in factors:
            if f == -1:
                sign = "" if sign else "-"
            elif _is_division(f):
                down.append(sp.Pow(f.base, -f.exp, evaluate=False) if f.exp != -1 else f.base)
            else:
                up.append(f)
        times = self._settings["mul_symbol_latex"]
        several = len(up) + len(down) > 1

        def part(f):
            return rf"\left({self._print(f)}\right)" if f.is_Add and several else self._print(f)

        top = times.join(part(f) for f in up) or "1"
        if not down:
            return sign + top
        bottom = times.join(part(f) for f in down)
        if len(down) > 1 or down[0].is_Add:
            bottom = rf"\left({bottom}\right)"
        return f"{sign}{top}/{bottom}"

    def _print_Heaviside(self, expr, exp=None):
        body = rf"\operatorname{{step}}\left({self._print(expr.args[0])}\right)"
        return body if exp is None else rf"{body}^{{{exp}}}"

    def _print_Symbol(self, expr, style="plain"):
        if expr in self._settings["symbol_names"]:
            return self._settings["symbol_names"][expr]
        return symbol_tex(expr.name) or super()._print_Symbol(expr, style)


def display_inner_fractions(tex: str) -> str:
    r"""Every \frac inside another fraction's numerator or denominator becomes \dfrac, so it is not set at
    script size."""
    out, open_parts, depth, i = [], [], 0, 0  # open_parts: (brace depth, "num" or "den") of each fraction
    while i < len(tex):
        if tex.startswith(r"\frac{", i):
            out.append(r"\dfrac{" if open_parts else r"\frac{")
            depth += 1
            open_parts.append((depth, "num"))
            i += len(r"\frac{")
            continue
        char = tex[i]
        if char == "{":
            depth += 1
        elif char == "}":
            if open_parts and open_parts[-1][0] == depth:
                _, part = open_parts.pop()
                if part == "num":  # the denominator's brace follows at once
                    out.append("}{")
                    open_parts.append((depth, "den"))
                    i += 2
                    continue
            depth -= 1
        out.append(char)
        i += 1
    return "".join(out)


def _flat_factors(e) -> list:
    """The factors of a product, nested products (unevaluated ones too) opened."""
    if not isinstance(e, sp.Mul):
        return [e]
    return [f for arg in e.as_ordered_factors() for f in _flat_factors(arg)]


def _is_division(f) -> bool:
    return isinstance(f, sp.Pow) and f.exp.is_number and f.exp < 0


def _named_power(e) -> bool:
    return isinstance(e, sp.Pow) and isinstance(e.base, AppliedUndef)


def latex(expr, names: dict | None = None) -> str:
    """LaTeX for the sheet, with the derivative symbol and similar shown as engineers write them."""
    if isinstance(expr, str):
        return expr
    # a thin space between factors: ziamath sets none for a plain one, and c_in q_in would run together
    printer = _SheetLatexPrinter({"symbol_names": names or {}, "mul_symbol": r"\,", "ln_notation": True})
    return printer.doprint(expr)


def derivative_latex(unknown: str, variable: str) -> str:
    return rf"\frac{{d{symbol_latex(unknown)}}}{{d{symbol_latex(variable)}}}"


def symbol_latex(name: str) -> str:
    """LaTeX of a bare name as symbol_spelling.py spells it (T_inf with the sign infinity, c_p with an upright p),
    or sympy's form for a name it does not spell."""
    return symbol_tex(name) or sp.latex(sp.Symbol(name))
