"""Every table and key an input file or a package file may hold, with what each value is: the one list.

The loader's unknown-key checks read these tables, and so does the JSON Schema generator
(``load/schema.py``), so an editor's completion and validation cannot drift from what the loader
accepts. A new key is one ``Key`` here plus the code that reads its value. What a kind calls its
parameters lives with the kind (``Kind.slots``) and what a forcing form takes with the form
(``kinds/forcing_forms.py``); the schema reads those where they are.

Pure data: importing this module costs nothing, which keeps ``calcsheet schema`` cheap.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

# What a value is; load/schema.py says how each is written in JSON Schema terms.
TEXT = "text"  # one line of text in quotes
LONG_TEXT = "long text"  # text that may run over several lines
FILLED_TEXT = "filled text"  # text that must not be empty or blank
TEXTS = "texts"  # one text, or a list of texts
DATE = "date"  # a TOML date, or text YYYY-MM-DD
QUANTITY = "quantity"  # a number with its unit in quotes ("47 kohm"), or a bare number
QUANTITIES = "quantities"  # one quantity, or a list of them
VALUE = "value"  # a quantity, or an expression of other parameters and quantities ("R*C", "T_amb + 8.8 K")
DECLARED = "declared"  # a name with its unit in brackets: "v [V]"
EQUATION = "equation"  # a first-order ODE in the input notation
CHECK = "check"  # a criterion: "reach(20 V) <= 15 s"
EXTREMES = "extremes"  # "max", "min 0 s .. 60 s", "max from 5 s", or a list of them
INTEGRALS = "integrals"  # "integral(P_R, 0 s, 60 s)", or a list of them
NAME = "name"  # a name as in equations: letters, digits and single underscores, starting with a letter
CHOICE = "choice"  # one of Key.choices
KIND = "kind"  # the name of a model kind (kinds/__init__.py::KIND_MODULES)
FINGERPRINT = "fingerprint"  # 64 hexadecimal digits, written by `calcsheet sign`
FILE_PATTERNS = "file patterns"  # a list of file patterns relative to the package folder
SIGNATURE = "signature"  # a signer's name, or a table of SIGNATURE_KEYS
PARAMETER_TABLE = "parameter table"  # a table of parameters, as [parameters]
FORCING_TABLE = "forcing table"  # a table as [forcing]
OPERATING_POINT = "operating point"  # "steady state", or the unknown at a value: "h = 1.2 m"
PERCENT = "percent"  # a percentage in quotes: "2 %"

ROLES = ("prepared", "checked", "approved")  # in the order they sign
STATUSES = ("preliminary", "for check", "issued", "superseded")
FINGERPRINT_PATTERN = "^[0-9a-f]{64}$"


@dataclass(frozen=True)
class Key:
    """One key of a table: what its value is, what it means, an example, and whether it must be there."""

    name: str
    value: str  # one of the value names above
    description: str
    example: Any = None
    required: bool = False
    choices: tuple[str, ...] = ()


@dataclass(frozen=True)
class Table:
    """A table of an input: its keys, or None where the keys are names the user chooses ([parameters]) or
    depend on another key ([forcing]: the form)."""

    name: str
    description: str
    keys: tuple[Key, ...] | None
    listed: bool = False  # written as [[name]], a list of tables
    required: bool = False

    @property
    def key_names(self) -> tuple[str, ...] | None:
        return None if self.keys is None else tuple(key.name for key in self.keys)


def _signoff_description(whose: str) -> str:
    return (
        f"Who prepared, checked and approved {whose}: each role a name, or a table with the name, the date and "
        "the fingerprint `calcsheet sign` writes."
    )


SIGNOFF_KEYS = tuple(
    Key(role, SIGNATURE, f"The {role} entry: a name in quotes or {{ name, date, fingerprint }}.", example)
    for role, example in zip(
        ROLES,
        ("A. Originator", {"name": "B. Checker", "date": "2026-03-02"}, "C. Approver"),
    )
)
SIGNATURE_KEYS = (
    Key("name", TEXT, "The signer's name as it appears on the sheet.", "B. Checker"),
    Key("date", DATE, "The day of signing, YYYY-MM-DD.", "2026-03-02"),
    Key(
        "fingerprint",
        FINGERPRINT,
        "The content fingerprint the signer saw; written by `calcsheet sign`, never by hand.",
        "0" * 64,
    ),
)

RANGE = (
    Key(
        "tolerance",
        QUANTITY,
        'A symmetric range either side of the value: a per cent ("5 %") or an amount in the value\'s unit.',
        "5 %",
    ),
    Key("min", QUANTITY, "The lowest value the parameter takes, in a unit of its dimension.", "4.3 kohm"),
    Key("max", QUANTITY, "The highest value the parameter takes, in a unit of its dimension.", "5.2 kohm"),
)
RANGE_KEYS = tuple(key.name for key in RANGE)

PARAMETER_KEYS = (
    Key(
        "value",
        VALUE,
        'The value with its unit ("47 kohm"), or an expression of other parameters ("R*C").',
        "47 kohm",
    ),
    Key("source", TEXT, "Where the value comes from: a datasheet, a drawing, a measurement.", "resistor datasheet"),
    Key("note", TEXT, "A remark shown beside the parameter.", "two resistors in series"),
    *RANGE,
)
# In a sheet of a package, a parameter may take its value from the package instead (load/references.py).
REFERENCES = (
    Key("basis", NAME, "The name of a value in the package's [basis]: the parameter takes that value.", "T_amb"),
    Key("from", TEXT, "The number of another sheet of the package whose result this parameter takes.", "EL-030"),
    Key(
        "result",
        TEXT,
        "What of that sheet: time_constant, final_value, a value such as v(60 s), max(T), reach(50 V)...",
        "time_constant",
    ),
)
REFERENCE_KEYS = tuple(key.name for key in REFERENCES)

DERIVED_KEYS = (
    Key("name", NAME, "The quantity's name, used in criteria and integrals.", "P_R", required=True),
    Key(
        "expression",
        TEXT,
        "Its expression in the parameters, the unknown, its derivative and the variable; may be left out for a "
        "quantity the kind offers by name.",
        "v^2/R",
    ),
    Key("unit", TEXT, 'The unit it is shown in ("" for a pure number); needed with an expression.', "W"),
    Key("text", TEXT, "What it is, in words.", "power dissipated in the resistor"),
    Key("integral_unit", TEXT, "The unit an integral of it over the variable is shown in.", "J"),
)

SHEET_TABLES = (
    Table(
        "sheet",
        "The title block: what the sheet is, who made it, and its revision.",
        (
            Key("title", FILLED_TEXT, "The sheet's title.", "Bleed-down of the bus capacitor", required=True),
            Key("number", TEXT, "The sheet's number; other sheets of a package refer to it.", "EL-101"),
            Key("revision", TEXT, "The revision label; the last [[revisions]] row when there are any.", "A"),
            Key("project", TEXT, "The project the sheet belongs to.", "Packaging line 3"),
            Key("originator", TEXT, "Who wrote the sheet; prepares it unless [signoff] says otherwise.", "A. Smith"),
            Key("purpose", LONG_TEXT, "What the sheet shows, in a sentence or a paragraph.", "Time to a safe voltage."),
            Key("references", TEXTS, "Documents the sheet relies on.", ["Drawing E-201 rev C"]),
            Key("assumptions", TEXTS, "Assumptions beyond the model's own.", ["Nominal component values"]),
            Key("date", DATE, "The sheet's date, YYYY-MM-DD.", "2026-03-01"),
            Key("style", TEXT, "A house style folder inside the input's folder tree.", "house_style"),
            Key("status", CHOICE, "The issue status.", "for check", choices=STATUSES),
        ),
        required=True,
    ),
    Table(
        "model",
        "The model: either a kind, which writes its own equation, or an equation with its unknown and variable.",
        (
            Key(
                "equation",
                EQUATION,
                "The first-order ODE in the unknown, its derivative d<unknown>/d<variable> and the parameters.",
                "R*C*dv/dt + v = V_s",
            ),
            Key("unknown", DECLARED, "The unknown's name and unit.", "v [V]"),
            Key("variable", DECLARED, "The variable's name and unit.", "t [s]"),
            Key("kind", KIND, "A model kind (see `calcsheet kinds`); give either kind or equation.", "series_rc"),
        ),
        required=True,
    ),
    Table(
        "forcing",
        "With a kind: its source as a function of the variable. The keys depend on the form.",
        None,
    ),
    Table("parameters", "The parameters by name: each a value with its unit, or a table with its value.", None),
    Table(
        "initial",
        "The initial condition.",
        (
            Key("at", QUANTITY, "Where the solution starts, in the variable's unit (default 0).", "0 s"),
            Key("value", QUANTITY, "The unknown's value there.", "0 V", required=True),
        ),
        required=True,
    ),
    Table(
        "evaluate",
        "What to evaluate besides the criteria.",
        (
            Key("at", QUANTITIES, "Points of the variable to give the unknown's value at.", ["1 s", "10 s"]),
            Key("reach", QUANTITIES, "Levels of the unknown to give the time of reaching.", ["20 V"]),
            Key("extremes", EXTREMES, "The largest or smallest value, over the range or a window.", ["max"]),
            Key("integrals", INTEGRALS, "Integrals of derived quantities over windows.", ["integral(P_R, 0 s, 60 s)"]),
        ),
    ),
    Table(
        "criteria",
        "Acceptance criteria, one table each.",
        (
            Key("text", TEXT, "The criterion in words.", "Below 60 V within 30 s"),
            Key("check", CHECK, "One comparison.", "reach(60 V) <= 30 s", required=True),
            Key("source", TEXT, "A document the limit is taken from; give source or basis, not both.", "IEC 60204-1"),
            Key("basis", TEXT, "Why the limit, when no document gives it (common practice, say).", "site practice"),
        ),
        listed=True,
    ),
    Table("plot", "The plot.", (Key("to", QUANTITY, "Where the plot ends, in the variable's unit.", "60 s"),)),
    Table("signoff", _signoff_description("the sheet"), SIGNOFF_KEYS),
    Table(
        "revisions",
        "The revision history, oldest first, one table per revision.",
        (
            Key("revision", FILLED_TEXT, "The revision label.", "A", required=True),
            Key("date", DATE, "The revision's date, YYYY-MM-DD.", "2026-03-01"),
            Key("description", FILLED_TEXT, "What changed.", "First issue", required=True),
        ),
        listed=True,
    ),
    Table(
        "switch",
        "A change of parameters or forcing at a point of the variable, one table each.",
        (
            Key("at", QUANTITY, "Where the switch happens, in the variable's unit.", "2 s", required=True),
            Key("text", TEXT, "What happens there, in words.", "economiser resistor switched in"),
            Key("parameters", PARAMETER_TABLE, "The parameters that change, with their new values.", {"R": "80 ohm"}),
            Key("forcing", FORCING_TABLE, "The forcing in force from the switch on.", {"form": "constant"}),
        ),
        listed=True,
    ),
    Table("derived", "Quantities computed from the response, one table each.", DERIVED_KEYS, listed=True),
    Table(
        "linearise",
        "A non-linear equation linearised about an operating point; the sheet measures the linearisation's error.",
        (
            Key(
                "about",
                OPERATING_POINT,
                'The operating point: "steady state", or the unknown at a value.',
                "h = 1.2 m",
                required=True,
            ),
            Key("tolerance", PERCENT, "How far the linearised response may stray from the non-linear one.", "2 %"),
        ),
    ),
)

PACKAGE_TITLE_KEYS = (
    Key("title", FILLED_TEXT, "The package's title.", "Control cabinet calculations", required=True),
    Key("number", FILLED_TEXT, "The package's number.", "CALC-01", required=True),
    Key("revision", TEXT, "The package's revision label.", "A"),
    Key("project", TEXT, "The project.", "Packaging line 3"),
    Key("client", TEXT, "For whom the package is made.", "Plant owner"),
    Key("style", TEXT, "A house style folder beside the package file.", "house_style"),
)
TITLE_KEYS = tuple(key.name for key in PACKAGE_TITLE_KEYS)
BASIS_KEYS = (
    Key("value", QUANTITY, "The value with its unit.", "35 degC", required=True),
    Key("source", TEXT, "Where the value comes from.", "site design basis"),
    Key("note", TEXT, "A remark shown beside it.", "summer shade temperature"),
    *RANGE,
)

PACKAGE_TABLES = (
    Table(
        "package",
        "The package's title block and its sheets in register order.",
        (
            *PACKAGE_TITLE_KEYS,
            Key("sheets", FILE_PATTERNS, "File patterns of the sheets, in register order.", ["el/*.toml", "*.toml"]),
        ),
    ),
    Table("basis", "Design-basis values by name, which the sheets take with { basis = NAME }.", None),
    Table("signoff", _signoff_description("the package"), SIGNOFF_KEYS),
)


def table_named(tables: tuple[Table, ...], name: str) -> Table:
    return next(table for table in tables if table.name == name)


def names(keys: tuple[Key, ...]) -> tuple[str, ...]:
    return tuple(key.name for key in keys)
