"""The JSON Schema (draft 2020-12) of an input file and of ``package.toml``, made from the loader's own tables.

An editor that validates TOML against a JSON Schema then completes keys, shows what each means and flags a
misspelt table while the engineer types, without a build. Everything here is read from where the loader
reads it: the tables and keys from ``calcsheet/input_keys.py``, each kind's parameters from its ``Kind``,
the forcing forms from ``kinds/forcing_forms.py``, reserved names from the parser and ``subjects.py``.
The schema checks shape only; units, dimensions, expressions and references stay the loader's to check.

Pure data in, a dict out: no pint, sympy or scipy, so ``calcsheet schema`` answers at once.
"""

from __future__ import annotations

import json
import re

from calcsheet import input_keys as keys
from calcsheet.input_keys import Key, Table
from calcsheet.kinds import all_kinds
from calcsheet.kinds.forcing_forms import DIMENSION_WORDS, EXPRESSION, FORM_KEY, FORMS
from calcsheet.source import expressions
from calcsheet.source.declared import MAX_DECLARED
from calcsheet.source.text_rules import MAX_MULTI_LINE_TEXT, MAX_TEXT
from calcsheet.subjects import reserved_words

DRAFT = "https://json-schema.org/draft/2020-12/schema"
# The characters units.py lets a unit hold, and those an expression of names, numbers and units may hold
# (expressions.tokenize refuses any other): written as JSON escapes so the schema's text stays ASCII.
UNIT_CHARS = r"A-Za-z0-9_\u00b5\u03bc\u03a9\u00b0% */^().\u00b7-"
EXPRESSION_MARKS = r"A-Za-z0-9_\u00b5\u03bc\u03a9\u00b0%\u00b7.+*/^()\-"
EXPRESSION_CHARS = EXPRESSION_MARKS + r"\s"
# A number, then a unit that does not start with an operator ("4 * 550 uF" is a calculation): units.py's
# leading number and the characters it lets a unit hold.
QUANTITY_PATTERN = (
    r"^\s*[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
    rf"(?:\s*[A-Za-z0-9_\u00b5\u03bc\u03a9\u00b0%(][{UNIT_CHARS}]*)?\s*$"
)
# A quantity or an expression, not blank.
VALUE_PATTERN = rf"^[{EXPRESSION_CHARS}]*[{EXPRESSION_MARKS}][{EXPRESSION_CHARS}]*$"
EQUATION_PATTERN = rf"^[{EXPRESSION_CHARS}]*=[{EXPRESSION_CHARS}]*$"  # two sides, one '='
# Letters, digits and single underscores, starting with a letter (expressions.NAME_PATTERN, no "__").
NAME_PATTERN = r"^[A-Za-z][A-Za-z0-9]*(?:_[A-Za-z0-9]+)*_?$"
WRITTEN_NAME_PATTERN = r"^\s*[A-Za-z][A-Za-z0-9]*(?:_[A-Za-z0-9]+)*_?\s*$"  # a name as a value, spaces allowed
DECLARED_PATTERN = rf"^\s*[A-Za-z][A-Za-z0-9_]*\s*\[[{UNIT_CHARS}]*\]\s*$"  # declared.py: "v [V]"
DATE_PATTERN = r"^\s*\d{4}-\d{2}-\d{2}"  # a TOML date reaches a schema as its ISO text
# One comparison between a quantity as a check names it and its limit; the loader reads the rest.
CHECK_PATTERN = rf"^[{EXPRESSION_CHARS},]*(?:<=|>=|<|>)[{EXPRESSION_CHARS},]*$"
EXTREME_PATTERN = r"^\s*(?:max|min)(?:\s+(?:from\s+.+|[^.]+?\s*\.\.\s*[^.].*))?\s*$"
INTEGRAL_PATTERN = r"^\s*integral\s*\([^()]*\)\s*$"
# load/linearise_table.py: "steady state" (any case) or "name = value"; a percentage "2 %"
STEADY_STATE_PATTERN = r"[Ss][Tt][Ee][Aa][Dd][Yy]\s+[Ss][Tt][Aa][Tt][Ee]"
OPERATING_POINT_PATTERN = rf"^\s*(?:{STEADY_STATE_PATTERN}|[A-Za-z][A-Za-z0-9_]*\s*=\s*\S.*)\s*$"
PERCENT_PATTERN = r"^\s*(?:\d+(?:\.\d*)?|\.\d+)\s*%\s*$"
NOT_BLANK = r"\S"
OUTSIDE = r"^\s*/|(?:^|/)\.\.(?:/|\s*$)"  # package_file._sheets: a pattern stays inside the package folder


def input_schema() -> dict:
    """The schema of a sheet's input file."""
    kinds = all_kinds()
    schema = {
        "$schema": DRAFT,
        "title": "calcsheet input",
        "description": "A calculation sheet's input: a first-order model, its parameters, criteria and title block.",
        **_tables(keys.SHEET_TABLES),
        "$defs": _definitions(kinds),
    }
    properties = schema["properties"]
    properties["parameters"] = {**properties["parameters"], "$ref": "#/$defs/parameters"}
    properties["forcing"] = {**properties["forcing"], "$ref": "#/$defs/forcing"}
    schema["allOf"] = [_kind_or_equation(), *(_kind_rules(kind) for kind in kinds.values())]
    return schema


def package_schema() -> dict:
    """The schema of ``package.toml``."""
    schema = {
        "$schema": DRAFT,
        "title": "calcsheet package",
        "description": "A calculation package: its title block, its sheets and its design basis.",
        **_tables(keys.PACKAGE_TABLES),
        "$defs": {"signature": _signature()},
    }
    schema["required"] = sorted({*schema["required"], "package"})  # its title and number are needed
    basis = schema["properties"]["basis"]
    basis["propertyNames"] = {"pattern": NAME_PATTERN}
    basis["additionalProperties"] = {
        "anyOf": [_value(keys.QUANTITY), _closed(keys.BASIS_KEYS)],
        "description": "A design-basis value: a number with its unit, or a table with its value and source.",
    }
    return schema


def schema_text(package: bool = False) -> str:
    """The schema as printed: sorted keys, two-space indents, ASCII only, one newline at the end."""
    return json.dumps(package_schema() if package else input_schema(), indent=2, sort_keys=True) + "\n"


# ----------------------------------------------------------------------------------------- tables
def _tables(tables: tuple[Table, ...]) -> dict:
    """The top level: one property per table, no other table, the required ones required."""
    return {
        "type": "object",
        "properties": {table.name: _table(table) for table in tables},
        "required": [table.name for table in tables if table.required],
        "additionalProperties": False,
    }


def _table(table: Table) -> dict:
    one = {"type": "object", "description": table.description}
    if table.keys is not None:
        one = {**_closed(table.keys), "description": table.description}
    if table.name == "criteria":
        one["not"] = {"required": ["source", "basis"], "description": "give source or basis, not both"}
    if table.name == "derived":
        one["dependentRequired"] = {"expression": ["unit"]}
    if not table.listed:
        return one
    return {"type": "array", "items": one, "description": f"Write each as its own [[{table.name}]] table."}


def _closed(table_keys: tuple[Key, ...]) -> dict:
    """A table of these keys and no others."""
    closed = {
        "type": "object",
        "properties": {key.name: _key(key) for key in table_keys},
        "additionalProperties": False,
    }
    required = [key.name for key in table_keys if key.required]
    if required:
        closed["required"] = required
    return closed


def _key(key: Key) -> dict:
    fragment = {**_value(key.value, key.choices), "description": key.description}
    if key.example is not None:
        fragment["examples"] = [key.example]
    return fragment


def _value(value: str, choices: tuple[str, ...] = ()) -> dict:
    """What a value of this kind may be, as far as a schema can say."""
    text = {"type": "string", "maxLength": MAX_TEXT}
    quantity = {"anyOf": [{"type": "number"}, {"type": "string", "pattern": QUANTITY_PATTERN}]}
    extreme = {"type": "string", "pattern": EXTREME_PATTERN}
    integral = {"type": "string", "pattern": INTEGRAL_PATTERN}
    fragments = {
        keys.TEXT: text,
        keys.LONG_TEXT: {"type": "string", "maxLength": MAX_MULTI_LINE_TEXT},
        keys.FILLED_TEXT: {**text, "pattern": NOT_BLANK},
        keys.TEXTS: {"anyOf": [text, {"type": "array", "items": text}]},
        keys.DATE: {"type": "string", "pattern": DATE_PATTERN},
        keys.QUANTITY: quantity,
        keys.QUANTITIES: {"anyOf": [quantity, {"type": "array", "items": quantity}]},
        keys.VALUE: {"anyOf": [{"type": "number"}, {**text, "pattern": VALUE_PATTERN}]},
        keys.DECLARED: {"type": "string", "pattern": DECLARED_PATTERN, "maxLength": MAX_DECLARED},
        keys.EQUATION: {"type": "string", "pattern": EQUATION_PATTERN, "maxLength": expressions.MAX_LENGTH},
        keys.CHECK: {**text, "pattern": CHECK_PATTERN},
        keys.EXTREMES: {"anyOf": [extreme, {"type": "array", "items": extreme}]},
        keys.INTEGRALS: {"anyOf": [integral, {"type": "array", "items": integral}]},
        keys.NAME: {"type": "string", "pattern": WRITTEN_NAME_PATTERN},
        keys.CHOICE: {"enum": list(choices)},
        keys.KIND: {"enum": list(all_kinds())},
        keys.FINGERPRINT: {"type": "string", "pattern": keys.FINGERPRINT_PATTERN},
        keys.FILE_PATTERNS: {"type": "array", "items": {**text, "pattern": NOT_BLANK, "not": {"pattern": OUTSIDE}}},
        keys.SIGNATURE: {"$ref": "#/$defs/signature"},
        keys.PARAMETER_TABLE: {"$ref": "#/$defs/switch_parameters"},
        keys.FORCING_TABLE: {"$ref": "#/$defs/forcing"},
        keys.OPERATING_POINT: {**text, "pattern": OPERATING_POINT_PATTERN},
        keys.PERCENT: {"type": "string", "pattern": PERCENT_PATTERN},
    }
    return dict(fragments[value])


# ------------------------------------------------------------------------------------ definitions
def _definitions(kinds: dict) -> dict:
    entry = _closed((*keys.PARAMETER_KEYS, *keys.REFERENCES))
    entry["anyOf"] = [  # load/references.py: a value, a basis value, or another sheet's result
        {"required": ["value"], "not": {"anyOf": [{"required": ["from"]}, {"required": ["result"]}]}},
        {"required": ["basis"], "not": {"anyOf": [{"required": ["from"]}, {"required": ["result"]}]}},
        {"required": ["from", "result"], "not": {"anyOf": [{"required": ["value"]}, {"required": ["basis"]}]}},
    ]
    entry["description"] = "A parameter as a table: its value (or where in the package it comes from) and source."
    names = {"pattern": NAME_PATTERN, "not": {"enum": sorted(_reserved())}}
    return {
        "parameter": {"anyOf": [_value(keys.VALUE), {"$ref": "#/$defs/parameter_table"}]},
        "parameter_table": entry,
        "parameters": {
            "type": "object",
            "propertyNames": names,
            "additionalProperties": {"$ref": "#/$defs/parameter"},
        },
        "switch_parameters": {  # loader.switch_changes: text, or a table with its value; no bare number
            "type": "object",
            "propertyNames": names,
            "additionalProperties": {
                "anyOf": [{"type": "string", "pattern": VALUE_PATTERN}, {"$ref": "#/$defs/parameter_table"}]
            },
        },
        "forcing": _forcing(),
        "signature": _signature(),
    }


def _reserved() -> set[str]:
    """Names a parameter may not take (loader.RESERVED): functions, constants, and the words of a check."""
    return set(expressions.FUNCTIONS) | set(expressions.CONSTANTS) | reserved_words()


def _signature() -> dict:
    signed = _closed(keys.SIGNATURE_KEYS)
    # sheet_keys.signoff: a signed entry names its signer (left out, the prepared entry takes the originator)
    signed["dependentSchemas"] = {"fingerprint": {"properties": {"name": {"pattern": NOT_BLANK}}}}
    return {
        "anyOf": [{"type": "string", "maxLength": MAX_TEXT}, signed],
        "description": 'A name in quotes, or a table { name = "...", date = "YYYY-MM-DD" }.',
    }


def _forcing() -> dict:
    """[forcing]: the form names the keys; each form's values are checked by its rule below."""
    forms = [*FORMS, EXPRESSION]
    rules = []
    for form in FORMS.values():
        roles = {
            role.key: {
                **_value(keys.VALUE),
                "description": f"The {role.key} of {form.words}, {DIMENSION_WORDS[role.dimension]}"
                + (f"; default {role.default}" if role.default is not None else "")
                + ".",
            }
            for role in form.roles
        }
        rules.append(_form_rule(form.name, roles, [r.key for r in form.roles if r.default is None]))
    expression = {
        EXPRESSION: {
            "type": "string",
            "pattern": NOT_BLANK,
            "description": "The source as an expression of the variable and the parameters.",
            "examples": ["V_0*(1 - exp(-t/T_r))"],
        }
    }
    rules.append(_form_rule(EXPRESSION, expression, [EXPRESSION]))
    return {
        "type": "object",
        "properties": {FORM_KEY: {"enum": forms, "description": "The form of the forcing."}},
        "required": [FORM_KEY],
        "allOf": rules,
    }


def _form_rule(name: str, roles: dict, required: list[str]) -> dict:
    then = {
        "properties": {FORM_KEY: True, **roles},
        "additionalProperties": False,
    }
    if required:
        then["required"] = required
    return {"if": {"properties": {FORM_KEY: {"const": name}}, "required": [FORM_KEY]}, "then": then}


# ------------------------------------------------------------------------------------------ kinds
def _kind_or_equation() -> dict:
    """A kind writes its own equation (loader.model_table, kinds/expand.py); without one, the equation, unknown
    and variable are written, and a [forcing] table has nothing to drive."""
    return {
        "if": {"properties": {"model": {"required": ["kind"]}}, "required": ["model"]},
        "then": {"properties": {"model": {"not": {"required": ["equation"]}}}},
        "else": {
            "properties": {"model": {"required": ["equation", "unknown", "variable"]}},
            "not": {"required": ["forcing"]},
        },
    }


def _kind_rules(kind) -> dict:
    """What [model] kind = NAME asks of the rest (kinds/expand.py): its names, and the parameters it needs."""
    slots = {
        slot.name: {
            "description": f"{slot.meaning}, in a unit like {slot.unit or 'any unit'}"
            + (f"; default {slot.default}" if slot.default is not None else "")
            + ("; may be given by a [forcing] table instead" if slot.name == kind.source else ""),
            "examples": [slot.example],
        }
        for slot in kind.slots
    }
    needed = [s.name for s in kind.slots if s.default is None and s.name != kind.source]
    parameters = {"properties": slots}
    if needed:
        parameters["required"] = needed
    model = {
        "properties": {
            "unknown": {"pattern": rf"^\s*{re.escape(kind.unknown.name)}\s*\["},
            "variable": {"pattern": rf"^\s*{re.escape(kind.variable.name)}\s*\["},
        }
    }
    then: dict = {"properties": {"model": model, "parameters": parameters}}
    if needed:
        then["required"] = ["parameters"]
    if not kind.source:
        then["not"] = {"required": ["forcing"], "description": f"kind {kind.name} has no source to drive"}
    else:  # the source is a parameter or a [forcing] table, never both
        then["if"] = {"required": ["forcing"]}
        then["then"] = {"properties": {"parameters": {"not": {"required": [kind.source]}}}}
        if kind.slot(kind.source).default is None:
            then["else"] = {"properties": {"parameters": {"required": [kind.source]}}, "required": ["parameters"]}
    return {
        "if": {
            "properties": {"model": {"properties": {"kind": {"const": kind.name}}, "required": ["kind"]}},
            "required": ["model"],
        },
        "then": then,
    }
