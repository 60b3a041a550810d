"""Bounds beside each integral: the integrand's smallest and largest values over the window times its length.

Outside references: the integrand evaluated here from the input's own values (P_R = v^2/R with
v = 800 V exp(-t/(R C)), the closed-form response of a capacitor discharging through a resistor; common
practice, no source), integrated with scipy's quad and sampled with numpy, independently of calcsheet."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import quad

from calcsheet.pipeline import build_sheet
from tests.sheet.sine_rc_input import SINE_RC
from calcsheet.sheet.document import Note, Paragraph

ROOT = Path(__file__).resolve().parents[2]
R, C, V0 = 2200.0, 1100e-6, 800.0  # inputs/discharge-resistor-rating.toml


def _power(t):
    return (V0 * np.exp(-t / (R * C))) ** 2 / R


# A series RC charged by a 1 Hz sinusoid from rest (invented values); i_v = v/R swings both ways, so its
# extremes lie inside the window and the lower bound is negative.
SINE = (
    SINE_RC
    + """[[derived]]
name = "i_v"
expression = "v/R"
unit = "mA"
integral_unit = "mC"
[evaluate]
integrals = ["integral(i_v, 0.2 s, 1.7 s)"]
"""
)


def test_the_discharge_energy_lies_within_bounds_from_the_integrands_extremes():
    built = build_sheet(ROOT / "inputs" / "discharge-resistor-rating.toml")
    record = json.loads(json.dumps(built.sheet.record))
    entry = record["integrals"][0]
    bounds = entry["bounds"]
    exact, _ = quad(_power, 0.0, 30.0, epsabs=0.0, epsrel=1e-12, limit=200)
    assert entry["value"]["value"] == pytest.approx(exact, rel=1e-9)
    samples = _power(np.linspace(0.0, 30.0, 30001))
    assert bounds["largest_integrand"]["value"] == pytest.approx(samples.max(), rel=1e-9)
    assert bounds["smallest_integrand"]["value"] == pytest.approx(samples.min(), rel=1e-9)
    assert bounds["lower"]["value"] <= exact <= bounds["upper"]["value"]
    assert bounds["upper"]["value"] == pytest.approx(samples.max() * 30.0, rel=1e-9)
    assert bounds["within"] is True
    text = [b.text for s in built.sheet.sections for b in s.blocks if isinstance(b, Paragraph)]
    line = next(t for t in text if t.startswith("integral of P_R from 0 s to"))
    assert "bounds: between" in line and "290.9 W × 30" in line


def test_bounds_hold_where_the_integrands_extremes_are_inside_the_window(tmp_path):
    path = tmp_path / "sine.toml"
    path.write_text(SINE, encoding="utf-8")
    built = build_sheet(path)
    entry = json.loads(json.dumps(built.sheet.record))["integrals"][0]
    tau, w = 0.1, 2 * math.pi

    def v(t):  # the response from rest, worked by hand for a first-order lag driven by A sin(w t)
        a = 10.0 / (1 + (w * tau) ** 2)
        return a * (np.sin(w * t) - w * tau * np.cos(w * t) + w * tau * np.exp(-t / tau))

    def i_ma(t):
        return v(t) / 10e3 * 1e3

    exact_mc, _ = quad(i_ma, 0.2, 1.7, epsabs=0.0, epsrel=1e-12, limit=200)
    samples = i_ma(np.linspace(0.2, 1.7, 150001))
    b = entry["bounds"]
    assert entry["value"]["value"] == pytest.approx(exact_mc, rel=1e-8)
    assert samples.min() < 0 < samples.max()
    assert b["smallest_integrand"]["value"] == pytest.approx(samples.min(), rel=1e-6)
    assert b["largest_integrand"]["value"] == pytest.approx(samples.max(), rel=1e-6)
    assert b["lower"]["value"] <= exact_mc <= b["upper"]["value"]
    assert not [x for s in built.sheet.sections for x in s.blocks if isinstance(x, Note) and "outside" in x.text]
