"""POST /api/table: one table of the solved circuit as CSV or tab-separated text,
read back with Python's csv module (the outside reader)."""

from __future__ import annotations

import csv
import io

import pytest

from .conftest import BENCH_CIRCUIT, BENCH_I_MAG


def _rows(text, delimiter=","):
    return list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter))


def test_branch_csv_is_an_attachment_with_the_bench_current(api):
    r = api.post("/api/table", json={"netlist": BENCH_CIRCUIT, "table": "branches"})
    assert r.status_code == 200
    assert r.headers["content-type"].startswith("text/csv")
    assert 'filename="branches.csv"' in r.headers["content-disposition"]
    rows = _rows(r.text)
    r1 = dict(zip(rows[0], next(x for x in rows if x[0] == "R1")))
    # R = Xc: I = 230 / (√2 · 318.31 Ω), leading the source by 45° (check-values C1)
    assert float(r1["|I| RMS (A)"]) == pytest.approx(BENCH_I_MAG, rel=1e-6)
    assert float(r1["∠I (°)"]) == pytest.approx(45.0, abs=1e-6)


def test_tsv_for_the_clipboard(api):
    r = api.post("/api/table", json={"netlist": BENCH_CIRCUIT, "table": "nodes", "format": "tsv"})
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/tab-separated-values")
    assert _rows(r.text, "\t")[0][:2] == ["Node", "|V| RMS (V)"]


def test_bad_circuit_and_bad_table_are_422_in_the_error_shape(api):
    # results-contract.md: 422 with {"errors": [{"line", "column", "message", "hint"}]}
    bad = api.post("/api/table", json={"netlist": "frequency 50 Hz\nR1: resistr a -> 0 1\n",
                                       "table": "branches"})
    assert bad.status_code == 422 and bad.json()["errors"][0]["line"] == 2
    wrong = api.post("/api/table", json={"netlist": BENCH_CIRCUIT, "table": "phasors"})
    assert wrong.status_code == 422 and wrong.json()["errors"]


# Invented: a 120 V, 60 Hz supply through 30 Ω into a 40 Ω reactance. Ohm's law (any
# circuits textbook): |Z| = 50 Ω, |I| = 2.4 A RMS, V(b) = 96 V RMS, P = 172.8 W,
# Q = 230.4 var, |S| = 288 VA.
KILN = ("title Kiln blower\nfrequency 60 Hz\nV1: voltage a -> 0 120 V\n"
        "R1: resistor a -> b 30 ohm\nZ1: impedance b -> 0 j40 ohm\n")
#: Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 11, effective or RMS value
#: (chapter from memory): a sinusoid's peak is √2 times its RMS value.
ROOT2 = 2 ** 0.5


def _table(api, table, **extra):
    r = api.post("/api/table", json={"netlist": KILN, "table": table, **extra})
    assert r.status_code == 200, r.text
    rows = _rows(r.text, "\t" if extra.get("format") == "tsv" else ",")
    return rows[0], {row[0]: dict(zip(rows[0], row)) for row in rows[1:]}


@pytest.mark.parametrize("fmt", ["csv", "tsv"])
def test_show_peak_reads_the_magnitudes_as_peak_and_says_so(api, fmt):
    heads, rms = _table(api, "branches", format=fmt)
    peak_heads, peak = _table(api, "branches", format=fmt, show="peak")
    # the page's words in the headings (display._headed: "|V| RMS", "|I| peak")
    assert "|I| RMS (A)" in heads and "|V| RMS (V)" in heads
    assert "|I| peak (A)" in peak_heads and "|V| peak (V)" in peak_heads
    assert float(rms["R1"]["|I| RMS (A)"]) == pytest.approx(2.4, rel=1e-12)    # Ohm's law
    for name, v_rms in (("V1", 120.0), ("R1", 72.0), ("Z1", 96.0)):
        # peak = √2 × RMS (Alexander & Sadiku, above)
        assert float(peak[name]["|V| peak (V)"]) == pytest.approx(v_rms * ROOT2, rel=1e-12)
        assert float(peak[name]["|I| peak (A)"]) == pytest.approx(2.4 * ROOT2, rel=1e-12)
        # P, Q, |S|, PF and the angles are the same quantities either way (S = V·I* for
        # RMS phasors, ½·V·I* for peak: Alexander & Sadiku, ch. 11, complex power)
        for key in ("P (W)", "Q (var)", "|S| (VA)", "PF", "∠V (°)", "∠I (°)"):
            assert peak[name][key] == rms[name][key], (name, key)
    assert float(peak["V1"]["|S| (VA)"]) == pytest.approx(288, rel=1e-12)    # 120 V × 2.4 A


def test_show_of_the_node_table_and_the_circuits_own_convention(api):
    heads, rms = _table(api, "nodes", show="rms")
    assert heads == ["Node", "|V| RMS (V)", "∠V (°)", "Re V RMS (V)", "Im V RMS (V)"]
    assert _table(api, "nodes") == (heads, rms)      # rms is this circuit's own: no change
    peak_heads, peak = _table(api, "nodes", show="peak")
    assert peak_heads == ["Node", "|V| peak (V)", "∠V (°)", "Re V peak (V)", "Im V peak (V)"]
    # V(b) = j40·I = 96 V ∠36.87° RMS (Ohm's law); peak = √2 × RMS (Alexander & Sadiku)
    assert float(peak["b"]["|V| peak (V)"]) == pytest.approx(96 * ROOT2, rel=1e-12)
    assert float(peak["b"]["Re V peak (V)"]) == pytest.approx(76.8 * ROOT2, rel=1e-12)   # 96·0.8
    assert float(peak["b"]["Im V peak (V)"]) == pytest.approx(57.6 * ROOT2, rel=1e-12)   # 96·0.6
    assert peak["b"]["∠V (°)"] == rms["b"]["∠V (°)"]


def test_a_peak_circuit_shown_as_rms(api):
    # the same circuit written in peak values: 120·√2 V peak; shown as RMS it is 120 V
    # again (Alexander & Sadiku, above)
    text = KILN.replace("frequency 60 Hz", "frequency 60 Hz\namplitudes peak").replace(
        "120 V", f"{120 * ROOT2!r} V")
    r = api.post("/api/table", json={"netlist": text, "table": "branches", "show": "rms"})
    rows = _rows(r.text)
    r1 = dict(zip(rows[0], next(x for x in rows if x[0] == "R1")))
    assert float(r1["|I| RMS (A)"]) == pytest.approx(2.4, rel=1e-12)
    assert float(r1["P (W)"]) == pytest.approx(172.8, rel=1e-12)       # I²R, Ohm's law


def test_show_is_rms_or_peak(api):
    # results-contract.md: 422 with {"errors": [...]} for a body the route does not take
    r = api.post("/api/table", json={"netlist": KILN, "table": "nodes", "show": "average"})
    assert r.status_code == 422 and r.json()["errors"]
    assert "Traceback" not in r.text
