"""The one spelling of a symbol (equations and prose alike), units in equations as the trade prints them, and the
one number rule. Outside references: latex2mathml (an outside converter) reads the LaTeX the sheet writes,
and pint reads the printed units back; the typographic rules are ISO 80000-2 (from memory: descriptive
subscripts upright, counting ones italic) and the SI Brochure, 9th edition, 5.4 (from memory)."""

from __future__ import annotations

import re
from pathlib import Path

import pint
import pytest
import sympy as sp
from latex2mathml.converter import convert

from calcsheet.formatting import number
from calcsheet.mathtext import latex, symbol_latex
from calcsheet.sheet.quantities import quantity_latex, trade_units, unit_latex
from calcsheet.symbol_spelling import symbol_text
from calcsheet.writers.unbroken import unbroken

UREG = pint.UnitRegistry()
ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.parametrize(
    ("name", "tex", "text"),
    [
        ("T_inf", r"T_{\infty}", ("T", "∞")),
        ("c_p", r"c_{\mathrm{p}}", ("c", "p")),
        ("eps", r"\varepsilon", ("ε", "")),
        ("rho", r"\rho", ("ρ", "")),
        ("q_out", r"q_{\mathrm{out}}", ("q", "out")),
        ("omega_n", r"\omega_{\mathrm{n}}", ("ω", "n")),
        ("v_C", "v_{C}", ("v", "C")),  # names a quantity: italic
        ("t_k", "t_{k}", ("t", "k")),  # counts: italic
        ("T_0", "T_{0}", ("T", "0")),
        # a forcing's value of a source with its own subscript: several subscripts, set apart by commas
        ("Q_in_amp", r"Q_{\mathrm{in},\mathrm{amp}}", ("Q", "in,amp")),
        ("T_inf_offset", r"T_{\infty,\mathrm{offset}}", ("T", "∞,offset")),
    ],
)
def test_one_spelling_in_equations_and_prose(name, tex, text):
    assert symbol_latex(name) == tex
    assert latex(sp.Symbol(name)) == tex
    assert latex(sp.Symbol(name, positive=True)) == tex
    assert symbol_text(name) == text


def test_a_function_of_the_variable_is_spelled_as_its_symbol():
    t = sp.Symbol("t")
    assert latex(sp.Function("T_n")(t)).startswith(r"T_{\mathrm{n}}")


def test_every_kind_law_sets_descriptive_subscripts_upright():
    # the kinds' hand-written LaTeX follows the same table: no italic word subscript such as Q_{in} or c_{p}
    italic = re.compile(r"_\{(?!\\)([a-z]{2,}|[a-hl-z])\}")
    found = []
    for path in sorted((ROOT / "calcsheet" / "kinds").glob("*.py")):
        found += [f"{path.name}: {m.group(0)}" for m in italic.finditer(path.read_text(encoding="utf-8"))]
    assert not found, found


@pytest.mark.parametrize(
    ("shown", "tex", "mathml_has"),
    [
        ("4.7 kohm", r"4.7\ \mathrm{kΩ}", "Ω"),
        ("2200 uF", r"2200\ \mathrm{µF}", "µ"),
        ("22 degC", r"22\ \mathrm{°C}", "°"),
        ("15 W/(m^2*K)", r"15\ \mathrm{W/(m^{2}\cdot K)}", "<msup>"),
        ("1.53e-3 m^3", r"1.53 \times 10^{-3}\ \mathrm{m^{3}}", "<msup>"),
    ],
)
def test_units_in_equations_as_the_trade_prints_them(shown, tex, mathml_has):
    assert quantity_latex(shown) == tex
    assert mathml_has in convert(tex)
    assert "^" not in convert(tex) and "*" not in convert(tex)


@pytest.mark.parametrize("unit", ["kohm", "uF", "degC", "W/(m^2*K)", "m^3/s", "J/(kg*K)"])
def test_pint_reads_an_equation_unit_back(unit):
    tex = unit_latex(unit)
    printed = tex.removeprefix(r"\mathrm{").removesuffix("}").replace(r"\cdot ", "·")
    printed = printed.replace("^{", "**").replace("}", "")
    assert UREG.Unit(printed.replace("·", "*")) == UREG.Unit(unit)


@pytest.mark.parametrize(
    ("value", "shown"),
    [
        (60.0, "60"),  # 1 h in min: an exact value keeps its form, not 60.00
        (3600.0000000000005 / 60, "60"),  # the same value after a unit conversion's round-off
        (295.15 - 273.15, "22"),  # 22 degC back from kelvin
        (0.42, "0.42"),  # written 0.42 m^2, printed so in SI too
        (5.0, "5"),
        (47.4523, "47.45"),  # computed: 4 significant figures
        (2.50004, "2.500"),  # rounded: the zeros are figures
        (0.99999, "1.000"),
        (-1.0e-5, "-1e-5"),  # exact: no padding in scientific form either
        (-1.00004e-5, "-1.000e-5"),
    ],
)
def test_one_number_rule(value, shown):
    assert number(value) == shown


def test_three_figures_after_rounding_up_to_the_next_decade():
    assert number(-0.99999, 3) == "-1.00"


def test_prose_sets_symbols_units_and_comparisons_as_the_equations_do():
    html = str(
        unbroken("T(45 min) <= 60 degC at h -26.7 %, T_inf +5 K; rho and c_p; a 60 min run", ("T_inf", "c_p", "rho"))
    )
    assert "T<sub>∞</sub> +5\u00a0K" in html
    assert "ρ and c<sub>p</sub>" in html
    assert "≤ 60\u00a0°C" in html and "<=" not in html
    assert "T_inf" not in html


def test_prose_escapes_user_text_and_leaves_units_and_longer_names_alone():
    html = str(unbroken("<b>T_inf</b> T_inflow 3 mu 2 tau", ("T_inf", "mu", "tau")))
    assert "&lt;b&gt;T<sub>∞</sub>&lt;/b&gt;" in html
    assert "T_inflow" in html  # a longer name is not the symbol
    assert "3\u00a0mu" in html  # right after a number it is a unit, not the symbol
    assert "2\u00a0tau" in html


def test_a_unit_named_after_in_is_printed_in_trade_form():
    assert trade_units("with T in degC as the unknown and V in m^3") == "with T in °C as the unknown and V in m³"
    assert trade_units("the ohm law, in us") == "the ohm law, in us"
