"""The forms a checker reads: named groups (tau, n, V(t)), one exponential notation, no float artefacts, no
leading negatives, switched intervals in their own clock. Each rewrite is checked to leave the mathematics
unchanged with sympy (the reference), and each form against what the demo sheets and starters print.
The preferred forms themselves (v_0 - V_s, exp(-t/tau), 680 rather than 680.0) are common practice, no source.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import sympy as sp

from calcsheet.mathtext import display_inner_fractions, latex, plain
from calcsheet.sheet.document import Equation
from calcsheet.sheet.named_groups import groups_for
from calcsheet.sheet.quantities import numeric_expression
from calcsheet.source.expressions import parse_expression
from calcsheet.source.symbolic import to_sympy
from tests import shared_builds

ROOT = Path(__file__).resolve().parents[2]
t, t0, R, L, C, V_s, v_0 = sp.symbols("t t_0 R L C V_s v_0", positive=True)
q_in, q_out, V_0, c_in, m_0 = sp.symbols("q_in q_out V_0 c_in m_0", positive=True)


def _back(text: str, names: dict) -> sp.Expr:
    """A printed plain form read back through calcsheet's whitelisting parser."""
    return to_sympy(parse_expression(text), names)


def test_a_sum_starts_with_a_positive_term_and_means_the_same():
    expr = -V_s + v_0
    assert plain(expr) == "v_0 - V_s"
    assert latex(expr) == r"v_{0} - V_{\mathrm{s}}"
    assert sp.simplify(_back(plain(expr), {"V_s": V_s, "v_0": v_0}) - expr) == 0
    assert plain(-V_s - v_0) == "-V_s - v_0"  # all terms negative: nothing to move


def test_every_exponential_is_written_exp_with_its_argument_on_the_line():
    for expr in (sp.exp(-t / (C * R)), sp.exp(t), V_s * sp.exp(R * t / L) / L):
        tex = latex(expr)
        assert "e^" not in tex and r"\exp{\left(" in tex, tex
        inside = tex.split(r"\exp{\left(", 1)[1]
        assert not inside.startswith(r"\frac"), tex


def test_an_exponent_on_the_line_brackets_a_denominator_of_several_factors():
    A, h, V, c_p, rho = sp.symbols("A h V c_p rho", positive=True)
    assert (
        latex(sp.exp(A * h * t / (V * c_p * rho))) == r"\exp{\left(A\,h\,t/\left(V\,c_{\mathrm{p}}\,\rho\right)\right)}"
    )
    assert latex(sp.exp(-t / C)) == r"\exp{\left({-}t/C\right)}"


def test_a_fraction_inside_a_fraction_keeps_the_display_size():
    tex = r"\frac{t}{R \ln{\left(\frac{a}{b} \right)}} + \frac{c}{d}"
    assert display_inner_fractions(tex) == r"\frac{t}{R \ln{\left(\dfrac{a}{b} \right)}} + \frac{c}{d}"


def test_the_time_constant_names_the_exponent_and_joins_a_shifted_clock():
    p = R / L
    groups = groups_for(p, t, {"R", "L", "V_s", "i_0", "t_0"})
    shown = groups.show(sp.exp(-R * t / L + R * t0 / L))
    assert plain(shown) == "exp(-(t - t_0)/tau)"
    assert sp.simplify(shown.subs(groups.tau, 1 / p) - sp.exp(-R * (t - t0) / L)) == 0
    joined = groups.show(sp.exp(R * t0 / L) * sp.exp(-R * t / L) * V_s)
    assert plain(joined) == "V_s*exp(-(t - t_0)/tau)"
    assert [(what, plain(expr)) for what, _, expr in groups.where()] == [("time constant", "L/R")]


def test_a_filling_tank_names_its_volume_and_exponent():
    p = q_out / (V_0 + q_in * t - q_out * t)
    groups = groups_for(p, t, {"q_in", "q_out", "V_0", "c_in", "m", "t"})
    mu = (V_0 + q_in * t - q_out * t) ** (q_out / (q_in - q_out))
    power = c_in * (V_0 + q_in * t - q_out * t) ** (q_in / (q_in - q_out))
    assert plain(groups.show(mu)) == "V(t)^n"
    assert plain(groups.show(power)) == "c_in*V(t)^(n + 1)"
    assert latex(groups.show(mu)) == r"V{\left(t \right)}^{n}"  # V(t)^n, not sympy's V^n(t)
    general = groups.show((m_0 + power) / mu)
    assert latex(general).endswith(r"}{V{\left(t \right)}^{n}}"), latex(general)  # divided by V(t)^n
    back = groups.show(power).subs(sp.Function("V")(t), V_0 + (q_in - q_out) * t).subs(groups.n, groups.n_value)
    assert sp.simplify(back - power) == 0


def test_whole_numbers_are_written_without_a_decimal_point():
    shown = numeric_expression(v_0 * sp.exp(-t / (C * R)) + V_s * t**2, {v_0: 680.0, C: 2e-3, R: 5e3, V_s: 7.0})
    assert plain(shown) == "7*t^2 + 680*exp(-0.1*t)"


def test_a_sum_that_is_zero_within_its_round_off_is_printed_as_zero():
    """T_0 = 300 K, T_inf = 293.15 K, Q/(h*A) = 6.85 K: T_0 - T_inf - Q/(h*A) is exactly 0, and 2.3e-14 in
    doubles (Python's float arithmetic is the reference). One part in 10^9 of T_0 more is a real difference."""
    T_0, T_inf, Q, A, h, tau = sp.symbols("T_0 T_inf Q A h tau", positive=True)
    expr = (T_0 - T_inf - Q / (A * h)) * sp.exp(-t / tau) + T_inf
    values = {T_0: 300.0, T_inf: 293.15, Q: 6.85, A: 1.0, h: 1.0, tau: 10.0}
    assert 300.0 - 293.15 - 6.85 != 0  # the round-off the sheet must not print
    assert plain(numeric_expression(expr, values)) == "293.1"
    assert plain(numeric_expression(expr, {**values, T_0: 300.0000003})) == "293.1 + 3.0e-7*exp(-0.1*t)"


@pytest.fixture(scope="module")
def sheets():
    return {source: shared_builds.sheet(source) for source in shared_builds.every_source()}


def _equations(sheet):
    for section in sheet.sections:
        for block in section.blocks:
            if isinstance(block, Equation):
                yield section, block


FLOAT_ARTEFACT = re.compile(r"(?<![\d.])\d+\.0(?![\d])")
LEADING_NEGATIVE = re.compile(r"(^|= |\()-[A-Za-z_]\w* \+ ")


def test_no_sheet_prints_a_float_artefact_a_leading_negative_or_a_second_exponential_notation(sheets):
    found = []
    for stem, sheet in sheets.items():
        for section, eq in _equations(sheet):
            text, tex = eq.math.text, eq.math.latex
            if section.key.endswith("numbers") and FLOAT_ARTEFACT.search(text.split(" = ")[-1]):
                found.append(f"{stem}: float artefact in {text}")
            if LEADING_NEGATIVE.search(text):
                found.append(f"{stem}: leading negative in {text}")
            if "e^{" in tex:
                found.append(f"{stem}: e^ beside exp in {tex}")
    assert not found, "\n".join(found)


def test_every_sheet_with_a_time_constant_introduces_tau_with_its_value(sheets):
    for stem in ("bus-capacitor-bleed-down", "series_rl", "lumped_body"):
        lines = [eq.math.text for _, eq in _equations(sheets[stem]) if eq.math.text.startswith("where tau")]
        assert lines and lines[0].startswith("where tau = 1/p = "), stem
        assert re.search(r"= [\d.]+ (s|ms|min|h)$", lines[0]), lines[0]


def test_a_switched_interval_is_written_in_its_own_clock_and_starts_from_the_carried_value(sheets):
    """Interval 2 of the coil economiser (R = 80 ohm, L = 0.8 H, V_s = 24 V from 120 ms, from the demo input):
    the printed numeric equation is i(t) = a + b exp(-(t - 0.12)/tau). Reference: sympy's dsolve of
    L di/dt + R i = V_s with i(0.12 s) = i_0, where i_0 is the value the sheet prints for i(120 ms)."""
    sheet = sheets["valve-coil-economiser"]
    numbers = [
        eq.math.text for s, eq in _equations(sheet) if s.key.endswith("numbers") and eq.math.text.startswith("i(t)")
    ]
    second = numbers[-1].split(" = ", 1)[1]
    assert "(t - 0.12)" in second and "e+" not in second, second
    x = sp.Symbol("t")
    printed = _back(second, {"t": x})
    i = sp.Function("i")
    start = printed.subs(x, sp.Rational(12, 100))
    law = sp.Eq(sp.Rational(8, 10) * i(x).diff(x) + 80 * i(x), 24)
    reference = sp.dsolve(law, i(x), ics={i(sp.Rational(12, 100)): start}).rhs
    for at in (0.12, 0.13, 0.2, 0.5):
        assert abs(float(printed.subs(x, at)) - float(reference.subs(x, at))) <= 1e-12
    assert abs(float(start) - 1.14026) < 5e-5  # the carried value the sheet states for the end of interval 1
