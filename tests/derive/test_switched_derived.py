"""Derived quantities on switched models (derive/switched_derived.py), against outside references.

Scenario (invented): a valve coil pulled in at full voltage, then an economy resistor switched in series; and a
capacitor bled through one resistor, then a second one switched in parallel. Each reference is named beside its
check: scipy solve_ivp on the model's own equation per interval (it shares no code with the derivation), and
the closed forms of the standard RL and RC responses, from memory.
"""

from __future__ import annotations

import math
import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from scipy import integrate

from calcsheet.cli import main
from calcsheet.derive.derived import CLOSED_FORM
from calcsheet.derive.extremes import BEFORE_SWITCH, SWITCH
from calcsheet.derive.piecewise import derive_piecewise
from calcsheet.load.loader import load_model
from calcsheet.sheet.piecewise import compose_piecewise

V_S, R1, R2, L, T_S = 24.0, 20.0, 80.0, 0.8, 0.120
RTOL = 1e-10  # asked of solve_ivp below; the comparisons allow 1e-7, far above what it was asked for

COIL = f"""[sheet]
title = "coil"
[model]
kind = "series_rl"
unknown = "i [A]"
variable = "t [ms]"
[parameters]
R = "{R1:g} ohm"
L = "{L:g} H"
V_s = "{V_S:g} V"
[initial]
at = "0 ms"
value = "0 A"
[[switch]]
at = "{T_S * 1000:g} ms"
parameters = {{ R = "{R2:g} ohm" }}
[evaluate]
at = ["50 ms", "120 ms", "200 ms"]
integrals = ["integral(P_R, 0 ms, 400 ms)", "integral(P_R, 60 ms, 100 ms)"]
[[derived]]
name = "v_L"
[[derived]]
name = "E_L"
[[criteria]]
check = "min(v_L) >= -60 V"
[[criteria]]
check = "max(P_R, 100 ms, 300 ms) <= 150 W"
[[criteria]]
check = "integral(P_R, 0 ms, 400 ms) <= 10 J"
"""


def coil(tmp_path: Path, text: str = COIL) -> Path:
    path = tmp_path / "coil.toml"
    path.write_text(text, encoding="utf-8")
    return path


def current_by_scipy(t: float) -> float:
    """The Model's own equation L di/dt = V_s - R i, R switched at T_S, integrated by solve_ivp."""

    def slope(r):
        return lambda _t, y: [(V_S - r * y[0]) / L, r * y[0] ** 2]  # i, and the energy into R

    first = integrate.solve_ivp(slope(R1), (0, min(t, T_S)), [0.0, 0.0], method="DOP853", rtol=RTOL, atol=1e-14)
    if t <= T_S:
        return first.y[0, -1], first.y[1, -1]
    second = integrate.solve_ivp(slope(R2), (T_S, t), first.y[:, -1], method="DOP853", rtol=RTOL, atol=1e-14)
    return second.y[0, -1], second.y[1, -1]


def energy_by_scipy(a: float, b: float) -> float:
    return current_by_scipy(b)[1] - current_by_scipy(a)[1] if a > 0 else current_by_scipy(b)[1]


def test_values_come_from_the_interval_in_force_against_solve_ivp(tmp_path):
    """v_L = V_s - R i and E_L = L i^2/2 from the integrated current, R the one in force at each point (at the
    switch instant, the interval that starts there)."""
    sd = derive_piecewise(load_model(coil(tmp_path)))
    values = {dv.quantity.name: dict((p.si, v) for p, v in dv.values) for dv in sd.numbers.derived}
    for t in (0.050, 0.120, 0.200):
        i, _ = current_by_scipy(t)
        r = R1 if t < T_S else R2
        assert values["v_L"][t] == pytest.approx(V_S - r * i, rel=1e-7)
        assert values["E_L"][t] == pytest.approx(L * i**2 / 2, rel=1e-7)


def test_the_coil_voltage_just_after_the_switch_is_the_hand_closed_form(tmp_path):
    """Kirchhoff around the loop just after the switch: v_L = V_s - R2 i(t_s), the current carried over from the
    first interval's i(t) = V_s/R1 (1 - exp(-R1 t/L)) (standard RL step response, from memory); just before,
    V_s - R1 i(t_s). Common practice, no source."""
    sd = derive_piecewise(load_model(coil(tmp_path)))
    i_s = V_S / R1 * (1 - math.exp(-R1 * T_S / L))
    (at,) = [a for a in sd.derived_at_switches if a.of == "v_L"]
    assert at.after == pytest.approx(V_S - R2 * i_s, rel=1e-10)
    assert at.before == pytest.approx(V_S - R1 * i_s, rel=1e-10)
    (energy,) = [a for a in sd.derived_at_switches if a.of == "E_L"]
    assert energy.after == pytest.approx(energy.before, rel=1e-10)  # the current, so E_L, cannot jump
    low = sd.numbers.verdicts[0]
    assert low.extreme.method == SWITCH and low.extreme.at == pytest.approx(T_S)
    assert low.actual == pytest.approx(V_S - R2 * i_s, rel=1e-10)
    assert not low.passed  # -67.2 V is below -60 V


def test_an_extreme_just_before_a_switch_is_found(tmp_path):
    """P_R = R i^2 rises to R1 i(t_s)^2 just before the switch; after it the larger R2 gives R2 i(t_s)^2 and then
    the current falls to V_s/R2. Over 100 ms to 300 ms the largest is just after the switch (R2 > R1); the
    smallest over 0 ms to 120 ms ends just before it when the window is asked the other way round."""
    text = COIL.replace('check = "max(P_R, 100 ms, 300 ms) <= 150 W"', 'check = "max(P_R, 0 ms, 120 ms) <= 150 W"')
    sd = derive_piecewise(load_model(coil(tmp_path, text)))
    i_s = V_S / R1 * (1 - math.exp(-R1 * T_S / L))
    found = sd.numbers.verdicts[1]
    assert found.actual == pytest.approx(R1 * i_s**2, rel=1e-10)  # the window ends just before the switch
    assert found.extreme.at == pytest.approx(T_S)
    # With a switch to 5 ohm the power drops at the switch: the largest over 60 ms to 125 ms is just before it
    text = (
        COIL.replace(f'R = "{R2:g} ohm"', 'R = "5 ohm"')
        .replace("150 W", "150 W")
        .replace('check = "max(P_R, 100 ms, 300 ms) <= 150 W"', 'check = "max(P_R, 60 ms, 125 ms) <= 150 W"')
    )
    sd = derive_piecewise(load_model(coil(tmp_path, text)))
    found = sd.numbers.verdicts[1]
    assert found.extreme.method == BEFORE_SWITCH
    assert found.actual == pytest.approx(R1 * i_s**2, rel=1e-10)


def test_integrals_across_the_switch_are_the_sum_of_the_pieces_against_solve_ivp(tmp_path):
    """The energy into R, integrated as a state alongside the current by solve_ivp."""
    sd = derive_piecewise(load_model(coil(tmp_path)))
    across, inside = sd.numbers.integrals[:2]
    assert across.value == pytest.approx(energy_by_scipy(0.0, 0.4), rel=1e-7)
    assert len(across.pieces) == 2 and across.method == CLOSED_FORM
    assert across.value == pytest.approx(sum(p.value for p in across.pieces), rel=1e-14)
    assert inside.value == pytest.approx(energy_by_scipy(0.060, 0.100), rel=1e-7)
    assert inside.pieces == ()
    assert sd.numbers.verdicts[2].passed == (across.value <= 10.0)


def test_the_sheet_and_record_carry_them(tmp_path):
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["build", str(coil(tmp_path)), "--out", str(out), "--format", "json,txt"])
    assert result.exit_code in (0, 1), result.output
    record = json.loads((out / "coil.json").read_text())
    across = record["across"]
    assert [d["name"] for d in across["derived"]] == ["v_L", "E_L", "P_R"]
    assert {a["of"] for a in across["at_switches"]} == {"v_L", "E_L", "P_R"}
    assert across["integrals"][0]["pieces"][0]["to"]["value"] == pytest.approx(120.0)
    assert all("derived" in interval for interval in record["intervals"])
    text = (out / "coil.txt").read_text()
    assert "Derived quantities on both sides of each switch" in text
    assert "The largest stored energy found on this sheet is E_L" in text
    assert compose_piecewise(derive_piecewise(load_model(coil(tmp_path)))).record["across"]["derived"]


def test_worst_case_of_a_switched_derived_criterion(tmp_path):
    """With R2 over 78 to 86.3 ohm, the lowest coil voltage just after the switch is V_s - 86.3 ohm i(t_s) (the
    hand closed form above), found by the margin study's corners."""
    text = COIL.replace(
        f'parameters = {{ R = "{R2:g} ohm" }}',
        'parameters = { R = { value = "80 ohm", min = "78 ohm", max = "86.3 ohm" } }',
    )
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["build", str(coil(tmp_path, text)), "--out", str(out), "--format", "json"])
    assert result.exit_code in (0, 1), result.output
    criterion = json.loads((out / "coil.json").read_text())["across"]["criteria"][0]
    i_s = V_S / R1 * (1 - math.exp(-R1 * T_S / L))
    assert criterion["worst_case"]["value"]["value"] == pytest.approx(V_S - 86.3 * i_s, rel=1e-8)
