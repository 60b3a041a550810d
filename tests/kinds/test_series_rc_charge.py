"""The charge form of the series RC circuit against its voltage form."""

from __future__ import annotations

import pytest

from calcsheet.pipeline import build_sheet

CIRCUIT = """
[sheet]
title = "charge and voltage of one circuit"
[model]
kind = "{kind}"
[parameters]
R = "10 kohm"
C = "470 uF"
V_s = "24 V"
[initial]
value = "{initial}"
[evaluate]
at = ["1 s", "4.7 s", "10 s"]
"""


def test_charge_is_capacitance_times_voltage(tmp_path):
    """q = C v at every instant (definition of capacitance; common practice, no source)."""
    voltage_file = tmp_path / "v.toml"
    charge_file = tmp_path / "q.toml"
    voltage_file.write_text(CIRCUIT.format(kind="series_rc", initial="2 V"), encoding="utf-8")
    charge_file.write_text(CIRCUIT.format(kind="series_rc_charge", initial="0.94 mC"), encoding="utf-8")
    v = build_sheet(voltage_file).derivation
    q = build_sheet(charge_file).derivation
    assert q.passed and v.passed
    for charge, voltage in zip(q.numbers.values, v.numbers.values):
        assert charge.y == pytest.approx(470e-6 * voltage.y, rel=1e-10)
    # tau = R C = 4.7 s for both forms (common practice, no source)
    assert q.numbers.time_constant == pytest.approx(4.7) and v.numbers.time_constant == pytest.approx(4.7)
    assert q.numbers.final_value == pytest.approx(470e-6 * 24)
