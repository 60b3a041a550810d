"""Kind linear_reservoir: continuity with an outflow proportional to storage (Q_out = S/k).

Scenarios are invented for these tests. Outside checks name their source beside the check.
"""

from __future__ import annotations

import json
import math

import pytest

from calcsheet.kinds.base import INFO, INVALID, WARNING
from calcsheet.kinds.linear_reservoir import KIND
from calcsheet.pipeline import build_sheet, render

from tests.kinds.helpers import findings

HOUR = 3600.0


def write(tmp_path, name: str, text: str):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


# A lowland storage pond fed by a steady pumped inflow (invented): k = 10 h, inflow 2.5 m^3/s,
# outflow 0.8 m^3/s at the start, so S_0 = k*Q_1 = 36000 s * 0.8 m^3/s = 28800 m^3.
STEADY_INFLOW = """
[sheet]
title = "Storage pond under a steady pumped inflow (demo)"
[model]
kind = "linear_reservoir"
variable = "t [h]"
[parameters]
k = "10 h"
Q_in = "2.5 m^3/s"
[initial]
value = "28800 m^3"
[evaluate]
at = ["6 h", "18 h"]
"""


@pytest.fixture(scope="module")
def steady(tmp_path_factory):
    built = build_sheet(write(tmp_path_factory.mktemp("steady"), "steady", STEADY_INFLOW))
    return built, render(built.sheet, ("txt", "json"))


def test_steady_inflow_end_to_end(steady):
    built, out = steady
    assert KIND.law in out["txt"]
    assert "k*dS/dt + S = k*Q_in" in out["txt"]
    record = json.loads(out["json"])
    assert record["verification"]["passed"] and record["passed"]
    assert record["kind"]["name"] == "linear_reservoir" and record["kind"]["law"] == KIND.law
    assert built.derivation.passed
    # steady state k*Q_in = 36000 s * 2.5 m^3/s (the law with dS/dt = 0; common practice, no source)
    assert any("S = k*Q_in = 90000 m^3" in text for text in findings(built))


def test_outflow_follows_the_linear_reservoir_routing_formula(steady):
    # Hydrology texts, linear reservoir (formula only, no worked number): for an inflow R held constant over
    # a step dt, Q2 = Q1*exp(-dt/k) + R*(1 - exp(-dt/k)), exact. Numbers are this test's own; Q = S/k.
    built, _ = steady
    k, inflow, q_start = 10 * HOUR, 2.5, 0.8
    q_6h, q_18h = (v.y / k for v in built.derivation.numbers.values)

    def routed(q_1: float, dt: float) -> float:
        return q_1 * math.exp(-dt / k) + inflow * (1 - math.exp(-dt / k))

    assert q_6h == pytest.approx(routed(q_start, 6 * HOUR), rel=1e-9)
    assert q_18h == pytest.approx(routed(q_6h, 12 * HOUR), rel=1e-9)  # the formula chained step by step
    assert q_18h == pytest.approx(routed(q_start, 18 * HOUR), rel=1e-9)


def test_recession_halves_the_outflow_in_k_ln_2(tmp_path):
    # Common practice, no source: with no inflow the storage, and so the outflow S/k, decays as exp(-t/k)
    # and halves in k*ln 2. The inflow is left out here, so the kind's default Q_in = 0 applies.
    path = write(
        tmp_path,
        "recession",
        """
[sheet]
title = "Recession of a small catchment after rain stops (demo)"
[model]
kind = "linear_reservoir"
variable = "t [h]"
[parameters]
k = "2.5 d"
[initial]
value = "1200000 m^3"
[evaluate]
reach = ["600000 m^3"]
""",
    )
    built = build_sheet(path)
    derivation = built.derivation
    assert derivation.passed
    k = 2.5 * 86400
    assert derivation.numbers.reach[0].x == pytest.approx(k * math.log(2), rel=1e-7)
    assert derivation.numbers.final_value == pytest.approx(0.0, abs=1e-6)
    assert any("halve every k*ln 2 = 149720 s (41.59 h)" in text for text in findings(built))


def test_checks_without_a_stated_inflow_and_with_a_bad_storage_constant():
    # With [forcing], Q_in is replaced by the forcing's own parameters, so the checks see no Q_in.
    (halving,) = KIND.checks({"k": 1800.0})
    assert halving.values["halving"] == pytest.approx(1800.0 * math.log(2), rel=1e-15)
    assert [n.severity for n in KIND.checks({"k": 0.0, "Q_in": 1.0})] == [INVALID]
    assert [n.severity for n in KIND.checks({"k": 600.0, "Q_in": -1.0})] == [INFO, WARNING]


def test_step_inflow_given_as_forcing(tmp_path):
    # The routing formula above (hydrology texts, linear reservoir; formula only) applied over two steps of
    # constant inflow: 0 m^3/s until 1 h, then 2 m^3/s. Numbers are this test's own.
    path = write(
        tmp_path,
        "step",
        """
[sheet]
title = "Pond fed by a pump switched on after an hour (demo)"
[model]
kind = "linear_reservoir"
variable = "t [h]"
[parameters]
k = "4 h"
[forcing]
form = "step"
after = "2 m^3/s"
at = "1 h"
[initial]
value = "10000 m^3"
[evaluate]
at = ["3 h"]
""",
    )
    k = 4 * HOUR

    def routed(q_1: float, inflow: float, dt: float) -> float:
        return q_1 * math.exp(-dt / k) + inflow * (1 - math.exp(-dt / k))

    q_3h = routed(routed(10000 / k, 0.0, 1 * HOUR), 2.0, 2 * HOUR)
    built = build_sheet(path)
    derivation = built.derivation
    assert derivation.passed
    assert derivation.numbers.values[0].y / k == pytest.approx(q_3h, rel=1e-9)
