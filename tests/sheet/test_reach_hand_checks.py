"""Hand-check lines of the levels reached: the closed-form line of an exponential approach, evaluated here
from its printed numbers with mpmath, must give the tabulated value to the tabulated precision; a level found
by the scan has its method stated, and its bracket is checked against scipy's solve_ivp of the equation.

Outside references: mpmath (the printed line), scipy's solve_ivp (an independent integration), and for the bus
demo the crossing of 680 V exp(-t/(R C)) = 50 V worked with pint and mpmath from the input's own values."""

from __future__ import annotations

import json
import re
from decimal import Decimal
from pathlib import Path

import mpmath
import pint
import pytest
from scipy.integrate import solve_ivp

from calcsheet.pipeline import build_sheet
from tests.sheet.sine_rc_input import SINE_RC
from calcsheet.sheet.document import Equation, Note, Table

ROOT = Path(__file__).resolve().parents[2]
NUMBER = r"\(?(-?[0-9.]+(?:e[+-]?[0-9]+)?)"
QUANTITY = NUMBER + r"(?: [^()\s]+)?\)?"
LINE = re.compile(
    rf"^[tx] = (?:{QUANTITY} \+ )?{QUANTITY} × ln\(\({QUANTITY} - {QUANTITY}\)/\({QUANTITY} - {QUANTITY}\)\) = "
    rf"{NUMBER} ?(\S*)$"
)

# A coil carrying its steady 1.2 A, switched to an economy resistor at 120 ms (invented values): the current
# falls towards 0.3 A and reaches 0.5 A in the second interval, where the line starts from t_k = 120 ms.
SWITCHED = """
[sheet]
title = "Switched coil (test)"
[model]
kind = "series_rl"
unknown = "i [A]"
variable = "t [ms]"
[parameters]
R = "20 ohm"
L = "0.8 H"
V_s = "24 V"
[initial]
at = "0 ms"
value = "1.2 A"
[[switch]]
at = "120 ms"
text = "economy resistor switched in"
parameters = { R = "80 ohm" }
[evaluate]
reach = ["0.5 A"]
"""

# An RC filter driven by a 1 Hz sinusoid from rest (invented values): no single exponential, found by the scan.
SINE = (
    SINE_RC
    + """[evaluate]
reach = ["5 V"]
[[criteria]]
text = "above half the amplitude within 1 s"
check = "reach(5 V) <= 1 s"
"""
)


def _built(tmp_path, name: str, text: str):
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return build_sheet(path)


def _blocks(sheet):
    return [b for s in sheet.sections for b in s.blocks]


def _lines(sheet) -> list[Equation]:
    return [b for b in _blocks(sheet) if isinstance(b, Equation) and b.label.startswith(("reach ", "criterion "))]


def _agrees_to_printed_precision(value, printed: str) -> bool:
    """|value - printed| within half a unit of the printed number's last digit (and a hair for its rounding)."""
    exponent = Decimal(printed).as_tuple().exponent
    half = mpmath.mpf(10) ** exponent / 2
    return abs(value - mpmath.mpf(printed)) <= half * (1 + mpmath.mpf("1e-9"))


def _evaluated(text: str):
    match = LINE.match(text)
    assert match, text
    t_k, tau, y_k, y_inf, y, y_inf_again, shown, unit = match.groups()
    assert y_inf == y_inf_again
    with mpmath.workdps(30):
        value = mpmath.mpf(t_k or 0) + mpmath.mpf(tau) * mpmath.log(
            (mpmath.mpf(y_k) - mpmath.mpf(y_inf)) / (mpmath.mpf(y) - mpmath.mpf(y_inf))
        )
    return value, shown, unit


DEMOS = ["bus-capacitor-bleed-down", "flange-cool-down", "feeder-cable-cool-down", "valve-coil-economiser"]


@pytest.mark.parametrize("demo", DEMOS)
def test_each_closed_form_line_reproduces_the_table(demo):
    built = build_sheet(ROOT / "inputs" / f"{demo}.toml")
    lines = _lines(built.sheet)
    levels = next(b for b in _blocks(built.sheet) if isinstance(b, Table) and b.key == "reach")
    reached = [row for row in levels.rows if row[1] != "not reached"]
    assert len([e for e in lines if e.label.startswith("reach ")]) == len(reached)
    tabulated = {f"reach {row[0]}": row[1] for row in reached}
    for line in lines:
        value, shown, unit = _evaluated(line.math.text)
        assert _agrees_to_printed_precision(value, shown), line.math.text
        if line.label in tabulated:
            assert f"{shown} {unit}".strip() == tabulated[line.label]


def test_a_level_in_a_later_interval_starts_from_the_switch(tmp_path):
    built = _built(tmp_path, "switched", SWITCHED)
    lines = {e.label: e.math.text for e in _lines(built.sheet)}
    assert lines["reach 0.5 A"].startswith("t = 120 ms + ")
    # independent: from 1.2 A at the switch, with 80 ohm and 0.8 H, worked with mpmath
    with mpmath.workdps(30):
        i_switch = mpmath.mpf("1.2")
        tau2, i_inf2 = mpmath.mpf("0.8") / 80, mpmath.mpf(24) / 80
        t = mpmath.mpf("0.12") + tau2 * mpmath.log((i_switch - i_inf2) / (mpmath.mpf("0.5") - i_inf2))
    value, shown, unit = _evaluated(lines["reach 0.5 A"])
    assert unit == "ms" and _agrees_to_printed_precision(value, shown)
    assert _agrees_to_printed_precision(t * 1000, shown)


def test_the_bus_reach_matches_a_crossing_worked_from_the_input():
    built = build_sheet(ROOT / "inputs" / "bus-capacitor-bleed-down.toml")
    ureg = pint.UnitRegistry()
    tau = (ureg("4.7 kohm") * ureg("2200 uF")).to("s").magnitude
    with mpmath.workdps(30):
        t = mpmath.mpf(tau) * mpmath.log(mpmath.mpf(680) / 50)
    line = next(e for e in _lines(built.sheet) if e.label == "reach 50 V").math.text
    _, shown, _ = _evaluated(line)
    assert _agrees_to_printed_precision(t, shown)


def test_a_reach_found_by_the_scan_states_its_method_and_bracket(tmp_path):
    built = _built(tmp_path, "sine", SINE)
    assert not _lines(built.sheet)
    note = next(b for b in _blocks(built.sheet) if isinstance(b, Note) and b.text.startswith("Found numerically"))
    assert "scipy.optimize.brentq" in note.text and "Brackets: 5 V between t = " in note.text
    record = json.loads(json.dumps(built.sheet.record))
    entry = record["reach"][0]
    assert entry["hand_check"]["closed_form"] is None
    a, b = (point["value"] for point in entry["hand_check"]["bracket"])
    assert a < entry["at"]["value"] < b
    assert record["criteria"][0]["hand_check"]["bracket"] == entry["hand_check"]["bracket"]

    # independent: R C dv/dt + v = 10 V sin(2 pi t), integrated by scipy; the level is crossed inside the bracket
    def slope(t, v):
        return [(10 * mpmath.sin(2 * mpmath.pi * t) - v[0]) / 0.1]

    ivp = solve_ivp(slope, (0, b), [0.0], method="DOP853", rtol=1e-12, atol=1e-12, dense_output=True)
    assert (ivp.sol(a)[0] - 5) * (ivp.sol(b)[0] - 5) < 0
    assert ivp.sol(entry["at"]["value"])[0] == pytest.approx(5, abs=1e-6)


@pytest.mark.parametrize("kind", ["pipe_temperature", "linear_reservoir"])
def test_a_starter_whose_line_needs_more_digits_still_gives_the_table(tmp_path, kind):
    # the pipe's length constant to 4 figures gives 240.6 m where the table says 240.5 m: the line carries more
    from calcsheet.kinds.catalogue import starter_text

    built = _built(tmp_path, kind, starter_text(kind))
    lines = _lines(built.sheet)
    assert lines
    for line in lines:
        value, shown, _ = _evaluated(line.math.text)
        assert _agrees_to_printed_precision(value, shown), line.math.text
