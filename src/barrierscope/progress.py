"""Progress on stderr, for a person at a terminal only: one line per stage of a long job.

Nothing is printed when stderr is not a terminal (pipes, job queues, tests, notebooks) or
when ``BARRIERSCOPE_QUIET`` is set, so outputs and logs stay clean. Each line says what is
running and how long the job has run.
"""

from __future__ import annotations

import os
import sys
import time

_T0 = time.monotonic()


def enabled() -> bool:
    stream = sys.stderr
    return bool(getattr(stream, "isatty", lambda: False)()) and not os.environ.get("BARRIERSCOPE_QUIET")


def stage(message: str) -> None:
    """``message`` with the elapsed time, on stderr, when a person is watching."""
    if enabled():
        sys.stderr.write(f"  … {message} ({time.monotonic() - _T0:.0f} s)\n")
        sys.stderr.flush()


def restart() -> None:
    """Start the clock (at the start of a command)."""
    global _T0
    _T0 = time.monotonic()
