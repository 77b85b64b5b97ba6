"""The tolerance pictures (drawing/tolerance.py), read back with xml.etree: bars
proportional to numpy.histogram's counts, markers where the statistics say."""

import xml.etree.ElementTree as ET

import numpy as np

from phasorbench.presentation.drawing.tolerance import histogram_svg, sensitivity_svg

SVG = "{http://www.w3.org/2000/svg}"


def _stats(values):
    counts, edges = np.histogram(values, bins=20)          # numpy.histogram: the reference
    return {"mean": float(np.mean(values)), "std": float(np.std(values, ddof=1)),
            "histogram": {"edges": edges.tolist(), "counts": counts.tolist()}}


def _bars(root):
    return [r for r in root.iter(SVG + "rect") if r.find(SVG + "title") is not None]


def test_histogram_bars_follow_the_counts():
    values = np.random.default_rng(5).normal(10.0, 0.5, 4000)
    stats = _stats(values)
    root = ET.fromstring(histogram_svg(stats, "|V(out)|", "V", nominal=10.0,
                                       limits=[(9.0, 11.0)]))
    bars = _bars(root)
    counts = [c for c in stats["histogram"]["counts"] if c > 0]
    assert len(bars) == len(counts)
    heights = np.array([float(b.get("height")) for b in bars])
    # common practice, no source: bar heights in proportion to the counts
    assert np.allclose(heights / heights.max(), np.array(counts) / max(counts), atol=2e-3)
    titles = ["".join(t.itertext()) for t in root.iter(SVG + "title")]
    assert any(t.startswith("nominal 10") for t in titles)
    assert sum(t.startswith("limit ") for t in titles) == 2
    words = " ".join("".join(t.itertext()) for t in root.iter(SVG + "text"))
    assert "4,000 runs" in words and "mean ± 3σ" in words


def test_mean_and_sigma_markers_sit_on_the_axis_scale():
    values = np.linspace(0.0, 1.0, 1001)
    stats = _stats(values)
    root = ET.fromstring(histogram_svg(stats, "x"))
    lines = {"".join(l.find(SVG + "title").itertext()).split()[0]: float(l.get("x1"))
             for l in root.iter(SVG + "line") if l.find(SVG + "title") is not None}
    # the mean (formula: 0.5) lies halfway between −3σ and +3σ on a linear axis
    assert abs(lines["mean"] - (lines["−3σ"] + lines["+3σ"]) / 2) < 0.01


def test_sensitivity_bars_keep_sign_and_order():
    sens = {"C1": {"mag": 1.0, "deg": 0.0}, "R1": {"mag": -0.5, "deg": 0.0},
            "L1": {"mag": 0.25, "deg": 0.0}}
    root = ET.fromstring(sensitivity_svg(sens, "sensitivity"))
    bars = _bars(root)
    widths = [float(b.get("width")) for b in bars]
    # common practice, no source: bar lengths in proportion, negatives left of zero
    assert np.allclose(np.array(widths) / widths[0], [1.0, 0.5, 0.25], atol=1e-3)
    assert float(bars[1].get("x")) < float(bars[0].get("x"))
