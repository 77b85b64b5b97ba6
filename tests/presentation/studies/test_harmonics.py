"""The harmonic study's strings and tables (presentation/studies/harmonics.py)."""

from __future__ import annotations

from phasorbench.presentation.cautions import HARMONIC_CAUTIONS
from phasorbench.presentation.studies.harmonics import harmonics_display
from phasorbench.studies.harmonics import run_harmonics
from phasorbench.workflow import read_circuit

# check-values C20 fail case on an ideal 60 Hz bus: 1.10 / 0.08 / 0.05 pu of 400 V
FAIL = ("frequency 60 Hz\nVs: voltage b -> 0 440 V spectrum 5: 7.2727272727 %, "
        "7: 4.5454545454 %\nCb: capacitor b -> 0 100 uF\n")


def _display(**kw):
    result = run_harmonics(read_circuit(FAIL), pcc="b", nominal=400, rated={"Cb": 400})
    return result, harmonics_display(result, **kw)


def _table(d, key):
    return next(t for t in d["tables"] if t["key"] == key)


def test_verdicts_are_words_and_marks():
    _, d = _display()
    caps = _table(d, "capacitors")
    (row,) = caps["rows"]
    # check-values C20: V_rms 110.4 % > 110 %, V_peak 123 % > 120 %, I 122 %, Q 126 % within
    assert row[2:6] == ["110.4 % ✖ over 110 %", "123 % ✖ over 120 %", "122.2 % ✓ 135 %",
                        "125.9 % ✓ 135 %"]
    assert row[6] == "✖ FAIL" and caps["flags"] == ["fail"]
    pcc = _table(d, "pcc")
    # IEEE 519-2014 Table 1, ≤ 1 kV (check-values G.3): h5 7.27 % > 5 %, THD 8.69 % > 8 %
    assert pcc["rows"][0][:2] == ["h5", "7.27 %"] and pcc["rows"][0][3] == "✖ FAIL"
    assert pcc["rows"][-1][0] == "THD" and pcc["rows"][-1][3] == "✖ FAIL"


def test_round_off_shows_as_zero_and_the_sources_are_named():
    _, d = _display()
    powers = _table(d, "ieee1459")
    # common practice, no source: an ideal capacitor's P is round-off, shown as 0
    cb = next(r for r in powers["rows"] if r[0] == "Cb")
    assert cb[3] == "0 W" and cb[-1] == "0"
    assert any("IEEE Std 1459-2010" in s for s in d["sources"])
    assert any("IEEE Std 519-2014" in s for s in d["sources"])
    assert [c["title"] for c in d["cautions"]] == [t for t, _ in HARMONIC_CAUTIONS]


def test_chosen_node_and_element_pick_the_spectra():
    _, d = _display(node="b", element="Vs")
    assert d["node"] == "b" and d["element"] == "Vs"
    assert "Current spectrum of Vs" in [s["caption"] for s in d["spectra"]]
    _, d = _display(node="nowhere", element="nothing")
    assert d["node"] == "b" and d["element"] == "Cb"   # the PCC, then the capacitor


def test_a_source_shows_the_power_it_delivers():
    import math
    result, d = _display(element="Vs")
    powers = _table(d, "ieee1459")
    vs = next(r for r in powers["rows"] if r[0].startswith("Vs"))
    cb = next(r for r in powers["rows"] if r[0] == "Cb")
    q1 = powers["headings"].index("Q1")
    # textbook: a capacitor takes Q = −ωCV² (−7.299 kvar at 440 V, 60 Hz, 100 µF), and by
    # the power balance (Tellegen) the source delivers that same Q1: shown with its sign
    assert cb[q1] == "-7.299 kvar"
    assert vs[0] == "Vs (delivered)" and vs[q1] == "-7.299 kvar"
    expected = -2 * math.pi * 60 * 100e-6 * 440 ** 2
    assert math.isclose(-result["elements"]["Vs"]["ieee1459"]["q1_var"], expected, rel_tol=1e-9)
    assert "deliver" in powers["note"] and "passive sign" in powers["note"]
    element = _table(d, "element")
    assert any(r[0] == "fundamental reactive power delivered Q1" and r[1] == "-7.299 kvar"
               for r in element["rows"])
    assert "deliver" in element["note"]
