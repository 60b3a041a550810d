"""The table of units of the governing equation (sheet/dimensions_table.py), checked against pint itself.

Each term's dimension is worked out again here by evaluating the term's text with pint quantities made by pint
from the parameters' values as written (Python's own `ast` reads the text: none of calcsheet's parser or unit
analysis is used), and compared with the SI base units the table prints, read back by pint. A second test
splits the equation as written into its additive terms, again with `ast`, and finds each in the table.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pint
import pytest

from calcsheet.kinds import KIND_MODULES
from calcsheet.kinds.catalogue import starter_text
from calcsheet.load.loader import load_model
from calcsheet.pipeline import load_sheet
from calcsheet.sheet import document as doc
from calcsheet.sheet.dimensions_table import dimension_blocks, units_check_record

INPUTS = Path(__file__).resolve().parents[2] / "inputs"
DEMOS = sorted(p.stem for p in INPUTS.glob("*.toml") if p.stem != "package")
KINDS = [module.rsplit(".", 1)[-1] for module in KIND_MODULES]
UREG = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)

FREE_EQUATION = """
[sheet]
title = "Heater element under a decaying, oscillating supply (invented for this test)"

[model]
equation = "tau*dy/dt + y = y_a*exp(-t/t_d)*sin(w*t) + y_b*(t/t_r)^n + y_c*log(1 + t/t_r)"
unknown = "y [degC]"
variable = "t [min]"

[parameters]
tau = { value = "90 s" }
y_a = { value = "12 K" }
t_d = { value = "20 min" }
w = { value = "0.3 rad/min" }
y_b = { value = "4 delta_degC" }
t_r = { value = "10 min" }
n = { value = "0.5" }
y_c = { value = "2 K" }

[initial]
at = "0 min"
value = "20 degC"
"""


def _model(source: str, tmp_path: Path):
    if source in DEMOS:  # a sheet of the demo package takes its upstream results: load_sheet builds them
        return load_sheet(INPUTS / f"{source}.toml")
    path = tmp_path / f"{source}.toml"
    path.write_text(FREE_EQUATION if source == "free" else starter_text(source), encoding="utf-8")
    return load_model(path)


def _laws(model):
    """The model's own law and the law of every interval after a switch."""
    return [model] + [switch.law for switch in model.switches]


def _pint_value(text: str) -> pint.Quantity:
    """A value as written ("4.7 kohm", "480 degC"), read by pint alone, in base units (a temperature's offset
    is irrelevant to its dimension)."""
    return UREG.Quantity(text).to_base_units()


class _PintTerm(ast.NodeVisitor):
    """A term's text evaluated with pint quantities: names from the values as written, d<y>/d<x> as y/x."""

    def __init__(self, values: dict[str, pint.Quantity]):
        self.values = values

    def visit_BinOp(self, node):
        left, right = self.visit(node.left), self.visit(node.right)
        ops = {ast.Add: lambda a, b: a + b, ast.Sub: lambda a, b: a - b, ast.Mult: lambda a, b: a * b}
        ops |= {ast.Div: lambda a, b: a / b, ast.Pow: lambda a, b: a ** _number(b)}
        return ops[type(node.op)](left, right)

    def visit_UnaryOp(self, node):
        return -self.visit(node.operand) if isinstance(node.op, ast.USub) else self.visit(node.operand)

    def visit_Name(self, node):
        return self.values[node.id]

    def visit_Constant(self, node):
        return UREG.Quantity(node.value)

    def visit_Call(self, node):
        argument = self.visit(node.args[0])
        if node.func.id == "sqrt":
            return argument**0.5
        assert argument.dimensionless, f"pint finds the argument of {node.func.id} has units {argument.units}"
        return UREG.Quantity(1.0)


def _number(q: pint.Quantity) -> float:
    assert q.dimensionless
    return float(q.to_base_units().magnitude)


def _python(text: str, model) -> str:
    """Our equation notation in Python's: ^ is **, the derivative a name."""
    derivative = f"d{model.unknown.name}/d{model.variable.name}"
    return text.replace(derivative, "_rate").replace("^", "**")


def _pint_values(model, law) -> dict[str, pint.Quantity]:
    unknown = UREG.Quantity(1, model.unknown.unit_text.replace("degC", "kelvin").replace("degF", "kelvin") or "")
    variable = UREG.Quantity(1, model.variable.unit_text or "")
    values = {"pi": UREG.Quantity(3.14159), "_rate": unknown / variable}
    values[model.unknown.name], values[model.variable.name] = unknown, variable
    for p in law.parameters:
        # a value written as an expression ("R*C"): the unit of calcsheet's value, read again by pint
        values[p.name] = UREG.Quantity(1, f"{p.quantity.units:D}") if p.expression else _pint_value(p.text)
    return values


CASES = DEMOS + KINDS + ["free"]


@pytest.mark.parametrize("source", CASES)
def test_each_term_has_the_dimension_pint_finds(source, tmp_path):
    model = _model(source, tmp_path)
    for law in _laws(model):
        values = _pint_values(model, law)
        rows = units_check_record(_as_model(model, law))["terms"]
        for row in rows:
            expected = _PintTerm(values).visit(ast.parse(_python(row["term"], model), mode="eval").body)
            printed = UREG.Quantity(1, row["base_units"] if row["base_units"] != "1" else "")
            assert printed.dimensionality == expected.dimensionality, (source, row)
            assert UREG.Quantity(1, row["unit"].replace("Ω", "ohm")).dimensionality == expected.dimensionality
        first = UREG.Quantity(1, rows[0]["base_units"] if rows[0]["base_units"] != "1" else "")
        assert all(UREG.Quantity(1, r["base_units"]).dimensionality == first.dimensionality for r in rows[1:])
        assert len({r["base_units"] for r in rows}) == 1, "the agreement line says each term reads the same"


def _as_model(model, law):
    """The interval's law on the first model, as derive/piecewise.py puts it in force."""
    from dataclasses import replace

    return model if law is model else replace(model, **law.fields())


def _written_terms(text: str) -> list[str]:
    """The additive terms of one side as written, signed, read by Python's own parser."""
    terms: list[str] = []

    def split(node, sign):
        if isinstance(node, ast.BinOp) and isinstance(node.op, (ast.Add, ast.Sub)):
            split(node.left, sign)
            split(node.right, sign if isinstance(node.op, ast.Add) else -sign)
        elif isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub):
            split(node.operand, -sign)
        elif not (isinstance(node, ast.Constant) and node.value == 0):
            terms.append(("-" if sign < 0 else "") + ast.unparse(node))

    split(ast.parse(text, mode="eval").body, 1)
    return terms


def _same_text(text: str) -> str:
    return re.sub(r"\s+", "", text).replace("**", "^")


@pytest.mark.parametrize("source", CASES)
def test_the_table_lists_every_term_of_the_equation_as_written(source, tmp_path):
    model = _model(source, tmp_path)
    for law in _laws(model):
        shown = _as_model(model, law)
        left, right = (side.strip() for side in _python(law.equation_text, model).split("="))
        expected = [("left", t) for t in _written_terms(left)] + [("right", t) for t in _written_terms(right)]
        derivative = f"d{model.unknown.name}/d{model.variable.name}"
        expected = [(side, _same_text(t.replace("_rate", derivative))) for side, t in expected]
        table = next(b for b in dimension_blocks(shown) if isinstance(b, doc.Table))
        listed = [(row[0], _same_text(row[1].text)) for row in table.rows]
        assert listed == expected
        assert [(r["side"], _same_text(r["term"])) for r in units_check_record(shown)["terms"]] == expected


def test_every_function_argument_and_exponent_of_a_free_equation_is_listed_as_a_pure_number(tmp_path):
    record = units_check_record(_model("free", tmp_path))
    checked = {(a["check"], a["expression"]) for a in record["arguments"]}
    assert checked == {
        ("argument of exp", "-t/t_d"),
        ("argument of sin", "w*t"),
        ("exponent", "n"),
        ("argument of log", "1 + t/t_r"),
    }
    model = _model("free", tmp_path)
    values = _pint_values(model, model)
    for argument in record["arguments"]:
        assert UREG.Quantity(1, argument["base_units"] if argument["base_units"] != "1" else "").dimensionless
        pint_value = _PintTerm(values).visit(ast.parse(_python(argument["expression"], model), mode="eval").body)
        assert pint_value.dimensionless, argument


def test_a_term_with_units_that_disagree_never_reaches_the_table(tmp_path):
    """The table reports the loader's check: an input whose terms disagree is refused before any sheet."""
    from calcsheet.errors import InputError

    path = tmp_path / "bad.toml"
    path.write_text(FREE_EQUATION.replace("y_c*log(1 + t/t_r)", "y_c*log(t)"), encoding="utf-8")
    with pytest.raises(InputError, match="argument of log"):
        load_model(path)
