"""Running sheets in dependency order, in a pool of worker processes: a sheet starts once every sheet whose
results it uses has finished, and each finished sheet is handed back to the main process (which alone writes
files). Workers are forked and live for the whole run, so each imports the heavy libraries once; and where the
caller names them (``prepare``), the main process imports them once before forking, so no worker imports them
at all."""

from __future__ import annotations

import multiprocessing
import os
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass


@dataclass(frozen=True)
class Step:
    name: object  # any hashable that names the step
    after: tuple = ()  # names of the steps that must finish first


def default_jobs() -> int:
    """The cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not every system has affinity
        return max(1, os.cpu_count() or 1)


def _die_with_parent(parent: int) -> None:
    """A worker ends when the build that started it ends, even by SIGKILL (which no handler sees): on Linux
    the kernel signals it (PR_SET_PDEATHSIG); a parent already gone ends it at once."""
    import ctypes
    import signal

    try:
        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG = 1
    except (OSError, AttributeError):  # not Linux: the pool's own shutdown is all there is
        pass
    if os.getppid() != parent:
        os._exit(1)


def run_steps(steps: list[Step], start, finish, jobs: int, prepare=None) -> None:
    """For each step once its ``after`` steps are done: ``start(step)`` returns ``("done", result)`` when the
    main process settles it at once (a cache hit), or ``("work", function, argument)`` for a worker; then
    ``finish(step, result)`` runs in the main process. Steps become ready in the order given; with one job the
    work runs here, in order, with no pool. ``prepare()`` runs here once, just before the first worker is forked
    (never when every step is settled at once or there is one job): the imports the workers would each make."""
    pending = list(steps)
    finished: set = set()
    running: dict[Future, Step] = {}
    pool: ProcessPoolExecutor | None = None
    try:
        while pending or running:
            progressed = False
            for step in [s for s in pending if all(a in finished for a in s.after)]:
                pending.remove(step)
                started = start(step)
                if started[0] == "done":
                    finish(step, started[1])
                    finished.add(step.name)
                elif jobs <= 1:
                    finish(step, started[1](started[2]))
                    finished.add(step.name)
                else:
                    if pool is None:
                        if prepare is not None:
                            prepare()
                        pool = ProcessPoolExecutor(
                            max_workers=jobs,
                            mp_context=multiprocessing.get_context("fork"),
                            initializer=_die_with_parent,
                            initargs=(os.getpid(),),
                        )
                    running[pool.submit(started[1], started[2])] = step
                progressed = True
                break  # look again from the first pending step: keeps the order of settling stable
            if progressed:
                continue
            if not running:
                raise RuntimeError("steps wait on steps that never run")  # the caller's order is acyclic
            done, _ = wait(running, return_when=FIRST_COMPLETED)
            for future in sorted(done, key=lambda f: steps.index(running[f])):
                step = running.pop(future)
                finish(step, future.result())
                finished.add(step.name)
    finally:
        if pool is not None:
            pool.shutdown(cancel_futures=True)
