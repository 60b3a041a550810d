"""The one number formatter: every number a sheet, a record line or a message shows is written here.

It sits below every stage (it knows nothing of units or models), so derive's refusals, the kinds'
findings and the sheet all print a number the same way.
"""

from __future__ import annotations

import math

SIGNIFICANT = 4


def number(value: float | None, significant: int = SIGNIFICANT) -> str:
    """Fixed-point between 0.001 and 10^6, scientific outside; never '-0'."""
    if value is None or not math.isfinite(value):
        return "n/a"
    if value == 0:
        return "0"
    magnitude = abs(value)
    if 1e-3 <= magnitude < 1e6:
        decimals = max(significant - 1 - math.floor(math.log10(magnitude)), 0)
        text = f"{value:.{decimals}f}"
        return "0" if float(text) == 0 else text
    mantissa, exponent = f"{value:.{significant - 1}e}".split("e")
    return f"{mantissa}e{int(exponent)}"
