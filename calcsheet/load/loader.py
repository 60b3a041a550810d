"""Read an input file (TOML, format version 1) and build a validated Model.

Every problem is reported as ``file: key: what is wrong`` (a TOML syntax error as
``file:LINE:COLUMN: what is wrong``). Every section that does not depend on another is checked,
and all their problems are reported together, one per line; a check that needs an earlier part
(the equation needs its parameters) runs only once that part has passed.
"""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path
from typing import Any

import sympy as sp

from calcsheet.errors import CalcsheetError, ErrorList, InputError, ModelRefused, key_part, shortened
from calcsheet.input_keys import PARAMETER_KEYS, RANGE_KEYS, SHEET_TABLES, names
from calcsheet.formatting import number as _number
from calcsheet.kinds.expand import expand_kind, kind_checks, worked_slot_dimensions
from calcsheet.load import sheet_keys
from calcsheet.load.derived import read_derived
from calcsheet.load.linearise_table import read_linearise
from calcsheet.load.overrides import apply_overrides
from calcsheet.load.sweep_range import Vary, apply_sweep_range
from calcsheet.load.toml_file import read_toml, read_toml_text
from calcsheet.model import (
    Criterion,
    Declared,
    DerivedQuantity,
    ExtremeRequest,
    IntegralRequest,
    IntervalLaw,
    Model,
    Parameter,
    Point,
    SheetInfo,
    Switch,
    Window,
)
from calcsheet.load.package_values import fill_package_values
from calcsheet.source import expressions as ex
from calcsheet.source import units
from calcsheet.source import value_expressions as values
from calcsheet.source.declared import declared_parts
from calcsheet.source.dimensions import check_equation, refuse_absolute_sums
from calcsheet.source.singular import Values, check_equation_values
from calcsheet.source.symbolic import to_sympy
from calcsheet.source.text_rules import check_raw, toml_kind
from calcsheet.source.tolerances import read_range
from calcsheet.subjects import (
    CONDITION_SUBJECT,
    INTEGRAL,
    SUBJECTS,
    UNKNOWN,
    VARIABLE,
    WINDOW,
    Subject,
    reserved_words,
    spellings,
    written_subject,
)

# The tables and keys an input may hold (calcsheet/input_keys.py, which the JSON Schema reads too); None: the
# keys are the user's names ([parameters]) or depend on the form ([forcing], checked in kinds/forcing.py).
TABLES = {table.name: None if table.keys is None else set(table.key_names) for table in SHEET_TABLES}
LISTS = {table.name for table in SHEET_TABLES if table.listed}  # written as [[name]]
RESERVED = set(ex.FUNCTIONS) | set(ex.CONSTANTS) | reserved_words()
# Applied to stripped text: one optional group between single runs of spaces, so it is linear.
_CHECK = re.compile(
    r"(?P<subject>[A-Za-z][A-Za-z0-9_]*)\s*(?:\((?P<argument>[^()]*)\)\s*)?"
    r"(?P<op><=|>=|<|>)(?P<limit>.*)",
    re.DOTALL,
)
_SUBJECT = re.compile(r"(?P<subject>[A-Za-z][A-Za-z0-9_]*)\s*(?:\((?P<argument>[^()]*)\))?")
_SECOND_COMPARISON = re.compile(r"[<>=]|\b(?:and|or)\b")
# A condition over a window: "T <= 90 degC for t in 0 s .. 10 min" or, to the end of the range, "for t >= 5 s".
_FOR = re.compile(r"\s+for\s+")
_FOR_CLAUSE = re.compile(
    r"(?P<name>[A-Za-z][A-Za-z0-9_]*)\s*(?:in\s+(?P<start>[^.]+?)\s*\.\.\s*(?P<end>[^.].*)"
    r"|>=\s*(?P<open>.+))",
    re.DOTALL,
)
# [evaluate] extremes: "max", "min 0 s .. 60 s", "max from 5 s"
_EXTREME = re.compile(
    r"(?P<kind>max|min)(?:\s+(?:from\s+(?P<open>.+)|(?P<start>[^.]+?)\s*\.\.\s*(?P<end>[^.].*)))?", re.DOTALL
)
# [evaluate] integrals: "integral(P_R, 0 s, 60 s)"
_INTEGRAL = re.compile(r"integral\s*\((?P<argument>[^()]*)\)", re.DOTALL)
MAX_STYLE_NAME = 200


class _Errors:
    """The errors of independent sections, gathered so all are reported; one per key, the first found."""

    def __init__(self):
        self.items: list[CalcsheetError] = []

    def add(self, error: CalcsheetError) -> None:
        for item in getattr(error, "errors", [error]):
            if not any(_same_place(item.key, seen.key) for seen in self.items):
                self.items.append(item)

    def attempt(self, thunk, default=None):
        """The value of ``thunk()``, or ``default`` with its error kept."""
        try:
            return thunk()
        except CalcsheetError as error:
            self.add(error)
            return default

    def raise_any(self) -> None:
        if len(self.items) == 1:
            raise self.items[0]
        if self.items:
            raise ErrorList(list(self.items))


def _same_place(a: str, b: str) -> bool:
    """One key inside the other (parameters.R and parameters.R.value): report only the first."""
    if not a or not b:
        return False
    short, long = sorted((a, b), key=len)
    return long == short or long.startswith(short + ".") or long.startswith(short + "[")


def load_model(
    path: str | Path, overrides: tuple[tuple[str, str], ...] = (), results=None, text: str | None = None
) -> Model:
    """Read and validate ``path``; raise an InputError or ModelRefused naming file and key. ``overrides``:
    (name, value) pairs from ``--set`` that replace parameters' values before anything is checked.
    A sheet of a package takes design-basis values and other sheets' ``results`` (load/package_values.py)
    before the overrides and every check. ``text``: the input's TOML given directly (the Python API), read
    as if it were the file ``path`` (its style folder and package are looked for beside that name)."""
    name = str(path)
    try:
        raw = read_toml(Path(path)) if text is None else read_toml_text(text)
        problems = check_raw(raw)
        raw = fill_package_values(Path(path), raw, results or {})
        raw, replaced = apply_overrides(raw, overrides)
        model = _Builder(name, raw, text_problems=problems).build()
        return replace(model, overrides=replaced) if replaced else model
    except CalcsheetError as error:
        raise error.located(file=name)
    except RecursionError:  # a defect of ours if it happens: the parsers bound their nesting
        raise InputError("the input nests too deeply to be read", file=name) from None


def load_for_sweep(
    path: str | Path, overrides: tuple[tuple[str, str], ...], vary: tuple[str, str, str], log: bool, results=None
) -> tuple[Model, Vary]:
    """The Model for a sweep (``--set`` applied, the varied parameter's range covering the sweep), and the
    sweep's range; refusals as load_model's."""
    name = str(path)
    try:
        raw = read_toml(Path(path))
        problems = check_raw(raw)
        raw = fill_package_values(Path(path), raw, results or {})
        raw, replaced = apply_overrides(raw, overrides)
        raw, found = apply_sweep_range(raw, vary, log, tuple(o.name for o in replaced))
        model = _Builder(name, raw, text_problems=problems).build()
        return (replace(model, overrides=replaced) if replaced else model), found
    except CalcsheetError as error:
        raise error.located(file=name)
    except RecursionError:
        raise InputError("the input nests too deeply to be read", file=name) from None


def read_subject(model: Model, text: str, where: str) -> Criterion:
    """A quantity named as a check names its subject ("v(60 s)", "max(T)", "reach(50 degC)", "time_constant"),
    as a Criterion with no limit (the form derive evaluates a quantity in)."""
    match = _SUBJECT.fullmatch(text.strip())
    if match is None:
        raise InputError(
            f"'{shortened(text)}' must name a quantity as a check does, e.g. \"{model.unknown.name}(60 s)\", "
            f'"reach(50 V)", "max({model.unknown.name})" or "time_constant"',
            where,
            file=model.path,
        )
    builder = _Builder(model.path, {})
    try:
        found, argument, window, of, _ = builder.subject(
            match.group("subject"),
            match.group("argument"),
            model.unknown,
            model.variable,
            model.initial_at,
            where,
            {q.name: q for q in model.derived},
        )
    except CalcsheetError as error:
        raise error.located(file=model.path)
    return Criterion(text.strip(), text.strip(), found.name, argument, "<=", Point("", None, 0.0), window=window, of=of)


class _Builder:
    """Builds one Model; holds only the file name and the raw tables while it works."""

    def __init__(self, file: str, raw: dict, start_source: str = "", text_problems: list | None = None):
        self.file = file
        self.raw = raw
        self.text_problems = text_problems or []  # characters and sizes, found in the whole file once
        self.original = raw  # as read, before a kind is expanded
        self.start_source = start_source  # what starts this interval: the initial point, or switch N

    def build(self) -> Model:
        errors = _Errors()
        for problem in self.text_problems:
            errors.add(problem)
        errors.attempt(self.check_keys)
        if not self.tables_readable():
            errors.raise_any()  # a table written as a list, or a value where a table belongs: stop here
        sheet = errors.attempt(self.sheet_info)
        model_table, kind_use = errors.attempt(self.model_table, (None, None))
        unknown = variable = None
        if model_table is not None:
            unknown = errors.attempt(lambda: self.declared(model_table, "unknown"))
            variable = errors.attempt(lambda: self.declared(model_table, "variable"))
            if unknown and variable and unknown.name == variable.name:
                errors.add(InputError("the unknown and the variable need different names", "model.variable"))
                unknown = variable = None
        parameters = errors.attempt(lambda: self.parameters({d.name for d in (unknown, variable) if d}))
        if kind_use is not None and parameters is not None:  # a slot worked out in a wrong dimension: no equation
            if errors.attempt(lambda: worked_slot_dimensions(kind_use, parameters) or True) is None:
                parameters = None
        equation_text = equation = None
        if model_table is not None:
            equation_text = errors.attempt(
                lambda: self.string(model_table, "equation", "model.equation", required=True)
            )
        initial = errors.attempt(lambda: self.table("initial", required=True))
        initial_at = initial_value = None
        if initial is not None and variable:
            initial_at = errors.attempt(
                lambda: self.point(initial.get("at", f"0 {variable.unit_text}"), variable, "initial.at")
            )
        if initial is not None and unknown:
            initial_value = errors.attempt(
                lambda: self.point(self.required(initial, "value", "initial.value"), unknown, "initial.value")
            )
        if equation_text is not None and unknown and variable:
            names = frozenset(p.name for p in parameters or ()) | frozenset(self.table("parameters"))
            equation = errors.attempt(
                lambda: _wrap_key(lambda: ex.parse_equation(equation_text, names), "model.equation")
            )
        symbolic = None
        if equation is not None and unknown and variable and parameters is not None:
            derivative = sp.Symbol(f"d{unknown.name}/d{variable.name}", real=True)
            symbolic = errors.attempt(
                lambda: _wrap_key(
                    lambda: _symbolic_equation(equation, unknown, variable, parameters, derivative, initial_at),
                    "model.equation",
                )
            )
        declared_derived, derived = (), {}
        if symbolic is not None and ("derived" in self.raw or kind_use is not None):
            declared_derived, derived = errors.attempt(
                lambda: self.derived(unknown, variable, parameters, derivative, kind_use), ((), {})
            )
        evaluate = self.table("evaluate")
        evaluate_at = errors.attempt(lambda: self.points(evaluate, "at", variable), ()) if variable else ()
        for index, point in enumerate(evaluate_at if initial_at else ()):
            if point.si < initial_at.si:
                errors.add(
                    InputError(
                        f"'{point.text}' lies before the initial point {initial_at.text}; the "
                        "sheet solves forward from the initial condition",
                        f"evaluate.at[{index + 1}]",
                    )
                )
        reach = errors.attempt(lambda: self.points(evaluate, "reach", unknown), ()) if unknown else ()
        extremes = errors.attempt(lambda: self.extremes(evaluate, variable, initial_at), ()) if variable else ()
        criteria = (
            errors.attempt(lambda: self.criteria(unknown, variable, initial_at, derived, parameters), ())
            if unknown and variable
            else ()
        )
        integrals = (
            errors.attempt(lambda: self.integrals(evaluate, unknown, variable, initial_at, derived), ())
            if unknown and variable
            else ()
        )
        plot_to = errors.attempt(lambda: self.plot_end(initial_at, variable)) if variable else None
        linearise = None
        if "linearise" in self.raw and unknown:
            linearise = errors.attempt(lambda: read_linearise(self.raw["linearise"], unknown, self.point))
            if self.original.get("switch"):
                errors.add(
                    InputError("a switched model cannot be linearised; remove [[switch]] or [linearise]", "linearise")
                )
        kind = None
        if kind_use is not None and parameters is not None:
            kind = errors.attempt(lambda: kind_checks(kind_use, parameters))
        if kind_use is not None:
            _forcing_keys(errors, self.raw.get("forcing"), kind_use.name)
        errors.raise_any()
        if symbolic is None:  # every part above reports its own error; this is a guard only
            raise InputError("the model could not be read", "model")
        lhs, rhs, unused, units_check = symbolic
        in_limits = set().union(*(ex.names_in(c.limit_node) for c in criteria if c.limit_node is not None))
        unused = tuple(name for name in unused if name not in in_limits)
        model = Model(
            path=self.file,
            sheet=sheet,
            equation_text=equation_text,
            equation=equation,
            unknown=unknown,
            variable=variable,
            derivative=derivative,
            lhs=lhs,
            rhs=rhs,
            parameters=parameters,
            initial_at=initial_at,
            initial_value=initial_value,
            evaluate_at=evaluate_at,
            reach=reach,
            extremes=extremes,
            criteria=criteria,
            derived=_used_derived(declared_derived, derived, criteria, integrals),
            integrals=integrals,
            unused_parameters=unused,
            plot_to=plot_to,
            kind=kind,
            linearise=linearise,
            units_check=units_check,
        )
        return replace(model, switches=self.switches(model)) if self.original.get("switch") else model

    def switches(self, first: Model) -> tuple[Switch, ...]:
        """Each [[switch]] becomes the model of the interval that follows it.

        A switch starts from the parameters and forcing in force just before it (not from the input's),
        changes only what it names, and carries over every state the kind's law holds besides the
        unknown (a tank's volume); the unknown itself carries over in the derivation.
        """
        result, previous = [], first
        parameters, forcing = dict(self.original.get("parameters", {})), self.original.get("forcing")
        for index, entry in enumerate(self.original.get("switch", [])):
            where = f"switch[{index + 1}]"
            at = self.point(self.required(entry, "at", f"{where}.at"), first.variable, f"{where}.at")
            if at.si <= previous.initial_at.si:
                raise InputError(f"'{at.text}' must come after {previous.initial_at.text}", f"{where}.at")
            changes = self.switch_changes(entry, first, where)
            carried = _carried_states(previous, at)
            for name in sorted(set(changes) & set(carried)):
                raise InputError(
                    f"{name} is carried over the switch from the state reached there; it cannot be set at a switch",
                    f"{where}.parameters.{name}",
                )
            parameters = {**parameters, **changes, **{name: value for name, (value, _) in carried.items()}}
            forcing = entry.get("forcing", forcing)
            raw = {
                k: v
                for k, v in self.original.items()
                if k not in ("evaluate", "criteria", "plot", "switch", "forcing", "derived")
            }
            raw["parameters"] = parameters
            raw["initial"] = {"at": entry["at"], "value": self.original.get("initial", {}).get("value")}
            if forcing is not None:
                raw["forcing"] = forcing
            try:  # checked as a whole Model, with the input's initial value; only its law is kept
                model = _Builder(self.file, raw, start_source=f"switch {index + 1}").build()
            except CalcsheetError as error:
                raise _prefixed(error, where)
            text = self.string(entry, "text", f"{where}.text") or f"switch {index + 1}"
            states = tuple((name, shown) for name, (_, shown) in carried.items())
            result.append(Switch(at, text, _law_of(model), states))
            previous = model
        return tuple(result)

    def switch_changes(self, entry: dict, first: Model, where: str) -> dict:
        """The parameters a switch sets: each must name a parameter of the model, stated as in [parameters]."""
        changes = entry.get("parameters", {})
        if not isinstance(changes, dict):
            raise InputError(
                'must be a table of parameter values, e.g. parameters = { R = "80 ohm" }', f"{where}.parameters"
            )
        known = _switchable(first, self.original.get("parameters", {}))
        errors = []
        for name, value in changes.items():
            key = f"{where}.parameters.{name}"
            if name not in known:
                errors.append(
                    InputError(
                        f"'{name}' is not a parameter of this model (its parameters: {', '.join(sorted(known))})", key
                    )
                )
            elif not (isinstance(value, str) or (isinstance(value, dict) and "value" in value)):
                errors.append(
                    InputError(
                        'state the new value as text with its unit, "80 ohm", or as a '
                        'table { value = "80 ohm", source = "..." }',
                        key,
                    )
                )
        if errors:
            raise ErrorList(errors)
        return changes

    # ----------------------------------------------------------------- tables and keys
    def tables_readable(self) -> bool:
        """Whether every known table is a table ([[name]] ones a list of tables), so sections can be read."""
        for key, value in self.raw.items():
            if key not in TABLES:
                continue
            entries = value if key in LISTS else [value]
            if not isinstance(entries, list) or not all(isinstance(entry, dict) for entry in entries):
                return False
        return True

    def model_table(self):
        """The [model] table, with a kind expanded into its equation and parameters."""
        model_table = self.table("model", required=True)
        kind_use = None
        if "kind" in model_table:
            model_table, kind_use = self.apply_kind(model_table)
        elif "forcing" in self.raw:
            raise InputError(
                "a [forcing] table goes with a model kind; in an equation, write the function of the variable directly",
                "forcing",
            )
        return model_table, kind_use

    def check_keys(self) -> None:
        errors = []
        for key, value in self.raw.items():
            if key not in TABLES:
                errors.append(InputError(f"unknown table (expected one of: {', '.join(TABLES)})", key_part(key)))
                continue
            allowed = TABLES[key]
            if isinstance(value, list) and key not in LISTS:
                errors.append(InputError(f"must be a table: write [{key}], not [[{key}]]", key))
                continue
            entries = value if isinstance(value, list) else [value]
            for index, entry in enumerate(entries):
                where = f"{key}[{index + 1}]" if isinstance(value, list) else key
                if not isinstance(entry, dict):
                    errors.append(InputError(f"must be a table, but found {toml_kind(entry)}", where))
                elif allowed is not None:
                    errors.extend(
                        InputError(
                            f"unknown key (expected one of: {', '.join(sorted(allowed))})", f"{where}.{key_part(k)}"
                        )
                        for k in entry
                        if k not in allowed
                    )
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
            raise InputError(f"must be text in quotes, but found {toml_kind(value)}", where)
        return value.strip()

    def strings(self, table: dict, key: str, where: str) -> tuple[str, ...]:
        value = table.get(key, [])
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list):
            raise InputError(f"must be a list of texts in quotes, but found {toml_kind(value)}", where)
        for index, item in enumerate(value):
            if not isinstance(item, str):
                raise InputError(f"must be a list of texts in quotes, but item {index + 1} is {toml_kind(item)}", where)
        return tuple(v.strip() for v in value)

    # ----------------------------------------------------------------------- sections
    def sheet_info(self) -> SheetInfo:
        """[sheet], [signoff] and [[revisions]]: each key is checked, and every problem is reported."""
        table = self.table("sheet", required=True)
        errors = _Errors()
        text = {
            k: errors.attempt(lambda k=k: self.string(table, k, f"sheet.{k}"), "")
            for k in ("number", "revision", "project", "originator", "purpose")
        }
        title = errors.attempt(lambda: self.string(table, "title", "sheet.title", required=True), "")
        if not title and "title" in table and isinstance(table["title"], str):
            errors.add(InputError("must not be empty", "sheet.title"))
        info = dict(
            references=errors.attempt(lambda: self.strings(table, "references", "sheet.references"), ()),
            assumptions=errors.attempt(lambda: self.strings(table, "assumptions", "sheet.assumptions"), ()),
            date=errors.attempt(lambda: sheet_keys.iso_date(table.get("date", ""), "sheet.date"), ""),
            style=errors.attempt(lambda: self.style_folder(self.string(table, "style", "sheet.style")), ""),
            signoff=errors.attempt(lambda: sheet_keys.signoff(self.raw.get("signoff", {}), text["originator"]), ()),
            revisions=errors.attempt(lambda: sheet_keys.revisions(self.raw.get("revisions", [])), ()),
            status=errors.attempt(lambda: sheet_keys.issue_status(table.get("status", "")), ""),
        )
        errors.attempt(lambda: sheet_keys.check_consistency(text["revision"], info["revisions"], info["signoff"]))
        errors.raise_any()
        return SheetInfo(title=title, **info, **text)

    def style_folder(self, text: str) -> str:
        """A house style folder named by the input: inside the input file's folder tree, symlinks resolved.

        A received input must not point its build at any folder on the machine; the command line's
        --style may point anywhere, because the person building chose it.
        """
        if not text:
            return ""
        if len(text) > MAX_STYLE_NAME:
            raise InputError(f"a style folder name of {len(text)} characters; at most {MAX_STYLE_NAME}", "sheet.style")
        home = Path(self.file).parent
        try:
            base = home.resolve()
            folder = (home / text).resolve()
            inside = not Path(text).is_absolute() and folder.is_relative_to(base)
            found = inside and folder.is_dir()
        except (OSError, RuntimeError, ValueError) as exc:  # a name too long for the system, a symlink loop
            raise InputError(
                f"the style folder '{text}' cannot be looked up ({getattr(exc, 'strerror', '') or exc})", "sheet.style"
            ) from None
        if not inside:
            raise InputError(
                f"the style folder '{text}' lies outside the input file's folder ({base}); a style "
                "named in an input must be inside that folder tree; give --style on the command "
                "line to use a style kept elsewhere",
                "sheet.style",
            )
        if not found:
            raise InputError(f"no style folder '{text}' next to the input (looked for {home / text})", "sheet.style")
        return str(home / text)

    def declared(self, table: dict, key: str) -> Declared:
        where = f"model.{key}"
        text = self.string(table, key, where, required=True)
        name, unit_text = declared_parts(text, where)
        if name in RESERVED or "__" in name:
            raise InputError(f"'{name}' is a reserved name", where)
        unit = _wrap_key(lambda: units.parse_unit(unit_text), where)
        scale, offset = units.scale_and_offset(unit)
        return Declared(
            name,
            unit,
            unit_text,
            sp.Symbol(name, real=True),
            scale,
            offset,
            is_time=units.same_dimension(unit, units.parse_unit("s")),
        )

    def parameters(self, taken: set[str]) -> tuple[Parameter, ...]:
        """Every parameter, each checked on its own; one written as an expression after those it uses.
        ``taken``: the names of the unknown and the variable."""
        table = self.table("parameters")
        errors, done, failed = [], {}, set()
        uses = {name: values.names_used(_value_of(entry)) for name, entry in table.items()}
        cycle = values.dependency_cycle({name: used for name, used in uses.items() if used})
        if cycle:
            raise InputError(
                f"the parameters are defined from each other in a circle: {' -> '.join(cycle)}",
                f"parameters.{key_part(cycle[0])}",
            )
        for name in _dependency_order(uses):
            try:
                broken = sorted(uses[name] & failed)
                if broken:
                    raise InputError(f"uses {', '.join(broken)}, whose value has an error")
                done[name] = self.parameter(name, table[name], taken, done)
            except InputError as error:
                failed.add(name)
                errors.append(error.located(key=f"parameters.{key_part(name)}"))
        if errors:
            raise ErrorList(errors)
        return tuple(done[name] for name in table)

    def parameter(self, name: str, entry: Any, taken: set[str], known: dict | None = None) -> Parameter:
        if not ex.NAME_PATTERN.match(name) or "__" in name:
            raise InputError("a parameter name is letters, digits and single underscores, starting with a letter")
        if name in RESERVED or name in taken:
            raise InputError(f"'{name}' is reserved or already the unknown or the variable")
        source = note = ""
        if isinstance(entry, dict):
            unknown_keys = set(entry) - set(names(PARAMETER_KEYS))
            if unknown_keys:
                shown = key_part(sorted(unknown_keys)[0])
                raise InputError(
                    f"unknown key {shown if shown.startswith(chr(34)) else repr(shown)} "
                    f"(expected {', '.join(names(PARAMETER_KEYS))})"
                )
            if "value" not in entry:
                raise InputError('the table needs a value, e.g. { value = "47 kohm" }')
            source, note = (self.string(entry, k, f"parameters.{name}.{k}") for k in ("source", "note"))
        table, entry = (entry, entry["value"]) if isinstance(entry, dict) else ({}, entry)
        if values.is_expression(entry, frozenset(self.table("parameters"))):
            return self.worked_parameter(name, entry, table, known or {}, taken, source, note)
        quantity = units.parse_quantity(entry)
        text = entry if isinstance(entry, str) else f"{entry:g}"
        si_value = units.to_si(quantity)
        units.check_magnitude(si_value, text.strip())
        spread = read_range(table, quantity, si_value, f"parameters.{key_part(name)}")
        scale, offset = units.scale_and_offset(quantity.units)
        return Parameter(
            name=name,
            text=text.strip(),
            quantity=quantity,
            si=si_value,
            si_unit=units.si_unit(quantity.units),
            symbol=_parameter_symbol(name, si_value, spread),
            source=source,
            note=note,
            low=spread.low,
            high=spread.high,
            spread=spread.spread,
            unit_text=_unit_as_written(text),
            scale=scale,
            offset=offset,
        )

    def worked_parameter(
        self, name: str, text: str, table: dict, known: dict, taken: set[str], source: str, note: str
    ) -> Parameter:
        """A parameter written as an expression of numbers with units and of other parameters: "R*C"."""
        ranged = [key for key in RANGE_KEYS if key in table]
        if ranged:
            raise InputError(
                f"a value written as an expression takes its range from the parameters it uses; give the "
                f"{ranged[0]} to them, not to {name}",
                f"parameters.{key_part(name)}.{ranged[0]}",
            )
        node = values.parse(text, frozenset(self.table("parameters")))
        for used in sorted(ex.names_in(node) & taken):
            raise InputError(f"a parameter cannot be written in terms of the unknown or the variable ({used})")
        worked = values.work_out(node, _operands(known.values()))
        quantity = worked.quantity()
        scale, offset = units.scale_and_offset(quantity.units)
        return Parameter(
            name=name,
            text=worked.text,
            quantity=quantity,
            si=worked.si,
            si_unit=worked.si_unit,
            symbol=_parameter_symbol(name, worked.si),
            source=source,
            note=note,
            unit_text=worked.unit_text,
            scale=scale,
            offset=offset,
            expression=" ".join(text.split()),
            node=node,
        )

    def point(self, raw: Any, like: Declared, where: str) -> Point:
        quantity = _wrap_key(lambda: units.parse_quantity(raw), where)
        if not units.same_dimension(quantity.units, like.unit):
            raise InputError(
                f"'{shortened(raw)}' has dimension {units.dimension_text(quantity.units)}, but {like.name} is in "
                f"{like.unit_text or 'no unit'} ({units.dimension_text(like.unit)})",
                where,
            )
        text = raw if isinstance(raw, str) else f"{raw:g}"
        si_value = units.to_si(quantity)
        _wrap_key(lambda: units.check_magnitude(si_value, text.strip()), where)
        return Point(text.strip(), quantity, si_value)

    def points(self, table: dict, key: str, like: Declared) -> tuple[Point, ...]:
        """Every point of ``evaluate.<key>``, each checked on its own."""
        raw = table.get(key, [])
        if not isinstance(raw, list):
            raw = [raw]
        errors = _Errors()
        result = tuple(
            errors.attempt(lambda i=i, item=item: self.point(item, like, f"evaluate.{key}[{i + 1}]"))
            for i, item in enumerate(raw)
        )
        errors.raise_any()
        return result

    def apply_kind(self, model_table: dict):
        """Replace a kind by its equation and checked parameters, and remember what to say about it."""
        initial = self.raw.get("initial", {})
        start = initial.get("at") if isinstance(initial, dict) else None
        expanded = expand_kind(
            model_table,
            self.raw.get("parameters", {}),
            self.raw.get("forcing"),
            start,
            self.start_source or "the initial point",
            limit_names=_names_in_checks(self.raw.get("criteria")) | _names_in_switches(self.original.get("switch")),
        )
        self.raw = {**self.raw, "parameters": expanded.parameters}
        return expanded.model_table, expanded.use

    def plot_end(self, initial_at: Point | None, variable: Declared) -> Point | None:
        table = self.table("plot")
        if "to" not in table:
            return None
        end = self.point(table["to"], variable, "plot.to")
        if initial_at is not None and end.si <= initial_at.si:
            raise InputError(f"'{end.text}' must lie after the initial point {initial_at.text}", "plot.to")
        return end

    def extremes(self, table: dict, variable: Declared, initial_at: Point | None) -> tuple[ExtremeRequest, ...]:
        """``evaluate.extremes``: "max", "min", "max 0 s .. 60 s" (a window) or "max from 5 s" (to the end)."""
        raw = table.get("extremes", [])
        if not isinstance(raw, list):
            raw = [raw]
        errors, result = _Errors(), []
        for index, item in enumerate(raw):
            where = f"evaluate.extremes[{index + 1}]"
            result.append(errors.attempt(lambda: self.extreme_request(item, variable, initial_at, where)))
        errors.raise_any()
        return tuple(result)

    def extreme_request(self, item: Any, variable: Declared, initial_at: Point | None, where: str) -> ExtremeRequest:
        match = _EXTREME.fullmatch(item.strip()) if isinstance(item, str) else None
        if match is None:
            raise InputError(
                f'\'{shortened(item)}\' must read "max" or "min", over a window "max 0 s .. 60 s", '
                'or to the end of the range "max from 5 s"',
                where,
            )
        window = self.window(match.group("start"), match.group("end"), match.group("open"), variable, initial_at, where)
        return ExtremeRequest(match.group("kind"), window, item.strip())

    def window(
        self,
        start: str | None,
        end: str | None,
        open_from: str | None,
        variable: Declared,
        initial_at: Point | None,
        where: str,
    ) -> Window:
        """A window on the variable: its ends in the variable's dimension, in order, after the initial point."""
        if open_from is not None:
            window = Window(self.point(open_from.strip(), variable, where), None, open_ended=True)
        elif start is not None:
            window = Window(self.point(start.strip(), variable, where), self.point(end.strip(), variable, where))
        else:
            return Window()
        if initial_at is not None and window.start.si < initial_at.si:
            raise InputError(
                f"the window starts at '{window.start.text}', before the initial point "
                f"{initial_at.text}; the sheet solves forward from the initial condition",
                where,
            )
        if window.end is not None and not window.end.si > window.start.si:
            raise InputError(f"the window '{window.start.text} .. {window.end.text}' must end after it starts", where)
        return window

    def derived(self, unknown, variable, parameters, derivative, kind_use):
        """``[[derived]]`` and the kind's offers: (those declared, every one a check may name by name)."""
        offers = ()
        if kind_use is not None:
            from calcsheet.kinds import kind_named

            offers = kind_named(kind_use.name).offers
        return read_derived(self.raw.get("derived", []), unknown, variable, parameters, derivative, RESERVED, offers)

    def integrals(self, table: dict, unknown, variable, initial_at, derived) -> tuple[IntegralRequest, ...]:
        """``evaluate.integrals``: "integral(P_R, 0 s, 60 s)", a derived quantity over a window."""
        raw = table.get("integrals", [])
        if not isinstance(raw, list):
            raw = [raw]
        errors, result = _Errors(), []
        for index, item in enumerate(raw):
            where = f"evaluate.integrals[{index + 1}]"
            result.append(
                errors.attempt(lambda: self.integral_request(item, unknown, variable, initial_at, derived, where))
            )
        errors.raise_any()
        return tuple(result)

    def integral_request(self, item, unknown, variable, initial_at, derived, where) -> IntegralRequest:
        match = _INTEGRAL.fullmatch(item.strip()) if isinstance(item, str) else None
        if match is None:
            raise InputError(
                f"'{shortened(item)}' must read \"integral(P_R, 0 s, 60 s)\": a derived quantity's name and the "
                "window's two ends",
                where,
            )
        of, window = self.windowed("integral", match.group("argument"), unknown, variable, initial_at, where, derived)
        return IntegralRequest(of, window, item.strip())

    def criteria(
        self, unknown: Declared, variable: Declared, initial_at: Point | None = None, derived=None, parameters=None
    ) -> tuple[Criterion, ...]:
        """Every [[criteria]] table, each checked on its own; ``parameters`` for limits written in terms of them
        (None when they have errors of their own)."""
        errors, result = _Errors(), []
        self.known_parameters = parameters
        for index, entry in enumerate(self.raw.get("criteria", [])):
            where = f"criteria[{index + 1}]"
            text = errors.attempt(lambda: self.string(entry, "text", f"{where}.text"), "")
            check = errors.attempt(lambda: self.string(entry, "check", f"{where}.check", required=True))
            cited = errors.attempt(lambda: self.citation(entry, where), ("", ""))
            if check is not None:
                found = errors.attempt(
                    lambda: self.criterion(
                        text or check, check, unknown, variable, f"{where}.check", initial_at, derived or {}
                    )
                )
                if found is not None:
                    result.append(replace(found, source=cited[0], basis=cited[1]))
        errors.raise_any()
        return tuple(result)

    def citation(self, entry: dict, where: str) -> tuple[str, str]:
        """Where a criterion's limit comes from: ``source`` (a document) or ``basis`` (common practice)."""
        source = self.string(entry, "source", f"{where}.source")
        basis = self.string(entry, "basis", f"{where}.basis")
        if source and basis:
            raise InputError(
                "give either source (a document the limit is taken from) or basis (common practice, say), not both",
                f"{where}.basis",
            )
        for key, value in (("source", source), ("basis", basis)):
            if key in entry and not value:
                raise InputError("must not be empty; leave the key out when no source is known", f"{where}.{key}")
        return source, basis

    def limit(self, raw: str, like: Declared, where: str) -> dict:
        """A criterion's limit as Criterion fields: a value ("50 V"), or an expression of the parameters
        ("T_amb + 8.8 K"), worked out in the unit of what it limits."""
        parameters = getattr(self, "known_parameters", None)
        if not values.is_expression(raw, frozenset(self.table("parameters"))):
            return {"limit": self.point(raw, like, where)}
        if parameters is None:
            raise InputError(f"'{shortened(raw)}' uses parameters, and they have errors of their own", where)
        known = {p.name: p for p in parameters}
        node = _wrap_key(lambda: values.parse(raw, frozenset(known)), where)
        worked = _wrap_key(
            lambda: values.work_out(node, _operands(parameters)),
            where,
        )
        if not units.same_dimension(worked.si_unit, like.unit):
            raise InputError(
                f"'{shortened(raw)}' has dimension {units.dimension_text(worked.si_unit)}, but {like.name} is in "
                f"{like.unit_text or 'no unit'} ({units.dimension_text(like.unit)})",
                where,
            )
        if units.is_offset(like.unit) and worked.reading == values.DIFFERENCE:
            raise InputError(
                f"'{shortened(raw)}' is a temperature difference, but {like.name} is a temperature in "
                f"{like.unit_text}; a limit on it is a temperature, such as T_amb + 8.8 K",
                where,
            )
        shown = like.shown(worked.si)
        quantity = units.registry().Quantity(shown, like.unit)
        point = Point(f"{_number(shown)} {like.unit_text}".rstrip(), quantity, worked.si)
        return {"limit": point, "limit_expression": " ".join(raw.split()), "limit_node": node}

    def condition(
        self,
        text: str,
        check: str,
        unknown: Declared,
        variable: Declared,
        where: str,
        initial_at: Point | None,
        derived: dict | None = None,
    ) -> Criterion:
        """A condition over a window, "T <= 90 degC for t in 0 s .. 10 min": the extreme that decides it."""
        head, clause = _FOR.split(check.strip(), maxsplit=1)
        match, window = _CHECK.fullmatch(head.strip()), _FOR_CLAUSE.fullmatch(clause.strip())
        if window is None or window.group("name") != variable.name:
            raise InputError(
                f"'{shortened(check)}': write the window as \"for {variable.name} in 0 s .. 10 min\" or "
                f'"for {variable.name} >= 5 s"',
                where,
            )
        derived = derived or {}
        if (
            match is None
            or match.group("subject") not in {unknown.name, *derived}
            or match.group("argument") is not None
        ):
            raise InputError(
                f"'{shortened(check)}': a condition over a window compares {unknown.name} itself or a derived "
                f"quantity, as in "
                f'"{unknown.name} <= 90 degC for {variable.name} in 0 s .. 10 min"',
                where,
            )
        if _SECOND_COMPARISON.search(match.group("limit")):
            raise InputError(
                f"'{shortened(check)}' holds more than one comparison; write each as its own [[criteria]] table", where
            )
        operator = match.group("op")
        of = "" if match.group("subject") == unknown.name else match.group("subject")
        return Criterion(
            text=text,
            check=check,
            subject=CONDITION_SUBJECT[operator],
            argument=None,
            operator=operator,
            **self.limit(match.group("limit").strip(), derived[of].declared if of else unknown, where),
            window=self.window(
                window.group("start"), window.group("end"), window.group("open"), variable, initial_at, where
            ),
            of=of,
        )

    def windowed(
        self,
        subject: str,
        argument: str,
        unknown: Declared,
        variable: Declared,
        initial_at: Point | None,
        where: str,
        derived: dict | None = None,
    ) -> tuple[str, Window]:
        """The argument of max(T), max(P_R, 0 s, 60 s) or integral(P_R, 0 s, 60 s): the name of the unknown or
        of a derived quantity ("" for the unknown), then no window or both its ends."""
        found = SUBJECTS[subject]
        names = set(derived or {}) | (set() if found.derived_only else {unknown.name})
        parts = [part.strip() for part in argument.split(",")]
        counts = (3,) if found.needs_window else (1, 3)
        if parts[0] not in names or len(parts) not in counts:
            example = next(iter(derived or {}), "P_R") if found.derived_only else unknown.name
            known = (
                f"; {subject}() takes a derived quantity ({', '.join(derived) if derived else 'none is declared'})"
                if found.derived_only and parts[0] not in names
                else ""
            )
            raise InputError(
                f"'{subject}({shortened(argument)})' must read "
                + ("" if found.needs_window else f"{subject}({example}) or ")
                + f"{subject}({example}, 0 s, 60 s){known}",
                where,
            )
        of = "" if parts[0] == unknown.name else parts[0]
        if len(parts) == 1:
            return of, Window()
        return of, self.window(parts[1], parts[2], None, variable, initial_at, where)

    def criterion(
        self,
        text: str,
        check: str,
        unknown: Declared,
        variable: Declared,
        where: str,
        initial_at: Point | None = None,
        derived: dict | None = None,
    ) -> Criterion:
        derived = derived or {}
        if _FOR.search(check.strip()):
            return self.condition(text, check, unknown, variable, where, initial_at, derived)
        match = _CHECK.fullmatch(check.strip())
        if not match:
            raise InputError(
                f"'{shortened(check)}' must read like \"{unknown.name}(60 s) <= 50 V\", "
                f'"reach(50 V) <= 60 s", "max({unknown.name}, 0 s, 60 s) <= 50 V" or '
                f'"{unknown.name} <= 50 V for {variable.name} in 0 s .. 60 s"',
                where,
            )
        if _SECOND_COMPARISON.search(match.group("limit")):
            raise InputError(
                f"'{shortened(check)}' holds more than one comparison; a check is one comparison, "
                'so write each as its own [[criteria]] table (e.g. one "v(1 min) >= 5 V", another '
                '"v(2 min) <= 10 V")',
                where,
            )
        found, argument, window, of, limit_like = self.subject(
            match.group("subject"), match.group("argument"), unknown, variable, initial_at, where, derived
        )
        return Criterion(
            text=text,
            check=check,
            subject=found.name,
            argument=argument,
            operator=match.group("op"),
            **self.limit(match.group("limit").strip(), limit_like, where),
            window=window,
            of=of,
        )

    def subject(
        self,
        subject: str,
        argument: str | None,
        unknown: Declared,
        variable: Declared,
        initial_at: Point | None,
        where: str,
        derived: dict | None = None,
    ) -> tuple[Subject, Point | None, Window | None, str, Declared | None]:
        """What a check is about, as written before its comparison (v(60 s), reach(50 V), max(T, 0 s, 60 s),
        P_R(0 s), integral(P_R, 0 s, 60 s)): the subject, its point, its window, the derived quantity it is
        about ("" for the unknown) and what its limit is measured like."""
        derived = derived or {}
        argument = None if argument is None else argument.strip()
        found = written_subject(subject, unknown.name, frozenset(derived))
        if found is None:
            also = f", a derived quantity ({', '.join(derived)})" if derived else ""
            raise InputError(f"'{subject}' is not {spellings(unknown.name)}{also}", where)
        of = subject if subject in derived else ""
        like = {UNKNOWN: derived[of].declared if of else unknown, VARIABLE: variable}
        if found.argument == WINDOW:
            if argument is None:
                raise InputError(
                    f"'{subject}' needs an argument: {subject}({unknown.name}) or {subject}({unknown.name}, 0 s, 60 s)",
                    where,
                )
            of, window = self.windowed(subject, argument, unknown, variable, initial_at, where, derived)
            like = {UNKNOWN: derived[of].declared if of else unknown, INTEGRAL: derived[of].integral if of else None}
            return found, None, window, of, like[found.found]
        argument_like, limit_like = like.get(found.argument), like[found.found]
        if (argument_like is None) != (argument is None):
            raise InputError(f"'{subject}' {'takes no' if argument_like is None else 'needs an'} argument", where)
        return found, None if argument is None else self.point(argument, argument_like, where), None, of, limit_like


def _used_derived(declared, available: dict, criteria, integrals) -> tuple[DerivedQuantity, ...]:
    """The declared quantities, then each quantity a kind offers that a criterion or an integral names."""
    named = {c.of for c in criteria if c.of} | {i.of for i in integrals}
    taken = {q.name for q in declared}
    return tuple(declared) + tuple(q for name, q in available.items() if name in named and name not in taken)


def _names_in_checks(criteria) -> frozenset[str]:
    """Every name written in the criteria's checks (a limit may use a parameter beside a kind's own)."""
    if not isinstance(criteria, list):
        return frozenset()
    checks = [entry.get("check") for entry in criteria if isinstance(entry, dict)]
    return frozenset(name for check in checks if isinstance(check, str) for name in _NAME_IN_CHECK.findall(check))


def _names_in_switches(switches) -> frozenset[str]:
    """Every name a switch's values are worked out from ("R_w + R_e"): parameters beside a kind's own."""
    if not isinstance(switches, list):
        return frozenset()
    tables = [entry.get("parameters") for entry in switches if isinstance(entry, dict)]
    entries = [value for table in tables if isinstance(table, dict) for value in table.values()]
    return frozenset().union(*(values.names_used(_value_of(entry)) for entry in entries))


_NAME_IN_CHECK = re.compile(r"[A-Za-z][A-Za-z0-9_]*")


def _operands(parameters) -> dict[str, values.Operand]:
    """The parameters as an expression uses them: SI value and the unit each is written in."""
    return {p.name: values.Operand(p.si, p.quantity.units, p.unit_text) for p in parameters}


def _value_of(entry) -> Any:
    """A parameter's value as written, from a plain entry or a table."""
    return entry.get("value") if isinstance(entry, dict) else entry


def _dependency_order(uses: dict[str, set[str]]) -> list[str]:
    """The parameters in their written order, each moved after those it uses (no cycle: checked before)."""
    order, placed = [], set()

    def place(name: str) -> None:
        if name in placed:
            return
        placed.add(name)
        for used in sorted(uses.get(name, set()) & set(uses)):
            place(used)
        order.append(name)

    for name in uses:
        place(name)
    return order


def _unit_as_written(text: str) -> str:
    """The unit part of a value as written: "47 kohm" -> "kohm"."""
    parts = text.strip().split(None, 1)
    return parts[1] if len(parts) == 2 else ""


def _parameter_symbol(name: str, value: float, spread=None) -> sp.Symbol:
    """Sign assumptions from the value keep sympy's results free of needless case splits; for a parameter
    with a range they hold over the whole range, so the one solution serves every value in it."""
    ends = [value] + ([spread.low, spread.high] if spread is not None and spread.low is not None else [])
    if min(ends) > 0:
        return sp.Symbol(name, positive=True)
    if max(ends) < 0:
        return sp.Symbol(name, negative=True)
    return sp.Symbol(name, real=True)


def _symbolic_equation(
    equation: ex.Equation,
    unknown: Declared,
    variable: Declared,
    parameters: tuple[Parameter, ...],
    derivative: sp.Symbol,
    initial_at: Point | None = None,
):
    """Refuse what is not a single first-order ODE in the unknown, check units and values, build sympy."""
    _refuse_wrong_derivatives(equation, unknown, variable)
    known = {p.name: p for p in parameters}
    used = ex.names_in(equation.left) | ex.names_in(equation.right)
    for name in sorted(used - set(known) - {unknown.name, variable.name, "pi"}):
        raise InputError(
            f"'{name}' is not a parameter, the unknown ({unknown.name}) or the variable "
            f"({variable.name}); a second unknown would make this more than one ODE"
        )
    si = {p.name: p.si_unit for p in parameters}
    si[unknown.name] = units.si_unit(unknown.unit)
    si[variable.name] = units.si_unit(variable.unit)
    rate = (units.registry().Quantity(1, si[unknown.name]) / units.registry().Quantity(1, si[variable.name])).units
    units_check = check_equation(
        equation, lambda n: si[n] if n in si else units.registry().dimensionless, lambda d: rate
    )
    absolute = {p.name: p.text for p in parameters if units.is_offset(p.quantity.units)}
    if units.is_offset(unknown.unit):
        absolute[unknown.name] = f"the unknown, in {unknown.unit_text}"
    refuse_absolute_sums(equation, absolute, frozenset(known))
    check_equation_values(
        equation,
        Values(
            {p.name: (p.si, p.text) for p in parameters},
            variable.name,
            None if initial_at is None else initial_at.si,
            "" if initial_at is None else initial_at.text,
        ),
    )
    used |= set().union(*(ex.names_in(p.node) for p in parameters if p.node is not None))  # helpers of values
    symbols = {p.name: p.symbol for p in parameters}
    symbols[unknown.name] = unknown.symbol
    symbols[variable.name] = variable.symbol
    lhs = to_sympy(equation.left, symbols, lambda d: derivative)
    rhs = to_sympy(equation.right, symbols, lambda d: derivative)
    unused = tuple(sorted(set(known) - used))
    return lhs, rhs, unused, units_check


def _refuse_wrong_derivatives(equation: ex.Equation, unknown: Declared, variable: Declared) -> None:
    found = ex.derivatives_in(equation.left) + ex.derivatives_in(equation.right)
    if not found:
        raise ModelRefused(
            f"no derivative d{unknown.name}/d{variable.name} appears: this is an algebraic "
            "equation, not a differential equation"
        )
    for d in found:
        if d.of != unknown.name:
            raise ModelRefused(
                f"'{d.text}' is a derivative of '{d.of}', but the unknown is '{unknown.name}': "
                "more than one unknown needs a system of equations, which this tool does not solve"
            )
        if d.wrt != variable.name:
            raise InputError(f"'{d.text}' is taken with respect to '{d.wrt}', but the variable is '{variable.name}'")
        if d.order != 1:
            raise ModelRefused(
                f"'{d.text}' is a second derivative: the equation is of order 2, and only "
                "first-order equations are solved by an integrating factor"
            )


def _prefixed(error, where: str):
    """An error found inside a switch's own model, keyed from the switch: switch[1].parameters.R."""
    for inner in getattr(error, "errors", [error]):
        if not inner.key.startswith(where):
            inner.key = f"{where}.{inner.key}" if inner.key else where
    return error


def _law_of(model: Model) -> IntervalLaw:
    """What a switch puts in force: the equation and parameters, without the model's start value."""
    return IntervalLaw(
        equation_text=model.equation_text,
        equation=model.equation,
        lhs=model.lhs,
        rhs=model.rhs,
        parameters=model.parameters,
        kind=model.kind,
        unused_parameters=model.unused_parameters,
        units_check=model.units_check,
    )


def _switchable(first: Model, stated: dict) -> set[str]:
    """What a switch may set: the stated parameters of an equation, or every parameter of a kind."""
    if first.kind is None:
        return set(stated)
    from calcsheet.kinds import kind_named
    from calcsheet.kinds.base import START_SLOT

    return {slot.name for slot in kind_named(first.kind.name).slots} - {START_SLOT}


def _carried_states(previous: Model, at: Point) -> dict[str, tuple[str, str]]:
    """The states a kind's law carries over a switch, each as (raw value in SI, value as shown)."""
    if previous.kind is None:
        return {}
    from calcsheet.kinds import kind_named

    kind = kind_named(previous.kind.name)
    values = {p.name: p.si for p in previous.parameters}
    carried = {}
    for name, value in kind.carry(values, at.si).items():
        unit = units.unit_label(units.si_unit(units.parse_unit(kind.slot(name).unit)))
        carried[name] = (
            {"value": f"{value!r} {unit}", "source": f"reached at the switch at {at.text}, carried over"},
            f"{value:.6g} {unit}",
        )
    return carried


def _forcing_keys(errors: _Errors, forcing_table, kind_name: str) -> None:
    """A value a [forcing] form generates is keyed where the user wrote it: forcing.time_constant."""
    from calcsheet.kinds import kind_named
    from calcsheet.kinds.forcing import role_keys

    keys = role_keys(forcing_table, kind_named(kind_name).source)
    for error in errors.items:
        name = error.key.removeprefix("parameters.")
        if error.key.startswith("parameters.") and name in keys:
            error.key = keys[name]


def _wrap_key(thunk, key: str):
    try:
        return thunk()
    except CalcsheetError as error:
        raise error.located(key=key)
