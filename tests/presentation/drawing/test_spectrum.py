"""Tests of the spectrum bar chart (drawing/spectrum.py), read back with xml.etree."""

import xml.etree.ElementTree as ET

import pytest

from phasorbench.presentation.drawing.spectrum import spectrum_svg

SVG = "{http://www.w3.org/2000/svg}"

BARS = [{"label": "5", "pct": 6.0, "value": "13.9 V", "over": True},
        {"label": "7", "pct": 3.0, "value": "6.9 V", "over": False},
        {"label": "11", "pct": None, "value": "", "over": False}]


def _root(**kw):
    return ET.fromstring(spectrum_svg(BARS, "V(bus)", "percent of V1 = 231 V", **kw))


def test_bar_heights_are_proportional_to_the_percentages():
    root = _root(limit_pct=5.0)
    bars = {r.get("data-order"): r for r in root.iter(SVG + "rect")
            if "pb-bar" in (r.get("class") or "")}
    # formula: a linear axis from 0, so heights are in the ratio of the values (6 : 3)
    assert set(bars) == {"5", "7"}                     # the missing order is a gap
    assert float(bars["5"].get("height")) == pytest.approx(
        2 * float(bars["7"].get("height")), rel=1e-3)
    # both bars stand on one base line
    base = {round(float(r.get("y")) + float(r.get("height")), 2) for r in bars.values()}
    assert len(base) == 1


def test_over_the_limit_is_shape_and_text_not_colour_alone():
    root = _root(limit_pct=5.0)
    texts = ["".join(t.itertext()) for t in root.iter(SVG + "text")]
    # WCAG 2.1 success criterion 1.4.1 (use of colour): a cross and hatching as well
    assert texts.count("✖") == 1 and "limit 5 %" in texts
    over = [r for r in root.iter(SVG + "rect") if "pb-over" in (r.get("class") or "")]
    assert len(over) == 1 and over[0].get("fill") == "#ffffff"
    assert any(p.get("d", "").count("M") >= 2 for p in root.iter(SVG + "path"))
    assert len([x for x in root.iter(SVG + "line") if x.get("class") == "pb-limit"]) == 1
    assert "order 5 6 %" in root.get("aria-label")


def test_no_ids_so_two_charts_can_share_a_page():
    # the drawing package's rule (_svg.py): no ids, nothing that could clash
    assert " id=" not in spectrum_svg(BARS, "I(Drive)", "percent of I1 = 42 A")
