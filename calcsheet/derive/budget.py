"""Time budgets for symbolic steps that can run for minutes (sympy's integrate has no timeout).

A SIGALRM timer interrupts the step; the caller then takes its fallback. Off the main thread,
where signals cannot be used, steps run without a budget.
"""

from __future__ import annotations

import signal
import threading
from contextlib import contextmanager
from typing import Callable, TypeVar

T = TypeVar("T")

INTEGRATE_SECONDS = 8.0
SIMPLIFY_SECONDS = 3.0
LIMIT_SECONDS = 3.0


class OutOfTime(BaseException):
    """Raised inside a step whose budget ran out (BaseException so sympy's own handlers pass it on)."""


@contextmanager
def time_budget(seconds: float):
    if threading.current_thread() is not threading.main_thread() or not hasattr(signal, "setitimer"):
        yield
        return

    def _expire(signum, frame):
        raise OutOfTime()

    previous = signal.signal(signal.SIGALRM, _expire)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


def within(seconds: float, step: Callable[[], T], fallback: T) -> tuple[T, bool]:
    """Run ``step`` under a budget; return (result, True) or (fallback, False) when time ran out."""
    try:
        with time_budget(seconds):
            return step(), True
    except OutOfTime:
        return fallback, False
