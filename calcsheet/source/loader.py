"""Read an input file (TOML, format version 1) and build a validated Model.

Every problem is reported as ``file: key: what is wrong``. Independent problems (unknown keys,
bad parameters) are gathered and reported together; later checks need the earlier ones to pass.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path
from typing import Any

import sympy as sp

from calcsheet.errors import CalcsheetError, InputError, ModelRefused
from calcsheet.model import Criterion, Declared, Model, Parameter, Point, SheetInfo, Switch
from calcsheet.source import expressions as ex
from calcsheet.kinds.expand import expand_kind, kind_checks
from calcsheet.source import sheet_keys, units
from calcsheet.source.loader_support import declared_parts
from calcsheet.source.dimensions import check_equation
from calcsheet.source.symbolic import to_sympy

TABLES = {
    "sheet": {"title", "number", "revision", "project", "originator", "purpose", "references", "assumptions",
              "date", "style"},
    "model": {"equation", "unknown", "variable", "kind"},
    "forcing": None,  # keys depend on the form; checked in kinds/forcing.py
    "parameters": None,  # any parameter name
    "initial": {"at", "value"},
    "evaluate": {"at", "reach"},
    "criteria": {"text", "check"},
    "plot": {"to"},
    "signoff": set(sheet_keys.ROLES),
    "revisions": {"revision", "date", "description"},
    "switch": {"at", "text", "parameters", "forcing"},
}
LISTS = {"criteria", "revisions", "switch"}  # written as [[name]]
RESERVED = set(ex.FUNCTIONS) | set(ex.CONSTANTS) | {"reach", "final_value", "time_constant"}
_CHECK = re.compile(
    r"^\s*(?P<subject>[A-Za-z][A-Za-z0-9_]*)\s*(?:\(\s*(?P<argument>[^()]*?)\s*\))?\s*"
    r"(?P<op><=|>=|<|>)\s*(?P<limit>.+?)\s*$"
)


class ErrorList(CalcsheetError):
    """Several independent input errors, shown one per line."""

    def __init__(self, errors: list[InputError]):
        super().__init__("; ".join(str(e) for e in errors))
        self.errors = errors

    def __str__(self) -> str:
        return "\n".join(str(e) for e in self.errors)


def load_model(path: str | Path) -> Model:
    """Read and validate ``path``; raise an InputError or ModelRefused naming file and key."""
    name = str(path)
    try:
        raw = _read_toml(Path(path))
        return _Builder(name, raw).build()
    except ErrorList as errors:
        for error in errors.errors:
            error.located(file=name)
        raise
    except CalcsheetError as error:
        raise error.located(file=name)


def _read_toml(path: Path) -> dict:
    try:
        text = path.read_bytes().decode("utf-8")
    except OSError as exc:
        raise InputError(f"cannot read the file ({exc.strerror or exc})")
    except UnicodeDecodeError:
        raise InputError("the file is not UTF-8 text")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}")


class _Builder:
    """Builds one Model; holds only the file name and the raw tables while it works."""

    def __init__(self, file: str, raw: dict):
        self.file = file
        self.raw = raw
        self.original = raw  # as read: each switched interval starts again from it

    def build(self) -> Model:
        self.check_keys()
        sheet = self.sheet_info()
        model_table = self.table("model", required=True)
        kind_use = None
        if "kind" in model_table:
            model_table, kind_use = self.apply_kind(model_table)
        elif "forcing" in self.raw:
            raise InputError("a [forcing] table goes with a model kind; in an equation, write the "
                             "function of the variable directly", "forcing")
        unknown = self.declared(model_table, "unknown")
        variable = self.declared(model_table, "variable")
        if unknown.name == variable.name:
            raise InputError("the unknown and the variable need different names", "model.variable")
        parameters = self.parameters(unknown, variable)
        equation_text = self.string(model_table, "equation", "model.equation", required=True)
        names = frozenset(p.name for p in parameters)
        equation = _wrap_key(lambda: ex.parse_equation(equation_text, names), "model.equation")
        derivative = sp.Symbol(f"d{unknown.name}/d{variable.name}", real=True)
        lhs, rhs, unused = _wrap_key(
            lambda: _symbolic_equation(equation, unknown, variable, parameters, derivative), "model.equation"
        )
        initial = self.table("initial", required=True)
        initial_at = self.point(initial.get("at", f"0 {variable.unit_text}"), variable, "initial.at")
        initial_value = self.point(self.required(initial, "value", "initial.value"), unknown, "initial.value")
        evaluate = self.table("evaluate")
        evaluate_at = self.points(evaluate, "at", variable)
        for index, point in enumerate(evaluate_at):
            if point.si < initial_at.si:
                raise InputError(f"'{point.text}' lies before the initial point {initial_at.text}; the sheet "
                                 "solves forward from the initial condition", f"evaluate.at[{index + 1}]")
        return Model(
            path=self.file, sheet=sheet, equation_text=equation_text, equation=equation,
            unknown=unknown, variable=variable, derivative=derivative, lhs=lhs, rhs=rhs,
            parameters=parameters, initial_at=initial_at, initial_value=initial_value,
            evaluate_at=evaluate_at,
            reach=self.points(evaluate, "reach", unknown),
            criteria=self.criteria(unknown, variable), unused_parameters=unused,
            plot_to=self.plot_end(initial_at, variable),
            kind=kind_use and kind_checks(kind_use, parameters),
            switches=self.switches(initial_at, variable),
        )

    def switches(self, initial_at: Point, variable: Declared) -> tuple[Switch, ...]:
        """Each [[switch]] becomes the model of the interval that follows it."""
        result, previous = [], initial_at
        for index, entry in enumerate(self.original.get("switch", [])):
            where = f"switch[{index + 1}]"
            at = self.point(self.required(entry, "at", f"{where}.at"), variable, f"{where}.at")
            if at.si <= previous.si:
                raise InputError(f"'{at.text}' must come after {previous.text}", f"{where}.at")
            changes = entry.get("parameters", {})
            if not isinstance(changes, dict):
                raise InputError("must be a table of parameter values", f"{where}.parameters")
            raw = {k: v for k, v in self.original.items() if k not in ("evaluate", "criteria", "plot", "switch")}
            raw["parameters"] = {**self.original.get("parameters", {}), **changes}
            raw["initial"] = {"at": entry["at"], "value": self.original.get("initial", {}).get("value")}
            if "forcing" in entry:
                raw["forcing"] = entry["forcing"]
            try:
                model = _Builder(self.file, raw).build()
            except CalcsheetError as error:
                raise error.located(key=where) if not error.key else _prefixed(error, where)
            text = self.string(entry, "text", f"{where}.text") or f"switch {index + 1}"
            result.append(Switch(at, text, model))
            previous = at
        return tuple(result)

    # ----------------------------------------------------------------- tables and keys
    def check_keys(self) -> None:
        errors = []
        for key, value in self.raw.items():
            if key not in TABLES:
                errors.append(InputError(f"unknown table (expected one of: {', '.join(TABLES)})", key))
                continue
            allowed = TABLES[key]
            if isinstance(value, list) and key not in LISTS:
                errors.append(InputError(f"must be a table: write [{key}], not [[{key}]]", key))
                continue
            entries = value if isinstance(value, list) else [value]
            for index, entry in enumerate(entries):
                where = f"{key}[{index + 1}]" if isinstance(value, list) else key
                if not isinstance(entry, dict):
                    errors.append(InputError("must be a table", where))
                elif allowed is not None:
                    errors.extend(InputError(f"unknown key (expected one of: {', '.join(sorted(allowed))})",
                                             f"{where}.{k}") for k in entry if k not in allowed)
        for key in LISTS:
            if key in self.raw and not isinstance(self.raw[key], list):
                errors.append(InputError(f"write {key} as [[{key}]] tables", key))
        if errors:
            raise ErrorList(errors)

    def table(self, key: str, required: bool = False) -> dict:
        if key not in self.raw:
            if required:
                raise InputError(f"the [{key}] table is missing", key)
            return {}
        return self.raw[key]

    def required(self, table: dict, key: str, where: str) -> Any:
        if key not in table:
            raise InputError("is missing", where)
        return table[key]

    def string(self, table: dict, key: str, where: str, required: bool = False) -> str:
        if key not in table:
            if required:
                raise InputError("is missing", where)
            return ""
        value = table[key]
        if not isinstance(value, str):
            raise InputError(f"must be text in quotes, got {type(value).__name__}", where)
        return value.strip()

    def strings(self, table: dict, key: str, where: str) -> tuple[str, ...]:
        value = table.get(key, [])
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise InputError("must be a list of texts", where)
        return tuple(v.strip() for v in value)

    # ----------------------------------------------------------------------- sections
    def sheet_info(self) -> SheetInfo:
        table = self.table("sheet", required=True)
        text = {k: self.string(table, k, f"sheet.{k}") for k in
                ("number", "revision", "project", "originator", "purpose")}
        title = self.string(table, "title", "sheet.title", required=True)
        if not title:
            raise InputError("must not be empty", "sheet.title")
        return SheetInfo(title=title, references=self.strings(table, "references", "sheet.references"),
                         assumptions=self.strings(table, "assumptions", "sheet.assumptions"),
                         date=sheet_keys.iso_date(table.get("date", ""), "sheet.date"),
                         style=self.style_folder(self.string(table, "style", "sheet.style")),
                         signoff=sheet_keys.signoff(self.raw.get("signoff", {}), text["originator"]),
                         revisions=sheet_keys.revisions(self.raw.get("revisions", [])), **text)

    def style_folder(self, text: str) -> str:
        """A house style folder, relative to the input file; it must exist."""
        if not text:
            return ""
        folder = Path(self.file).parent / text
        if not folder.is_dir():
            raise InputError(f"no style folder '{text}' next to the input (looked for {folder})", "sheet.style")
        return str(folder)

    def declared(self, table: dict, key: str) -> Declared:
        where = f"model.{key}"
        text = self.string(table, key, where, required=True)
        name, unit_text = declared_parts(text, where)
        if name in RESERVED or "__" in name:
            raise InputError(f"'{name}' is a reserved name", where)
        unit = _wrap_key(lambda: units.parse_unit(unit_text), where)
        return Declared(name, unit, unit_text, sp.Symbol(name, real=True))

    def parameters(self, unknown: Declared, variable: Declared) -> tuple[Parameter, ...]:
        table = self.table("parameters")
        errors, result = [], []
        for name, entry in table.items():
            try:
                result.append(self.parameter(name, entry, {unknown.name, variable.name}))
            except InputError as error:
                errors.append(error.located(key=f"parameters.{name}"))
        if errors:
            raise ErrorList(errors)
        return tuple(result)

    def parameter(self, name: str, entry: Any, taken: set[str]) -> Parameter:
        if not ex.NAME_PATTERN.match(name) or "__" in name:
            raise InputError("a parameter name is letters, digits and single underscores, starting with a letter")
        if name in RESERVED or name in taken:
            raise InputError(f"'{name}' is reserved or already the unknown or the variable")
        source = note = ""
        if isinstance(entry, dict):
            unknown_keys = set(entry) - {"value", "source", "note"}
            if unknown_keys:
                raise InputError(f"unknown key '{sorted(unknown_keys)[0]}' (expected value, source, note)")
            if "value" not in entry:
                raise InputError("the table needs a value, e.g. { value = \"47 kohm\" }")
            source, note = (self.string(entry, k, f"parameters.{name}.{k}") for k in ("source", "note"))
            entry = entry["value"]
        quantity = units.parse_quantity(entry)
        text = entry if isinstance(entry, str) else f"{entry:g}"
        si_value = units.to_si(quantity)
        return Parameter(name=name, text=text.strip(), quantity=quantity, si=si_value,
                         si_unit=units.si_unit(quantity.units), symbol=_parameter_symbol(name, si_value),
                         source=source, note=note)

    def point(self, raw: Any, like: Declared, where: str) -> Point:
        quantity = _wrap_key(lambda: units.parse_quantity(raw), where)
        if not units.same_dimension(quantity.units, like.unit):
            raise InputError(
                f"'{raw}' has dimension {units.dimension_text(quantity.units)}, but {like.name} is in "
                f"{like.unit_text or 'no unit'} ({units.dimension_text(like.unit)})", where)
        text = raw if isinstance(raw, str) else f"{raw:g}"
        return Point(text.strip(), quantity, units.to_si(quantity))

    def points(self, table: dict, key: str, like: Declared) -> tuple[Point, ...]:
        raw = table.get(key, [])
        if not isinstance(raw, list):
            raw = [raw]
        return tuple(self.point(item, like, f"evaluate.{key}[{i + 1}]") for i, item in enumerate(raw))

    def apply_kind(self, model_table: dict):
        """Replace a kind by its equation and checked parameters, and remember what to say about it."""
        expanded = expand_kind(model_table, self.raw.get("parameters", {}), self.raw.get("forcing"))
        self.raw = {**self.raw, "parameters": expanded.parameters}
        return expanded.model_table, expanded.use

    def plot_end(self, initial_at: Point, variable: Declared) -> Point | None:
        table = self.table("plot")
        if "to" not in table:
            return None
        end = self.point(table["to"], variable, "plot.to")
        if end.si <= initial_at.si:
            raise InputError(f"'{end.text}' must lie after the initial point {initial_at.text}", "plot.to")
        return end

    def criteria(self, unknown: Declared, variable: Declared) -> tuple[Criterion, ...]:
        result = []
        for index, entry in enumerate(self.raw.get("criteria", [])):
            where = f"criteria[{index + 1}]"
            text = self.string(entry, "text", f"{where}.text")
            check = self.string(entry, "check", f"{where}.check", required=True)
            result.append(self.criterion(text or check, check, unknown, variable, f"{where}.check"))
        return tuple(result)

    def criterion(self, text: str, check: str, unknown: Declared, variable: Declared, where: str) -> Criterion:
        match = _CHECK.match(check)
        if not match:
            raise InputError(f"'{check}' must read like \"{unknown.name}(60 s) <= 50 V\" or "
                             "\"reach(50 V) <= 60 s\"", where)
        subject, argument = match.group("subject"), match.group("argument")
        kinds = {unknown.name: ("value", variable, unknown), "reach": ("reach", unknown, variable),
                 "time_constant": ("time_constant", None, variable), "final_value": ("final_value", None, unknown)}
        if subject not in kinds:
            raise InputError(f"'{subject}' is not {unknown.name}(...), reach(...), time_constant or final_value", where)
        kind, argument_like, limit_like = kinds[subject]
        if (argument_like is None) != (argument is None):
            raise InputError(f"'{subject}' {'takes no' if argument_like is None else 'needs an'} argument", where)
        return Criterion(
            text=text, check=check, subject=kind,
            argument=None if argument is None else self.point(argument, argument_like, where),
            operator=match.group("op"), limit=self.point(match.group("limit"), limit_like, where),
        )


def _parameter_symbol(name: str, value: float) -> sp.Symbol:
    """Sign assumptions from the value keep sympy's results free of needless case splits."""
    if value > 0:
        return sp.Symbol(name, positive=True)
    if value < 0:
        return sp.Symbol(name, negative=True)
    return sp.Symbol(name, real=True)


def _symbolic_equation(equation: ex.Equation, unknown: Declared, variable: Declared,
                       parameters: tuple[Parameter, ...], derivative: sp.Symbol):
    """Refuse what is not a single first-order ODE in the unknown, check units, build sympy."""
    _refuse_wrong_derivatives(equation, unknown, variable)
    known = {p.name: p for p in parameters}
    used = ex.names_in(equation.left) | ex.names_in(equation.right)
    for name in sorted(used - set(known) - {unknown.name, variable.name, "pi"}):
        raise InputError(f"'{name}' is not a parameter, the unknown ({unknown.name}) or the variable "
                         f"({variable.name}); a second unknown would make this more than one ODE")
    si = {p.name: p.si_unit for p in parameters}
    si[unknown.name] = units.si_unit(unknown.unit)
    si[variable.name] = units.si_unit(variable.unit)
    rate = (units.registry().Quantity(1, si[unknown.name]) / units.registry().Quantity(1, si[variable.name])).units
    check_equation(equation, lambda n: si[n] if n in si else units.registry().dimensionless, lambda d: rate)
    symbols = {p.name: p.symbol for p in parameters}
    symbols[unknown.name] = unknown.symbol
    symbols[variable.name] = variable.symbol
    lhs = to_sympy(equation.left, symbols, lambda d: derivative)
    rhs = to_sympy(equation.right, symbols, lambda d: derivative)
    unused = tuple(sorted(set(known) - used))
    return lhs, rhs, unused


def _refuse_wrong_derivatives(equation: ex.Equation, unknown: Declared, variable: Declared) -> None:
    found = ex.derivatives_in(equation.left) + ex.derivatives_in(equation.right)
    if not found:
        raise ModelRefused(f"no derivative d{unknown.name}/d{variable.name} appears: this is an algebraic "
                           "equation, not a differential equation")
    for d in found:
        if d.of != unknown.name:
            raise ModelRefused(f"'{d.text}' is a derivative of '{d.of}', but the unknown is '{unknown.name}': "
                               "more than one unknown needs a system of equations, which this tool does not solve")
        if d.wrt != variable.name:
            raise InputError(f"'{d.text}' is taken with respect to '{d.wrt}', but the variable is '{variable.name}'")
        if d.order != 1:
            raise ModelRefused(f"'{d.text}' is a second derivative: the equation is of order 2, and only "
                               "first-order equations are solved by an integrating factor")


def _prefixed(error, where: str):
    error.key = f"{where}.{error.key}"
    return error


def _wrap_key(thunk, key: str):
    try:
        return thunk()
    except CalcsheetError as error:
        raise error.located(key=key)
