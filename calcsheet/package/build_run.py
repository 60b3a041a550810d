"""``calcsheet build``'s loop: every sheet built in dependency order in a pool of workers (the Python API's
``sheet_of``, then ``Sheet.rendered``), its files written by the main process, and, for a package built through
its folder, each unchanged sheet's outputs reused from the build cache (package/cache.py) without deriving or
rendering it again."""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

from calcsheet.errors import EXIT_CHECK_FAILED, EXIT_OK, CalcsheetError, InputError
from calcsheet.package import cache
from calcsheet.package.schedule import Step, run_steps

EXIT_INTERNAL = 3


@dataclass(frozen=True)
class SheetTask:
    """What a worker needs to build and render one sheet; it writes nothing."""

    path: Path
    formats: tuple[str, ...]
    style: Path | None  # --style
    package_style: Path | None
    overrides: tuple = ()
    records: dict = field(default_factory=dict)  # upstream number -> JSON record, or ("failed", message)
    since: str | None = None
    package_sheet: bool = False  # built through its package: upstream records come from ``records``
    # the Python API's sheet_of(path, overrides, package records, since) -> its Sheet, not yet rendered (the
    # command line passes it in: this layer sits below the API)
    make: object = None
    archive: bool = False  # the PDF as PDF/A-3b carrying the input and the JSON record (build --archive)


def build_outputs(task: SheetTask) -> dict:
    """Build and render one sheet: its files in memory, its record, and the facts the register shows. A user's
    error comes back as a value (so that the other sheets go on); a defect of ours is raised."""
    record = None
    try:
        records = {n: InputError(r[1]) if isinstance(r, (list, tuple)) else r for n, r in task.records.items()}
        sheet = task.make(task.path, task.overrides, records if task.package_sheet else None, task.since)
        record = sheet.record
        sheet = sheet.rendered(
            task.formats,
            style=task.style,
            fallback_style=task.package_style,
            archive_of=task.path if task.archive else None,
        )
    except CalcsheetError as error:
        return {
            "error": str(error.located(file=str(task.path))),
            "message": error.message,
            "code": error.exit_code,
            "record": record,
        }
    pages = _pages(sheet.outputs.get("pdf"))
    from calcsheet.package.register import row_facts

    return {
        "rendered": dict(sheet.outputs),
        "record": record,
        "facts": row_facts(sheet.built, pages),
        "summary": sheet.summary,
        "problem": sheet.problem,
        "code": EXIT_OK if sheet.passed else EXIT_CHECK_FAILED,
    }


def _pages(pdf: bytes | None) -> int | None:
    if pdf is None:
        return None
    import io

    from pypdf import PdfReader

    return len(PdfReader(io.BytesIO(pdf)).pages)


@dataclass
class BuildRun:
    """One ``calcsheet build``: its settings, and what it has built so far."""

    out_dir: Path
    formats: tuple[str, ...]
    style: Path | None = None
    overrides: tuple = ()
    since: str | None = None
    force: bool = False
    make: object = None  # the Python API's sheet_of (see SheetTask)
    archive: bool = False
    say: object = print  # one line per sheet (stdout)
    say_reused: bool = True  # False: no line for a sheet reused from the cache (a watch's later rounds)
    warn: object = print  # errors (stderr)
    done: dict = field(default_factory=dict)  # path -> row facts of each sheet built or reused
    failures: dict = field(default_factory=dict)  # path -> the problem
    worst: int = EXIT_OK

    def run(self, jobs: list, workers: int, on_step=None) -> int:
        """Build every job (session.Job) in dependency order; ``on_step(path)`` after each."""
        self._versions = None
        self._digests: dict[str, str] = {}
        self._records: dict = {}  # (session id, number) -> record or ("failed", message)
        steps, self._jobs = [], {}
        for index, job in enumerate(jobs):
            self._jobs[index] = job
            after = ()
            if job.session is not None and job.whole_package and not self.overrides:
                entry = self._entry(job)
                names = {j.path: i for i, j in enumerate(jobs) if j.session is job.session}
                by_number = job.session.by_number
                after = tuple(names[by_number[n].path] for n in entry.upstream if by_number[n].path in names)
            steps.append(Step(index, after))

        settled: dict = {}
        reported = [0]

        def finish(step, outcome):
            """Records pass on at once; files are written and lines printed in build order, whatever the
            order the workers finish in."""
            self._remember(self._jobs[step.name], outcome)
            settled[step.name] = outcome
            while reported[0] in settled:
                job = self._jobs[reported[0]]
                self._finish(job, settled.pop(reported[0]))
                reported[0] += 1
                if on_step:
                    on_step(job.path)

        run_steps(steps, self._start, finish, workers, prepare=self._preparation(jobs, workers))
        return self.worst

    def _preparation(self, jobs: list, workers: int):
        """What the main process imports before forking its workers, so that they share one import: the libraries
        of a build, when at least two sheets certainly build (no cache entry for them yet); else nothing, so that a
        rebuild with one sheet to redo, or one broken input, costs the main process no import it would not use."""
        from calcsheet.pipeline import import_libraries

        cached = not (self.force or self.overrides or self.since is not None)
        certain = sum(
            1
            for job in jobs
            if not (cached and job.session is not None and job.whole_package)
            or not cache.entry_file(self.out_dir, self._stem(job)).exists()
        )
        return (lambda: import_libraries(self.formats)) if workers > 1 and certain >= 2 else None

    def _entry(self, job):
        return next(e for e in job.session.entries if e.path == job.path)

    def _stem(self, job) -> str:
        return job.path.stem + (".whatif" if self.overrides else "")

    def _upstream(self, job) -> dict:
        if job.session is None or not job.whole_package or self.overrides:
            return {}
        entry = self._entry(job)
        return {n: self._records[(id(job.session), n)] for n in entry.upstream if (id(job.session), n) in self._records}

    def _key(self, job, upstream: dict) -> str | None:
        """The cache key of a package sheet built through its folder; None where the cache does not apply."""
        if self.force or self.overrides or self.since is not None or job.session is None or not job.whole_package:
            return None
        if any(isinstance(r, (list, tuple)) for r in upstream.values()):
            return None
        from calcsheet.writers.build_date import source_date_epoch

        if self._versions is None:
            self._versions = cache.library_versions()
        package = job.session.package
        entry = self._entry(job)
        basis = {name: package.basis[name].entry for name in entry.basis_used}
        folders = [cache.default_styles_folder(), self.style, package.style, _named_style(entry)]
        styles = {str(f): self._digest(f) for f in folders if f is not None}
        settings = {"formats": list(self.formats), "epoch": source_date_epoch(), "archive": self.archive}
        return cache.sheet_key(job.path, basis, upstream, styles, settings, self._versions)

    def _digest(self, folder: Path) -> str:
        """A style folder's digest, read once per build."""
        if str(folder) not in self._digests:
            self._digests[str(folder)] = cache.folder_digest(str(folder)) if folder.is_dir() else ""
        return self._digests[str(folder)]

    def _start(self, step):
        job = self._jobs[step.name]
        upstream = self._upstream(job)
        key = self._key(job, upstream)
        if key is not None:
            entry = cache.cached_entry(self.out_dir, self._stem(job), key)
            if entry is not None:
                return ("done", {**entry, "cached": True, "key": key})
        task = SheetTask(
            path=job.path,
            formats=self.formats,
            style=self.style,
            package_style=job.session.package.style if job.session else None,
            overrides=self.overrides,
            records=upstream,
            since=self.since,
            make=self.make,
            archive=self.archive,
            package_sheet=job.session is not None and job.whole_package and not self.overrides,
        )
        return ("work", _keyed_build, (task, key))

    def _remember(self, job, outcome: dict) -> None:
        """A package sheet's record (or why it has none), for the sheets that use its results."""
        session_key = (id(job.session), self._entry(job).number) if job.session and job.whole_package else None
        if session_key and session_key[1] and not self.overrides:
            record = outcome.get("record")
            self._records[session_key] = record if record is not None else ("failed", outcome.get("message", ""))

    def _finish(self, job, outcome: dict) -> None:
        path = job.path
        if "error" in outcome:
            self.warn(outcome["error"])
            self.failures[path] = outcome["error"] if outcome["code"] != EXIT_INTERNAL else outcome["message"]
            self.worst = max(self.worst, outcome["code"])
            return
        stem = self._stem(job)
        if outcome.get("cached"):
            # in the formats' order, as a fresh build lists them
            names = [f"{stem}.{fmt}" for fmt in self.formats if f"{stem}.{fmt}" in outcome["outputs"]]
            written = [self.out_dir / n for n in names]
        else:
            from calcsheet.pipeline import write_outputs

            try:
                written = write_outputs(self.out_dir, stem, outcome["rendered"])
                if outcome["key"] is not None:
                    files = {f"{stem}.{fmt}": data for fmt, data in outcome["rendered"].items()}
                    facts = {k: outcome[k] for k in ("record", "facts", "summary", "problem", "code")}
                    from calcsheet.pipeline import write_file

                    write_file(cache.entry_file(self.out_dir, stem), cache.new_entry(outcome["key"], files, facts))
            except OSError as error:
                where = error.filename or str(path)
                problem = InputError(f"cannot write or read here: {error.strerror or error}", file=str(where))
                self.warn(str(problem.located(file=str(path))))
                self.failures[path] = problem.message
                self.worst = max(self.worst, problem.exit_code)
                return
        note = " (unchanged)" if outcome.get("cached") else ""
        if self.say_reused or not outcome.get("cached"):
            self.say(f"{path}: {outcome['summary']} -> {', '.join(str(w) for w in written)}{note}")
        self.done[path] = outcome["facts"]
        code = outcome["code"]
        if outcome["problem"]:
            self.warn(f"{path}: NOT FOR ISSUE: {outcome['problem']}")
            code = max(code, EXIT_CHECK_FAILED)
        self.worst = max(self.worst, code)


def _keyed_build(argument) -> dict:
    """A worker's step: the sheet built, with the cache key it was built under (a defect of ours becomes one
    line unless CALCSHEET_DEBUG asks for the traceback)."""
    task, key = argument
    try:
        outcome = build_outputs(task)
    except Exception as error:  # a defect of ours, not the user's
        if os.environ.get("CALCSHEET_DEBUG"):
            raise
        line = (
            f"{task.path}: internal error: {type(error).__name__}: {error} "
            "(set CALCSHEET_DEBUG=1 for details and please report it)"
        )
        return {
            "error": line,
            "message": f"internal error: {type(error).__name__}",
            "code": EXIT_INTERNAL,
            "record": None,
        }
    outcome["key"] = key
    return outcome


def _named_style(entry) -> Path | None:
    """The style folder a sheet's [sheet] style names (as the package read it, without loading the sheet), for
    the cache key."""
    folder = entry.path.parent / entry.style
    return folder if entry.style and folder.is_dir() else None
