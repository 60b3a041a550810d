"""Cautions that fit the hazard (common practice, no source: a coil's current cannot change at once, so
the voltage across it is L di/dt, which is V_s - R i for a series RL circuit by Kirchhoff's voltage law)."""

from __future__ import annotations

import pytest

from tests import shared_builds


def test_a_switched_coil_states_the_voltage_step_at_each_switch():
    # The valve coil demo: 24 V, 20 ohm, 0.8 H, an extra 60 ohm switched in at 120 ms. Just before the switch
    # L di/dt = 24 - 20 i, just after 24 - 80 i, i being the current at the switch (from the record).
    built = shared_builds.built("valve-coil-economiser")
    record = built.sheet.record
    current = record["intervals"][1]["initial"]["value"]
    assert record["intervals"][1]["initial"]["unit"] == "A"
    note = built.sheet.cautions[-1]
    assert note.startswith("Inductive energy")
    before, after = 24 - 20 * current, 24 - 80 * current
    assert f"steps from {before:.4g} V to {after:.4g} V" in note.replace("−", "-")
    assert "measured at a safe level" not in " ".join(built.sheet.cautions)  # the capacitor wording


def test_a_capacitor_keeps_the_stored_energy_wording():
    built = shared_builds.built("bus-capacitor-bleed-down")
    assert any("Stored electrical energy" in c for c in built.sheet.cautions)
    assert not any("Inductive energy" in c for c in built.sheet.cautions)


@pytest.mark.parametrize("kind", ["series_rl"])
def test_an_unswitched_coil_gets_the_inductive_note_without_numbers(kind):
    cautions = shared_builds.sheet(kind).cautions
    assert any(c.startswith("Inductive energy") and "steps from" not in c for c in cautions)
