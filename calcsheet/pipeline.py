"""The stages end to end: load -> derive -> compose -> seal -> render -> write (atomically)."""

from __future__ import annotations

import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from calcsheet.errors import InputError

DEFAULT_FORMATS = ("html", "pdf", "json", "txt")


@dataclass(frozen=True)
class Built:
    path: Path
    derivation: object
    sheet: object


def build_sheet(
    path: Path, overrides: tuple[tuple[str, str], ...] = (), upstream: dict | None = None, text: str | None = None
) -> Built:
    """Load, derive and compose one input (imports sympy lazily: only commands that solve pay for it);
    ``overrides`` (--set) replace parameters for a what-if. A sheet of a package that uses other sheets' results
    has them built first (``upstream``: records by sheet number, shared by the sheets of one command so that
    each is built once). ``text``: the input's TOML given directly, read as if it were the file ``path``."""
    return build_model(load_sheet(path, overrides, upstream, text))


def load_sheet(
    path: Path, overrides: tuple[tuple[str, str], ...] = (), upstream: dict | None = None, text: str | None = None
):
    """The validated Model of one input, with its package's values and the upstream sheets' results filled in
    (the upstream sheets are built here, once per ``upstream`` cache)."""
    from calcsheet.load.loader import load_model

    results = upstream_results(Path(path), {} if upstream is None else upstream, text)
    return load_model(path, overrides, results, text=text)


def build_model(model) -> Built:
    """Derive and compose a loaded Model. Where parameters have ranges, the derivation carries its margin
    (derive/margin.py), which the sheet shows and the verdict includes; every composed Sheet is sealed."""
    from dataclasses import replace

    from calcsheet.derive.margin import find_margin
    from calcsheet.review.seal import seal

    if model.switches:
        from calcsheet.derive.piecewise import derive_piecewise
        from calcsheet.sheet.piecewise import compose_piecewise

        derivation = derive_piecewise(model)
        derivation = replace(derivation, margin=find_margin(derivation))
        return Built(Path(model.path), derivation, seal(compose_piecewise(derivation), model.sheet))
    from calcsheet.derive.derivation import derive
    from calcsheet.sheet.compose import compose

    derivation = derive(model)
    derivation = replace(derivation, margin=find_margin(derivation))
    return Built(Path(model.path), derivation, seal(compose(derivation), model.sheet))


def import_libraries(formats: tuple[str, ...]) -> None:
    """Import what deriving a sheet and rendering ``formats`` will load (sympy, scipy, pint and numpy; Jinja2 and
    matplotlib for HTML or PDF; ziamath for PDF), so that worker processes forked afterwards share one import
    instead of making one each (about 3 CPU s a worker). WeasyPrint is left to the workers: it loads native
    libraries whose state is not for sharing across a fork."""
    import calcsheet.derive.derivation  # noqa: F401 - sympy, scipy.integrate, pint, numpy
    import calcsheet.derive.margin  # noqa: F401 - scipy.optimize
    import calcsheet.derive.piecewise  # noqa: F401
    import calcsheet.review.seal  # noqa: F401
    import calcsheet.sheet.compose  # noqa: F401

    if {"html", "pdf"} & set(formats):
        import matplotlib.backends.backend_agg  # noqa: F401 - what writers/plot.py draws and measures with
        import matplotlib.backends.backend_svg  # noqa: F401
        import matplotlib.figure  # noqa: F401
        import matplotlib.style  # noqa: F401

        import calcsheet.writers.html  # noqa: F401 - Jinja2
    if "pdf" in formats:
        import ziamath  # noqa: F401


SWEEP_FORMATS = ("csv", "svg", "png")
DEFAULT_SWEEP_FORMATS = ("csv", "svg")


@dataclass(frozen=True)
class SweepRequest:
    """What ``calcsheet sweep`` asks for, as the command line gives it (checked while loading)."""

    vary: tuple[str, str, str]  # (name, low, high) as written
    steps: int = 25
    log: bool = False
    of: tuple[str, ...] = ()  # quantities as a check names them; () for every criterion's subject
    family: int = 0  # response curves to overlay; 0 for no family plot
    formats: tuple[str, ...] = DEFAULT_SWEEP_FORMATS


def sweep_outputs(path: Path, request: SweepRequest, overrides: tuple[tuple[str, str], ...] = ()):
    """A sweep of one parameter: (file name -> contents, summary lines), all in memory before anything is
    written. Loads as a build does (``--set`` first), derives once, and evaluates each point through the
    margin study (derive/sweep.py)."""
    from calcsheet.derive.sweep import find_sweep
    from calcsheet.load.loader import load_for_sweep, read_subject
    from calcsheet.load.sweep_range import check_steps
    from calcsheet.sheet import sweep_layout as layout
    from calcsheet.writers.sweep_csv import table_csv

    check_steps(request.steps)
    model, vary = load_for_sweep(path, overrides, request.vary, request.log, upstream_results(path, {}))
    asked = tuple(read_subject(model, text, "--of") for text in request.of)
    if model.switches:
        from calcsheet.derive.piecewise import derive_piecewise

        derivation = derive_piecewise(model)
    else:
        from calcsheet.derive.derivation import derive

        derivation = derive(model)
    sweep = find_sweep(
        derivation, vary.name, vary.low, vary.high, request.steps, request.log, asked, family=request.family
    )
    stem = f"{path.stem}{'.whatif' if overrides else ''}.sweep-{vary.name}"
    files: dict[str, str | bytes] = {}
    if "csv" in request.formats:
        files[f"{stem}.csv"] = table_csv(layout.sweep_table(sweep, model, vary))
    images = [f for f in request.formats if f in ("svg", "png")]
    if images:
        from calcsheet.writers.sweep_plot import family_image, sweep_image

        plot = layout.sweep_plot(sweep, model, vary)
        family = layout.family_plot(sweep, model, vary) if request.family else None
        for fmt in images:
            files[f"{stem}.{fmt}"] = sweep_image(plot, fmt)
            if family is not None:
                files[f"{stem}.family.{fmt}"] = family_image(family, fmt)
    return files, layout.summary_lines(sweep, model, vary)


def upstream_results(path: Path, records: dict, text: str | None = None) -> dict:
    """The results of other sheets that ``path`` (or ``text``, read as if it were that file) uses, each with the
    citation its parameter table shows: (number, result) -> (value with unit, "sheet EL-014 rev B,
    time_constant, fingerprint ..."). ``records`` caches each upstream sheet's JSON record by number (or the
    error that stopped it)."""
    from calcsheet.errors import CalcsheetError
    from calcsheet.load.package_file import find_package, read_package
    from calcsheet.load.references import build_order, references_in, sheet_entries
    from calcsheet.load.results import result_quantity
    from calcsheet.load.toml_file import read_toml, read_toml_text

    try:
        references = [r for r in references_in(read_toml(path) if text is None else read_toml_text(text)) if r.sheet]
    except CalcsheetError:
        return {}  # the loader reports it, with the file and key
    file = find_package(path) if references else None
    if file is None:
        return {}
    entries = sheet_entries(read_package(file))
    build_order(entries)  # a cycle is refused here, named
    by_number = {e.number: e for e in entries if e.number}
    results = {}
    for reference in references:
        if reference.sheet not in records:
            try:
                records[reference.sheet] = build_sheet(by_number[reference.sheet].path, (), records).sheet.record
            except CalcsheetError as error:
                records[reference.sheet] = error
        record = records[reference.sheet]
        if isinstance(record, CalcsheetError):
            raise InputError(
                f"uses sheet {reference.sheet}, which did not build ({record.message}); fix that sheet first",
                f"{reference.where}.from",
            )
        try:
            value = result_quantity(record, reference.result, reference.sheet)
        except CalcsheetError as error:
            raise error.located(key=f"{reference.where}.result")
        revision = record["sheet"].get("revision") or ""
        citation = (
            f"sheet {reference.sheet}{f' rev {revision}' if revision else ''}, {reference.result}, "
            f"fingerprint {str(record.get('fingerprint', ''))[:12]}"
        )
        results[(reference.sheet, reference.result)] = (value, citation)
    return results


def with_changes_since(built: Built, since: str) -> Built:
    """``built`` with the section "Changes since ..." and revision marks: compared with the file ``since`` when
    one exists by that name, else with the input as git held it at revision ``since``. The fingerprint stays
    as sealed: the comparison is a document part (review/fingerprint.py)."""
    from dataclasses import replace

    from calcsheet.review.diff import compare_records
    from calcsheet.review.earlier import at_revision, from_file
    from calcsheet.sheet.changes import with_changes

    if Path(since).is_file():
        earlier = from_file(since, build_sheet)
    else:
        earlier = at_revision(built.path, since, build_sheet)
    changes = compare_records(earlier.record, built.sheet.record, earlier.name)
    revision_now = built.derivation.model.sheet.revision
    return replace(built, sheet=with_changes(built.sheet, changes, earlier.baseline, revision_now))


def render(
    sheet, formats: tuple[str, ...], style: Path | None = None, archive_of: Path | None = None
) -> dict[str, str | bytes]:
    """Every requested format as text, all in memory before anything touches the disk. With ``archive_of``
    (the input file) the PDF is an archival PDF/A-3b carrying that input and the sheet's JSON record."""
    from calcsheet.writers import writer_for

    rendered = {fmt: writer_for(fmt)(sheet, style) for fmt in formats if fmt != "pdf" or archive_of is None}
    if archive_of is not None and "pdf" in formats:
        from calcsheet.writers.pdf import write_archive

        record = rendered["json"] if "json" in rendered else writer_for("json")(sheet, style)
        attached = ((archive_of.name, archive_of.read_bytes()), (f"{archive_of.stem}.json", record.encode("utf-8")))
        rendered = {fmt: write_archive(sheet, style, attached) if fmt == "pdf" else rendered[fmt] for fmt in formats}
    return rendered


def write_outputs(out_dir: Path, stem: str, rendered: dict[str, str | bytes]) -> list[Path]:
    """Write a sheet's outputs as ``out_dir/<stem>.<format>``, all or none (``write_all``)."""
    return write_all(out_dir, {f"{stem}.{fmt}": data for fmt, data in rendered.items()})


def write_all(out_dir: Path, named: dict[str, str | bytes]) -> list[Path]:
    """Write each file of ``named`` into ``out_dir``: every one goes to a temporary file first, and only when
    all are complete are they renamed into place, one right after another. A failed run leaves the previous
    outputs as they were; no file under a final name is ever partly written."""
    out_dir.mkdir(parents=True, exist_ok=True)
    remove_stale_parts(out_dir)
    staged = []
    try:
        for name, data in named.items():
            staged.append((_staged(out_dir / name, data), out_dir / name))
    except BaseException:
        for temporary, _ in staged:
            temporary.unlink(missing_ok=True)
        raise
    for temporary, target in staged:
        os.replace(temporary, target)
    return [target for _, target in staged]


def write_file(target: Path, data: str | bytes) -> Path:
    """Write to a temporary file beside ``target`` and rename it into place: never half a file."""
    target.parent.mkdir(parents=True, exist_ok=True)
    os.replace(_staged(target, data), target)
    return target


def _staged(target: Path, data: str | bytes) -> Path:
    """``data`` written in full to a hidden temporary beside ``target``, named with this process's id."""
    handle, temporary = tempfile.mkstemp(dir=target.parent, prefix=f".{target.name}.{os.getpid()}.", suffix=".part")
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data if isinstance(data, bytes) else data.encode("utf-8"))
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes 0600; outputs are ordinary files
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return Path(temporary)


def remove_stale_parts(folder: Path) -> None:
    """Temporaries left by a build that was killed: those whose process no longer runs."""
    for part in folder.glob(".*.part"):
        pid = part.name.rsplit(".", 3)[-3] if part.name.count(".") >= 4 else ""
        if pid.isdigit() and not _running(int(pid)):
            part.unlink(missing_ok=True)


def remove_own_parts(folder: Path) -> None:
    """This process's temporaries: a watch stopped between staging a sheet's files and renaming them into place."""
    for part in folder.glob(".*.part"):
        pid = part.name.rsplit(".", 3)[-3] if part.name.count(".") >= 4 else ""
        if pid == str(os.getpid()):
            part.unlink(missing_ok=True)


def _running(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def collect_inputs(items: tuple[str, ...], writes: bool = False) -> list[Path]:
    """Files as given; folders contribute their *.toml files in name order. Where outputs are written,
    two inputs of one stem are refused."""
    paths: list[Path] = []
    for item in items:
        path = Path(item)
        if path.is_dir():
            found = sorted(path.glob("*.toml"))
            if not found:
                raise InputError("the folder holds no .toml input files", file=item)
            paths.extend(found)
        elif path.is_file():
            paths.append(path)
        else:
            raise InputError("no such file or folder", file=item)
    if writes:
        refuse_same_stems(paths)
    return paths


def refuse_same_stems(paths: list[Path]) -> None:
    """Outputs are named after the input's stem: two inputs of one stem would overwrite each other."""
    seen: dict[str, Path] = {}
    for path in paths:
        other = seen.setdefault(path.stem, path)
        if other != path and other.resolve() != path.resolve():
            raise InputError(
                f"has the same name as {other}; their outputs ({path.stem}.*) would overwrite "
                "each other: build them into different --out folders",
                file=str(path),
            )


def parse_formats(text: str, known: tuple[str, ...]) -> tuple[str, ...]:
    formats = tuple(dict.fromkeys(f.strip().lower() for f in text.split(",") if f.strip()))
    unknown = [f for f in formats if f not in known]
    if unknown or not formats:
        raise InputError(
            f"unknown format '{unknown[0] if unknown else text}' (choose from {', '.join(known)})", key="--format"
        )
    return formats


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
