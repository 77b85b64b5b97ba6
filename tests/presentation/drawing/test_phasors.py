"""Tests of the phasor diagram SVG (drawing/phasors.py), read back with xml.etree."""

import copy
import math
import re
import xml.etree.ElementTree as ET

import pytest

from phasorbench.presentation import formatting as fmt
from phasorbench.presentation.drawing import phasor_diagram_svg
from phasorbench.workflow import solve_text

SVG = "{http://www.w3.org/2000/svg}"


def _with_class(root, kind, name):
    """Elements of ``kind`` whose class list holds ``name``."""
    return [e for e in root.iter(SVG + kind) if name in (e.get("class") or "").split()]

RL_AND_C = """frequency 50 Hz
Vs: voltage a -> 0 230 V
Zl: impedance a -> 0 30 + j40 ohm
C1: capacitor a -> 0 10 uF
"""
DIVIDER = """frequency 50 Hz
Vs: voltage a -> 0 100 V
R1: resistor a -> b 30 ohm
R2: resistor b -> 0 10 ohm
"""


def _parse(svg: str) -> ET.Element:
    root = ET.fromstring(svg)  # well-formed XML, or this raises
    assert root.tag == SVG + "svg"
    return root


def _arrows(root):
    """{(element, quantity): shaft <line>} of every drawn phasor."""
    return {(e.get("data-element"), e.get("data-quantity")): e
            for e in root.iter(SVG + "line") if e.get("data-quantity")}


def _texts(root):
    return ["".join(t.itertext()) for t in root.iter(SVG + "text")]


def _geometry(line):
    """Angle (deg, y grows downward in SVG) and length of a shaft."""
    x1, y1, x2, y2 = (float(line.get(k)) for k in ("x1", "y1", "x2", "y2"))
    return math.degrees(math.atan2(-(y2 - y1), x2 - x1)), math.hypot(x2 - x1, y2 - y1)


def _outer_radius(root):
    return max(float(c.get("r")) for c in root.iter(SVG + "circle") if c.get("fill") == "none")


def _legend_scale(root, quantity):
    """Full-scale value stated in the legend, e.g. 'voltage (solid): outer ring = 250 V'."""
    for words in _texts(root):
        if words.startswith(quantity) and "outer ring = " in words:
            return words.split("outer ring = ")[1]
    raise AssertionError(f"no {quantity} scale in the legend")


def _value(text):
    number, unit = text.split(" ")
    powers = {"m": -3, "µ": -6, "k": 3, "M": 6}
    prefix = unit[0] if len(unit) > 1 and unit[0] in powers else ""
    return float(number) * 10.0 ** powers.get(prefix, 0)


def test_arrow_angles_match_the_phasors():
    result = solve_text(RL_AND_C)
    root = _parse(phasor_diagram_svg(result, ["Zl", "C1"]))
    arrows = _arrows(root)
    assert set(arrows) == {("Zl", "voltage"), ("Zl", "current"), ("C1", "voltage"),
                           ("C1", "current")}
    for (name, quantity), line in arrows.items():
        deg, _ = _geometry(line)
        expected = result["elements"][name][quantity]["deg"]
        assert abs(deg - expected) < 0.01
        assert abs(float(line.get("data-deg")) - expected) < 1e-4
    # check-values C4: I(Zl) at -53.1301°; C1: the capacitor current at +90° (leading)
    assert abs(_geometry(arrows["Zl", "current"])[0] - (-53.1301)) < 0.01
    assert abs(_geometry(arrows["C1", "current"])[0] - 90.0) < 0.01


def test_lengths_follow_two_labelled_scales():
    result = solve_text(RL_AND_C)
    root = _parse(phasor_diagram_svg(result, ["Zl", "C1"]))
    radius = _outer_radius(root)
    v_full = _value(_legend_scale(root, "voltage"))
    i_full = _value(_legend_scale(root, "current"))
    # common practice, no source: each arrow's length is |X| / full scale × ring radius
    for (name, quantity), line in _arrows(root).items():
        full = v_full if quantity == "voltage" else i_full
        mag = result["elements"][name][quantity]["mag"]
        assert math.isclose(_geometry(line)[1], mag / full * radius, rel_tol=2e-3)
    # the scale rings carry their values with units for both quantities
    scale_texts = _texts(root)
    assert fmt.eng(v_full / 2, "V", 3) in scale_texts and fmt.eng(i_full / 2, "A", 3) in scale_texts
    assert fmt.eng(v_full, "V", 3) in scale_texts and fmt.eng(i_full, "A", 3) in scale_texts
    assert v_full >= 230 and i_full >= 4.6  # the longest arrow fits inside its ring


def test_series_voltages_scale_with_their_magnitudes():
    # common practice, no source: a 30 Ω / 10 Ω divider on 100 V splits 75 V / 25 V
    root = _parse(phasor_diagram_svg(solve_text(DIVIDER), ["R1", "R2"]))
    arrows = _arrows(root)
    ratio = _geometry(arrows["R1", "voltage"])[1] / _geometry(arrows["R2", "voltage"])[1]
    assert math.isclose(ratio, 3.0, rel_tol=1e-3)


def test_angle_grid_and_caption():
    root = _parse(phasor_diagram_svg(solve_text(RL_AND_C), ["C1", "Zl"]))
    texts = _texts(root)
    # common practice, no source: a capacitor's current leads its voltage by 90°
    assert "C1: I leads V by 90.00°" in texts
    grid = _with_class(root, "text", "pb-grid-label")
    assert len(grid) >= 9  # a label hidden under a tip label may be left out
    assert {"".join(g.itertext()) for g in grid} <= {f"{d}°" for d in range(-150, 181, 30)}
    ring = next(c for c in root.iter(SVG + "circle") if c.get("fill") == "none")
    radial = [e for e in root.iter(SVG + "line")
              if (e.get("x1"), e.get("y1")) == (ring.get("cx"), ring.get("cy"))
              and not e.get("data-quantity") and e.get("stroke") != "transparent"]
    angles = sorted(round(_geometry(e)[0]) % 360 for e in radial)
    assert angles == list(range(0, 360, 30))  # a spoke every 30°
    assert root.find(f".//{SVG}path[@class='pb-angle-arc']") is not None

    root = _parse(phasor_diagram_svg(solve_text(RL_AND_C), ["Zl"]))
    # check-values C4: 30 + j40 Ω, the current lags by 53.13°
    assert "Zl: I lags V by 53.13°" in _texts(root)


def test_voltage_and_current_differ_in_colour_and_style():
    root = _parse(phasor_diagram_svg(solve_text(RL_AND_C), ["Zl", "C1"]))
    arrows = _arrows(root)
    for name in ("Zl", "C1"):
        v, i = arrows[name, "voltage"], arrows[name, "current"]
        # common practice, no source: not by colour alone (colour-blind readers)
        assert v.get("stroke-dasharray") is None and i.get("stroke-dasharray")
        assert v.get("stroke") != i.get("stroke")
    assert arrows["Zl", "voltage"].get("stroke") != arrows["C1", "voltage"].get("stroke")


def test_hover_titles_carry_the_values():
    result = solve_text(RL_AND_C)
    root = _parse(phasor_diagram_svg(result, ["Zl"]))
    titles = ["".join(t.itertext()) for t in root.iter(SVG + "title")]
    current = result["elements"]["Zl"]["current"]
    # check-values C4: 4.6 A ∠-53.13°, written by the one formatter
    assert f"I(Zl) = {fmt.phasor(current, 'A')}" in titles
    assert "I(Zl) = 4.6 A ∠-53.13°" in titles


def test_parallel_elements_share_one_tip_label():
    root = _parse(phasor_diagram_svg(solve_text(RL_AND_C), ["Zl", "C1", "Vs"]))
    labels = [t for t in _texts(root) if t.startswith("V(")]
    # common practice, no source: parallel elements share their voltage
    assert labels == ["V(Zl, C1, Vs)"]


def test_zero_phasor_is_a_dot_at_the_origin():
    result = copy.deepcopy(solve_text(DIVIDER))
    zero = {"re": 0.0, "im": 0.0, "mag": 0.0, "deg": 0.0}
    result["elements"]["R2"]["current"] = zero
    root = _parse(phasor_diagram_svg(result, ["R2", "R1"]))
    dots = [c for c in root.iter(SVG + "circle") if c.get("data-zero") == "true"]
    # common practice, no source: a zero phasor has no direction to draw
    assert [(d.get("data-element"), d.get("data-quantity")) for d in dots] == [("R2", "current")]
    assert ("R2", "current") not in _arrows(root)
    assert "R2: no angle between V and I (a phasor is zero)" in _texts(root)


def test_all_zero_and_single_element():
    result = copy.deepcopy(solve_text(DIVIDER))
    zero = {"re": 0.0, "im": 0.0, "mag": 0.0, "deg": 0.0}
    result["elements"]["R1"]["voltage"] = zero
    result["elements"]["R1"]["current"] = zero
    root = _parse(phasor_diagram_svg(result, ["R1"]))
    # common practice, no source: nothing to scale still gives a readable picture
    assert len([c for c in root.iter(SVG + "circle") if c.get("data-zero")]) == 2
    assert all(math.isfinite(float(c.get("cx"))) for c in root.iter(SVG + "circle"))


def test_every_element_of_a_picture_looks_different_and_is_in_the_key():
    lines = ["frequency 50 Hz", "Vs: voltage a -> 0 100 V"]
    lines += [f"R{k}: resistor a -> 0 {10 * k} ohm" for k in range(1, 13)]
    result = solve_text("\n".join(lines))
    names = [f"R{k}" for k in range(1, 13)]
    root = _parse(phasor_diagram_svg(result, names))
    arrows = _arrows(root)
    looks = [(arrows[n, q].get("stroke"), arrows[n, q].get("stroke-dasharray"))
             for n in names for q in ("voltage", "current")]
    # common practice, no source: no two phasors of one picture drawn alike; colours first
    # (twelve), then line styles, so colour is never the only cue
    assert len(set(looks)) == len(looks)
    assert len({arrows[n, "voltage"].get("stroke") for n in names[:6]}) == 6
    # the key names every element drawn, each with its own line samples
    keys = [e.get("data-entry") for e in _with_class(root, "g", "pb-key")]
    assert keys == names
    for g in _with_class(root, "g", "pb-key"):
        v, i = list(g.iter(SVG + "line"))
        n = g.get("data-entry")
        assert (v.get("stroke"), v.get("stroke-dasharray")) == \
            (arrows[n, "voltage"].get("stroke"), arrows[n, "voltage"].get("stroke-dasharray"))
        assert (i.get("stroke"), i.get("stroke-dasharray")) == \
            (arrows[n, "current"].get("stroke"), arrows[n, "current"].get("stroke-dasharray"))


def test_unknown_or_no_names_raise():
    result = solve_text(DIVIDER)
    with pytest.raises(ValueError, match="'Rx'"):
        phasor_diagram_svg(result, ["R1", "Rx"])
    with pytest.raises(ValueError):
        phasor_diagram_svg(result, [])


def test_self_contained_markup():
    svg = phasor_diagram_svg(solve_text(RL_AND_C), ["Zl", "C1"], width=400, height=420)
    root = _parse(svg)
    # common practice, no source: no script, no external or id references, so it can be
    # inlined anywhere, several times
    assert "<script" not in svg and "href" not in svg and "url(" not in svg
    assert not re.search(r'\sid="', svg)
    assert root.get("viewBox") == "0 0 400 420"
    assert root.get("class") == "pb-phasor"


def test_a_source_draws_the_current_it_delivers():
    # Ohm's law, 230 V on 30 + j40 Ω (check-values C4): the supply delivers the load's
    # current, 4.6 A at −53.13°, lagging its voltage; the passive-sign one would point
    # the other way (+126.87°)
    result = solve_text("frequency 50 Hz\nVs: voltage a -> 0 230 V\nZl: impedance a -> 0 30 + j40 ohm\n")
    root = _parse(phasor_diagram_svg(result, ["Vs"]))
    deg, _ = _geometry(_arrows(root)["Vs", "current"])
    assert abs(deg - (-53.1301)) < 0.01
    assert any("lags" in words for words in _texts(root))
