"""The three-phase view of drawing/phasors.py (``three_phase_svg``), read back with
xml.etree: the same picture as the element diagram, one colour pair per phase."""

import math
import xml.etree.ElementTree as ET

import pytest

from phasorbench.presentation.drawing.phasors import phasor_diagram_svg, three_phase_svg
from phasorbench.workflow import solve_text

SVG = "{http://www.w3.org/2000/svg}"

#: check-values C22: 400 V line, 50 Hz, Z_Y = 16 + j12 Ω per phase, four-wire.
C22 = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""
#: check-values C24: 480 V line, 60 Hz, Z_Δ = 30 + j40 Ω; phase −30° puts V_ab at 0°.
C24 = """frequency 60 Hz
G: voltage3 A B C -> 0 480 V line phase -30 deg
D: load3 delta A B C 30 + j40 ohm
"""


def _shafts(svg: str) -> dict:
    root = ET.fromstring(svg)
    return {(e.get("data-quantity"), e.get("data-phase")): e for e in root.iter(SVG + "line")
            if e.get("data-group")}


def _angle_and_length(line) -> tuple[float, float]:
    x1, y1, x2, y2 = (float(line.get(k)) for k in ("x1", "y1", "x2", "y2"))
    return math.degrees(math.atan2(-(y2 - y1), x2 - x1)), math.hypot(x2 - x1, y2 - y1)


def test_balanced_wye_draws_three_phase_voltages_and_line_currents():
    result = solve_text(C22)
    shafts = _shafts(three_phase_svg(result, "M"))
    assert set(shafts) == {(q, p) for q in ("voltage", "current") for p in "abc"}
    # check-values C22 (formula): V_a at 0°, I_a = 11.547 A∠-36.8699°, I_b ∠-156.87°,
    # I_c ∠83.1301°; phases 120° apart, equal lengths (balanced).
    want = {("voltage", "a"): 0.0, ("voltage", "b"): -120.0, ("voltage", "c"): 120.0,
            ("current", "a"): -36.8699, ("current", "b"): -156.87, ("current", "c"): 83.1301}
    lengths = {}
    for key, deg in want.items():
        drawn, lengths[key] = _angle_and_length(shafts[key])
        assert drawn == pytest.approx(deg, abs=0.05)           # drawn at 3-decimal px
        assert float(shafts[key].get("data-deg")) == pytest.approx(deg, abs=1e-3)
    for q in ("voltage", "current"):
        assert lengths[(q, "a")] == pytest.approx(lengths[(q, "b")], rel=1e-3)
        assert lengths[(q, "a")] == pytest.approx(lengths[(q, "c")], rel=1e-3)
    # A wye phase's current is its element's own: the shafts name the element.
    assert shafts[("current", "a")].get("data-element") == "M.a"


def test_delta_pairs_branch_voltages_with_line_currents():
    svg = three_phase_svg(solve_text(C24), "D")
    shafts = _shafts(svg)
    # check-values C24 (formula): V_ab at 0° (by the source phase), I_a = 16.6277 A∠-83.1301°.
    assert _angle_and_length(shafts[("voltage", "ab")])[0] == pytest.approx(0.0, abs=0.05)
    assert _angle_and_length(shafts[("current", "a")])[0] == pytest.approx(-83.1301, abs=0.05)
    # A line current belongs to no single element; the branch voltage does.
    assert shafts[("current", "a")].get("data-element") is None
    assert shafts[("voltage", "ab")].get("data-element") == "D.ab"
    texts = ["".join(t.itertext()) for t in ET.fromstring(svg).iter(SVG + "text")]
    assert any("branch voltages, line currents" in t for t in texts)
    # The angle note names the two phasors it compares: I(a) lags V(ab) by 83.13°.
    assert any(t.endswith("I(a) lags V(ab) by 83.13°") for t in texts)


def test_the_wye_view_is_the_element_diagram_of_its_phases():
    # One drawing implementation: the group view's arrows are those of the element
    # diagram of the same three elements (same scales, same geometry).
    result = solve_text(C22)
    group = _shafts(three_phase_svg(result, "M", 500, 460))
    root = ET.fromstring(phasor_diagram_svg(result, ["M.a", "M.b", "M.c"], 500, 460))
    plain = {(e.get("data-quantity"), e.get("data-element")[-1]): e
             for e in root.iter(SVG + "line") if e.get("data-quantity")}
    for key, line in group.items():
        for k in ("x1", "y1", "x2", "y2"):
            assert line.get(k) == plain[key].get(k)


def test_unknown_block_raises():
    with pytest.raises(ValueError, match="no three-phase block"):
        three_phase_svg(solve_text(C22), "X")
