"""Kind radiating_body: Newton cooling plus grey-body radiation, linearised about a temperature.

Scenarios are invented for these tests. Outside references beside each check:
- the radiation coefficient h_rad = 4 eps sigma T0^3 (Incropera and DeWitt, Fundamentals of Heat and Mass
  Transfer, the radiation heat transfer coefficient h_r = eps sigma (Ts + Tsur)(Ts^2 + Tsur^2) of chapter 1,
  which is 4 eps sigma T^3 at Ts = Tsur; edition and equation number from memory);
- the Stefan–Boltzmann constant 5.670374419e-8 W/(m^2 K^4) (CODATA 2018, exact in the 2019 SI).
"""

from __future__ import annotations

import pytest

from calcsheet.kinds.radiating_body import KIND
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import worded

SIGMA = 5.670374419e-8
PLATE = """[sheet]
title = "Press platen cooling (invented)"
[model]
kind = "radiating_body"
unknown = "T [degC]"
variable = "t [min]"
[parameters]
m = "12 kg"
c_p = "490 J/(kg*K)"
A = "0.4 m^2"
h = "6 W/(m^2*K)"
eps = "0.7"
T_inf = "25 degC"
T_sur = "25 degC"
[linearise]
about = "steady state"
tolerance = "5 %"
[initial]
value = "60 degC"
[evaluate]
at = ["30 min"]
"""


def test_time_constant_uses_the_radiation_coefficient(tmp_path):
    path = tmp_path / "platen.toml"
    path.write_text(PLATE, encoding="utf-8")
    built = build_sheet(path)
    d = built.derivation
    t0 = 298.15
    assert d.linearisation.point.si == pytest.approx(t0, rel=1e-12)  # T_inf = T_sur: it settles there
    h_rad = 4 * 0.7 * SIGMA * t0**3  # Incropera and DeWitt (from memory)
    assert d.numbers.time_constant == pytest.approx(12 * 490 / ((6 + h_rad) * 0.4), rel=1e-10)
    assert "Hot surfaces" in render(built.sheet, ("txt",))["txt"]  # 60 degC is above the touch limit


def test_the_kind_states_the_radiation_coefficient():
    values = {"m": 1.0, "c_p": 1.0, "A": 1.0, "h": 5.0, "eps": 0.5, "T_inf": 300.0, "T_sur": 400.0, "sigma": SIGMA}
    (note,) = KIND.checks({**values, "Q": 0.0})
    assert note.values["h_rad"] == pytest.approx(4 * 0.5 * SIGMA * 400.0**3, rel=1e-12)
    assert "4*eps*sigma*T_sur^3" in worded("radiating_body", (note,))[0]
