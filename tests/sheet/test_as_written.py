"""The first equation on a sheet is the engineer's own: terms, factors and symbols in the order written.
(A property of our own rendering: the order is read off the LaTeX; no outside source.)"""

from __future__ import annotations

import pytest

from calcsheet.sheet.as_written import equation_latex
from calcsheet.source.expressions import parse_equation


def _order(latex: str, *pieces: str) -> list[int]:
    return [latex.index(piece) for piece in pieces]


@pytest.mark.parametrize(
    "text, pieces",
    [
        ("tau*dT/dt + T = T_inf", (r"\tau", r"\frac{dT}{dt}", "+ T", r"T_{\infty}")),
        ("V*rho*c_p*dT/dt = Q - h*A*(T - T_inf)", ("V", r"\rho", r"c_{\mathrm{p}}", r"\frac{dT}{dt}", "Q -", r"h\,A")),
        ("R*C*dv/dt + v = 0", ("R", "C", r"\frac{dv}{dt}", "+ v")),
        ("T + tau*dT/dt = T_inf", ("T +", r"\tau", r"\frac{dT}{dt}")),
    ],
)
def test_terms_and_factors_keep_the_order_written(text, pieces):
    latex = equation_latex(parse_equation(text, frozenset({"T", "v"})))
    positions = _order(latex, *pieces)
    assert positions == sorted(positions), latex


@pytest.mark.parametrize(
    "text, expected",
    [
        ("dy/dt = a - -y", r"\frac{dy}{dt} = a - \left({-}y\right)"),  # {-}: a unary sign in ziamath
        ("dy/dt = (a + b)*y", r"\frac{dy}{dt} = \left(a + b\right)\,y"),
        ("dy/dt = 2^(-t/T)", r"\frac{dy}{dt} = 2^{-t/T}"),  # no stacked fraction inside an exponent
        ("dy/dt = 2.5e-3*y", r"\frac{dy}{dt} = 2.5 \times 10^{-3}\,y"),
    ],
)
def test_signs_brackets_exponents_and_numbers(text, expected):
    assert equation_latex(parse_equation(text, frozenset({"y"}))) == expected


def test_the_sheet_opens_with_the_equation_as_written(tmp_path):
    from calcsheet.pipeline import build_sheet
    from calcsheet.sheet.document import Equation

    path = tmp_path / "lag.toml"
    path.write_text(
        '[sheet]\ntitle = "lag"\n[model]\nequation = "tau*dT/dt + T = T_inf"\nunknown = "T [K]"\n'
        'variable = "t [s]"\n[parameters]\ntau = "5 s"\nT_inf = "300 K"\n[initial]\nvalue = "290 K"\n'
        '[evaluate]\nat = ["5 s"]\n',
        encoding="utf-8",
    )
    sheet = build_sheet(path).sheet
    governing = next(s for s in sheet.sections if s.key == "governing")
    stated = next(b for b in governing.blocks if isinstance(b, Equation) and b.label == "as stated")
    assert stated.math.text == "tau*dT/dt + T = T_inf"
    assert stated.math.latex.startswith(r"\tau\,\frac{dT}{dt} + T")
