"""Tests of the waveform SVG (drawing/waveforms.py), read back with xml.etree."""

import math
import re
import xml.etree.ElementTree as ET

from phasorbench.presentation import formatting as fmt
from phasorbench.presentation.drawing import waveform_svg
from phasorbench.waveforms import sample_element
from phasorbench.workflow import solve_text

SVG = "{http://www.w3.org/2000/svg}"


def _with_class(root, kind, name):
    """Elements of ``kind`` whose class list holds ``name``."""
    return [e for e in root.iter(SVG + kind) if name in (e.get("class") or "").split()]

CIRCUIT = """frequency 50 Hz
Vs: voltage a -> 0 230 V
Zl: impedance a -> 0 30 + j40 ohm
C1: capacitor a -> 0 10 uF
R1: resistor a -> 0 100 ohm
"""


def _draw(name, **kw):
    samples = sample_element(solve_text(CIRCUIT), name, **kw)
    svg = waveform_svg(samples)
    return samples, svg, ET.fromstring(svg)


def _texts(root):
    return ["".join(t.itertext()) for t in root.iter(SVG + "text")]


def _traces(root):
    return {e.get("data-quantity"): e for e in root.iter(SVG + "polyline")}


def _points(polyline):
    return [tuple(map(float, p.split(","))) for p in polyline.get("points").split()]


def _frame(root):
    """The plot frame: x0, y_top, x1, y_bot."""
    rect = next(r for r in root.iter(SVG + "rect") if r.get("fill") == "none")
    x, y, w, h = (float(rect.get(k)) for k in ("x", "y", "width", "height"))
    return x, y, x + w, y + h


def _scale_top(root, unit):
    """Full-scale value of the scale whose labels end in ``unit`` (the largest label)."""
    values = []
    for words in _texts(root):
        m = re.fullmatch(r"(-?[\d.]+) ([mkµ]?)" + unit, words)
        if m:
            values.append(float(m[1]) * {"": 1, "m": 1e-3, "k": 1e3, "µ": 1e-6}[m[2]])
    return max(values)


def test_three_traces_with_their_own_styles():
    _, _, root = _draw("Zl")
    traces = _traces(root)
    assert set(traces) == {"v", "i", "p"}
    # common practice, no source: traces differ by line style, not by colour alone
    dashes = {traces[q].get("stroke-dasharray") for q in "vip"}
    assert len(dashes) == 3
    assert len({traces[q].get("stroke") for q in "vip"}) == 3


def test_traces_follow_their_labelled_scales():
    samples, _, root = _draw("Zl", samples_per_period=100)
    x0, y_top, x1, y_bot = _frame(root)
    y_zero, half = (y_top + y_bot) / 2, (y_bot - y_top) / 2
    for quantity, unit in (("v", "V"), ("i", "A"), ("p", "W")):
        full = _scale_top(root, unit)
        drawn = [(y_zero - y) / half * full for _, y in _points(_traces(root)[quantity])]
        # common practice, no source: read back through the printed scale, the trace
        # reproduces the samples (coordinates keep 3 decimals)
        peak = max(abs(x) for x in samples[quantity])
        assert all(math.isclose(d, s, abs_tol=2e-3 * full)
                   for d, s in zip(drawn, samples[quantity]))
        assert full >= peak
    xs = [x for x, _ in _points(_traces(root)["v"])]
    assert math.isclose(xs[0], x0) and math.isclose(xs[-1], x1)


def test_rl_load_mean_line_and_returned_energy():
    samples, _, root = _draw("Zl")
    texts = _texts(root)
    # check-values C4: mean power 634.8 W
    assert "P = 634.8 W" in texts
    mean = root.find(f".//{SVG}line[@class='pb-mean']")
    x0, y_top, x1, y_bot = _frame(root)
    full = _scale_top(root, "W")
    y_mean = float(mean.get("y1"))
    assert math.isclose(((y_top + y_bot) / 2 - y_mean) / ((y_bot - y_top) / 2) * full, 634.8,
                        rel_tol=2e-3)
    # check-values C4: p dips to -423.2 W, so the element returns energy: shaded
    shaded = _with_class(root, "polygon", "pb-returned")
    assert len(shaded) == 4  # p(t) runs at 2f: two negative lobes per period, two periods
    energy = fmt.eng(samples["returned_energy_j"], "J", 4)
    assert f"Shaded: p(t) < 0, energy returned to the circuit: {energy} per cycle" in texts


def test_shaded_width_matches_the_negative_time():
    samples, _, root = _draw("Zl", samples_per_period=400)
    x0, _, x1, _ = _frame(root)
    width = 0.0
    for poly in _with_class(root, "polygon", "pb-returned"):
        xs = [x for x, _ in _points(poly)]
        width += max(xs) - min(xs)
    # IEEE Std 1459-2010 (p = P + S·cos(2ωt + φ), check-values C4): p < 0 for the
    # fraction (π − α)/π of the time, α = arccos(−P/S)
    alpha = math.acos(-634.8 / 1058.0)
    assert math.isclose(width / (x1 - x0), (math.pi - alpha) / math.pi, rel_tol=2e-3)


def test_capacitor_is_shaded_and_mean_is_zero():
    samples, _, root = _draw("C1")
    # check-values C3: an ideal capacitor takes no mean power, half of p(t) is negative
    assert "P = 0 W" in _texts(root)
    assert len(_with_class(root, "polygon", "pb-returned")) == 4


def test_resistor_has_no_shading():
    _, _, root = _draw("R1")
    # common practice, no source: a resistor's p(t) = P(1 + cos 2ωt) never goes negative
    assert not _with_class(root, "polygon", "pb-returned")
    texts = _texts(root)
    assert "p(t) ≥ 0 throughout: no energy returned to the circuit" in texts
    assert "P = 529 W" in texts  # 230² / 100 Ω


def test_time_axis_in_ms():
    _, _, root = _draw("Zl")
    texts = _texts(root)
    ticks = _with_class(root, "text", "pb-time-label")
    # common practice, no source: two periods of 50 Hz span 0 … 40 ms
    assert "t (ms)" in texts
    assert "".join(ticks[0].itertext()) == "0" and "".join(ticks[-1].itertext()) == "40"
    assert 5 <= len(ticks) <= 11


def test_scales_are_labelled_with_units():
    _, _, root = _draw("C1")
    # check-values C1: 0.722566 A rms → 1.02 A peak fits a 1.5 A scale
    assert _scale_top(root, "V") >= 230 * math.sqrt(2)
    assert _scale_top(root, "A") >= 0.722566 * math.sqrt(2)
    assert _scale_top(root, "W") >= 166.19
    heads = {"".join(e.itertext()) for e in _with_class(root, "text", "pb-scale-head")}
    assert heads == {"v", "i", "p"}


def test_self_contained_markup():
    _, svg, root = _draw("Zl")
    # common practice, no source: inlinable anywhere, several times
    assert "<script" not in svg and "href" not in svg and "url(" not in svg
    assert not re.search(r'\sid="', svg)
    assert root.get("class") == "pb-wave" and root.get("viewBox") == "0 0 640 360"
