"""Hand-check lines: the time constant written out with the input's own values, which a checker can
multiply by hand. The product is checked with pint, independently of calcsheet's arithmetic."""

from __future__ import annotations

import pint
import pytest

from calcsheet.sheet.document import Equation
from tests import shared_builds


@pytest.mark.parametrize("demo", ["bus-capacitor-bleed-down", "flange-cool-down"])
def test_the_time_constant_is_written_out_with_the_input_values(demo):
    built = shared_builds.built(demo)
    numbers = next(s for s in built.sheet.sections if s.key == "numbers")
    line = next(b for b in numbers.blocks if isinstance(b, Equation) and b.label == "time constant")
    by_hand = next(part for part in line.math.text.split(" = ") if "×" in part)
    ureg = pint.UnitRegistry()
    value = ureg(by_hand.replace("×", "*").replace("^", "**")).to("s").magnitude
    assert value == pytest.approx(built.derivation.numbers.time_constant, rel=1e-12)
