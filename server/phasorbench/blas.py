"""One BLAS thread per solve, so solves running side by side do not fight over cores.

SuperLU hands its dense panels to the BLAS library numpy and scipy load (OpenBLAS).
That library starts one thread per core for each call; with several solves at once,
or other programs busy on a small machine, those threads wait on each other and a
0.15 s factorisation can take seconds. One thread per solve is never much slower on
these sparse systems and is steady under load.

- ``pin_before_import()``: the command line, before numpy is loaded: sets the usual
  environment variables, unless the user set them (their choice is kept).
- ``pin_loaded()``: the web server, once numpy and scipy are loaded: limits the BLAS
  libraries in this process with threadpoolctl (the limit is per process, so every
  worker thread of the solve pool runs with one BLAS thread).
"""

from __future__ import annotations

import os

__all__ = ["pin_before_import", "pin_loaded", "THREAD_VARIABLES"]

#: The variables OpenBLAS, OpenMP and MKL read when they are loaded.
THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def pin_before_import(threads: int = 1) -> None:
    """Ask for ``threads`` BLAS threads in libraries not loaded yet (user settings win)."""
    for name in THREAD_VARIABLES:
        os.environ.setdefault(name, str(threads))


def pin_loaded(threads: int = 1):
    """Limit the BLAS libraries loaded in this process to ``threads`` threads.

    Returns threadpoolctl's limiter (its ``restore_original_limits()`` undoes it).
    """
    import numpy  # noqa: F401  (loads the BLAS library the limit applies to)
    import scipy.sparse.linalg  # noqa: F401
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=threads, user_api="blas")
