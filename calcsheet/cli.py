"""Command line: parse options, run the pipeline, map results and errors to exit codes."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click

from calcsheet.errors import EXIT_CHECK_FAILED, EXIT_INPUT_ERROR, EXIT_OK, CalcsheetError

EXIT_INTERNAL = 3


# A what-if replaces parameters for one run (build and check take it alike).
_what_if = click.option(
    "--set",
    "assignments",
    multiple=True,
    metavar="NAME=VALUE",
    help='What-if: replace a parameter, e.g. --set R="5.1 kohm" (repeatable); outputs go to <stem>.whatif.*',
)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="calcsheet")
def main() -> None:
    """calcsheet: derive, verify and document first-order linear models as calculation sheets."""
    _neutralise_bad_source_date_epoch()


def _neutralise_bad_source_date_epoch() -> None:
    """A SOURCE_DATE_EPOCH that is not whole seconds up to year 9999 is ignored: drop it before any library
    (scipy's import among them) reads it with a bare int()."""
    from calcsheet.writers.build_date import source_date_epoch

    if "SOURCE_DATE_EPOCH" in os.environ and source_date_epoch() is None:
        del os.environ["SOURCE_DATE_EPOCH"]


@main.command()
@click.argument("inputs", nargs=-1, required=True)
@click.option("--out", "out_dir", default="out", show_default=True, help="Folder for the outputs.")
@click.option("--format", "formats", default=None, help="Comma-separated: html,pdf,json,txt (default: all).")
@click.option(
    "--style",
    default=None,
    help="Folder of a house style overriding the default templates and CSS (wins over [sheet] style).",
)
@_what_if
@click.option(
    "--changes-since",
    "since",
    default=None,
    metavar="REV|OLD",
    help="Add a section 'Changes since revision ...' comparing each INPUT with its version at git revision REV "
    "(or with the file OLD, an input or JSON record), and mark the changed rows.",
)
@click.option("--force", is_flag=True, help="Build every sheet again, ignoring the build cache.")
@click.option(
    "--archive",
    is_flag=True,
    help="Write the PDF as PDF/A-3b (for archiving) with the input file and the JSON record attached.",
)
@click.option(
    "--jobs",
    "workers",
    type=click.IntRange(min=1),
    default=None,
    help="Sheets built at once, each in its own process (default: the number of cores).",
)
@click.option("--quiet", is_flag=True, help="Print nothing but errors.")
def build(
    inputs: tuple[str, ...],
    out_dir: str,
    formats: str | None,
    style: str | None,
    assignments: tuple[str, ...],
    since: str | None,
    force: bool,
    archive: bool,
    workers: int | None,
    quiet: bool,
) -> None:
    """Build a sheet for each INPUT (file or folder of .toml files) into --out. A package's sheets that have not
    changed since the last build into the same --out are reused from its build cache (--force builds all)."""
    from calcsheet.api import sheet_of
    from calcsheet.package.build_run import BuildRun
    from calcsheet.package.schedule import default_jobs
    from calcsheet.package.session import jobs_for
    from calcsheet.pipeline import DEFAULT_FORMATS, collect_inputs, parse_formats
    from calcsheet.writers import WRITERS

    chosen = _guard(lambda: parse_formats(formats, tuple(WRITERS)) if formats else DEFAULT_FORMATS)
    style_dir = _guard(lambda: _style(style))
    overrides = _guard(lambda: _assignments(assignments))
    if archive and "pdf" not in chosen:
        _guard(lambda: _refuse("makes the PDF an archival one; add pdf to --format", "--archive"))
    if since is not None and Path(since).is_file() and len(_guard(lambda: collect_inputs(inputs))) != 1:
        _guard(lambda: _refuse("compares one input with one earlier file: give a single INPUT", since))
    jobs = _guard(lambda: jobs_for(inputs, writes=True))
    tty = sys.stdout.isatty() and not quiet
    run = BuildRun(
        out_dir=Path(out_dir),
        formats=chosen,
        style=style_dir,
        overrides=overrides,
        since=since,
        force=force,
        make=sheet_of,
        archive=archive,
        say=(lambda line: None) if quiet or tty else click.echo,
        warn=lambda line: click.echo(line, err=True),
    )
    if tty:
        with click.progressbar(
            length=len(jobs), label="building", item_show_func=lambda p: str(p) if p else "", show_pos=True
        ) as bar:
            worst = run.run(jobs, workers or default_jobs(), on_step=lambda path: bar.update(1, path))
    else:
        worst = run.run(jobs, workers or default_jobs())
    if not overrides:
        _write_registers(jobs, run.done, run.failures, Path(out_dir), quiet)
    sys.exit(worst)


def _write_registers(jobs, done: dict, failures: dict, out_dir: Path, quiet: bool = False, guard=None) -> None:
    """A package built through its folder gets its register beside the sheets: register.csv, .json and .html
    (``done``: each built sheet's row facts, fresh or from the build cache). ``guard`` runs each write (default:
    a user's error ends the command; a watch passes one that lets the error through to be reported)."""
    from calcsheet.package.register import failed_row, register_csv, register_html, register_json, row_from_facts
    from calcsheet.pipeline import write_file

    guard = guard or _guard

    sessions = {id(j.session): j.session for j in jobs if j.whole_package}
    for session in sessions.values():
        rows = []
        for entry in session.entries:  # register order
            upstream = tuple(
                f"{n} rev {session.by_number[n].revision}" if session.by_number[n].revision else n
                for n in entry.upstream
            )
            if entry.path in done:
                rows.append(row_from_facts(entry, done[entry.path], upstream))
            else:
                rows.append(failed_row(entry, failures.get(entry.path, "not built"), upstream))
        package = session.package
        for name, text in (
            ("register.csv", register_csv(rows)),
            ("register.json", register_json(package, rows)),
            ("register.html", register_html(package, rows)),
        ):
            target = guard(lambda: _os_guarded(lambda: write_file(out_dir / name, text), str(out_dir / name)))
            if not quiet:
                click.echo(f"{package.file}: register -> {target}")
        _write_bound_pdf(package, rows, session.entries, done, out_dir, quiet, guard)


def _write_bound_pdf(package, rows: list, entries, done: dict, out_dir: Path, quiet: bool, guard=None) -> None:
    """The package's bound PDF, made from the sheet PDFs in the out folder (this build's, or reused ones); only
    when they were built as PDF. Bound again only when something it holds changed (a key beside the build
    cache), so a build that changed nothing imports no PDF library."""
    from calcsheet.load.package_file import bound_file_name
    from calcsheet.package.bound import bind, bound_key
    from calcsheet.pipeline import write_file

    guard = guard or _guard
    files = {
        i: out_dir / f"{e.path.stem}.pdf"
        for i, e in enumerate(entries)
        if e.path in done and done[e.path].get("pages") is not None
    }
    if not files:
        return
    pdfs = {i: guard(lambda f=f: _os_guarded(f.read_bytes, str(f))) for i, f in files.items()}
    target = out_dir / bound_file_name(package.number)
    key_file = out_dir / ".calcsheet-cache" / f"{target.name}.key"
    key = bound_key(package, rows, pdfs)
    if target.is_file() and key_file.is_file() and key_file.read_text(encoding="utf-8") == key:
        if not quiet:
            click.echo(f"{package.file}: bound PDF -> {target} (unchanged)")
        return
    data = bind(package, rows, pdfs)
    guard(lambda: _os_guarded(lambda: write_file(target, data), str(target)))
    guard(lambda: _os_guarded(lambda: write_file(key_file, key), str(key_file)))
    if not quiet:
        click.echo(f"{package.file}: bound PDF -> {target}")


@main.command()
@click.argument("target", metavar="INPUT|FOLDER")
@click.option("--out", "out_dir", default="out", show_default=True, help="Folder for the outputs.")
@click.option("--format", "formats", default=None, help="Comma-separated: html,pdf,json,txt (default: all).")
@click.option(
    "--style",
    default=None,
    help="Folder of a house style overriding the default templates and CSS (wins over [sheet] style); watched too.",
)
@click.option(
    "--jobs",
    "workers",
    type=click.IntRange(min=1),
    default=1,
    show_default=True,
    help="Sheets built at once; with 1 they are built in the watching process, which keeps the libraries loaded "
    "between rounds.",
)
@click.option(
    "--poll",
    is_flag=True,
    help="Look for saves by reading the files' times every 0.3 s, for network drives and containers where the "
    "system's file notifications do not arrive.",
)
@click.option(
    "--serve",
    is_flag=True,
    help="Serve the HTML pages of --out on this machine only (127.0.0.1); an open page reloads itself when its "
    "sheet is rebuilt.",
)
@click.option(
    "--port",
    type=click.IntRange(min=0, max=65535),
    default=None,
    help="The port for --serve (default: a free one, printed at the start).",
)
def watch(
    target: str,
    out_dir: str,
    formats: str | None,
    style: str | None,
    workers: int,
    poll: bool,
    serve: bool,
    port: int | None,
) -> None:
    """Build INPUT (a sheet, a folder of sheets or a package folder) into --out, then again each time a file it
    depends on is saved: a package through its build cache, so only the sheets that changed and those using their
    results. One line per sheet rebuilt; an input error is reported and the watch goes on. Ctrl-C stops it."""
    from calcsheet.watch.stopping import stop_on_signals

    with stop_on_signals():
        try:
            _watch(target, out_dir, formats, style, workers, poll, serve, port)
        except KeyboardInterrupt:
            from calcsheet.package.cache import CACHE_FOLDER
            from calcsheet.pipeline import remove_own_parts

            for folder in (Path(out_dir), Path(out_dir) / CACHE_FOLDER):
                remove_own_parts(folder)
    click.echo("stopped watching")
    sys.exit(EXIT_OK)


def _watch(target, out_dir, formats, style, workers, poll, serve, port) -> None:
    """The watch command's work, inside its signal handling: settings checked, the server started, then the loop."""
    from calcsheet.errors import InputError
    from calcsheet.api import sheet_of
    from calcsheet.pipeline import DEFAULT_FORMATS, parse_formats
    from calcsheet.watch.loop import watch as watch_loop
    from calcsheet.watch.rebuild import Rebuild
    from calcsheet.watch.targets import watch_target
    from calcsheet.writers import WRITERS

    chosen = _guard(lambda: parse_formats(formats, tuple(WRITERS)) if formats else DEFAULT_FORMATS)
    style_dir = _guard(lambda: _style(style))
    if port is not None and not serve:
        _guard(lambda: _raise(InputError("is the port of --serve: give --serve too", key="--port")))
    if serve and "html" not in chosen:
        _guard(lambda: _raise(InputError("--serve shows the HTML pages: add html to it", key="--format")))
    watched = _guard(lambda: watch_target(target, out_dir, style_dir))
    rebuild = Rebuild(
        out_dir=Path(out_dir),
        formats=chosen,
        style=style_dir,
        workers=workers,
        make=sheet_of,
        say=click.echo,
        warn=lambda line: click.echo(line, err=True),
        write_registers=lambda *args: _write_registers(*args, guard=lambda thunk: thunk()),
    )
    server = _guard(lambda: _page_server(Path(out_dir), port or 0)) if serve else None
    try:
        if server is not None:
            server.start()
            click.echo(f"serving {out_dir} at {server.url} (this machine only; open pages reload when rebuilt)")
            if watched.mode == "sheet":
                click.echo(f"  {server.page_url(watched.given.stem + '.html')}")
        watch_loop(
            watched,
            rebuild,
            say=click.echo,
            report=lambda line: click.echo(line, err=True),
            poll=poll,
            after_round=(lambda: server.rebuilt(rebuild.outcomes)) if server is not None else None,
        )
    finally:
        if server is not None:
            server.close()


def _page_server(out_dir: Path, port: int):
    from calcsheet.errors import InputError
    from calcsheet.watch.serve import HOST, PageServer

    try:
        return PageServer(out_dir, port)
    except OSError as error:
        raise InputError(f"cannot listen on {HOST}:{port}: {error.strerror or error}", key="--port") from None


@main.command()
@click.argument("inputs", nargs=-1, required=True)
@_what_if
def check(inputs: tuple[str, ...], assignments: tuple[str, ...]) -> None:
    """Derive, verify and evaluate the criteria of each INPUT; write nothing."""
    from calcsheet import api

    overrides = _guard(lambda: _assignments(assignments))

    def one(job) -> int:
        sheet = api.check(api.load(job.path, set=overrides, package_records=job.package_records))
        job.remember(sheet.built.sheet.record, overrides)
        click.echo(f"{sheet.name}: {sheet.summary}")
        if sheet.problem:
            click.echo(f"{sheet.name}: NOT FOR ISSUE: {sheet.problem}", err=True)
        return sheet.exit_code

    sys.exit(_run_each(inputs, one, build=False))


FAMILY_CURVES = 5  # response curves a --family plot overlays (every point when the sweep has fewer)


@main.command()
@click.argument("input_file", metavar="INPUT")
@click.option(
    "--vary",
    "vary",
    required=True,
    metavar="NAME=LOW..HIGH",
    help='The parameter swept, e.g. --vary R="1 kohm..100 kohm".',
)
@click.option(
    "--steps", default="25", show_default=True, metavar="N", help="Points of the sweep, both ends included (2 to 1000)."
)
@click.option("--log", "log", is_flag=True, help="Space the points evenly in the logarithm and draw the axis so.")
@click.option(
    "--of",
    "of",
    multiple=True,
    metavar="QUANTITY",
    help='A quantity to tabulate, named as a check names it: "v(60 s)", "max(T)", "reach(50 V)" (repeatable; '
    "default: every criterion's subject).",
)
@click.option("--family", is_flag=True, help=f"Also plot the response for {FAMILY_CURVES} values of the parameter.")
@click.option(
    "--format", "formats", default=None, metavar="LIST", help="Comma-separated: csv,svg,png (default: csv,svg)."
)
@click.option("--out", "out_dir", default=None, metavar="DIR", help="Folder for the outputs (default: beside INPUT).")
@_what_if
def sweep(
    input_file: str,
    vary: str,
    steps: str,
    log: bool,
    of: tuple[str, ...],
    family: bool,
    formats: str | None,
    out_dir: str | None,
    assignments: tuple[str, ...],
) -> None:
    """Evaluate INPUT's criteria and quantities over a range of one parameter: a CSV table and a plot,
    <stem>.sweep-NAME.csv and .svg, with each limiting value found where a verdict changes."""
    from calcsheet.load.sweep_range import parse_vary
    from calcsheet.pipeline import (
        DEFAULT_SWEEP_FORMATS,
        SWEEP_FORMATS,
        SweepRequest,
        parse_formats,
        sweep_outputs,
        write_all,
    )

    path = Path(input_file)
    if not path.is_file():
        _guard(lambda: _refuse("no such file", input_file))
    chosen = _guard(lambda: parse_formats(formats, SWEEP_FORMATS) if formats else DEFAULT_SWEEP_FORMATS)
    overrides = _guard(lambda: _assignments(assignments))
    request = SweepRequest(
        vary=_guard(lambda: parse_vary(vary)),
        steps=_guard(lambda: _whole_number(steps, "--steps")),
        log=log,
        of=of,
        family=FAMILY_CURVES if family else 0,
        formats=chosen,
    )
    folder = Path(out_dir) if out_dir is not None else path.parent

    def one(_) -> int:
        files, lines = sweep_outputs(path, request, overrides)
        written = write_all(folder, files)
        click.echo(f"{path}: " + "\n".join(lines) + f"\n  -> {', '.join(str(w) for w in written)}")
        return EXIT_OK

    sys.exit(_run_each((input_file,), one, build=False))


def _whole_number(text: str, key: str) -> int:
    from calcsheet.errors import InputError

    try:
        return int(text.strip())
    except ValueError:
        raise InputError(f"'{text}' is not a whole number", key) from None


@main.command()
@click.argument("input_file", metavar="INPUT")
@click.option(
    "--role",
    required=True,
    type=click.Choice(["prepared", "checked", "approved"]),
    help="The role signing; roles sign in this order.",
)
@click.option("--name", required=True, help="The signer's name as it should appear on the sheet.")
@click.option("--date", default=None, help="YYYY-MM-DD (default: today).")
@click.option("--accept-failing", is_flag=True, help="Sign even though criteria or verification fail.")
def sign(input_file: str, role: str, name: str, date: str | None, accept_failing: bool) -> None:
    """Sign INPUT for ROLE: write the name, date and the content's fingerprint into its [signoff] table."""
    from calcsheet.pipeline import build_sheet, write_file
    from calcsheet.review.sign import sign as sign_input

    path = Path(input_file)
    if not path.is_file():
        _guard(lambda: _refuse("no such file", input_file))
    value, when = _guard(
        lambda: _os_guarded(
            lambda: sign_input(path, role, name, date, accept_failing, build_sheet=build_sheet, write_file=write_file),
            input_file,
        )
    )
    click.echo(f"{path}: signed {role} by {name.strip()} on {when} for fingerprint {value[:12]}")


@main.command()
@click.argument("inputs", nargs=-1)
@click.option(
    "--require",
    type=click.Choice(["prepared", "checked", "approved"]),
    default=None,
    help="Exit 1 when any sheet lacks a current sign-off of this role.",
)
@click.option("--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True)
def status(inputs: tuple[str, ...], require: str | None, fmt: str) -> None:
    """One line per sheet (INPUT files or folders; default: this folder): number, revision, issue status,
    verdict and each role's sign-off (current, stale or unsigned)."""
    from calcsheet.review.status import lacking, sheet_status, status_json, status_line

    found = []

    def one(built) -> int:
        found.append(sheet_status(built))
        if fmt == "text":
            click.echo(status_line(found[-1]))
        return EXIT_OK

    worst = _run_each(inputs or (".",), one)
    if fmt == "json":
        click.echo(status_json(found), nl=False)
    if require:
        missing = lacking(found, require)
        if missing:
            click.echo(
                f"{len(missing)} of {len(found)} sheets lack a current {require} sign-off: "
                + ", ".join(s.file for s in missing),
                err=True,
            )
            worst = max(worst, EXIT_CHECK_FAILED)
    sys.exit(worst)


@main.command()
@click.argument("input_file", metavar="INPUT")
@click.option("--format", "fmt", type=click.Choice(["txt", "json"]), default="txt", show_default=True)
def show(input_file: str, fmt: str) -> None:
    """Write INPUT's text (or JSON) record to standard output, e.g. as git's textconv for *.toml inputs."""
    from calcsheet.writers import writer_for

    def one(built) -> int:
        click.echo(writer_for(fmt)(built.sheet, None), nl=False)
        return EXIT_OK

    sys.exit(_run_each((input_file,), one))


@main.command()
@click.argument("files", nargs=-1, required=True, metavar="OLD NEW | INPUT...")
@click.option("--rev", default=None, help="Compare each INPUT with its version at this git revision.")
@click.option("--format", "fmt", type=click.Choice(["text", "md", "json"]), default="text", show_default=True)
@click.option("--exit-code", "exit_code", is_flag=True, help="Exit 1 when any result or verdict changed.")
@click.option(
    "--colour",
    type=click.Choice(["auto", "always", "never"]),
    default="auto",
    show_default=True,
    help="Colour the text report: auto colours it on a terminal only, and never while NO_COLOR is set.",
)
def diff(files: tuple[str, ...], rev: str | None, fmt: str, exit_code: bool, colour: str) -> None:
    """Compare two sheets (inputs or JSON records, OLD NEW), or each INPUT with its version at --rev:
    verdict flips, inputs, results, solution forms and the sign-offs that go stale."""
    from calcsheet.pipeline import build_sheet
    from calcsheet.review.diff import answer_changed, compare_records
    from calcsheet.review.diff_words import report
    from calcsheet.review.earlier import at_revision, from_file

    if rev is None and len(files) != 2:
        _guard(lambda: _refuse("give two files, OLD and NEW, or --rev REV with the inputs", " ".join(files)))
    comparisons = []
    for old_name, new_name in [(name, name) for name in files] if rev is not None else [files]:
        if rev is not None:
            _guard(lambda: Path(new_name).is_file() or _refuse("no such file", new_name))
            old = _guard(lambda: _os_guarded(lambda: at_revision(Path(new_name), rev, build_sheet), new_name))
        else:
            old = _guard(lambda: _os_guarded(lambda: from_file(old_name, build_sheet), old_name))
        new = _guard(lambda: _os_guarded(lambda: from_file(new_name, build_sheet), new_name))
        changes = _guard(lambda: compare_records(old.record, new.record, f"{old.name} or {new.name}"))
        comparisons.append((old.name, new.name, changes))
    coloured = _colour_wanted(colour) and fmt == "text"
    click.echo(report(fmt, comparisons, coloured), nl=False, color=coloured or None)
    changed = any(answer_changed(changes) for _, _, changes in comparisons)
    sys.exit(EXIT_CHECK_FAILED if exit_code and changed else EXIT_OK)


def _colour_wanted(choice: str) -> bool:
    """always, never, or (auto) when standard output is a terminal and NO_COLOR is unset or empty."""
    if choice != "auto":
        return choice == "always"
    return sys.stdout.isatty() and not os.environ.get("NO_COLOR")


def _raise(error: Exception):
    raise error


def _refuse(message: str, file: str):
    from calcsheet.errors import InputError

    raise InputError(message, file=file)


@main.command()
@click.argument("folder")
@click.argument("target", metavar="basis.NAME|SHEET")
def impact(folder: str, target: str) -> None:
    """List the sheets of the package in FOLDER that use TARGET (a design-basis value written basis.NAME, or a
    sheet number), directly or through other sheets' results: what to rebuild and re-check after a change."""
    from calcsheet.package.impact import impact_lines

    click.echo("\n".join(_guard(lambda: impact_lines(Path(folder), target))))


@main.command()
@click.option("--package", "package", is_flag=True, help="The schema of package.toml instead of an input file's.")
def schema(package: bool) -> None:
    """Print the JSON Schema of an input file (or of package.toml) for an editor to validate against."""
    from calcsheet.load.schema import schema_text

    click.echo(schema_text(package), nl=False)


@main.command()
@click.argument("name", required=False)
def kinds(name: str | None) -> None:
    """List the model kinds, or show one kind's parameters, dimensions and equation."""
    from calcsheet.kinds.catalogue import catalogue_lines, describe

    lines = _guard(lambda: describe(name) if name else catalogue_lines())
    click.echo("\n".join(lines))


@main.command()
@click.argument("name")
@click.argument("file", required=False)
def new(name: str, file: str | None) -> None:
    """Write a commented starter input for kind NAME to FILE (default: NAME.toml)."""
    from calcsheet.errors import InputError
    from calcsheet.kinds.catalogue import starter_text
    from calcsheet.pipeline import write_file

    text = _guard(lambda: starter_text(name))
    target = Path(file or f"{name}.toml")
    if target.exists():
        _guard(
            lambda: (_ for _ in ()).throw(
                InputError("already exists; choose another name or remove it", file=str(target))
            )
        )
    _guard(lambda: _os_guarded(lambda: write_file(target, text), str(target)))
    click.echo(f"wrote {target}: build it with `calcsheet build {target}`")


def _assignments(assignments: tuple[str, ...]) -> tuple[tuple[str, str], ...]:
    if not assignments:
        return ()  # and sympy, which the override parser brings, stays unimported
    from calcsheet.load.overrides import parse_assignment

    return tuple(parse_assignment(text) for text in assignments)


def _run_each(
    inputs: tuple[str, ...],
    action,
    writes: bool = False,
    overrides: tuple = (),
    jobs=None,
    failures=None,
    build: bool = True,
) -> int:
    """Build each input (a package's sheets in their build order) and act on it (on its session.Job, with ``build``
    False); one sheet's failure is reported on one line and the others go on. The exit code is the worst."""
    from calcsheet.package.session import jobs_for

    found = _guard(lambda: jobs_for(inputs, writes))
    if jobs is not None:
        jobs.extend(found)
    failures = {} if failures is None else failures
    worst = EXIT_OK
    for job in found:
        path = job.path
        try:
            worst = max(worst, _os_guarded(lambda: action(job.build(overrides) if build else job), str(path)))
        except CalcsheetError as error:
            click.echo(str(error.located(file=str(path))), err=True)
            failures[path] = str(error)
            worst = max(worst, error.exit_code)
        except Exception as error:  # a defect of ours, not the user's: one line, no traceback
            if os.environ.get("CALCSHEET_DEBUG"):
                raise
            click.echo(
                f"{path}: internal error: {type(error).__name__}: {error} "
                "(set CALCSHEET_DEBUG=1 for details and please report it)",
                err=True,
            )
            failures[path] = f"internal error: {type(error).__name__}"
            worst = max(worst, EXIT_INTERNAL)
    return worst


def _style(style: str | None) -> Path | None:
    from calcsheet.errors import InputError

    if style is None:
        return None
    path = Path(style)
    if not path.is_dir():
        raise InputError("no such style folder", key="--style", file=style)
    return path


def _os_guarded(thunk, file: str):
    """An unwritable folder, a full disk or a file where a folder should be is the user's to fix: one line, exit 2."""
    from calcsheet.errors import InputError

    try:
        return thunk()
    except OSError as error:
        where = error.filename or file
        raise InputError(f"cannot write or read here: {error.strerror or error}", file=str(where)) from None


def _guard(thunk):
    try:
        return thunk()
    except CalcsheetError as error:
        click.echo(str(error), err=True)
        sys.exit(EXIT_INPUT_ERROR)


if __name__ == "__main__":
    main()
