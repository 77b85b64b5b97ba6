"""Python's cyclic garbage collector held off while a big circuit is built.

Reading, solving and writing the contract of a circuit with tens of thousands of
elements allocates hundreds of thousands of small objects (elements, dicts, floats) and
frees almost none of them until the answer is done: each automatic collection walks
them all again for nothing. ``held()`` turns automatic collection off for the block and
back on when the last holder leaves (the web server's worker threads may overlap), so
memory of real garbage is still returned by reference counting, and cycles are
collected at the next ordinary collection afterwards.
"""

from __future__ import annotations

import gc
import threading
from contextlib import contextmanager

__all__ = ["held"]

_lock = threading.Lock()
_holders = 0
_was_enabled = False


@contextmanager
def held():
    """Automatic garbage collection off inside the block (nested and threads counted).

    >>> import gc
    >>> with held():
    ...     gc.isenabled()
    False
    """
    global _holders, _was_enabled
    with _lock:
        if _holders == 0:
            _was_enabled = gc.isenabled()
            gc.disable()
        _holders += 1
    try:
        yield
    finally:
        with _lock:
            _holders -= 1
            if _holders == 0 and _was_enabled:
                gc.enable()
