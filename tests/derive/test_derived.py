"""Derived quantities and their integrals over windows (derive/derived.py), against outside references.

Scenarios (invented): a snubber capacitor discharging through its resistor; a solenoid coil driven by a
rectangular voltage pulse; a relay coil switched on. Each reference is named beside its check.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from scipy import integrate, optimize

from calcsheet.cli import main
from calcsheet.derive import derived as derived_module
from calcsheet.derive.derivation import derive
from calcsheet.derive.derived import CLOSED_FORM, QUAD_RTOL, QUADRATURE
from calcsheet.errors import CalcsheetError
from calcsheet.load.loader import load_model
from calcsheet.sheet.compose import compose


def write(tmp_path: Path, model: str, parameters: dict, initial: str, extra: str = "") -> Path:
    lines = ['[sheet]\ntitle = "derived"\n', model, "[parameters]"]
    lines += [f'{name} = "{value}"' for name, value in parameters.items()]
    lines += [f'\n[initial]\nat = "0 s"\nvalue = "{initial}"\n', extra]
    path = tmp_path / "input.toml"
    path.write_text("\n".join(lines), encoding="utf-8")
    return path


RC = '[model]\nequation = "R*C*dv/dt + v = 0"\nunknown = "v [V]"\nvariable = "t [s]"\n'
RC_VALUES = {"R": "47 kohm", "C": "220 uF"}  # tau = 10.34 s
POWER = '[[derived]]\nname = "P_R"\nexpression = "v^2/R"\nunit = "W"\ntext = "resistor power"\nintegral_unit = "J"\n'


def discharge(tmp_path, extra=""):
    # 40 time constants: exp(-80) of the stored energy is left, far below the comparison's tolerance
    asks = '[evaluate]\nat = ["0 s", "5 s"]\nintegrals = ["integral(P_R, 0 s, 413.6 s)"]\n'
    return write(tmp_path, RC, RC_VALUES, "400 V", asks + POWER + extra)


def test_the_energy_a_discharge_dissipates_is_the_energy_stored(tmp_path):
    """Over a window long enough to be infinite, the resistor dissipates all the energy the capacitor held,
    C V0^2 / 2 (textbook identity: the integral of V0^2/R exp(-2t/RC) from 0 to infinity)."""
    d = derive(load_model(discharge(tmp_path)))
    (integral,) = d.numbers.integrals
    assert integral.method == CLOSED_FORM
    assert integral.value == pytest.approx(220e-6 * 400**2 / 2, rel=1e-12)


def test_quadrature_gives_the_same_energy_within_its_own_tolerance(tmp_path, monkeypatch):
    """Where sympy gives no antiderivative, QUADPACK integrates g(x); it must meet the identity to the relative
    tolerance it was asked for, and report an error estimate below that."""
    monkeypatch.setattr(derived_module.DerivedCurve, "antiderivative", lambda self: (None, "no_closed_form"))
    d = derive(load_model(discharge(tmp_path)))
    (integral,) = d.numbers.integrals
    energy = 220e-6 * 400**2 / 2
    assert integral.method == QUADRATURE
    assert integral.value == pytest.approx(energy, rel=10 * QUAD_RTOL)
    assert integral.error <= QUAD_RTOL * energy


def test_values_are_the_expression_on_the_response(tmp_path):
    """P_R = v^2/R at the points asked for, v from the exponential discharge v = V0 exp(-t/RC) (textbook)."""
    d = derive(load_model(discharge(tmp_path)))
    (power,) = d.numbers.derived
    for point, value in power.values:
        v = 400 * math.exp(-point.si / (47e3 * 220e-6))
        assert value == pytest.approx(v**2 / 47e3, rel=1e-12)


# ------------------------------------------------------------------ a coil driven by a pulse, against scipy
COIL = (
    '[model]\nequation = "L*di/dt + R*i = V*(step(t - a) - step(t - a - w))"\nunknown = "i [A]"\nvariable = "t [s]"\n'
)
COIL_VALUES = {"L": "0.8 H", "R": "12 ohm", "V": "24 V", "a": "0.05 s", "w": "0.1 s"}
COIL_DERIVED = (
    '[[derived]]\nname = "P_R"\nexpression = "R*i^2"\nunit = "W"\n'
    '[[derived]]\nname = "v_L"\nexpression = "L*di/dt"\nunit = "V"\n'
    '[[criteria]]\ncheck = "max(P_R, 0 s, 0.5 s) <= 100 W"\n'
    '[[criteria]]\ncheck = "integral(P_R, 0 s, 0.5 s) <= 100 W*s"\n'
    '[evaluate]\nat = ["0.1 s", "0.2 s"]\n'
)


def scipy_coil():
    """The Model's own equation integrated by scipy, independent of the derivation: i(t) as a dense output."""
    L, R, V, a, w = 0.8, 12.0, 24.0, 0.05, 0.1

    pieces = []  # integrated stretch by stretch between the pulse's edges, the forcing constant on each
    for start, end, level in ((0.0, a, 0.0), (a, a + w, V), (a + w, 0.5, 0.0)):
        i0 = pieces[-1].sol(start)[0] if pieces else 0.0
        pieces.append(
            integrate.solve_ivp(
                lambda t, i, level=level: [(level - R * i[0]) / L],
                (start, end),
                [i0],
                rtol=1e-12,
                atol=1e-14,
                dense_output=True,
            )
        )

    def current(t):
        piece = next(p for p in pieces if t <= p.t[-1])
        return float(piece.sol(t)[0])

    return current, (a, a + w)


def test_a_derived_quantity_matches_scipy_on_the_models_own_equation(tmp_path):
    """scipy solve_ivp on the stated equation, then minimize_scalar for the peak power and quad for the energy
    (independent of the derivation); tolerances follow from solve_ivp's rtol 1e-12 and quad's defaults."""
    d = derive(load_model(write(tmp_path, COIL, COIL_VALUES, "0 A", COIL_DERIVED)))
    current, (rise, fall) = scipy_coil()
    power = lambda t: 12.0 * current(t) ** 2  # noqa: E731
    peak = optimize.minimize_scalar(
        lambda t: -power(t), bounds=(rise, fall), method="bounded", options={"xatol": 1e-10}
    )
    largest, energy = (v for v in d.numbers.verdicts)
    # the bounded minimiser stays a tolerance inside its bounds, so the window's ends are compared too
    assert largest.actual == pytest.approx(max(-peak.fun, power(rise), power(fall), power(0.5)), rel=1e-8)
    assert largest.extreme.at == pytest.approx(fall, abs=1e-6)  # a lag driven by a pulse peaks at its end
    reference = sum(integrate.quad(power, u, v, epsabs=0, epsrel=1e-11)[0] for u, v in ((rise, fall), (fall, 0.5)))
    assert energy.actual == pytest.approx(reference, rel=1e-8)
    v_coil = next(dv for dv in d.numbers.derived if dv.quantity.name == "v_L")
    for point, value in v_coil.values:  # L di/dt = V(t) - R i by the stated equation, with scipy's current
        forcing = 24.0 if rise <= point.si < fall else 0.0
        assert value == pytest.approx(forcing - 12.0 * current(point.si), rel=1e-8, abs=1e-9)


# ------------------------------------------------------------------ kinds offer their usual quantities
def test_a_kind_offers_its_quantities_by_name(tmp_path):
    """Series RL switched on from rest: just after the switch the whole source voltage is across the
    inductance, v_L(0) = V_s, and the stored energy is L i^2 / 2 (Kirchhoff's voltage law; textbook)."""
    model = '[model]\nkind = "series_rl"\nunknown = "i [A]"\nvariable = "t [s]"\n'
    extra = (
        '[evaluate]\nat = ["0 s", "1 s"]\n'
        '[[criteria]]\ncheck = "v_L(0 s) <= 30 V"\n[[criteria]]\ncheck = "E_L(1 s) <= 10 J"\n'
    )
    d = derive(load_model(write(tmp_path, model, {"R": "40 ohm", "L": "2 H", "V_s": "24 V"}, "0 A", extra)))
    coil, energy = d.numbers.verdicts
    assert coil.actual == pytest.approx(24.0, rel=1e-12)
    i = 24 / 40 * (1 - math.exp(-40 / 2 * 1.0))
    assert energy.actual == pytest.approx(2 * i**2 / 2, rel=1e-12)
    assert [q.name for q in d.model.derived] == ["v_L", "E_L"]


def test_calcsheet_kinds_lists_the_offers():
    result = CliRunner().invoke(main, ["kinds", "lumped_body"])
    assert result.exit_code == 0
    assert "Q_conv = h*A*(T - T_inf)" in result.output


# ------------------------------------------------------------------ the sheet
def test_the_step_appears_only_when_derived_quantities_are_asked_for(tmp_path):
    plain = compose(derive(load_model(write(tmp_path, RC, RC_VALUES, "400 V"))))
    assert "derived" not in [s.key for s in plain.sections]
    sheet = compose(derive(load_model(discharge(tmp_path))))
    assert "derived" in [s.key for s in sheet.sections]
    assert [k for k in ("derived", "integrals") if k in sheet.record] == ["derived", "integrals"]
    assert sheet.record["integrals"][0]["value"] == {"value": pytest.approx(17.6, rel=1e-9), "unit": "J"}


# ------------------------------------------------------------------ refusals: one line, with the key
def refused(tmp_path, extra: str, values=RC_VALUES, model=RC) -> str:
    path = write(tmp_path, model, values, "400 V", extra)
    with pytest.raises(CalcsheetError) as caught:
        load_model(path)
    message = str(caught.value)
    assert "\n" not in message
    return message


def test_a_dimension_that_does_not_match_the_unit_quotes_the_term(tmp_path):
    message = refused(tmp_path, '[[derived]]\nname = "P_R"\nexpression = "v^2/R + v/R"\nunit = "W"\n')
    assert "derived[1].expression" in message and "'v/R'" in message


def test_a_dimension_mismatch_in_a_single_term_quotes_it(tmp_path):
    message = refused(tmp_path, '[[derived]]\nname = "i"\nexpression = "v*R"\nunit = "A"\n')
    assert "derived[1].expression" in message and "'v*R'" in message and "'A'" in message


def test_a_window_in_the_wrong_unit_is_refused(tmp_path):
    message = refused(tmp_path, POWER + '[[criteria]]\ncheck = "integral(P_R, 0 V, 60 s) <= 5 J"\n')
    assert "criteria[1].check" in message and "0 V" in message


@pytest.mark.parametrize(
    "extra, key, words",
    [
        ('[[derived]]\nname = "P_R"\nunit = "W"\n', "derived[1].expression", "needs an expression"),
        ('[[derived]]\nname = "P_R"\nexpression = "v^2/R"\n', "derived[1].unit", "needs a unit"),
        ('[[derived]]\nname = "P_R"\nexpression = "v^2/R"\nunit = "W"\nscale = "2"\n', "derived[1].scale", "unknown"),
        ('[[derived]]\nname = "R"\nexpression = "v^2/R"\nunit = "W"\n', "derived[1].name", "already"),
        ('[[derived]]\nname = "P"\nexpression = "v^2/Q"\nunit = "W"\n', "derived[1].expression", "'Q'"),
        ('[[derived]]\nname = "P"\nexpression = "v*dv/dx"\nunit = "W"\n', "derived[1].expression", "dv/dt"),
        ('[[derived]]\nname = "P"\nexpression = "v^2/R"\nunit = "W"\nintegral_unit = "W"\n', "integral_unit", "W*s"),
        (POWER + '[[criteria]]\ncheck = "integral(P_R) <= 5 J"\n', "criteria[1].check", "0 s, 60 s"),
        (POWER + '[[criteria]]\ncheck = "integral(v, 0 s, 1 s) <= 5 J"\n', "criteria[1].check", "derived quantity"),
        (POWER + '[[criteria]]\ncheck = "integral(P_R, 0 s, 1 s) <= 5 W"\n', "criteria[1].check", "dimension"),
        (POWER + '[evaluate]\nintegrals = ["P_R 0 s .. 1 s"]\n', "evaluate.integrals[1]", "integral(P_R"),
    ],
)
def test_each_new_syntax_error_is_one_line_with_its_key(tmp_path, extra, key, words):
    message = refused(tmp_path, extra)
    assert key in message and words in message


def test_the_command_line_exits_2_with_one_line(tmp_path):
    path = write(tmp_path, RC, RC_VALUES, "400 V", '[[derived]]\nname = "P_R"\nexpression = "v*R"\nunit = "W"\n')
    result = CliRunner().invoke(main, ["build", str(path), "--out", str(tmp_path / "out"), "--format", "json"])
    assert result.exit_code == 2
    assert "Traceback" not in result.output
    assert not (tmp_path / "out" / "input.json").exists()


def test_values_are_finite_numbers_on_a_grid(tmp_path):
    """The grid form used for scans agrees with the point form (the same quantity, two evaluations)."""
    model = load_model(discharge(tmp_path))
    d = derive(model)
    from calcsheet.derive.derived import DerivedCurve
    from calcsheet.derive.extremes import Piece

    x0 = model.initial_at.si
    piece = Piece(model, d.solution, d.classification, d.response, x0, None, scale=10.34)
    curve = DerivedCurve(model.derived[0], model, d.solution, d.classification, d.response, piece, (0.0, 60.0), 10.34)
    grid = np.linspace(0.0, 60.0, 7)
    assert curve.on_grid(grid) == pytest.approx([curve(float(t)) for t in grid], rel=1e-12)


def test_every_offer_of_every_kind_reads_with_its_unit(tmp_path):
    """Each kind's offers pass the same dimension check as a typed [[derived]] (a property of our own code)."""
    from calcsheet.kinds import KIND_MODULES, kind_named
    from calcsheet.kinds.catalogue import starter_text

    for name in KIND_MODULES:
        kind = kind_named(name)
        tables = "".join(f'\n[[derived]]\nname = "{o.name}"\n' for o in kind.offers)
        path = tmp_path / f"{name}.toml"
        path.write_text(starter_text(name) + tables, encoding="utf-8")
        model = load_model(path)
        assert [q.name for q in model.derived] == [o.name for o in kind.offers]
