"""SIGTERM handled like Ctrl-C: the same clean-up, a summary, exit status 143."""

from __future__ import annotations

import contextlib
import signal
import threading
from collections.abc import Iterator

__all__ = ["Terminated", "sigterm_as_interrupt"]


class Terminated(KeyboardInterrupt):
    """Raised in the main thread when the process receives SIGTERM."""


@contextlib.contextmanager
def sigterm_as_interrupt() -> Iterator[None]:
    """Inside the block, SIGTERM raises :class:`Terminated` in the main thread.

    So a terminated run cleans up exactly as a Ctrl-C does: the temporary
    file goes, nothing reaches a final name, the summary says what happened.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame):
        raise Terminated(f"terminated by signal {signum}")

    old = signal.signal(signal.SIGTERM, handler)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, old)
