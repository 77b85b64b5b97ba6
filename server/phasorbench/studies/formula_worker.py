"""The formula study's worker process: sympy imported once, one job at a time.

Started by ``formula.py`` as ``python -m phasorbench.studies.formula_worker``; reads
length-prefixed pickled jobs on standard input, answers on standard output, and ends
at the end of its input (its parent gone). The parent stops it at the time limit; its
address space is capped at ``MEMORY_LIMIT_BYTES`` so a runaway expression fails alone.
"""

from __future__ import annotations

import pickle
import struct
import sys

HEADER = struct.Struct(">Q")
#: Address space the worker may use (sympy's expressions can grow without bound).
MEMORY_LIMIT_BYTES = 2 * 2**30


def read_frame(stream):
    head = stream.read(HEADER.size)
    if len(head) < HEADER.size:
        return None
    (size,) = HEADER.unpack(head)
    return pickle.loads(stream.read(size))


def write_frame(stream, value) -> None:
    body = pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL)
    stream.write(HEADER.pack(len(body)) + body)
    stream.flush()


def answer(job) -> tuple[str, object]:
    from .symbolic import FormulaProblem, FormulaTooLarge
    from .symbolic_result import formula_result
    try:
        return "ok", formula_result(*job)
    except FormulaTooLarge as exc:
        return "size", (exc.terms, exc.limit)
    except MemoryError:
        return "memory", MEMORY_LIMIT_BYTES
    except FormulaProblem as exc:
        return "problem", (exc.message, exc.hint)
    except Exception as exc:  # reported to the parent, which raises it
        return "error", f"{type(exc).__name__}: {exc}"


def _limit_memory() -> None:
    try:
        import resource
        soft, hard = resource.getrlimit(resource.RLIMIT_AS)
        limit = MEMORY_LIMIT_BYTES if hard == resource.RLIM_INFINITY else \
            min(MEMORY_LIMIT_BYTES, hard)
        resource.setrlimit(resource.RLIMIT_AS, (limit, hard))
    except (ImportError, ValueError, OSError):    # not on this system: the time limit stays
        pass


def main() -> None:
    _limit_memory()
    from . import symbolic_result  # noqa: F401  (the import is the slow part: done before 'ready')
    source, sink = sys.stdin.buffer, sys.stdout.buffer
    sys.stdout = sys.stderr               # nothing else may write into the answer pipe
    write_frame(sink, "ready")
    while True:
        job = read_frame(source)
        if job is None:
            return
        write_frame(sink, answer(job))


if __name__ == "__main__":
    main()
