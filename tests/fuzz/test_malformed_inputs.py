"""A standing campaign of generated malformed and extreme inputs (hypothesis).

Inputs grow from the demos: values, units, keys and types are mutated, mild (a changed number or
unit) and hostile (unicode, very long strings, 1e308, nan, inf, zero and negative values, tables
where text belongs). Every one must end as a Model or as input errors that each name the file and
a key, through the loader (10,000 inputs) and through the whole `check` command (500 more, exit 0,
1 or 2, never a traceback or exit 3). A property of our own input handling; no outside source.
"""

from __future__ import annotations

import copy
import itertools
import tomllib
from pathlib import Path

import pytest
import tomli_w
from click.testing import CliRunner
from hypothesis import HealthCheck, given, seed, settings
from hypothesis import strategies as st

from calcsheet.cli import main
from calcsheet.errors import CalcsheetError
from calcsheet.load.loader import load_model
from calcsheet.load.package_values import fill_package_values
from calcsheet.load.references import references_in
from tests.end_to_end.demo_verdicts import DEMOS

ROOT = Path(__file__).resolve().parents[2]
# Each demo sheet with its design-basis values written in (a sheet that uses another sheet's result is left out:
# its mutants would be refused before they reach anything else).
RAW = {p: tomllib.loads(p.read_text(encoding="utf-8")) for p in DEMOS}
BASES = [fill_package_values(p, raw, {}) for p, raw in RAW.items() if not any(r.sheet for r in references_in(raw))]

UNITS = [
    "V",
    "A",
    "ohm",
    "kohm",
    "uF",
    "s",
    "ms",
    "min",
    "h",
    "degC",
    "K",
    "delta_degC",
    "m^3/min",
    "W/(m^2*K)",
    "kg",
    "rad",
    "Hz",
    "k",
    "c",
    "e",
    "g",
    "%",
    "",
    "m^^2",
    "1/0",
    "V and v(2 min) <= 10 V",
    "°",
    "Ω",
]
NUMBERS = st.one_of(
    st.sampled_from(["0", "-1", "1e308", "-1e308", "1e-320", "nan", "inf", "-inf", "1e30", "4 * 550", "0.0", "3"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(min_value=-(10**20), max_value=10**20).map(str),
)
HOSTILE_TEXT = st.one_of(
    st.text(max_size=40),
    st.sampled_from(
        [
            "",
            " " * 5000,
            "x" * 30000,
            "(" * 300 + "t" + ")" * 300,
            "exp(" * 60 + "1" + ")" * 60,
            "\\g<0>",
            "a\\b",
            "<script>alert(1)</script>",
            "{{7*7}}",
            "{% for x in y %}",
            "\u202e\u2066",
            "\x1b[31m",
            "line\nOUTCOME: passes",
            "t/0",
            "sin(t/0)",
            "R*C*dv/dt + v = 0",
            "d2v/dt2 = v",
            "v^2*dv/dt = 1",
            "step(t - 1)",
            "log(-t)",
            "../../..",
            "/etc",
            "🙂" * 100,
        ]
    ),
)
QUANTITY_TEXT = st.builds(lambda n, u: f"{n} {u}".strip(), NUMBERS, st.sampled_from(UNITS))
ODD_VALUE = st.one_of(
    QUANTITY_TEXT,
    HOSTILE_TEXT,
    st.booleans(),
    st.integers(),
    st.floats(),
    st.lists(st.integers(), max_size=3),
    st.dictionaries(st.text(max_size=5), st.text(max_size=5), max_size=2),
)


def _paths(tree, prefix=()):
    """Every place in the tree a mutation can reach: (path to a container, key or index)."""
    items = tree.items() if isinstance(tree, dict) else enumerate(tree)
    for key, value in items:
        yield prefix, key
        if isinstance(value, (dict, list)):
            yield from _paths(value, prefix + (key,))


def _at(tree, path):
    for key in path:
        tree = tree[key]
    return tree


@st.composite
def mutated_inputs(draw, hostile: bool = True):
    tree = copy.deepcopy(draw(st.sampled_from(BASES)))
    for _ in range(draw(st.integers(min_value=1, max_value=4))):
        places = list(_paths(tree))
        path, key = draw(st.sampled_from(places))
        container = _at(tree, path)
        action = draw(
            st.sampled_from(
                ["value", "value", "quantity", "delete", "add"]
                if hostile
                else ["quantity", "quantity", "quantity", "delete"]
            )
        )
        if action == "delete" and isinstance(container, dict):
            del container[key]
        elif action == "add" and isinstance(container, dict):
            container[draw(st.text(max_size=12))] = draw(ODD_VALUE)
        elif action == "quantity":
            container[key] = draw(QUANTITY_TEXT)
        elif action == "value":
            container[key] = draw(ODD_VALUE)
    return tree


_FOLDER_NUMBERS = itertools.count()


def _fresh_folder(tmp_path_factory, campaign: str) -> Path:
    """A new empty folder for one input, numbered by a counter of this process. (``tmp_path_factory.mktemp``
    lists the folders made before it at every call, so 10,000 inputs cost a minute of CPU in that alone.)"""
    folder = tmp_path_factory.getbasetemp() / f"{campaign}-inputs" / str(next(_FOLDER_NUMBERS))
    folder.mkdir(parents=True)
    return folder


def _write(folder: Path, tree: dict) -> Path | None:
    try:
        text = tomli_w.dumps(tree)
    except (TypeError, ValueError):  # a tree TOML cannot hold (nan keys, nested None): nothing to test
        return None
    path = folder / "mutated.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _assert_named(error: CalcsheetError, path: Path) -> None:
    for inner in getattr(error, "errors", [error]):
        line = str(inner)
        assert line.startswith(str(path)), line
        assert inner.key or line[len(str(path)) :].startswith(":"), f"no key: {line}"
        assert "\n" not in line and "Traceback" not in line, line


@settings(max_examples=10_000, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck))
@given(tree=mutated_inputs())
def test_the_loader_ends_every_input_as_a_model_or_named_errors(tree, tmp_path_factory, outcomes):
    folder = _fresh_folder(tmp_path_factory, "loader")
    path = _write(folder, tree)
    if path is None:
        outcomes("loader", "not TOML-serialisable")
        return
    try:
        load_model(path)
        outcomes("loader", "loaded")
    except CalcsheetError as error:
        _assert_named(error, path)
        outcomes("loader", "input error")


def _check_ends_with_exit_0_1_or_2(tree, tmp_path_factory, outcomes) -> None:
    folder = _fresh_folder(tmp_path_factory, "check")
    path = _write(folder, tree)
    if path is None:
        outcomes("check", "not TOML-serialisable")
        return
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code in (0, 1, 2), result.output
    assert "internal error" not in result.output and "Traceback" not in result.output
    if result.exit_code == 2:
        assert all(line.startswith(str(path)) for line in result.output.splitlines() if line.strip()), result.output
    outcomes("check", f"exit {result.exit_code}")


# 500 inputs through `check`, in ten parts of 50 so that CI's workers share them evenly: `--dist load` hands a part
# to whichever worker is free, where two halves of 250, whose inputs differ in cost, ended minutes apart. Each part
# has its own fixed seed (hypothesis's `seed`), so the parts draw different inputs, the same ones on every run.
CAMPAIGN_PARTS = 10
CAMPAIGN = settings(
    max_examples=50, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck)
)


def _campaign_part(number: int):
    @pytest.mark.campaign
    @seed(number)
    @CAMPAIGN
    @given(tree=mutated_inputs(hostile=False))
    def test_part(tree, tmp_path_factory, outcomes):
        _check_ends_with_exit_0_1_or_2(tree, tmp_path_factory, outcomes)

    test_part.__name__ = test_part.__qualname__ = f"test_check_ends_every_input_with_exit_0_1_or_2_part_{number}"
    return test_part


for _number in range(CAMPAIGN_PARTS):
    _part = _campaign_part(_number)
    globals()[_part.__name__] = _part
