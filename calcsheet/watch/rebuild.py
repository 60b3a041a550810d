"""One round of a watch, through ``calcsheet build``'s own loop (package/build_run.py): a package's unchanged sheets
come from its build cache, and a round writes exactly the files a build would, with the build's line per sheet.
After the first round only the sheets built again get a line; a round that built nothing says so, so that every
save the watcher saw is answered."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path


@dataclass(frozen=True)
class Rebuild:
    """The build settings of one watch; called with what a round builds (``WatchTarget.items``)."""

    out_dir: Path
    formats: tuple[str, ...]
    style: Path | None
    workers: int
    make: object  # the Python API's sheet_of: builds one sheet and gives its one-line verdict
    say: object  # a line to standard output
    warn: object  # a line to standard error
    write_registers: object  # (jobs, done, failures, out_dir, quiet): a package's register and bound PDF
    outcomes: dict = field(default_factory=dict)  # the last round's pages: "<stem>.html" -> its error line, or ""

    def __call__(self, items: tuple[str, ...], first: bool) -> None:
        from calcsheet.package.build_run import BuildRun
        from calcsheet.package.session import jobs_for

        self.outcomes.clear()
        if not items:  # only deleted sheets: nothing to build
            return
        jobs = jobs_for(items, writes=True)
        lines = []

        def said(line: str) -> None:
            lines.append(line)
            self.say(line)

        def warned(line: str) -> None:
            lines.append(line)
            self.warn(line)

        run = BuildRun(
            out_dir=self.out_dir,
            formats=self.formats,
            style=self.style,
            make=self.make,
            say=said,
            warn=warned,
            say_reused=first,
        )
        run.run(jobs, self.workers)
        self.outcomes.update({f"{j.path.stem}.html": run.failures.get(j.path, "") for j in jobs})
        if not lines:
            self.say(f"{', '.join(items)}: no sheet changed")
        self.write_registers(jobs, run.done, run.failures, self.out_dir, not first)
