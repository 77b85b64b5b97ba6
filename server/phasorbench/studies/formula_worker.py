"""The formula study's worker process: sympy imported once, one job at a time.

Started by ``formula.py`` as ``python -m phasorbench.studies.formula_worker``; reads
length-prefixed pickled jobs on standard input, answers on standard output, and ends
at the end of its input (its parent gone). The parent stops it at the time limit.
"""

from __future__ import annotations

import pickle
import struct
import sys

HEADER = struct.Struct(">Q")


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
    from .symbolic import FormulaProblem, FormulaTooLarge, formula_result
    try:
        return "ok", formula_result(*job)
    except FormulaTooLarge as exc:
        return "size", (exc.terms, exc.limit)
    except FormulaProblem as exc:
        return "problem", (exc.message, exc.hint)
    except Exception as exc:  # reported to the parent, which raises it
        return "error", f"{type(exc).__name__}: {exc}"


def main() -> None:
    from . import symbolic  # noqa: F401  (the import is the slow part: done before 'ready')
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
