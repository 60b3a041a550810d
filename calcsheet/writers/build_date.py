"""SOURCE_DATE_EPOCH, read and checked once here, because libraries read it with a bare int().

The reproducible-builds convention lets a packager fix dates with SOURCE_DATE_EPOCH (whole
seconds since 1970). calcsheet never needs it, but honours a valid value for the PDF's dates. An
empty, non-integer, negative or far-future value is ignored, and while matplotlib saves a plot
(it would raise on such a value) it is hidden from the environment and then put back.
"""

from __future__ import annotations

import contextlib
import os
import re
import threading

# The last second a four-digit year (as PDF dates have) can hold: 9999-12-31T23:59:59Z.
LATEST_EPOCH = 253402300799
_NAME = "SOURCE_DATE_EPOCH"
_LOCK = threading.Lock()


def source_date_epoch() -> int | None:
    """SOURCE_DATE_EPOCH as whole seconds from 1970 up to year 9999; anything else is None."""
    text = os.environ.get(_NAME, "").strip()
    if not re.fullmatch(r"[0-9]{1,12}", text):
        return None
    value = int(text)
    return value if value <= LATEST_EPOCH else None


@contextlib.contextmanager
def invalid_source_date_epoch_hidden():
    """Within the block, an invalid SOURCE_DATE_EPOCH is absent from os.environ; restored after."""
    with _LOCK:
        value = os.environ.get(_NAME)
        hide = value is not None and source_date_epoch() is None
        if hide:
            del os.environ[_NAME]
        try:
            yield
        finally:
            if hide:
                os.environ[_NAME] = value
