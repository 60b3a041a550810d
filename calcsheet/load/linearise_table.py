"""Reads ``[linearise]``: where a non-linear equation is linearised, and how far the sheet lets the
linearised response stray from the non-linear one.

Kept apart from the loader because its two keys have their own small grammar ("h = 1.2 m" or
"steady state"; "2 %"), and every wrong value must come back as one line naming the key.
"""

from __future__ import annotations

import re
from typing import Any, Callable

from calcsheet.errors import InputError, shortened
from calcsheet.model import Declared, LineariseRequest, Point

STEADY_STATE = "steady state"
# The default validity threshold, stated on the sheet when the input gives none: 2 % is a common
# engineering allowance for a linearised model (common practice, no source).
DEFAULT_TOLERANCE, DEFAULT_TOLERANCE_TEXT = 0.02, "2 %"
MAX_TOLERANCE = 0.5  # beyond 50 % a "linearised" result says nothing; refuse rather than pass it
_POINT = re.compile(r"^\s*(?P<name>[A-Za-z][A-Za-z0-9_]*)\s*=\s*(?P<value>\S.*)$", re.DOTALL)
_PERCENT = re.compile(r"^\s*(?P<number>\d+(?:\.\d*)?|\.\d+)\s*%\s*$")


def read_linearise(table: Any, unknown: Declared, point: Callable[[str, Declared, str], Point]) -> LineariseRequest:
    """The request from the raw table; ``point`` reads a quantity like the unknown (the loader's reader)."""
    about = table.get("about")
    if about is None:
        raise InputError(
            f'required: write about = "{unknown.name} = <value>" or about = "{STEADY_STATE}"', "linearise.about"
        )
    if not isinstance(about, str):
        raise InputError('must be text, e.g. "steady state" or an operating point', "linearise.about")
    stated_point = None
    if " ".join(about.lower().split()) != STEADY_STATE:
        match = _POINT.match(about)
        if not match:
            raise InputError(
                f"'{shortened(about)}' is neither \"{STEADY_STATE}\" nor an operating point like "
                f'"{unknown.name} = <value with unit>"',
                "linearise.about",
            )
        if match.group("name") != unknown.name:
            raise InputError(
                f"'{match.group('name')}' is not the unknown; the operating point is a value of {unknown.name}",
                "linearise.about",
            )
        stated_point = point(match.group("value"), unknown, "linearise.about")
    tolerance, text, stated = DEFAULT_TOLERANCE, DEFAULT_TOLERANCE_TEXT, False
    if "tolerance" in table:
        tolerance, text, stated = _tolerance(table["tolerance"]), str(table["tolerance"]).strip(), True
    return LineariseRequest(" ".join(about.split()), stated_point, tolerance, text, stated)


def _tolerance(raw: Any) -> float:
    if not isinstance(raw, str):
        raise InputError('write the tolerance as a percentage in quotes, e.g. "2 %"', "linearise.tolerance")
    match = _PERCENT.match(raw)
    if not match:
        raise InputError(f"'{shortened(raw)}' is not a percentage, e.g. \"2 %\"", "linearise.tolerance")
    share = float(match.group("number")) / 100
    if not 0 < share <= MAX_TOLERANCE:
        raise InputError(
            f"'{shortened(raw)}' must be above 0 % and at most {MAX_TOLERANCE * 100:g} %", "linearise.tolerance"
        )
    return share
