"""The one fast JSON encoder: the same document as Python's json module, strict JSON."""

from __future__ import annotations

import json
import math

import numpy as np

from phasorbench.jsonout import dumps
from phasorbench.workflow import solve_text



def mesh(n: int) -> str:
    """An invented n×n RLC mesh (values spread over decades, so digits vary)."""
    lines = ["title mesh", "frequency 60 Hz", "V1: voltage n0_0 -> 0 480 V"]
    count = 0
    for i in range(n):
        for j in range(n):
            for di, dj in ((0, 1), (1, 0)):
                if i + di < n and j + dj < n:
                    kind, unit = (("resistor", "ohm"), ("inductor", "mH"), ("capacitor", "uF"))[count % 3]
                    lines.append(f"E{count}: {kind} n{i}_{j} -> n{i + di}_{j + dj} "
                                 f"{0.5 + (count * 7919) % 1000 / 137:.4f} {unit}")
                    count += 1
            lines.append(f"S{count}: resistor n{i}_{j} -> 0 {50 + count % 17} ohm")
            count += 1
    return "\n".join(lines) + "\n"


def test_contract_reads_back_as_the_standard_librarys_json():
    # reference: Python's json module (json.dumps / json.loads), every float to the last bit
    result = solve_text(mesh(12))
    ours = json.loads(dumps(result))
    theirs = json.loads(json.dumps(result, ensure_ascii=False, allow_nan=False))
    assert ours == theirs
    floats = [e["current"]["re"] for e in ours["elements"].values()]
    assert all(math.copysign(1, a) == math.copysign(1, b) for a, b in
               zip(floats, [e["current"]["re"] for e in theirs["elements"].values()]))


def test_strict_json_and_numpy_values():
    # RFC 8259, section 6: NaN and Infinity are not JSON numbers (written as null here)
    text = dumps({"a": float("nan"), "b": float("-inf"), "µ": "Ω", "c": 1j,
                  "arr": np.array([1.5, 2.0]), "n": np.int64(3)}).decode()
    assert json.loads(text, parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c))) == \
        {"a": None, "b": None, "µ": "Ω", "c": {"re": 0.0, "im": 1.0}, "arr": [1.5, 2.0], "n": 3}


def test_text_orjson_refuses_is_still_written():
    # a lone UTF-16 surrogate (not encodable as UTF-8) and an integer beyond 64 bits;
    # reference: Python's json module writes both (as \\ud800 and the digits)
    text = dumps({"name": "R\ud800", "big": 2 ** 70})
    assert json.loads(text) == {"name": "R\ud800", "big": 2 ** 70}


def test_dumps_in_pieces_writes_the_same_bytes_as_one_call():
    # common practice, no source: splitting the text at entry boundaries must not change
    # a byte (RFC 8259 compact form: entries joined by ',', no white space)
    from phasorbench.jsonout import PIECE, dumps, dumps_in_pieces
    data = {"title": "x", "nan": float("nan"), 3: {5: 1},
            "elements": {f"e{i}": {"v": {"re": i * 1.1, "im": -0.3}, "i": [i, 2.5]}
                         for i in range(3 * PIECE + 7)},
            "long": list(range(2 * PIECE + 1)), "rows": [list(range(PIECE + 1))] * 3,
            "short": {"a": [list(range(PIECE + 2))], "b": []}, "empty": {}}
    assert dumps_in_pieces(data) == dumps(data)
    # text orjson refuses (a lone surrogate) goes through the one fallback, whole
    odd = {"n": "\ud800", "long": list(range(2 * PIECE))}
    assert dumps_in_pieces(odd) == dumps(odd)


def test_dumps_in_pieces_holds_the_answer_once():
    # common practice, no source: a writer into one growing buffer holds its output once
    # (plus the buffer's growth margin and one piece); a list of pieces beside their join
    # holds it twice. tracemalloc (Python docs, "tracemalloc") sees every bytes object.
    import tracemalloc

    from phasorbench.jsonout import dumps_in_pieces
    data = {"elements": {f"e{i}": {"v": {"re": i * 1.1, "im": -0.3}, "name": "x" * 40}
                         for i in range(60_000)},
            "nodes": [[i, i * 0.5, "n" * 20] for i in range(60_000)]}
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        text = dumps_in_pieces(data)
        _now, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert len(text) > 5_000_000
    assert peak < 1.5 * len(text), (peak, len(text))
