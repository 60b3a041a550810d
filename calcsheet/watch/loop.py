"""Waiting for saves and rebuilding after each batch of them, with the watchfiles library (the system's file
notifications, or reading the files' times every few hundred milliseconds with ``poll``, for network drives and
containers where notifications do not arrive). An editor's save (often a write, a rename and a delete) comes as
one batch, so it makes one round.

The first round builds everything. A save made between reading the inputs for it and the watcher starting would
be missed by the watcher, so the files' contents are compared with a snapshot taken before the first round once
the watcher is known to run (its first wake-up). A round's errors are reported on one line and the watch goes on;
it ends only by KeyboardInterrupt (stopping.py)."""

from __future__ import annotations

import os
from pathlib import Path

from calcsheet.errors import CalcsheetError, InputError
from calcsheet.watch.targets import WatchTarget

POLL_DELAY_MS = 300  # --poll: how often the files' times are read
WAKE_MS = 1000  # the watcher wakes this often with nothing saved (its first wake-up says it runs)


def watch(target: WatchTarget, rebuild, say, report, poll: bool = False, after_round=None) -> None:
    """Build ``target`` once, then again after each change that matters, until KeyboardInterrupt.
    ``rebuild(items, first)`` builds what ``target.items`` names; ``say`` and ``report`` print a line to standard
    output and standard error; ``after_round()`` runs after every round (the server's reload signal)."""
    before = target.snapshot()
    _round(rebuild, target.items(), True, report, after_round)
    started = False
    for changes in _batches(target, poll, report):
        if not started:
            started = True
            now = target.snapshot()
            changes = changes | {p for p in before.keys() | now.keys() if before.get(p) != now.get(p)}
            say(f"watching {target.given} for changes (Ctrl-C stops)")
        if changes:
            _round(rebuild, target.items(frozenset(changes)), False, report, after_round)


def _round(rebuild, items: tuple[str, ...], first: bool, report, after_round) -> None:
    """One round; a user's error or a defect of ours is one line, and the watch goes on."""
    try:
        rebuild(items, first)
    except CalcsheetError as error:
        report(str(error))
    except Exception as error:  # a defect of ours: one line, no traceback, and keep watching
        if os.environ.get("CALCSHEET_DEBUG"):
            raise
        report(
            f"{', '.join(items)}: internal error: {type(error).__name__}: {error} "
            "(set CALCSHEET_DEBUG=1 for details and please report it)"
        )
    if after_round is not None:
        after_round()


def _batches(target: WatchTarget, poll: bool, report):
    """Sets of changed paths that matter (empty on a wake-up with nothing saved). Where the system's notifications
    cannot be set up, say so once and poll instead."""
    try:
        yield from _watched(target, poll)
        return
    except (OSError, RuntimeError) as error:
        if poll:
            raise InputError(f"cannot watch for changes: {error}", file=str(target.given)) from None
        failure = error
    report(f"{target.given}: file notifications are unavailable ({failure}); polling every {POLL_DELAY_MS} ms instead")
    try:
        yield from _watched(target, True)
    except (OSError, RuntimeError) as error:
        raise InputError(f"cannot watch for changes: {error}", file=str(target.given)) from None


def _watched(target: WatchTarget, poll: bool):
    from watchfiles import DefaultFilter, watch

    class Matters(DefaultFilter):
        """watchfiles' own list of what never matters (version control, editors' swap files), then ours."""

        def __call__(self, change, path: str) -> bool:
            return super().__call__(change, path) and target.relevant(Path(path))

    for changes in watch(
        *(str(f) for f in target.folders),
        watch_filter=Matters(),
        rust_timeout=WAKE_MS,
        yield_on_timeout=True,
        force_polling=True if poll else None,
        poll_delay_ms=POLL_DELAY_MS,
        recursive=target.recursive,
    ):
        yield {Path(path) for _, path in changes}
