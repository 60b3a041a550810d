"""The unit check of the governing equation as a table a checker can redo by hand: each additive term as
stated with the SI units of its factors, the unit of the term and its SI base units, then every function
argument and exponent that must be a pure number and every sum inside a term, and the line that they agree.

The rows are the facts the loader's check found (``Model.units_check``, source/dimensions.py), not a
restatement; this module only chooses how to write each unit and the words around the tables.
"""

from __future__ import annotations

import re

from calcsheet.sheet.as_written import node_latex
from calcsheet.sheet.document import Math, Paragraph, Table
from calcsheet.source import expressions as ex
from calcsheet.source.dimensions import EquationUnits, Factor
from calcsheet.source.units import coherent_si, parse_unit, registry, same_dimension, unit_label

# Coherent SI units with special names a term may reduce to, in the order a name is preferred when two share
# a dimension (a torque in N·m is found first among the parameters' own units; an energy is J only when
# nothing stated matches). SI Brochure, 9th edition, table 4 (from memory).
NAMED = ("V", "A", "W", "N", "Pa", "C", "J", "ohm", "F", "H", "Wb", "T", "S")
_TOKEN = re.compile(r"[^\W\d_]+|\^-?\d+(?:\.\d+)?|[*/()]|\d+")
WHAT = {
    "argument": "argument of {function}",
    "exponent": "exponent",
    "sum": "sum inside a term",
    "root": "under a square root",
}
HEADER = ("Side", "Term", "Units of its factors", "Unit of the term", "In SI base units")
MUST_BE_PURE = ("argument", "exponent")  # the checks whose result must be a pure number


class UnitNames:
    """How a unit of the check is written: a name in the coherent SI unit it was stated in (kohm -> Ω),
    anything else in the first stated or named coherent unit of the same dimension, else in base units."""

    def __init__(self, model):
        ureg = registry()
        unknown, variable = coherent_si(model.unknown.unit), coherent_si(model.variable.unit)
        self.of_name = {p.name: coherent_si(p.quantity.units) for p in model.parameters}
        self.of_name[model.unknown.name] = unknown
        self.of_name[model.variable.name] = variable
        rate = (ureg.Quantity(1, unknown) / ureg.Quantity(1, variable)).units
        self.rate = rate
        stated = [unknown, rate, *self.of_name.values(), variable]
        named = [ureg.Unit(name) for name in NAMED]
        self.candidates = stated + named + [unit / variable for unit in named]  # W/m along a pipe

    def of_node(self, node: ex.Node, si) -> str:
        """The unit of one factor or term: ``si`` is its unit as the check saw it (SI base units)."""
        if isinstance(node, ex.Name) and node.name in self.of_name:
            return unit_label(self.of_name[node.name]) or "1"
        if isinstance(node, ex.Derivative):
            return unit_label(self.rate)
        if isinstance(node, ex.Measured):
            return unit_label(coherent_si(parse_unit(node.unit))) or "1"
        return self.of_unit(si)

    def of_unit(self, si) -> str:
        """``si`` (SI base units) in the first candidate of its dimension that is the same size."""
        ureg = registry()
        if not ureg.Quantity(1, si).dimensionality:
            return unit_label(si) or "1"  # a pure number, or an angle in rad
        for candidate in self.candidates:
            if same_dimension(candidate, si) and abs(ureg.Quantity(1, si).to(candidate).magnitude - 1) < 1e-12:
                return unit_label(candidate)
        return unit_label(si)


BASE = (("[mass]", "kg"), ("[length]", "m"), ("[time]", "s"), ("[current]", "A"), ("[temperature]", "K"))
BASE += (("[substance]", "mol"), ("[luminosity]", "cd"))


def base_units(si) -> str:
    """A unit's dimension in SI base units, as the last column writes it: kg*m^2/(s^3*A), '1' for a pure
    number. Written from pint's dimensionality, so a radian (a pure number in SI) never tells two terms apart."""
    dimensionality = registry().Quantity(1, si).dimensionality
    up, down = [], []
    for dimension, symbol in BASE:
        exponent = dimensionality.get(dimension, 0)
        power = f"{symbol}^{abs(exponent):g}" if abs(exponent) != 1 else symbol
        (up if exponent > 0 else down if exponent < 0 else []).append(power)
    text = "*".join(up) or "1"
    if down:
        text += "/" + (down[0] if len(down) == 1 else "(" + "*".join(down) + ")")
    return text


def unit_math(label: str) -> Math:
    """A unit label ('W/(m^2*K)', 'Ω') set upright for HTML and PDF (W/(m²·K)); the text record keeps it."""
    parts = []
    for token in _TOKEN.findall(label):
        if token.startswith("^"):
            parts.append(f"^{{{token[1:]}}}")
        elif token == "*":
            parts.append(r"\cdot ")
        elif token in "/()" or token.isdigit():
            parts.append(token)
        else:
            parts.append(r"\text{" + token + "}")  # upright in MathML too, where a lone letter in \mathrm is not
    return Math("".join(parts), label)


def factors_text(factors: tuple[Factor, ...], names: UnitNames) -> str:
    """'Ω × F × V/s': each factor's unit in the order written, ' / ' before one divided by."""
    text = ""
    for factor in factors:
        unit = names.of_node(factor.node, factor.unit)
        unit = f"({unit})" if factor.power < 0 and ("/" in unit or "*" in unit) else unit
        if not text:
            text = unit if factor.power > 0 else f"1 / {unit}"
        else:
            text += f" {'×' if factor.power > 0 else '/'} {unit}"
    return text or "1"


def signed_math(node: ex.Node, sign: int) -> Math:
    minus = "-" if sign < 0 else ""
    return Math(minus + node_latex(node, inline=True), minus + ex.render(node))


def dimension_blocks(model) -> list:
    """The unit check as the governing step shows it: a lead-in, the terms' table, the table of checks
    inside the terms (when there are any) and the line that they agree."""
    check: EquationUnits = model.units_check
    names = UnitNames(model)
    rows = tuple(
        (
            term.side,
            signed_math(term.node, term.sign),
            _units_cell(factors_text(term.factors, names)),
            unit_math(names.of_unit(term.unit)),
            unit_math(base_units(term.unit)),
        )
        for term in check.terms
    )
    blocks = [
        Paragraph(
            "The units of each term of the equation as stated, worked out from its factors in SI; the input "
            "passed this check when it was read:"
        ),
        Table(HEADER, rows, "Units of the terms"),
    ]
    if check.inner:
        blocks.append(
            Table(
                ("Checked", "Expression", "Units of its parts", "Result"),
                tuple(_inner_row(inner, names) for inner in check.inner),
                "Units inside the terms",
            )
        )
    blocks.append(Paragraph(agreement(check)))
    return blocks


def _inner_row(inner, names: UnitNames) -> tuple:
    if inner.what == "sum":
        parts = ", ".join(names.of_node(part.node, part.unit) for part in inner.parts)
    else:
        parts = factors_text(inner.parts, names)
    result = names.of_unit(inner.unit)
    pure = not registry().Quantity(1, inner.unit).dimensionality
    return (
        WHAT[inner.what].format(function=inner.function),
        signed_math(inner.node, 1),
        _units_cell(parts),
        f"{result} (dimensionless)" if pure else unit_math(result),
    )


def _units_cell(text: str) -> Math:
    """A cell of units joined by ×, / and commas, each unit set upright."""
    pieces = re.split(r"( × | / |, )", text)
    latex = "".join(
        {" × ": r"\;\times\;", " / ": r"\;/\;", ", ": r",\quad "}.get(piece, None) or unit_math(piece).latex
        for piece in pieces
    )
    return Math(latex, text)


def agreement(check: EquationUnits) -> str:
    """The line that closes the check."""
    n = len(check.terms)
    line = (
        f"The {n} terms agree: each reduces to the same SI base units, so the equation is dimensionally consistent."
        if n > 1
        else "The equation has one term besides zero; its units are shown above."
    )
    if any(inner.what in MUST_BE_PURE for inner in check.inner):
        line += " Every function argument and exponent listed is a pure number, as it must be."
    if any(inner.what == "sum" for inner in check.inner):
        line += " The terms of each sum inside a term share one unit."
    return line


def units_check_record(model) -> dict:
    """The record's ``units_check``: the same facts as the tables, units in ASCII labels."""
    check: EquationUnits = model.units_check
    names = UnitNames(model)
    return {
        "terms": [
            {
                "side": term.side,
                "term": ("-" if term.sign < 0 else "") + ex.render(term.node),
                "factors": [
                    {
                        "factor": ex.render(f.node),
                        "unit": names.of_node(f.node, f.unit),
                        "power": f.power,
                    }
                    for f in term.factors
                ],
                "unit": names.of_unit(term.unit),
                "base_units": base_units(term.unit),
            }
            for term in check.terms
        ],
        "arguments": [_inner_record(inner, names) for inner in check.inner if inner.what in MUST_BE_PURE],
        "sums": [_inner_record(inner, names) for inner in check.inner if inner.what == "sum"],
        "roots": [_inner_record(inner, names) for inner in check.inner if inner.what == "root"],
        "consistent": True,  # the loader refuses an input whose terms disagree
        "base_units": base_units(check.unit),
    }


def _inner_record(inner, names: UnitNames) -> dict:
    return {
        "check": WHAT[inner.what].format(function=inner.function),
        "expression": ex.render(inner.node),
        "unit": names.of_unit(inner.unit),
        "base_units": base_units(inner.unit),
    }
