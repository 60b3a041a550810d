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

# Budgets guard against hangs; they must never choose between forms for the inputs we ship and test.
# Each is set so that every shipped and tested input finishes well inside it on a machine four times
# slower than a developer's: tests/derive/test_budget_margin.py rebuilds the demos with every budget
# divided by four (SCALE = 0.25) and requires the same records. The slowest step of a demo takes
# about 5 s here (the probe's error-function integral).
INTEGRATE_SECONDS = 40.0
SIMPLIFY_SECONDS = 15.0
LIMIT_SECONDS = 15.0
SCALE = 1.0  # multiplies every budget; only the margin test changes it

# Why a symbolic step fell back, as a code a record or a test can compare (the sheet words it).
NO_CLOSED_FORM = "no_closed_form"
BUDGET_EXCEEDED = "budget_exceeded"
# The antiderivative found has no finite value at the initial point (two logarithmic singularities
# that cancel only in the limit, say), so K = y0 mu(x0) - F(x0) cannot be taken by substitution.
NOT_FINITE_AT_START = "antiderivative_not_finite_at_start"


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
    signal.setitimer(signal.ITIMER_REAL, seconds * SCALE)
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
