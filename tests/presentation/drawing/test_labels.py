"""No label of a picture covers another: the placer of drawing/labels.py, checked with
its box estimate on the SVG the pictures write (the browser test measures the same
pictures with getBBox: tests/web/test_labels_browser.py)."""

from __future__ import annotations

import itertools
import xml.etree.ElementTree as ET

import pytest

from phasorbench.presentation.drawing import phasor_diagram_svg, waveform_svg
from phasorbench.presentation.drawing.labels import (Placer, overlap, text_box, text_width)
from phasorbench.presentation.drawing.phasors import three_phase_svg
from phasorbench.waveforms import sample_element
from phasorbench.workflow import solve_text

SVG = "{http://www.w3.org/2000/svg}"

#: A resistor alone: its V and I are in phase (textbook: Z = R is real), so both arrows
#: point the same way and their tip labels compete for one place.
IN_PHASE = """frequency 50 Hz
V1: voltage a -> 0 230 V
R1: resistor a -> 0 46 ohm
"""

#: One large load beside a chain of small drops: many short phasors near the centre
#: (invented; the sheet's default picture of such a circuit piled them up).
SHORT = """title Many short phasors
frequency 50 Hz
V1: voltage a -> 0 230 V
Rbig: resistor a -> 0 10 ohm
R1: resistor a -> b 1 ohm
R2: resistor b -> c 1 ohm
R3: resistor c -> d 1 ohm
C1: capacitor d -> e 10 mF
L1: inductor e -> f 1 mH
R4: resistor f -> 0 500 ohm
R5: resistor a -> 0 100 kohm
"""

#: Twelve elements of every kind on one feeder (invented).
TWELVE = "frequency 60 Hz\nV1: voltage a -> 0 120 V\n" + "\n".join(
    f"{kind[0].upper()}{k}: {kind} a -> n{k} {value}\nR{k}x: resistor n{k} -> 0 {5 + k} ohm"
    for k, (kind, value) in enumerate([("inductor", "10 mH"), ("capacitor", "200 uF"),
                                       ("resistor", "3 ohm"), ("inductor", "40 mH"),
                                       ("capacitor", "50 uF"), ("resistor", "20 ohm")]))

THREE = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""


def _boxes(svg: str):
    """Every text of the picture and its estimated box (same face metrics as the placer)."""
    out = []
    for t in ET.fromstring(svg).iter(SVG + "text"):
        words = "".join(t.itertext())
        size = float(t.get("font-size") or 12)
        dy = t.get("dy")
        dy_em = float(dy[:-2]) if dy and dy.endswith("em") else 0.0
        out.append((words, text_box(float(t.get("x")), float(t.get("y")), words, size,
                                    t.get("text-anchor") or "start",
                                    t.get("font-weight") == "bold", dy_em)))
    return out


def _overlaps(svg: str):
    boxes = _boxes(svg)
    return [(a[0], b[0]) for a, b in itertools.combinations(boxes, 2) if overlap(a[1], b[1])]


CASES = [(IN_PHASE, ["R1", "V1"]), (IN_PHASE, ["R1"]), (SHORT, None), (TWELVE, None)]


@pytest.mark.parametrize("size", [(520, 520), (300, 300), (900, 480), (420, 640)])
@pytest.mark.parametrize("circuit, names", CASES)
def test_no_two_labels_of_a_phasor_diagram_overlap(circuit, names, size):
    result = solve_text(circuit)
    names = names or list(result["elements"])[:12]
    svg = phasor_diagram_svg(result, names, *size)
    # common practice, no source: a label that covers another cannot be read
    assert _overlaps(svg) == []
    # every tip still has its label (none dropped for lack of room at these sizes)
    if size == (520, 520):
        labels = "".join(w for w, _ in _boxes(svg))
        for n in names:
            assert n in labels


def test_in_phase_voltage_and_current_labels_sit_apart():
    svg = phasor_diagram_svg(solve_text(IN_PHASE), ["R1"])
    tips = {w: b for w, b in _boxes(svg) if w.startswith(("V(", "I("))}
    # textbook: a resistor's V and I are in phase; both labels are there, side by side or
    # merged into one when the tips coincide
    assert set(tips) in ({"V(R1)", "I(R1)"}, {"V(R1), I(R1)"})
    assert not overlap(*tips.values()) if len(tips) == 2 else True


def test_the_scale_values_keep_clear_of_the_angle_value():
    # check-values C4 (30 + j40 Ω): a 53.13° arc at the centre, beside the scale values
    result = solve_text("frequency 50 Hz\nVs: voltage a -> 0 230 V\n"
                        "Zl: impedance a -> 0 30 + j40 ohm\n")
    for size in ((300, 300), (520, 520)):
        boxes = dict(_boxes(phasor_diagram_svg(result, ["Zl"], *size)))
        assert "53.13°" in boxes
        scale = [b for w, b in boxes.items() if w.endswith((" V", " A")) and "=" not in w]
        assert all(not overlap(boxes["53.13°"], b) for b in scale)


@pytest.mark.parametrize("size", [(520, 520), (320, 320)])
def test_three_phase_view_labels(size):
    assert _overlaps(three_phase_svg(solve_text(THREE), "M", *size)) == []


WAVES = """frequency 50 Hz
Vs: voltage a -> 0 230 V
Zl: impedance a -> 0 30 + j40 ohm
C1: capacitor a -> 0 10 uF
R1: resistor a -> 0 100 ohm
"""


def _crosses(box, points):
    from phasorbench.presentation.drawing.waveforms import _crosses as crosses
    xs, ys = zip(*points)
    return crosses(box, xs, ys)


@pytest.mark.parametrize("name", ["Zl", "C1", "R1", "Vs"])
@pytest.mark.parametrize("size", [(640, 360), (360, 280), (1200, 500)])
def test_the_mean_power_label_sits_off_every_trace(name, size):
    samples = sample_element(solve_text(WAVES), name)
    svg = waveform_svg(samples, *size)
    assert _overlaps(svg) == []
    root = ET.fromstring(svg)
    label = [t for t in root.iter(SVG + "text") if t.get("class") == "pb-mean-label"]
    assert len(label) == 1                       # the mean power is always stated
    words = "".join(label[0].itertext())
    assert words.startswith("P = ")
    box = text_box(float(label[0].get("x")), float(label[0].get("y")), words, bold=True)
    # common practice, no source: a value printed on a trace hides both
    for line in root.iter(SVG + "polyline"):
        points = [tuple(map(float, p.split(","))) for p in line.get("points").split()]
        assert not _crosses(box, points), line.get("data-quantity")


def test_the_placer_itself():
    # common practice, no source: two boxes sharing an edge do not overlap; a pad keeps
    # them apart; a label refused everywhere is reported, not stacked
    assert not overlap((0, 0, 10, 10), (10, 0, 20, 10))
    assert overlap((0, 0, 10, 10), (11, 0, 20, 10), pad=2)
    placer = Placer(100, 40)
    placer.add((0, 0, 100, 40))
    assert placer.around(50, 20, 0, 20, 10) is None
    placer = Placer(200, 200)
    first = placer.around(100, 100, 0, 30, 12)
    second = placer.around(100, 100, 0, 30, 12)
    assert first is not None and second is not None
    assert first[1] is False and not overlap(first[0], second[0])
    # DejaVu Sans advance widths (the face's hmtx): "W" 0.989 em, "i" 0.278 em at 10 px
    assert text_width("WW", 10) - text_width("W", 10) == pytest.approx(9.89 * 1.03)
    assert text_width("ii", 10) - text_width("i", 10) == pytest.approx(2.78 * 1.03)
