"""The one number formatter: every number a sheet, a record line or a message shows is written here.

It sits below every stage (it knows nothing of units or models), so derive's refusals, the kinds'
findings and the sheet all print a number the same way.
"""

from __future__ import annotations

import math

SIGNIFICANT = 4
# relative: far above the round-off of a unit conversion in doubles (60 min is 3600 s / 60 s) or of a root found to
# 1e-12, far below the 4 figures shown, so that no machine's last bit decides a printed form
EXACT_WITHIN = 1e-9


def number(value: float | None, significant: int = SIGNIFICANT) -> str:
    """One rule for every number: ``significant`` figures, fixed-point between 0.001 and 10^6, scientific
    outside, never '-0'; and no zeros that rounding did not make: a value that is a shorter decimal to far more
    figures than are shown (EXACT_WITHIN) is written as that decimal, 60 and not 60.00, 0.42 and not 0.4200,
    1e-4 and not 1.000e-4, so that a value the input wrote as 1 h, 5 K or 0.42 m^2 keeps its form wherever it
    is printed; 2.500 is 2.50004 rounded."""
    if value is None or not math.isfinite(value):
        return "n/a"
    if value == 0:
        return "0"
    magnitude = abs(float(f"{value:.{significant - 1}e}"))  # as rounded: 0.99999 to 3 figures is 1.00, not 1.000
    if 1e-3 <= magnitude < 1e6:
        decimals = max(significant - 1 - math.floor(math.log10(magnitude)), 0)
        text = f"{value:.{decimals}f}"
        if "." in text and abs(float(text) - value) <= EXACT_WITHIN * abs(value):
            text = text.rstrip("0").rstrip(".")
        return "0" if float(text) == 0 else text
    mantissa, exponent = f"{value:.{significant - 1}e}".split("e")
    if abs(float(f"{mantissa}e{exponent}") - value) <= EXACT_WITHIN * abs(value):
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{int(exponent)}"
