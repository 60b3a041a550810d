"""Time budgets for symbolic steps that can run for minutes (sympy's integrate has no timeout).

A timer on this process's own CPU time (ITIMER_PROF, SIGPROF) interrupts the step; the caller then takes its
fallback. CPU time, not the wall clock: other work on the machine (a loaded CI host, parallel builds) takes
nothing from a budget, so a sheet does not change with the machine's load. Budgets nest (an inner step never
cancels its caller's budget), and where one cannot be armed (off the main thread) the step is refused loudly
rather than run without one.
"""

from __future__ import annotations

import signal
import threading
import time
from contextlib import contextmanager
from typing import Callable, TypeVar

T = TypeVar("T")

# Budgets guard against hangs; they must never choose between forms for the inputs we ship and test.
# Each is set so that every shipped and tested input finishes well inside it on a machine four times
# slower than a developer's: benchmarks/bench_budget_headroom.py rebuilds the demos with every budget
# divided by four (SCALE = 0.25) and compares the records (a measurement, not a test: it depends on the
# machine). The slowest step of a demo used to be the probe's bell-shaped forcing (about 5 s in sympy before
# it gave up); that integral is now decided by its form (no_elementary.py) and never reaches sympy.
INTEGRATE_SECONDS = 40.0
SIMPLIFY_SECONDS = 15.0
LIMIT_SECONDS = 15.0
SCALE = 1.0  # multiplies every budget; only the headroom benchmark changes it
# Only the headroom benchmark sets this to a list: each budgeted step then appends (step's name, budget s,
# wall s, CPU s) so the step nearest its budget can be found. Nothing reads it back during a build.
STEPS_SEEN: list | None = None

# Why a symbolic step fell back, as a code a record or a test can compare (the sheet words it).
NO_CLOSED_FORM = "no_closed_form"
BUDGET_EXCEEDED = "budget_exceeded"
# The antiderivative found has no finite value at the initial point (two logarithmic singularities
# that cancel only in the limit, say), so K = y0 mu(x0) - F(x0) cannot be taken by substitution.
NOT_FINITE_AT_START = "antiderivative_not_finite_at_start"


class OutOfTime(BaseException):
    """Raised inside a step whose budget ran out (BaseException so sympy's own handlers pass it on).

    ``budget`` is the budget that ran out: an outer budget expiring inside an inner step is not
    taken by the inner step as its own.
    """

    def __init__(self, budget: object = None):
        super().__init__()
        self.budget = budget


class BudgetUnavailable(RuntimeError):
    """A budget cannot be armed here (off the main thread, or no interval timer): a defect of the caller."""


_open: list[tuple[object, float]] = []  # (budget, deadline in this process's CPU seconds), outermost first
_SIGNAL, _TIMER = (signal.SIGPROF, signal.ITIMER_PROF) if hasattr(signal, "SIGPROF") else (None, None)


def _cpu() -> float:
    """The CPU seconds this process has used: the clock ITIMER_PROF counts (user and system, all threads)."""
    return time.process_time()


@contextmanager
def time_budget(seconds: float):
    """Interrupt the body after ``seconds`` × SCALE. Budgets nest: the timer is armed for the nearest
    deadline of all open budgets, and an inner one never cancels or extends an outer one."""
    if threading.current_thread() is not threading.main_thread() or _SIGNAL is None:
        raise BudgetUnavailable("symbolic steps need a time budget, which needs the main thread and SIGPROF")
    token = object()
    if signal.getsignal(_SIGNAL) is not _expire:
        # installed once and left in place: a tick that arrives after the last budget closed finds no budget
        # open and is ignored, where the default action of SIGPROF would end the process
        signal.signal(_SIGNAL, _expire)
    _open.append((token, _cpu() + seconds * SCALE))
    try:
        _arm()
        yield token
    finally:
        # no tick may interrupt the bookkeeping: one that lands before the entry is removed would leave it open
        signal.pthread_sigmask(signal.SIG_BLOCK, {_SIGNAL})
        try:
            _open.remove(next(entry for entry in _open if entry[0] is token))
            if _open:
                _arm()
            else:
                signal.setitimer(_TIMER, 0)
        finally:
            signal.pthread_sigmask(signal.SIG_UNBLOCK, {_SIGNAL})


def _arm() -> None:
    """Set the timer for the nearest open deadline (at once, if it has passed)."""
    nearest = min(deadline for _, deadline in _open)
    signal.setitimer(_TIMER, max(nearest - _cpu(), 1e-6))


def _expire(signum, frame):
    if not _open:  # a tick that was already on its way when the last budget closed
        return
    now = _cpu()
    expired = min(_open, key=lambda entry: entry[1])
    if expired[1] <= now + 1e-3:
        raise OutOfTime(expired[0])
    _arm()  # woken early (the timer's resolution): wait for the rest


def within(seconds: float, step: Callable[[], T], fallback: T) -> tuple[T, bool]:
    """Run ``step`` under a budget; return (result, True) or (fallback, False) when its own time ran out.
    An outer budget that runs out meanwhile passes through to its own ``within``."""
    token = None
    started = (time.monotonic(), time.process_time()) if STEPS_SEEN is not None else None
    try:
        with time_budget(seconds) as token:
            return step(), True
    except OutOfTime as expired:
        if expired.budget is not token:
            raise
        return fallback, False
    finally:
        if started is not None and STEPS_SEEN is not None:
            name = f"{getattr(step, '__module__', '')}.{getattr(step, '__qualname__', repr(step))}"
            STEPS_SEEN.append((name, seconds, time.monotonic() - started[0], time.process_time() - started[1]))
