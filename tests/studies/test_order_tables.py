"""Per-order tables kept as arrays: read entry by entry, and written as JSON, they give
what dicts of the same numbers give to Python's json module."""

from __future__ import annotations

import json
import math
from collections.abc import Mapping

import numpy as np
import pytest

from phasorbench.jsonout import dumps, plain
from phasorbench.studies.order_tables import PHASOR, RATIO, REAL, OrderBlock


def _phasor(z: complex) -> dict:
    # reference: the contract's phasor (results-contract.md): re, im, |z|, angle in degrees
    return {"re": z.real, "im": z.imag, "mag": abs(z),
            "deg": math.degrees(math.atan2(z.imag, z.real))}


def _block():
    rng = np.random.default_rng(7)
    keys = ["1", "2.5", "5", "7"]
    v = rng.normal(size=(3, 4)) * 10.0 ** rng.integers(-12, 12, size=(3, 4)) + \
        1j * rng.normal(size=(3, 4))
    v[1, 2] = -0.0 - 0.0j                            # signed zeros survive
    pct = rng.uniform(0, 200, size=(3, 4))
    pct[2, :] = np.nan                               # a zero fundamental: no ratio
    pct[0, 3] = np.inf
    power = rng.normal(size=(3, 4))
    block = OrderBlock(keys, [("v", PHASOR, v), ("pct", RATIO, pct), ("p_w", REAL, power)])
    return block, keys, v, pct, power


def test_entries_read_as_the_dicts_of_their_numbers():
    block, keys, v, pct, power = _block()
    for r in range(3):
        row = block.row(r)
        assert isinstance(row, Mapping) and list(row) == keys and len(row) == 4
        assert "2.5" in row and "3" not in row
        for k, key in enumerate(keys):
            entry = row[key]
            # reference: the contract phasor built with Python's math module (its
            # hypot and atan2 may round the last bit otherwise than numpy's)
            want = _phasor(complex(v[r, k]))
            assert (entry["v"]["re"], entry["v"]["im"]) == (want["re"], want["im"])
            assert entry["v"]["mag"] == pytest.approx(want["mag"], rel=4e-16)
            assert entry["v"]["deg"] == pytest.approx(want["deg"], rel=4e-16, abs=1e-300)
            ratio = pct[r, k]
            assert entry["pct"] == (float(ratio) if math.isfinite(ratio) else None)
            assert entry["p_w"] == float(power[r, k])


def test_json_is_the_standard_librarys_json_of_the_dicts():
    # reference: Python's json module over plain dicts of the same numbers, every float
    # to the last bit and the signs of zeros
    block, keys, _, _, _ = _block()
    rows = [block.row(r) for r in range(3)]
    ours = json.loads(dumps({"rows": rows}))
    theirs = json.loads(json.dumps({"rows": [dict(row) for row in rows]},
                                   allow_nan=True).replace("NaN", "null"))
    assert ours == theirs
    assert math.copysign(1, ours["rows"][1]["5"]["v"]["re"]) == -1
    assert ours["rows"][0]["7"]["pct"] is None      # RFC 8259: no Infinity in JSON
    assert list(ours["rows"][0]) == keys             # orders in their order
    # the standard library's fallback of the encoder (text orjson refuses) writes the
    # same document
    assert plain({"rows": rows})["rows"][2] == json.loads(dumps(rows[2]))


def test_a_harmonic_study_writes_what_its_mappings_read():
    # reference: Python's json module over the study's result with every per-order
    # mapping turned into dicts
    from phasorbench.studies.harmonics import run_harmonics
    from phasorbench.workflow import read_circuit
    circuit = read_circuit("frequency 50 Hz\n"
                           "Vs: voltage a -> 0 230 V spectrum 5: 4 %, 7: 3 % @ 90 deg\n"
                           "R: resistor a -> b 0.2 ohm\nL: inductor b -> c 1 mH\n"
                           "C: capacitor c -> 0 300 uF\n"
                           "D: current c -> 0 0 A freq 550 Hz\n")
    result = run_harmonics(circuit, scan=False)
    assert json.loads(dumps(result)) == json.loads(json.dumps(plain(result)))
    # D gives nothing at the fundamental: its current ratios are None (no division by 0)
    assert result["elements"]["D"]["orders"]["11"]["pct_i"] is None
