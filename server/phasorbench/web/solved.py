"""One parse and one solve per circuit text, shared by every request about it.

A single action on the page asks several questions about the same text (solve it,
draw the phasors, draw a waveform, a window of table rows); each used to read and
solve the whole circuit again. ``SolvedCache`` keeps the last few outcomes keyed by
the text's hash — the contract dict, or the ``CircuitError`` with its diagnostics —
and makes a second request for a text being solved wait for the first rather than
solve it twice.

It is bounded by the number of entries and by the elements they hold together (a
300×300 mesh's contract alone takes hundreds of megabytes); the newest entry is always
kept, so the requests that follow a big solve still find it. A solve that starts counts
too: older entries make room before it runs, so a server solving one big circuit after
another holds one of them at a time, not the last one beside the next.
"""

from __future__ import annotations

import hashlib
import threading
from collections import OrderedDict
from concurrent.futures import Future

from ..errors import CircuitError

__all__ = ["SolvedCache", "text_key"]

#: Entries kept at most, and elements they may hold together with the solves under way
#: (the newest entry is kept beyond it). A contract takes about 2.5 kB per element: the
#: bound keeps a server within about one big circuit's contract of the command line.
CACHE_ENTRIES = 8
CACHE_ELEMENTS = 30_000


def text_key(text: str) -> str:
    """The cache key of a circuit text (its SHA-256, so equal texts share one entry)."""
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()


class SolvedCache:
    """Outcomes of ``compute(text)`` by text, computed once each, the last few kept.

    >>> cache = SolvedCache()
    >>> calls = []
    >>> def compute(text):
    ...     calls.append(text)
    ...     return {"elements": {"R1": {}}}
    >>> cache.get("R1", compute) is cache.get("R1", compute), len(calls)
    (True, 1)
    """

    def __init__(self, entries: int = CACHE_ENTRIES, elements: int = CACHE_ELEMENTS):
        self.entries, self.elements = entries, elements
        self._lock = threading.Lock()
        self._done: OrderedDict[str, tuple[bool, object, int]] = OrderedDict()
        self._pending: dict[str, Future] = {}
        self._sizes: dict[str, int] = {}        # elements of the computes under way
        #: Outcomes computed (not found): what a test counts to see one solve per action.
        self.computed = 0

    def get(self, text: str, compute, size: int = 0):
        """``compute(text)``'s result, from the cache when it has it; its
        ``CircuitError`` raised again when that is what the text gave.

        ``size``: about how many elements the text holds (made room for before a
        compute starts)."""
        key = text_key(text)
        with self._lock:
            found = self._done.get(key)
            if found is not None:
                self._done.move_to_end(key)
            else:
                waiting = self._pending.get(key)
                if waiting is None:
                    mine = self._pending[key] = Future()
                    self._sizes[key] = size
                    self._make_room()
        if found is not None:
            return _outcome(found)
        if waiting is not None:
            return _outcome(waiting.result())
        try:
            value = compute(text)
            entry = (True, value, len(value.get("elements", ())))
        except CircuitError as exc:
            entry = (False, exc, 0)
        except BaseException as exc:           # not kept: the next request tries again
            with self._lock:
                del self._pending[key]
                del self._sizes[key]
            mine.set_exception(exc)
            raise
        with self._lock:
            self.computed += 1
            self._done[key] = entry
            self._done.move_to_end(key)
            del self._pending[key]
            del self._sizes[key]
            self._trim()
        mine.set_result(entry)
        return _outcome(entry)

    def _trim(self) -> None:
        while len(self._done) > self.entries or (
                len(self._done) > 1 and
                sum(size for _ok, _value, size in self._done.values()) > self.elements):
            self._done.popitem(last=False)

    def _make_room(self) -> None:
        """Drop the oldest entries until they and the computes under way fit the bound."""
        coming = sum(self._sizes.values())
        while self._done and (
                sum(size for _ok, _value, size in self._done.values()) + coming > self.elements):
            self._done.popitem(last=False)

    def clear(self) -> None:
        with self._lock:
            self._done.clear()


def _outcome(entry):
    ok, value, _size = entry
    if not ok:
        raise CircuitError(list(value.diagnostics))
    return value
