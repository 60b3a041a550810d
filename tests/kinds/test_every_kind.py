"""What every kind must do, checked for each in KIND_MODULES: a new kind gets these tests for nothing.

Its own test file then holds only its outside references (published examples, scipy, sympy).
"""

from __future__ import annotations

import tomllib

import pytest
import sympy as sp
from click.testing import CliRunner

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError
from calcsheet.kinds import KIND_MODULES, kind_named
from calcsheet.kinds.base import SEVERITIES
from calcsheet.pipeline import build_sheet
from calcsheet.source import expressions, symbolic, units

from tests.kinds.helpers import check, new_starter, worded

KINDS = [kind_named(name) for name in KIND_MODULES]
IDS = list(KIND_MODULES)


def _residual(equation_text: str) -> sp.Expr:
    """left - right of an equation, read with the project's own parser (never sympify), with each
    derivative as a symbol of its own."""
    parsed = expressions.parse_equation(equation_text)
    names = expressions.names_in(parsed.left) | expressions.names_in(parsed.right)
    symbols = {name: sp.Symbol(name) for name in names}

    def derivative(node):
        return sp.Symbol(f"d{node.of}/d{node.wrt}")

    return symbolic.to_sympy(parsed.left, symbols, derivative) - symbolic.to_sympy(parsed.right, symbols, derivative)


def _same_equation(first: str, second: str) -> bool:
    """Two equations agree when their residuals differ by a constant nonzero factor (sympy)."""
    a, b = _residual(first), _residual(second)
    if sp.simplify(a - b) == 0:
        return True
    ratio = sp.simplify(a / b)
    return ratio.is_number and ratio != 0


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_the_law_steps_end_in_the_equation(kind):
    # The last law step's plain text is the equation the kind solves, read by our parser and compared in sympy.
    assert kind.law_steps, "a kind derives its equation from its law"
    assert _same_equation(kind.law_steps[-1][1], kind.equation)
    assert all(tex.strip() and text.strip() for tex, text in kind.law_steps)
    if kind.shifted_equation:
        assert len(kind.shifted_law_steps) == len(kind.law_steps)
        assert _same_equation(kind.shifted_law_steps[-1][1], kind.shifted_equation)
        assert not _same_equation(kind.shifted_equation, kind.equation)
        # with the clock started at 0 the shifted law is the law itself
        assert sp.simplify(_residual(kind.shifted_equation).subs(sp.Symbol("t_V"), 0) - _residual(kind.equation)) == 0


def test_the_equation_check_can_fail():
    assert not _same_equation("R*C*dv/dt + v = V_s", "R*C*dv/dt - v = V_s")
    assert _same_equation("R*C*dv/dt + v = V_s", "2*R*C*dv/dt + 2*v = 2*V_s")


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_every_example_and_default_has_its_slots_dimension(kind):
    # Dimensions compared by pint (through source/units.py, the one module that touches it).
    for slot in (kind.unknown, kind.variable, *kind.slots):
        if not slot.unit:
            continue
        expected = units.parse_unit(slot.unit)
        for text in filter(None, (slot.example, slot.default)):
            assert units.same_dimension(units.parse_quantity(text).units, expected), (slot.name, text)


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_the_starter_builds_and_every_criterion_passes(tmp_path, kind):
    path = new_starter(tmp_path, kind.name)
    starter = tomllib.loads(path.read_text(encoding="utf-8"))
    assert starter["sheet"]["title"] == kind.starter.title and starter["model"]["kind"] == kind.name
    assert starter["criteria"], "a starter shows at least one criterion"
    result = check(path)
    assert result.exit_code == 0, result.output
    verdicts = build_sheet(path).derivation.numbers.verdicts
    assert len(verdicts) == len(starter["criteria"]) and all(v.passed for v in verdicts)


def _wrong_unit(slot) -> str:
    """A value of a dimension the slot does not have: a length, or a mass for a slot that is a length."""
    length = units.parse_unit("m")
    return "3 kg" if units.same_dimension(units.parse_unit(slot.unit), length) else "3 m"


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_a_slot_in_the_wrong_dimension_is_one_line_naming_file_and_key(tmp_path, kind):
    path = new_starter(tmp_path, kind.name)
    text = path.read_text(encoding="utf-8")
    for slot in (s for s in kind.slots if s.unit):
        line = next(line for line in text.splitlines() if line.startswith(f"{slot.name} = "))
        path.write_text(text.replace(line, f'{slot.name} = "{_wrong_unit(slot)}"'), encoding="utf-8")
        result = check(path)
        assert result.exit_code == 2, (slot.name, result.output)
        lines = result.output.strip().splitlines()
        assert len(lines) == 1 and str(path) in lines[0] and f"parameters.{slot.name}" in lines[0], result.output
        assert "Traceback" not in result.output


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_kinds_name_prints_the_law_equation_and_every_slot(kind):
    result = CliRunner().invoke(main, ["kinds", kind.name])
    assert result.exit_code == 0, result.output
    assert kind.title in result.output and f"Equation: {kind.equation}" in result.output
    assert kind.law in result.output
    for slot in kind.slots:
        assert f"  {slot.name} [{slot.unit or 'any unit'}]" in result.output


def _trial_values(kind) -> list[dict[str, float]]:
    """The cases checks speak about: the examples in SI; each slot in turn negative, zero, a thousand times
    larger and smaller; each slot equal to another of its unit (a tank's inflow equal to its outflow)."""
    base = {s.name: units.to_si(units.parse_quantity(s.example)) for s in kind.slots}
    trials = [base]
    for name, value in base.items():
        trials += [{**base, name: new} for new in (-abs(value) or -1.0, 0.0, value * 1e3, value / 1e3)]
    for a in kind.slots:
        trials += [{**base, a.name: base[b.name]} for b in kind.slots if b is not a and b.unit == a.unit]
    return trials


@pytest.mark.parametrize("kind", KINDS, ids=IDS)
def test_every_finding_a_check_gives_has_words(kind):
    # Each Note's code has a template in the kind, the template's fields are the Note's data, and no
    # template is left that no case reaches.
    seen = set()
    for values in _trial_values(kind):
        try:
            notes = kind.checks(values)
        except (ArithmeticError, ValueError):  # refused as an input error by kinds/expand.py::kind_checks
            continue
        assert all(note.severity in SEVERITIES for note in notes)
        texts = worded(kind.name, notes)
        assert all(text.strip() and "{" not in text for text in texts)
        seen |= {note.code for note in notes}
        limit = kind.limit(values)
        if limit is not None:  # where the model stops holding: its code's words are "limit.<code>"
            seen.add(f"limit.{limit[1]}")
            assert dict(kind.findings)[f"limit.{limit[1]}"].strip()
    assert seen == set(kind.findings)


def test_an_unknown_finding_code_is_not_worded_silently():
    from calcsheet.kinds.base import info

    with pytest.raises(KeyError):
        worded("series_rc", (info("series_rc.no_such_finding"),))


def test_a_dimension_error_is_an_input_error_when_built_directly(tmp_path):
    # The command line's exit 2 comes from an InputError carrying the file and the key.
    path = new_starter(tmp_path, "series_rc")
    path.write_text(
        path.read_text(encoding="utf-8").replace('C = { value = "470 uF"', 'C = { value = "470 uH"'), encoding="utf-8"
    )
    with pytest.raises(CalcsheetError, match="parameters.C"):
        build_sheet(path)


def test_positive_makes_a_negative_constant_invalid_and_warns_of_zero_where_asked():
    from calcsheet.kinds.base import INVALID, WARNING, positive

    assert positive({"R": 120.0}, "R", "series_rl", zero_allowed=True) == ()
    assert positive({"V_s_amp": 24.0}, "R", "series_rl") == ()  # a slot a forcing replaced is not checked
    (negative,) = positive({"R": -5.0}, "R", "series_rl", zero_allowed=True)
    assert (negative.severity, negative.code, negative.values) == (INVALID, "series_rl.R_negative", {"R": -5.0})
    (zero,) = positive({"R": 0.0}, "R", "series_rl", zero_allowed=True)
    assert (zero.severity, zero.code) == (WARNING, "series_rl.R_zero")
    assert positive({"L": 0.0}, "L", "series_rl") == ()  # zero refused elsewhere (the equation loses its derivative)
