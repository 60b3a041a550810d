"""The forcing forms as data: what each form is called, which values it takes and what each value is.

Kept apart from ``forcing.py``, which turns a [forcing] table into an expression with pint and the
parser, so the JSON Schema (``load/schema.py``) reads the forms without loading either.
"""

from __future__ import annotations

from dataclasses import dataclass

FORM_KEY = "form"  # the key of [forcing] that names the form
EXPRESSION = "expression"  # the form written as an expression of the variable, under the key of that name
# What each role's value is measured in, in words (for the schema's descriptions).
DIMENSION_WORDS = {
    "source": "in the unit of the source it drives",
    "variable": "in the variable's unit",
    "rate": "in the source's unit per unit of the variable",
    "frequency": "in cycles per unit of the variable (Hz, 1/min)",
    "angle": "an angle (deg or rad)",
}


@dataclass(frozen=True)
class Role:
    key: str  # the key in [forcing]
    suffix: str  # the parameter becomes <source>_<suffix>
    dimension: str  # "source", "variable", "rate", "frequency" or "angle"
    default: str | None = None
    difference: bool = False  # a swing about a level, not a level: 10 degC here means 10 K


@dataclass(frozen=True)
class Form:
    name: str
    words: str  # how the sheet names it
    roles: tuple[Role, ...]
    template: str  # expression with {<suffix>} for parameter names and {x} for the variable


FORMS = {
    form.name: form
    for form in (
        Form("constant", "a constant", (Role("value", "val", "source"),), "{val}"),
        Form(
            "step",
            "a step",
            (Role("before", "before", "source", "0"), Role("after", "after", "source"), Role("at", "at", "variable")),
            "{before} + ({after} - {before})*step({x} - {at})",
        ),
        Form(
            "ramp",
            "a ramp",
            (
                Role("start", "start", "source", "0"),
                Role("rate", "rate", "rate"),
                Role("from", "from", "variable", "0"),
            ),
            "{start} + {rate}*({x} - {from})*step({x} - {from})",
        ),
        Form(
            "sine",
            "a sinusoid",
            (
                Role("amplitude", "amp", "source", difference=True),
                Role("frequency", "freq", "frequency"),
                Role("phase", "phase", "angle", "0"),
                Role("offset", "offset", "source", "0"),
            ),
            "{offset} + {amp}*sin(2*pi*{freq}*{x} + {phase})",
        ),
        Form(
            "exponential",
            "a decaying exponential",
            (
                Role("initial", "initial", "source"),
                Role("final", "final", "source", "0"),
                Role("time_constant", "tau", "variable"),
            ),
            "{final} + ({initial} - {final})*exp(-({x})/{tau})",
        ),
        Form(
            "pulse",
            "a rectangular pulse",
            (
                Role("base", "base", "source", "0"),
                Role("height", "height", "source", difference=True),
                Role("start", "start", "variable"),
                Role("width", "width", "variable"),
            ),
            "{base} + {height}*(step({x} - {start}) - step({x} - {start} - {width}))",
        ),
    )
}
