"""Linearisation about an operating point ([linearise], derive/linearise.py, derive/linear_accuracy.py).

The scenarios are invented for these tests: a sump draining through an orifice while a pump feeds it,
A dh/dt = q_in - k sqrt(h), and a small casting cooling in air by convection and radiation.

Outside references, each beside its check:
- the linearised time constant of a tank draining through an orifice, tau = 2 A sqrt(h0) / k: the slope of
  k sqrt(h) at h0 is k / (2 sqrt(h0)), so tau = A / (k / (2 sqrt(h0))) (textbook result of process dynamics,
  from memory; recomputed here with sympy's diff, which shares no code with calcsheet);
- its steady state h = (q_in / k)^2 (setting dh/dt = 0; common practice, no source);
- the radiation coefficient h_rad = 4 eps sigma T0^3: the linearised form of eps sigma (T^4 - T_sur^4)
  for T near T_sur (Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, radiation heat transfer
  coefficient h_r = eps sigma (Ts + Tsur)(Ts^2 + Tsur^2), chapter 1; edition and equation number from memory);
- the difference between the linearised and the non-linear response, against our own scipy integration of
  the non-linear equation (LSODA, a different method from calcsheet's DOP853) in this file.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import sympy as sp
from click.testing import CliRunner
from scipy.integrate import solve_ivp

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError, ModelRefused
from calcsheet.pipeline import build_sheet, render

SIGMA = 5.670374419e-8  # Stefan–Boltzmann constant, W/(m^2 K^4) (CODATA 2018, exact in the 2019 SI)

TANK = """[sheet]
title = "Sump level with the pump running"

[model]
equation = "A*dh/dt = q_in - k*sqrt(h)"
unknown = "h [m]"
variable = "t [s]"

[parameters]
A = "2.5 m^2"
q_in = "0.012 m^3/s"
k = "0.01 m^2.5/s"

[linearise]
{linearise}

[initial]
value = "{start}"

[evaluate]
at = ["120 s", "600 s"]
"""

CASTING = """[sheet]
title = "Casting cooling in still air"

[model]
equation = "m*c*dT/dt = -h_c*A*(T - T_inf) - eps*sigma*A*(T^4 - T_sur^4)"
unknown = "T [K]"
variable = "t [s]"

[parameters]
m = "4 kg"
c = "460 J/(kg*K)"
h_c = "10 W/(m^2*K)"
A = "0.12 m^2"
eps = "0.8"
sigma = "5.670374419e-8 W/(m^2*K^4)"
T_inf = "300 K"
T_sur = "300 K"

[linearise]
{linearise}

[initial]
value = "{start}"

[evaluate]
at = ["600 s", "1800 s"]
"""


def built(tmp_path: Path, text: str, name: str = "case"):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return build_sheet(path)


def tank(tmp_path, linearise='about = "steady state"', start="1.6 m"):
    return built(tmp_path, TANK.format(linearise=linearise, start=start))


def test_draining_tank_steady_state_is_q_over_k_squared(tmp_path):
    d = tank(tmp_path).derivation
    point = d.linearisation.point
    assert point.method == "symbolic"
    assert point.si == pytest.approx((0.012 / 0.01) ** 2, rel=1e-12)  # h = (q_in/k)^2
    q_in, k = sp.symbols("q_in k", positive=True)
    assert (
        sp.simplify(
            point.expr.subs({s: sp.Symbol(s.name, positive=True) for s in point.expr.free_symbols}) - (q_in / k) ** 2
        )
        == 0
    )


def test_torricelli_time_constant_is_2_a_sqrt_h0_over_k(tmp_path):
    for about, h0 in (('about = "steady state"', 1.44), ('about = "h = 1.2 m"', 1.2)):
        d = tank(tmp_path, about).derivation
        expected = 2 * 2.5 * math.sqrt(h0) / 0.01  # tau = 2 A sqrt(h0) / k (from memory, see the module docstring)
        assert d.numbers.time_constant == pytest.approx(expected, rel=1e-12)
        h = sp.Symbol("h", positive=True)  # the same slope from sympy directly
        assert d.linearisation.terms[0].slope_si == pytest.approx(float(-sp.diff(0.01 * sp.sqrt(h), h).subs(h, h0)))


def test_radiation_coefficient_is_4_eps_sigma_t0_cubed(tmp_path):
    d = built(tmp_path, CASTING.format(linearise='about = "T = 300 K"', start="340 K")).derivation
    radiation = next(t for t in d.linearisation.terms if "sigma" in str(t.term))
    h_rad = 4 * 0.8 * SIGMA * 300.0**3  # Incropera and DeWitt (from memory): h_r -> 4 eps sigma T^3 at Ts = Tsur
    assert -radiation.slope_si / 0.12 == pytest.approx(h_rad, rel=1e-12)
    # the linear coefficient p = (h_c + h_rad) A / (m c)
    assert 1 / d.numbers.time_constant == pytest.approx((10 + h_rad) * 0.12 / (4 * 460), rel=1e-12)


def test_casting_steady_state_is_found_numerically_and_the_stable_root_chosen(tmp_path):
    d = built(tmp_path, CASTING.format(linearise='about = "steady state"', start="340 K")).derivation
    point = d.linearisation.point
    assert point.method == "numeric"  # a quartic: found by brentq, not in closed form
    assert point.si == pytest.approx(300.0, rel=1e-12)  # T_inf = T_sur: the body settles at 300 K
    assert len(point.roots) == 2 and min(point.roots) < 0  # the other real root is a negative temperature
    assert point.choice == "only_stable"


def _independent_worst_share(h0_about: str, tmp_path) -> tuple[float, float]:
    """Our own integration of A dh/dt = q_in - k sqrt(h) (LSODA) against the sheet's linearised curve."""
    d = tank(tmp_path, h0_about).derivation
    xs = [x for x, _ in d.curve]
    ours = solve_ivp(
        lambda t, h: [(0.012 - 0.01 * math.sqrt(h[0])) / 2.5],
        (0, xs[-1]),
        [1.6],
        method="LSODA",
        t_eval=xs,
        rtol=1e-12,
        atol=1e-14,
    ).y[0]
    linear = np.array([y for _, y in d.curve])
    share = np.max(np.abs(linear - ours)) / np.max(np.abs(ours - 1.6))
    return float(share), d.accuracy.worst


def test_reported_difference_matches_an_independent_integration(tmp_path):
    for about in ('about = "steady state"', 'about = "h = 1.5 m"'):
        independent, reported = _independent_worst_share(about, tmp_path)
        assert reported == pytest.approx(independent, rel=1e-6)


def test_far_operating_point_fails_verification_and_says_so(tmp_path):
    b = tank(tmp_path, 'about = "h = 0.5 m"\ntolerance = "2 %"')
    assert b.derivation.accuracy.worst > 0.02
    assert not b.derivation.verification.passed and not b.derivation.passed
    text = render(b.sheet, ("txt",))["txt"]
    assert "differs from the non-linear model by up to" in text and "FAILED" in text


def test_close_operating_point_passes_with_the_line_on_the_sheet(tmp_path):
    b = tank(tmp_path)
    assert b.derivation.verification.passed
    text = render(b.sheet, ("txt",))["txt"]
    assert "the linearised model is within" in text.lower()
    assert text.index("Linearisation ==") < text.index("Classification ==")
    assert "(the default, as no tolerance was stated)" in text


def test_record_carries_the_linearisation(tmp_path):
    import json

    record = json.loads(render(tank(tmp_path).sheet, ("json",))["json"])["linearisation"]
    assert {"about", "derivatives", "model", "max_difference", "tolerance", "passed"} <= set(record)
    assert record["about"] == "steady state" and record["tolerance"] == 0.02 and record["passed"] is True
    assert record["derivatives"][0]["derivative"] == "-k/(2*sqrt(h))"


ORIFICE = 'k = "0.01 m^2.5/s"'
REFUSALS = [
    # sqrt(h) at 0: its slope is infinite there
    ("A*dh/dt = q_in - k*sqrt(h)", ORIFICE, "h = 0 m", "the term '-sqrt(h)*k' is not differentiable at h = 0 m"),
    # |h| at 0: a corner
    ("A*dh/dt = q_in - k*abs(h)", 'k = "0.01 m^2/s"', "h = 0 m", "the term '-k*Abs(h)' is not differentiable"),
    # h^3 at 0: the linear coefficient of h vanishes
    ("A*dh/dt = q_in - k*h^3", 'k = "0.01 1/s"', "h = 0 m", "the term '-h^3*k' has zero slope at h = 0 m"),
    # not first order
    ("A*d2h/dt2 = q_in - k*sqrt(h)", ORIFICE, "h = 1 m", "second derivative"),
    # non-linear in the derivative
    ("A*h*dh/dt = q_in*h - k*h^2", 'k = "0.01 m^2/s"', "h = 1 m", "is not linear in dh/dt"),
    # nothing to linearise
    ("A*dh/dt = q_in - k*h", 'k = "0.01 m^2/s"', "h = 1 m", "already linear"),
]


@pytest.mark.parametrize("equation, k, about, fragment", REFUSALS)
def test_refusals_name_the_term(tmp_path, equation, k, about, fragment):
    text = (
        f'[sheet]\ntitle = "refusal"\n[model]\nequation = "{equation}"\nunknown = "h [m]"\nvariable = "t [s]"\n'
        f'[parameters]\nA = "2 m^2"\nq_in = "0.01 m^3/s"\n{k}\n[linearise]\nabout = "{about}"\n'
        '[initial]\nvalue = "1 m"\n'
    )
    with pytest.raises(ModelRefused) as info:
        built(tmp_path, text)
    assert fragment in info.value.message, info.value.message


def test_without_linearise_the_refusal_points_to_it(tmp_path):
    text = TANK.replace("[linearise]\n{linearise}\n", "").format(start="1 m")
    with pytest.raises(ModelRefused, match=r"add a \[linearise\] table"):
        built(tmp_path, text)


@pytest.mark.parametrize(
    "table, key, fragment",
    [
        ('tolerance = "2 %"', "linearise.about", "required"),
        ("about = 3", "linearise.about", "must be text"),
        ('about = "near the top"', "linearise.about", "neither"),
        ('about = "x = 1 m"', "linearise.about", "'x' is not the unknown"),
        ('about = "h = 2 s"', "linearise.about", "dimension"),
        ('about = "steady state"\ntolerance = "two"', "linearise.tolerance", "not a percentage"),
        ('about = "steady state"\ntolerance = 0.02', "linearise.tolerance", "as a percentage in quotes"),
        ('about = "steady state"\ntolerance = "0 %"', "linearise.tolerance", "above 0 %"),
        ('about = "steady state"\ntolerance = "80 %"', "linearise.tolerance", "at most 50 %"),
        ('about = "steady state"\nabout_point = "x"', "linearise.about_point", "unknown key"),
    ],
)
def test_bad_linearise_values_are_one_line_with_exit_2(tmp_path, table, key, fragment):
    path = tmp_path / "bad.toml"
    path.write_text(TANK.format(linearise=table, start="1.6 m"), encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2, result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "Traceback" not in result.output
    assert lines[0].startswith(f"{path}: {key}: ") and fragment in lines[0], lines[0]


def test_switched_model_is_refused_with_linearise(tmp_path):
    text = TANK.format(linearise='about = "steady state"', start="1.6 m")
    text += '\n[[switch]]\nat = "300 s"\nparameters = { q_in = "0 m^3/s" }\n'
    with pytest.raises(CalcsheetError, match="cannot be linearised"):
        built(tmp_path, text)


def test_same_input_same_bytes(tmp_path):
    first = render(tank(tmp_path).sheet, ("json", "txt"))
    second = render(tank(tmp_path).sheet, ("json", "txt"))
    assert first == second


def test_criteria_are_also_judged_on_the_non_linear_integration(tmp_path):
    # from 1.6 m towards 1.44 m, linearised about 1.0 m: h(600 s) differs between the two models; a limit
    # between the two values passes on one and fails on the other, and the sheet says so
    text = TANK.format(linearise='about = "h = 1.0 m"\ntolerance = "50 %"', start="1.6 m")
    d0 = built(tmp_path, text, "probe").derivation
    linear = next(v.y for v in d0.numbers.values if v.at.si == 600)
    ours = solve_ivp(
        lambda t, h: [(0.012 - 0.01 * math.sqrt(h[0])) / 2.5], (0, 600), [1.6], method="LSODA", rtol=1e-12, atol=1e-14
    ).y[0][-1]
    assert abs(linear - ours) > 1e-3
    limit = (linear + ours) / 2
    text += f'\n[[criteria]]\ntext = "level at 10 min"\ncheck = "h(600 s) <= {limit:.6f} m"\n'
    b = built(tmp_path, text, "both")
    ((criterion, found, passed),) = b.derivation.accuracy.criteria
    assert found == pytest.approx(ours, rel=1e-8)
    assert passed == (ours <= limit) and b.derivation.numbers.verdicts[0].passed == (linear <= limit)
    assert "The verdicts differ between the linearised and the non-linear model" in render(b.sheet, ("txt",))["txt"]
