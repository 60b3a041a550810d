"""A watch runs until the engineer stops it: Ctrl-C (SIGINT) or a service manager's SIGTERM. Both become one
KeyboardInterrupt in the watching process, wherever it is (waiting, or in the middle of a build, whose writes are
all-or-nothing per file), which the command catches to close the server and exit 0. A second signal while stopping
is ignored, so the stop is never cut short with a traceback; forked build workers ignore them and end with the
watch (package/schedule.py)."""

from __future__ import annotations

import contextlib
import os
import signal

SIGNALS = (signal.SIGINT, signal.SIGTERM)


@contextlib.contextmanager
def stop_on_signals():
    """Within the block, SIGINT and SIGTERM raise KeyboardInterrupt once. After it the previous handlers come back,
    unless a stop began: then the signals stay ignored while the process finishes its last lines and exits."""
    owner = os.getpid()
    stopping = [False]

    def stop(signum, frame):
        if os.getpid() != owner or stopping[0]:  # a forked worker, or a stop already on its way
            return
        stopping[0] = True
        raise KeyboardInterrupt

    previous = {s: signal.signal(s, stop) for s in SIGNALS}
    try:
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, signal.SIG_IGN if stopping[0] else handler)
