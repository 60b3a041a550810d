"""Checks every test shares.

mpmath's working precision is one global setting: a test that sets ``mpmath.mp.dps`` and leaves it changes the
arithmetic of every test after it in the same worker (the plain-arithmetic tests compare bits with mpmath at 53
bits), so the outcome would hang on which tests a worker happened to run. Each test must leave it as it found
it (``with mpmath.workdps(...)``)."""

from __future__ import annotations

import mpmath
import pytest


@pytest.fixture(autouse=True)
def mpmath_precision_is_left_as_found():
    before = mpmath.mp.prec
    yield
    after = mpmath.mp.prec
    mpmath.mp.prec = before
    assert after == before, f"the test left mpmath's precision at {after} bits (it found {before})"
