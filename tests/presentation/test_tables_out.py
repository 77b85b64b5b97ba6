"""Tables for a spreadsheet (presentation/tables_out.py), read back with Python's csv
module (the outside reader) and checked against hand-worked circuit values."""

from __future__ import annotations

import csv
import io
import math

import pytest

from phasorbench.presentation.tables_out import TABLES, table_rows, table_text
from phasorbench.workflow import solve_text

# 230 V across 4 + j3 Ω (Ohm's law, any circuits textbook): I = 46 A ∠−36.87°,
# S = 8464 W + j6348 var; the supply delivers exactly that
MOTOR = "frequency 50 Hz\nV1: voltage a -> 0 230\nZ1: impedance a -> 0 4 + j3\n"
WYE = ("frequency 50 Hz\nG: voltage3 A B C -> 0 400 V line\n"
       "M: load3 wye A B C -> 0 16 + j12 ohm\n")


def _read(text, delimiter=","):
    # RFC 4180: CRLF between records; csv reads it back to the same cells
    assert text.endswith("\r\n")
    return list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter))


def test_branch_table_reads_back_with_units_and_numbers():
    rows = _read(table_text(solve_text(MOTOR), "branches"))
    head, body = rows[0], {r[0]: dict(zip(rows[0], r)) for r in rows[1:]}
    assert "|I| RMS (A)" in head and "P (W)" in head and "Q (var)" in head
    z1, v1 = body["Z1"], body["V1"]
    assert float(z1["|I| RMS (A)"]) == pytest.approx(46, rel=1e-12)
    assert float(z1["∠I (°)"]) == pytest.approx(-36.8698976458, abs=1e-9)
    assert float(z1["R (Ω)"]) == 4 and float(z1["X (Ω)"]) == 3
    assert float(z1["P (W)"]) == pytest.approx(8464, rel=1e-12) and z1["Convention"] == "passive"
    # the source row is what it delivers, as on the page
    assert float(v1["P (W)"]) == pytest.approx(8464, rel=1e-12)
    assert float(v1["∠I (°)"]) == pytest.approx(-36.8698976458, abs=1e-9)
    assert v1["Convention"] == "delivered" and v1["R (Ω)"] == ""


def test_node_table_and_tab_separated_text():
    text = table_text(solve_text(MOTOR), "nodes", "\t")
    rows = _read(text, "\t")
    assert rows[0] == ["Node", "|V| RMS (V)", "∠V (°)", "Re V RMS (V)", "Im V RMS (V)"]
    a = next(r for r in rows if r[0] == "a")
    assert float(a[1]) == 230 and float(a[3]) == 230 and float(a[4]) == 0


def test_three_phase_table_holds_block_totals():
    # check-values C22 (standard three-phase relations): P = 6400 W, Q = 4800 var,
    # S = 8000 VA, PF 0.8 lagging, no neutral current in a balanced wye
    headings, rows = table_rows(solve_text(WYE), "three-phase")
    by = {r[0]: dict(zip(headings, r)) for r in rows}
    m = by["M"]
    assert m["P (W)"] == pytest.approx(6400, rel=1e-9)
    assert m["Q (var)"] == pytest.approx(4800, rel=1e-9)
    assert m["|S| (VA)"] == pytest.approx(8000, rel=1e-9)
    assert m["PF"] == pytest.approx(0.8, abs=1e-6) and m["PF sense"] == "lagging"
    assert m["|I_N| RMS (A)"] < 1e-9
    assert by["G"]["P (W)"] == pytest.approx(6400, rel=1e-9) and by["G"]["Convention"] == "delivered"


def test_no_more_digits_than_the_solve_trusts():
    # a cell of an element trusted to 3 digits keeps 3 significant digits
    result = solve_text(MOTOR)
    result["elements"]["Z1"]["digits"] = 3
    headings, rows = table_rows(result, "branches")
    z1 = dict(zip(headings, next(r for r in rows if r[0] == "Z1")))
    assert z1["|I| RMS (A)"] == 46.0 and z1["P (W)"] == 8460.0


def test_every_table_has_its_headings_and_an_unknown_one_is_refused():
    result = solve_text(WYE)
    for table in TABLES:
        headings, rows = table_rows(result, table)
        assert rows and all(len(r) == len(headings) for r in rows)
        assert all(not (isinstance(v, float) and not math.isfinite(v)) for r in rows for v in r)
    with pytest.raises(ValueError, match="nodes, branches, three-phase"):
        table_rows(result, "phasors")


# Invented: a 120 V, 60 Hz supply through 30 Ω into a 40 Ω reactance. Ohm's law (any
# circuits textbook): |Z| = √(30² + 40²) = 50 Ω, |I| = 2.4 A RMS at −53.13°,
# P = I²R = 172.8 W, Q = I²X = 230.4 var, |S| = 288 VA (the 3-4-5 triangle).
KILN = ("frequency 60 Hz\nV1: voltage a -> 0 120 V\nR1: resistor a -> b 30 ohm\n"
        "Z1: impedance b -> 0 j40 ohm\n")


def test_headings_say_the_convention_and_peak_is_root_two_times_rms():
    from phasorbench.presentation.amplitudes import shown_as
    result = solve_text(KILN)
    heads, rows = table_rows(result, "branches")
    rms = {r[0]: dict(zip(heads, r)) for r in rows}
    peak_heads, peak_rows = table_rows(shown_as(result, "peak"), "branches")
    peak = {r[0]: dict(zip(peak_heads, r)) for r in peak_rows}
    # the page's heading words (display._headed: "|I| RMS", "|I| peak")
    assert "|I| RMS (A)" in heads and "|V| RMS (V)" in heads
    assert "|I| peak (A)" in peak_heads and "|V| peak (V)" in peak_heads
    assert rms["R1"]["|I| RMS (A)"] == pytest.approx(2.4, rel=1e-12)     # Ohm's law, above
    # Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 11, effective or RMS value
    # (chapter from memory): a sinusoid's X_rms = X_m/√2, so its peak is √2 × RMS
    assert peak["R1"]["|I| peak (A)"] == pytest.approx(2.4 * math.sqrt(2), rel=1e-12)
    assert peak["Z1"]["|V| peak (V)"] == pytest.approx(96 * math.sqrt(2), rel=1e-12)
    for name in ("V1", "R1", "Z1"):
        # powers and angles are the same physical quantities either way (S = V·I* with
        # RMS phasors, ½·V·I* with peak ones: any circuits textbook's AC power chapter)
        for key in ("P (W)", "Q (var)", "|S| (VA)", "PF", "∠V (°)", "∠I (°)", "R (Ω)",
                    "X (Ω)"):
            assert peak[name][key] == rms[name][key], (name, key)
    assert rms["V1"]["|S| (VA)"] == pytest.approx(288, rel=1e-12)       # 120 V × 2.4 A
    node_heads, _ = table_rows(shown_as(result, "peak"), "nodes")
    assert node_heads == ["Node", "|V| peak (V)", "∠V (°)", "Re V peak (V)", "Im V peak (V)"]


def test_three_phase_neutral_current_heading_follows_the_convention():
    # common practice, no source: a neutral current is a current, read as the others are
    from phasorbench.presentation.amplitudes import shown_as
    headings, _ = table_rows(shown_as(solve_text(WYE), "peak"), "three-phase")
    assert "|I_N| peak (A)" in headings and "P (W)" in headings
