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
    assert float(r1["|I| (A)"]) == pytest.approx(BENCH_I_MAG, rel=1e-6)
    assert float(r1["∠I (°)"]) == pytest.approx(45.0, abs=1e-6)


def test_tsv_for_the_clipboard(api):
    r = api.post("/api/table", json={"netlist": BENCH_CIRCUIT, "table": "nodes", "format": "tsv"})
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/tab-separated-values")
    assert _rows(r.text, "\t")[0][:2] == ["Node", "|V| (V)"]


def test_bad_circuit_and_bad_table_are_422_in_the_error_shape(api):
    # results-contract.md: 422 with {"errors": [{"line", "column", "message", "hint"}]}
    bad = api.post("/api/table", json={"netlist": "frequency 50 Hz\nR1: resistr a -> 0 1\n",
                                       "table": "branches"})
    assert bad.status_code == 422 and bad.json()["errors"][0]["line"] == 2
    wrong = api.post("/api/table", json={"netlist": BENCH_CIRCUIT, "table": "phasors"})
    assert wrong.status_code == 422 and wrong.json()["errors"]
