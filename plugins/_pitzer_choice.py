"""Which code evaluates a Pitzer mixture request: the compiled kernel or numpy.

The compiled kernel (:mod:`saltbench.plugins._pitzer_kernel`, numba, the optional extra
``fast``) evaluates large requests; everything else, and every request where numba is missing
or its kernel fails to compile, takes the numpy path of
:mod:`saltbench.plugins._pitzer_mixture`. The two give the same values to rounding
(``tests/test_pitzer_kernel.py``).

When the kernel pays: importing numba and loading the kernel from numba's cache costs about
half a second once per process (compiling it, the first time on a machine, several seconds),
and saves about 0.2 µs per composition afterwards (0.36 against 0.17 on a quiet machine, seven
ions; ``tests/benchmarks/SPEED.md``). A command that evaluates one grid of 100 000 compositions
is faster without it (40 ms of numpy against 20 ms after half a second of loading); a long
session of scans and studies in one process is faster with it. Which kind of process this is
cannot be known in advance, so the choice follows the rent-or-buy rule of online algorithms (the
ski-rental problem; Karlin, Manasse, Rudolph and Sleator, Algorithmica 3, 79 (1988), from
memory): keep paying the slower path until it has cost about what switching costs, then switch.
That never costs more than about twice the better choice made in hindsight. In numbers: a
request of :data:`KERNEL_MIN_ROWS` rows or more takes the numpy path until this process has
evaluated :data:`KERNEL_AFTER_ROWS` compositions that way (about 0.7 s of numpy work), and the
kernel from then on. Smaller requests always take numpy: fits and comparisons make many small
requests, in worker processes, and keep their results to the last bit whatever else the process
has done.

``SALTBENCH_KERNEL`` (environment) overrides the choice, for tests and comparisons of the two
paths: ``numpy`` always takes numpy, ``compiled`` takes the kernel for every request (still
numpy where numba is missing), ``auto`` or unset as above.
"""

from __future__ import annotations

import os
from types import ModuleType

from saltbench.errors import UserError

#: Requests of fewer rows always take numpy (``SALTBENCH_KERNEL=auto``).
KERNEL_MIN_ROWS = 4096
#: Compositions a process evaluates by numpy in large requests before it loads the kernel: at
#: about 0.36 µs each, about the half second that loading the kernel costs (see the module).
KERNEL_AFTER_ROWS = 2_000_000
KERNEL_ENV = "SALTBENCH_KERNEL"
CHOICES = ("auto", "numpy", "compiled")



def _debug(message: str, *args: object) -> None:
    """A debug-level log record (the logging module is imported only then: the plugin loads at
    every start-up, and a fall back to numpy is the only thing this module says)."""
    import logging

    logging.getLogger(__name__).debug(message, *args)


class _Kernel:
    """The kernel module once imported (None when numba is missing or the kernel failed), and
    whether one call has succeeded: until then a failure (numba cannot compile here) sends the
    process to the numpy path for good; after it, a failure is a fault of ours and is raised."""

    def __init__(self) -> None:
        self.module: ModuleType | None = None
        self.tried = False
        self.proven = False
        self.numpy_rows = 0  # compositions evaluated by numpy in large requests so far

    def load(self) -> ModuleType | None:
        if not self.tried:
            self.tried = True
            try:
                from saltbench.plugins import _pitzer_kernel
            except Exception as exc:  # numba missing, or present but unusable
                _debug("Pitzer mixtures: no compiled kernel (%s: %s); numpy path",
                           type(exc).__name__, exc)
            else:
                self.module = _pitzer_kernel
        return self.module

    def failed(self, exc: Exception) -> None:
        """The first call failed: numpy from now on (raised again when a call had succeeded)."""
        if self.proven:
            raise exc
        _debug("Pitzer mixtures: the compiled kernel failed (%s: %s); numpy path",
                   type(exc).__name__, exc)
        self.module = None


KERNEL = _Kernel()


def choice() -> str:
    """``SALTBENCH_KERNEL``'s value (``auto`` when unset); another value is refused (a
    UserError: the model call passes it on, and the command exits with status 2)."""
    value = os.environ.get(KERNEL_ENV, "").strip().lower() or "auto"
    if value not in CHOICES:
        raise UserError(f"{KERNEL_ENV}={os.environ[KERNEL_ENV]!r}: use one of {', '.join(CHOICES)}")
    return value


def compiled_for(n_rows: int) -> ModuleType | None:
    """The kernel module to evaluate a request of ``n_rows`` rows, or None for numpy."""
    how = choice()
    if how == "numpy" or (how == "auto" and n_rows < KERNEL_MIN_ROWS):
        return None
    if how == "auto" and not KERNEL.tried and KERNEL.numpy_rows < KERNEL_AFTER_ROWS:
        KERNEL.numpy_rows += n_rows  # not yet worth loading (see the module)
        return None
    return KERNEL.load()
