"""A time limit on plugin code: a model evaluation (or a plugin's import) that runs longer is
stopped with :class:`PluginTimeout` and reported like any other plugin failure.

It uses the interval timer of the process (SIGALRM), so it works in the main thread of a
process on POSIX systems; elsewhere (another thread, Windows) the code runs without a limit. A
plugin stuck inside compiled code that never returns to Python cannot be interrupted this way.
"""

from __future__ import annotations

import contextlib
import signal
import threading
from collections.abc import Iterator


class PluginTimeout(BaseException):
    """Plugin code ran past its time limit. A BaseException, like KeyboardInterrupt, so that no
    ``except Exception`` on the way out (in a plugin, or in a fit that retries a failed
    evaluation) swallows it and calls the stuck code again; whoever set the limit catches it."""


@contextlib.contextmanager
def time_limit(seconds: float | None, what: str) -> Iterator[None]:
    usable = (seconds and seconds > 0 and hasattr(signal, "setitimer")
              and threading.current_thread() is threading.main_thread())
    if not usable or seconds is None:
        yield
        return

    def stop(signum, frame):
        raise PluginTimeout(f"{what} took longer than {seconds:g} s and was stopped")

    previous = signal.signal(signal.SIGALRM, stop)
    signal.setitimer(signal.ITIMER_REAL, float(seconds))
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0.0)
        signal.signal(signal.SIGALRM, previous)
