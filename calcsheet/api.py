"""The Python API: load an input, build its sheet, check it, from a script or a notebook.

The command line is a thin layer over these functions (cli.py), so a sheet built from Python and one built by
``calcsheet build`` go through the same loading, the same ``--set`` path (load/overrides.py) and the same
pipeline (pipeline.build_model), and come out byte-identical. Errors are the typed exceptions of
calcsheet.errors (InputError, ModelRefused, ErrorList, all CalcsheetError), carrying ``file``, ``key`` and
``message``. Nothing heavy is imported until a function is called (sympy when loading, matplotlib and WeasyPrint
only when a format needs them).
"""

from __future__ import annotations

import json
import os
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Union

from calcsheet.errors import EXIT_CHECK_FAILED, EXIT_OK, InputError, shortened

if TYPE_CHECKING:
    from calcsheet.model import Model
    from calcsheet.pipeline import Built

TEXT_NAME = "<text>"  # what messages call TOML given as text when no name is given

Source = Union[str, "os.PathLike[str]", "Input"]
Overrides = Union[Mapping[str, str], Iterable[tuple[str, str]], None]


@dataclass(frozen=True, eq=False)
class Input:
    """One input read and validated: its name (the file, or the name given to text), its TOML text when it was
    given directly (None: read from the file), the what-if values it was loaded with, and the validated Model."""

    name: str
    text: str | None
    overrides: tuple[tuple[str, str], ...]
    model: Model = field(repr=False)
    # records of package sheets already built, by sheet number: shared by the calls of one command (and the
    # sheets loaded through it) so that each upstream sheet is built once
    package_records: dict = field(default_factory=dict, repr=False)


@dataclass(frozen=True, eq=False)
class Sheet:
    """A built sheet: its verdict, its JSON record as a dict, and its outputs by format (``str`` for html, json and
    txt, ``bytes`` for pdf). In a notebook it shows itself as the HTML sheet (``_repr_html_``)."""

    name: str
    passed: bool  # every criterion passes (at the worst case of the tolerances too) and verification passed
    summary: str  # the line ``calcsheet check`` prints after the name
    problem: str  # why an issued sheet may not go out (sign-offs missing or stale); "" when none
    record: dict = field(repr=False)
    outputs: Mapping[str, str | bytes] = field(default_factory=dict, repr=False)
    written: tuple[Path, ...] = ()  # the files written into ``out``
    built: Built | None = field(default=None, repr=False, compare=False)
    style: Path | None = field(default=None, repr=False)  # the house style folder (the input's own until rendered)

    @property
    def values(self) -> list[dict]:
        """The values asked for in ``[evaluate]``, as the record holds them: ``{"at", "value", "applies"}`` with
        ``{"value", "unit"}`` quantities in the units the input declared."""
        return self.record.get("values", [])

    @property
    def criteria(self) -> list[dict]:
        """Each acceptance criterion as the record holds it: ``text``, ``check``, ``status``, ``found``,
        ``limit``, ``margin``..."""
        return self.record.get("criteria", [])

    @property
    def exit_code(self) -> int:
        """What the command line exits with for this sheet: 0, or 1 for a failing or not-for-issue sheet."""
        return EXIT_OK if self.passed and not self.problem else EXIT_CHECK_FAILED

    def rendered(
        self,
        formats: Iterable[str] | str,
        *,
        style: str | os.PathLike[str] | None = None,
        fallback_style: str | os.PathLike[str] | None = None,
        archive_of: str | os.PathLike[str] | None = None,
    ) -> Sheet:
        """This sheet with ``formats`` rendered into ``outputs`` (in memory). The house style is ``style``, else the
        input's own ``[sheet] style``, else ``fallback_style`` (a package's style, for a package build). With
        ``archive_of`` (the input file) the PDF is a PDF/A-3b carrying that input and the JSON record."""
        from dataclasses import replace

        from calcsheet.pipeline import render

        if self.built is None:
            raise ValueError("this Sheet holds no built sheet to render")
        chosen = _formats(formats)
        own = Path(self.built.sheet.style) if self.built.sheet.style else None
        house = _style_folder(style) or own or (Path(fallback_style) if fallback_style else None)
        archive = Path(archive_of) if archive_of is not None else None
        outputs = render(self.built.sheet, chosen, house, archive) if chosen else {}
        return replace(self, outputs={**self.outputs, **outputs}, style=house)

    def _repr_html_(self) -> str:
        """The HTML sheet inline in a notebook: MathML equations and the plot, no page chrome, its styles scoped
        to the sheet (writers/html_fragment.py)."""
        from calcsheet.writers.html_fragment import write

        if self.built is None:
            raise ValueError("this Sheet holds no built sheet to show")
        return write(self.built.sheet, self.style)


def load(
    source: Source, *, name: str | None = None, set: Overrides = None, package_records: dict | None = None
) -> Input:
    """Read and validate an input: a path (``str`` or ``os.PathLike``), or its TOML text given directly (a ``str``
    holding a line break). Text is read as if it were the file ``name`` (default ``"<text>"``): messages name it,
    and its style folder and package are looked for beside it. ``set`` replaces parameters for a what-if
    (``{"R": "5.1 kohm"}``), read exactly as ``--set`` is. ``package_records`` lets several calls share the records
    of a package's sheets already built. Raises InputError (or ModelRefused, ErrorList) with file, key, message."""
    from calcsheet.pipeline import load_sheet

    if isinstance(source, Input):
        if name is not None:
            raise ValueError("name= is for TOML text; this Input has its name")
        return _reloaded(source, overrides_from(set))
    file, text = _read_as(source, name)
    overrides = overrides_from(set)
    records = {} if package_records is None else package_records
    model = load_sheet(Path(file), overrides, records, text)
    return Input(file, text, overrides, model, records)


def build(
    source: Source,
    *,
    formats: Iterable[str] | str | None = None,
    set: Overrides = None,
    out: str | os.PathLike[str] | None = None,
    style: str | os.PathLike[str] | None = None,
    changes_since: str | None = None,
    name: str | None = None,
) -> Sheet:
    """Build an input's sheet (``source`` as ``load`` takes it, or an Input): derive, verify, compose, and render
    each of ``formats`` (html, pdf, json, txt; by default all four with ``out`` and none without, when only the
    record is made). With ``out`` the outputs are written there as ``<stem>.<format>`` (``<stem>.whatif.<format>``
    with ``set``), all or none, as ``calcsheet build`` writes them. ``style``: a house style folder (wins over
    the input's ``[sheet] style``); ``changes_since``: a git revision or an older file, as ``--changes-since``."""
    from calcsheet.pipeline import DEFAULT_FORMATS

    chosen = _formats(formats if formats is not None else (DEFAULT_FORMATS if out is not None else ()))
    folder = _style_folder(style)
    given = load(source, name=name, set=set)
    sheet = built_sheet(given, changes_since).rendered(chosen, style=folder)
    if out is None:
        return sheet
    from dataclasses import replace

    from calcsheet.pipeline import write_outputs

    stem = Path(given.name).stem + (".whatif" if given.overrides else "")
    written = write_outputs(Path(out), stem, dict(sheet.outputs))
    return replace(sheet, written=tuple(written))


def check(source: Source, *, set: Overrides = None, name: str | None = None) -> Sheet:
    """What ``calcsheet check`` does: derive, verify and evaluate the criteria, render and write nothing. The
    Sheet's ``passed``, ``summary``, ``problem`` and ``exit_code`` are what the command prints and exits with."""
    return built_sheet(load(source, name=name, set=set))


def built_sheet(given: Input, changes_since: str | None = None) -> Sheet:
    """The Sheet of a loaded input, nothing rendered yet; its record is taken before a comparison
    (``changes_since``) adds its section, as the build cache keeps it."""
    from calcsheet.pipeline import build_model, with_changes_since

    built = build_model(given.model)
    record = json.loads(json.dumps(built.sheet.record, sort_keys=True, default=str))  # as the .json file reads
    if changes_since is not None:
        built = with_changes_since(built, changes_since)
    return Sheet(
        name=given.name,
        passed=bool(built.derivation.passed),
        summary=summary(built.derivation),
        problem=built.sheet.review.problem or "",
        record=record,
        built=built,
        style=Path(built.sheet.style) if built.sheet.style else None,
    )


def sheet_of(
    path: Path, overrides: tuple[tuple[str, str], ...], package_records: dict | None, changes_since: str | None
) -> Sheet:
    """One sheet of ``calcsheet build`` as its worker builds it (package/build_run.py passes the records of the
    package's sheets built before it), rendered afterwards with ``Sheet.rendered``."""
    return built_sheet(load(path, set=overrides, package_records=package_records), changes_since)


def overrides_from(assignments: Overrides) -> tuple[tuple[str, str], ...]:
    """``set=`` as the (name, value) pairs ``--set`` gives: a mapping or pairs, each name and value text."""
    from calcsheet.load.overrides import checked_pair

    if assignments is None:
        return ()
    pairs = assignments.items() if isinstance(assignments, Mapping) else assignments
    found = []
    for pair in pairs:
        if not isinstance(pair, tuple) or len(pair) != 2:
            raise InputError(f"'{shortened(repr(pair))}' is not a (name, value) pair", "--set")
        name, value = pair
        if not isinstance(name, str) or not isinstance(value, str):
            raise InputError(
                f"'{shortened(repr(value))}' must be text: a number with its unit, e.g. \"5.1 kohm\"",
                f"--set {name}",
            )
        found.append(checked_pair(name, value, f"{name}={value}"))
    return tuple(found)


def summary(derivation) -> str:
    """One line: the verdict, how many criteria pass, and which fail or are not assessed, by number and text."""
    verdicts = derivation.numbers.verdicts
    passed = sum(v.status == "pass" for v in verdicts)
    parts = [f"{passed} of {len(verdicts)} criteria pass" if verdicts else "no criteria"]
    failed = [f'#{k} "{v.criterion.text}"' for k, v in enumerate(verdicts, 1) if v.status == "fail"]
    unassessed = [f'#{k} "{v.criterion.text}"' for k, v in enumerate(verdicts, 1) if v.status == "not assessed"]
    if failed:
        parts.append("FAIL: " + ", ".join(failed))
    if unassessed:
        why = (
            "the model is not valid for this case"
            if derivation.numbers.not_valid
            else "they need the response past the model's validity limit"
        )
        parts.append("not assessed (" + why + "): " + ", ".join(unassessed))
    margin = getattr(derivation, "margin", None)
    worst = [
        f"#{k}"
        for k, (v, w) in enumerate(zip(verdicts, margin.worst if margin else ()), 1)
        if v.status == "pass" and w is not None and not w.passed
    ]
    if worst:
        parts.append("FAIL at worst case of the tolerances: " + ", ".join(worst))
    parts.append("verification passed" if derivation.verification.passed else "verification FAILED")
    return ("PASS" if derivation.passed else "FAIL") + " (" + "; ".join(parts) + ")"


def _read_as(source, name: str | None) -> tuple[str, str | None]:
    """(the name messages use, the TOML text or None for a file)."""
    if isinstance(source, os.PathLike):
        if name is not None:
            raise ValueError("name= is for TOML text; a path names itself")
        return str(Path(source)), None
    if not isinstance(source, str):
        raise TypeError(f"load() takes a path or TOML text, not {type(source).__name__}")
    if "\n" in source or "\r" in source:
        return (TEXT_NAME if name is None else name), source
    if name is not None:
        raise ValueError("name= is for TOML text; a path names itself")
    return str(Path(source)), None


def _reloaded(given: Input, more: tuple[tuple[str, str], ...]) -> Input:
    """A loaded input with more what-if values: read again from its text or file, the overrides joined, so a
    parameter set twice is refused as ``--set`` refuses it."""
    if not more:
        return given
    from calcsheet.pipeline import load_sheet

    overrides = given.overrides + more
    model = load_sheet(Path(given.name), overrides, given.package_records, given.text)
    return Input(given.name, given.text, overrides, model, given.package_records)


def _formats(formats: Iterable[str] | str) -> tuple[str, ...]:
    """``formats`` checked as ``--format`` is: a comma-separated text or names; () renders nothing."""
    from calcsheet.pipeline import parse_formats as parse
    from calcsheet.writers import WRITERS

    known = tuple(WRITERS)
    if isinstance(formats, str):
        return parse(formats, known)
    chosen = tuple(formats)
    if not chosen:
        return ()
    if not all(isinstance(f, str) for f in chosen):
        raise InputError(f"formats are names ({', '.join(known)})", key="--format")
    return parse(",".join(chosen), known)


def _style_folder(style) -> Path | None:
    if style is None:
        return None
    path = Path(style)
    if not path.is_dir():
        raise InputError("no such style folder", key="--style", file=str(style))
    return path
