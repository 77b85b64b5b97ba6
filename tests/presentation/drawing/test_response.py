"""The response picture: decimation keeps every extremum, scales, markers, one picture
for the page (both scales) and the sheet (one)."""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET

import numpy as np

from phasorbench.presentation.drawing.response import decimate, magnitude_scale, response_svg
from phasorbench.studies.sweep import run_sweep
from phasorbench.workflow import read_circuit

SVG = "{http://www.w3.org/2000/svg}"


def test_decimation_keeps_each_columns_extremes():
    # numpy reference: per whole pixel column, the max and min of the points in it
    rng = np.random.default_rng(1)
    x = np.sort(rng.uniform(0, 300, 100_000))
    y = np.sin(x / 7) + rng.normal(0, 0.3, x.size)
    ((xs, ys),) = decimate(x, y)
    assert len(xs) <= 4 * 300
    cols = np.floor(x).astype(int)
    for c in (0, 17, 150, 299):
        inside = cols == c
        kept = np.floor(xs).astype(int) == c
        assert ys[kept].max() == y[inside].max() and ys[kept].min() == y[inside].min()
    # a null value or a wrap starts a new segment (common practice, no source)
    y2 = np.array([1.0, 2.0, np.nan, 3.0, 4.0, 5.0])
    wrap = np.array([False, False, False, False, True, False])
    segs = decimate(np.arange(6.0), y2, wrap)
    assert [list(s[1]) for s in segs] == [[1.0, 2.0], [3.0], [4.0, 5.0]]


def _rc():
    return read_circuit("frequency 50 Hz\nVs: voltage in -> 0 1 V\n"
                        "R1: resistor in -> out 1 kohm\nC1: capacitor out -> 0 159.155 nF\n")


def test_page_picture_has_both_scales_and_the_sheet_one():
    r = run_sweep(_rc(), ["V(out)/V(in)", "I(C1)"], start=10, stop=1e5, points=2001)
    assert magnitude_scale(r) == "units"            # an A probe among them: its units
    page = ET.fromstring(response_svg(r))
    groups = page.findall(f".//{SVG}g[@class='pb-mag']")
    assert sorted(g.get("data-scale") for g in groups) == ["db", "units"]
    assert [g.get("display") for g in groups] == [None, "none"]
    sheet = ET.fromstring(response_svg(r, magnitude="db", both=False))
    (only,) = sheet.findall(f".//{SVG}g[@class='pb-mag']")
    assert only.get("data-scale") == "db" and sheet.get("data-magnitude") == "db"
    # the y range of the dB axis holds 20·log10 of every value shown (numpy reference)
    mags = np.array(r["probes"]["V(out)/V(in)"]["mag"])
    db = 20 * np.log10(mags)
    assert float(only.get("data-y-max")) >= db.max() and float(only.get("data-y-min")) <= db.min()
    # 50 Hz and its harmonics marked; the first line is the analysis frequency itself
    base = sheet.findall(f".//{SVG}line[@class='pb-base']")
    assert len(base) == 2 and base[0].get("data-order") == "1"
    left, right = float(sheet.get("data-plot-left")), float(sheet.get("data-plot-right"))
    x50 = left + (math.log10(50) - 1) / 4 * (right - left)       # log axis, 10 Hz to 100 kHz
    assert math.isclose(float(base[0].get("x1")), x50, abs_tol=1e-3)


def test_resonance_markers_are_numbered_at_their_frequency():
    circuit = read_circuit("frequency 50 Hz\nVs: voltage a -> 0 20 V\nR1: resistor a -> b 2\n"
                           "L1: inductor b -> c 1 mH\nC1: capacitor c -> 0 0.4 uF\n")
    r = run_sweep(circuit, ["I(R1)"], start=1e3, stop=5e4, points=200)
    svg = ET.fromstring(response_svg(r, magnitude="units", both=False))
    (marker,) = svg.findall(f".//{SVG}g[@class='pb-resonance']")
    # check-values C5: f0 = 7957.75 Hz
    assert math.isclose(float(marker.get("data-frequency")), 7957.75, rel_tol=1e-6)
    assert "Q 25" in marker.find(f"{SVG}title").text


def _marks(r) -> list[tuple[int, float]]:
    """(order, x) of the harmonic lines of the magnitude panel, in order."""
    svg = ET.fromstring(response_svg(r, magnitude="units", both=False))
    seen = {}
    for line in svg.iter(f"{SVG}line"):
        if line.get("class") in ("pb-base", "pb-harmonic"):
            seen.setdefault(int(line.get("data-order")), float(line.get("x1")))
    return sorted(seen.items())


def test_harmonic_lines_thin_out_to_the_characteristic_orders():
    circuit = read_circuit("frequency 50 Hz\nVs: voltage a -> 0 20 V\nR1: resistor a -> b 2\n"
                           "L1: inductor b -> c 1 mH\nC1: capacitor c -> 0 0.4 uF\n")
    # a range far above the fundamental (1 kHz to 50 kHz: orders 20 to 1000)
    high = _marks(run_sweep(circuit, ["I(R1)"], start=1e3, stop=5e4, points=200))
    orders = [h for h, _ in high]
    # common practice, no source: above the low orders the ones that matter are the
    # characteristic orders of six-pulse converters, h = 6k ± 1; power-quality tables
    # end at the 50th (IEEE Std 519-2014 Table 1, from memory)
    assert orders and all(h % 6 in (1, 5) for h in orders) and max(orders) <= 50
    assert orders[0] == 23                       # the first 6k ± 1 order above 1 kHz
    gaps = [b - a for (_, a), (_, b) in zip(high, high[1:])]
    assert min(gaps) >= 10.0                     # never a fence of lines
    # the usual range (the fundamental to 2.5 kHz): every low order, then 6k ± 1
    low = [h for h, _ in _marks(run_sweep(circuit, ["I(R1)"], start=50, stop=2500, points=200))]
    assert low[:13] == list(range(1, 14))
    assert {17, 19, 23, 25}.issubset(low) and not {14, 15, 16, 18}.intersection(low)
    # four decades (10 Hz to 100 kHz): the low orders crowd before the 13th; the 5th,
    # 7th, 11th and 13th are still marked, each line 10 px or more from the last
    wide = _marks(run_sweep(circuit, ["I(R1)"], start=10, stop=1e5, points=200))
    assert {5, 7, 11, 13}.issubset(h for h, _ in wide)
    assert min(b - a for (_, a), (_, b) in zip(wide, wide[1:])) >= 10.0
