"""The phasor diagram: voltages and currents of chosen elements from one origin.

Drawn once here as an SVG string; the web API serves it to the page and the sheet
inlines it, so both show the same picture. Voltages and currents get separate
magnitude scales (a volt and an ampere cannot share a ruler), each stated on the scale
rings and in the legend. Angles follow the contract (degrees, counter-clockwise from
the positive real axis); SVG's y axis points down, so y = cy − r·sin θ.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Sequence
from typing import NamedTuple

from .. import formatting as fmt
from ._svg import (DASH_CURRENT, GRID, GRID_STRONG, INK, PAIRS, nice_ceiling, num, svg_root,
                   tag, text, title)

__all__ = ["phasor_diagram_svg", "three_phase_svg"]

_STYLE = ("svg.pb-phasor .pb-arrow:hover line.pb-shaft{stroke-width:4}"
          "svg.pb-phasor .pb-arrow{cursor:default}")
_TOP, _BOTTOM, _SIDE, _LABEL_PAD = 46.0, 50.0, 14.0, 26.0
_SYMBOL = {"voltage": "V", "current": "I"}
_UNIT = {"voltage": "V", "current": "A"}


def _phasor(el: dict, key: str) -> complex:
    ph = el.get(key)
    if ph is None:
        return 0j
    return complex(ph["re"], ph["im"])


def _current(el: dict) -> complex:
    """The current drawn for an element: a source's is the one it delivers (out of its
    first terminal into the circuit), every other element's the passive-sign one."""
    supply = el.get("delivered")
    return _phasor(supply if isinstance(supply, dict) else el, "current")


def _deg(z: complex) -> float:
    return math.degrees(cmath.phase(z))


def _point(cx: float, cy: float, r: float, deg: float) -> tuple[float, float]:
    th = math.radians(deg)
    return cx + r * math.cos(th), cy - r * math.sin(th)


def _grid(cx: float, cy: float, radius: float) -> tuple[list[str], list[tuple]]:
    """Angle grid every 30° and two scale rings (half and full scale).

    Returns the grid shapes and the angle labels as ``(box, markup)`` pairs, so a label
    that a tip label would cover can be left out (its neighbours still read).
    """
    out = [tag("circle", cx=cx, cy=cy, r=radius, fill="none", stroke=GRID_STRONG),
           tag("circle", cx=cx, cy=cy, r=radius / 2, fill="none", stroke=GRID,
               stroke_dasharray="3 3")]
    labels = []
    for k in range(12):
        deg = 30.0 * k
        x2, y2 = _point(cx, cy, radius, deg)
        strong = k % 3 == 0  # the real and imaginary axes
        out.append(tag("line", x1=cx, y1=cy, x2=x2, y2=y2, stroke=GRID_STRONG if strong else GRID,
                       stroke_width=1))
        lx, ly = _point(cx, cy, radius + 14, deg)
        c = math.cos(math.radians(deg))
        anchor = "start" if c > 0.3 else "end" if c < -0.3 else "middle"
        words = fmt.degrees(deg if deg <= 180 else deg - 360, 0)
        w = 6.5 * len(words)
        left = lx if anchor == "start" else lx - w if anchor == "end" else lx - w / 2
        labels.append(((left, ly - 6, left + w, ly + 6),
                       text(lx, ly, words, halo=False, text_anchor=anchor, dy="0.35em",
                            fill="#666666", font_size=11, class_="pb-grid-label")))
    return out, labels


def _free_direction(angles: list[float]) -> float:
    """The 30°-sector middle farthest from every drawn arrow: where the ring labels go."""
    best, best_gap = -75.0, -1.0
    for k in range(12):
        cand = 15.0 + 30.0 * k
        gap = min((abs((cand - a + 180.0) % 360.0 - 180.0) for a in angles), default=180.0)
        if gap > best_gap + 1e-9:
            best, best_gap = cand, gap
    return best


def _arrow(cx, cy, r, deg, colour, dashed, name, quantity, mag_text, ph_deg,
           data: dict | None = None) -> str:
    """One phasor: a shaft from the origin to the exact tip, a filled head, a hover title.

    ``name`` is the label inside ``V(…)``/``I(…)``; ``data`` the shaft's ``data-*``
    attributes (default: ``data-element`` = ``name``).
    """
    x2, y2 = _point(cx, cy, r, deg)
    head = min(11.0, 0.45 * r)
    th = math.radians(deg)
    ux, uy = math.cos(th), -math.sin(th)  # unit vector along the arrow, screen coords
    bx, by = x2 - head * ux, y2 - head * uy
    wing = head * 0.42
    pts = f"{num(x2)},{num(y2)} {num(bx - wing * uy)},{num(by + wing * ux)} " \
          f"{num(bx + wing * uy)},{num(by - wing * ux)}"
    words = f"{_SYMBOL[quantity]}({name}) = {mag_text}"
    return tag("g", "".join([
        title(words),
        tag("line", x1=cx, y1=cy, x2=x2, y2=y2, stroke="transparent", stroke_width=10),
        tag("line", x1=cx, y1=cy, x2=x2, y2=y2, stroke=colour, stroke_width=2.5,
            stroke_dasharray=DASH_CURRENT if dashed else None, class_="pb-shaft",
            **(data if data is not None else {"data_element": name}),
            data_quantity=quantity, data_deg=f"{ph_deg:.6g}"),
        tag("polygon", points=pts, fill=colour),
    ]), class_="pb-arrow")


class _Labels:
    """Places tip labels inside the picture, nudging a label that would cover another."""

    def __init__(self, width: float, height: float) -> None:
        self.width, self.height = width, height
        self.boxes: list[tuple[float, float, float, float]] = []

    def _box(self, cx, cy, r, deg, w, h):
        c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
        x, y = _point(cx, cy, r, deg)
        y += 4.0 - (5.0 if s > 0.35 else -6.0 if s < -0.35 else 0.0)
        left = x if c > 0.35 else x - w if c < -0.35 else x - w / 2
        # Past an edge: slide the label back in, and off the shaft (above or below it).
        overflow = max(0.0, left + w - (self.width - 4)) - max(0.0, 4 - left)
        if overflow:
            left -= overflow
            y += -14.0 if s >= 0 else 14.0
        return (left, y - h + 3, left + w, y + 3)

    def covers(self, box) -> bool:
        """Whether ``box`` (left, top, right, bottom) overlaps a placed label."""
        return any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3]
                   for b in self.boxes)

    def place(self, cx, cy, r, deg, words, colour) -> str:
        w, h = 7.5 * len(words), 14.0  # bold 12 px text runs about 7.5 px a character
        for extra in (0.0, 14.0, 28.0, 42.0, 56.0):
            box = self._box(cx, cy, r + 10.0 + extra, deg, w, h)
            if not self.covers(box):
                break
        self.boxes.append(box)
        return text(box[0], box[3] - 3, words, fill=colour, font_weight="bold",
                    class_="pb-tip-label")


def _merge_tips(tips):
    """One label per tip position: parallel elements share a voltage, so their arrows
    coincide and get one label, ``V(R1, C1)``, instead of a pile of overlapping ones."""
    groups: list[list] = []
    for tip in tips:
        r, deg = tip[0], tip[1]
        for g in groups:
            r0, d0 = g[0][0], g[0][1]
            # Same tip within ~2 px: compare the tips' separation on screen.
            if abs(cmath.rect(r, math.radians(deg)) - cmath.rect(r0, math.radians(d0))) < 2.0:
                g.append(tip)
                break
        else:
            groups.append([tip])
    out = []
    for g in groups:
        symbols = dict.fromkeys(t[2] for t in g)
        words = ", ".join(f"{sym}({', '.join(t[3] for t in g if t[2] == sym)})" for sym in symbols)
        colours = {t[4] for t in g}
        out.append((g[0][0], g[0][1], words, g[0][4] if len(colours) == 1 else INK))
    return out


def _angle_note(name: str, v: complex, i: complex, zero_v: bool, zero_i: bool,
                labels: tuple[str, str] | None = None) -> str:
    """How the first pair's current sits against its voltage, in words.

    ``labels`` names the two phasors when they are not one element's (a delta block's
    line current against its branch voltage).
    """
    if labels is not None:
        v_words, i_words = f"V({labels[0]})", f"I({labels[1]})"
    else:
        v_words, i_words = "V", "I"
    if zero_v or zero_i:
        return f"{name}: no angle between {v_words} and {i_words} (a phasor is zero)"
    phi = (_deg(i) - _deg(v) + 180.0) % 360.0 - 180.0
    if phi == -180.0:
        phi = 180.0
    if abs(phi) < 0.005:
        return f"{name}: {i_words} in phase with {v_words}"
    word = "leads" if phi > 0 else "lags"
    return f"{name}: {i_words} {word} {v_words} by {fmt.degrees(abs(phi))}"


def _angle_arc(cx, cy, rv, ri, v: complex, i: complex) -> list[str]:
    """A small arc from V's direction to I's, the short way round, with its angle."""
    dv, di = _deg(v), _deg(i)
    phi = (di - dv + 180.0) % 360.0 - 180.0
    if abs(phi) < 0.5:
        return []
    r = max(14.0, min(40.0, 0.7 * min(rv, ri)))
    x1, y1 = _point(cx, cy, r, dv)
    x2, y2 = _point(cx, cy, r, di)
    sweep = 0 if phi > 0 else 1  # counter-clockwise on screen is SVG's negative sweep
    path = f"M {num(x1)} {num(y1)} A {num(r)} {num(r)} 0 0 {sweep} {num(x2)} {num(y2)}"
    lx, ly = _point(cx, cy, r + 12.0, dv + phi / 2)
    return [tag("path", d=path, fill="none", stroke="#555555", stroke_width=1.2,
                class_="pb-angle-arc"),
            text(lx, ly, fmt.degrees(abs(phi)), text_anchor="middle", dy="0.35em",
                 font_size=11, fill="#444444")]


def phasor_diagram_svg(result: dict, names: Sequence[str], width: int = 520,
                       height: int = 520) -> str:
    """An SVG phasor diagram of the voltages and currents of the elements ``names``.

    Parameters
    ----------
    result : dict
        A solved-circuit contract dict.
    names : sequence of str
        Elements to draw, in order; the first one's V–I angle is annotated. A name not
        in ``result["elements"]`` raises ``ValueError`` (so a typo is not silently an
        empty picture), as does an empty list. Transformers show their primary port; a source
        (independent or controlled) draws the current it delivers (its ``delivered``).
    width, height : int
        Size in px (the picture scales through its viewBox).

    Returns
    -------
    str
        A standalone ``<svg>`` element: each arrow's shaft is a ``<line>`` with
        ``data-element``, ``data-quantity`` ("voltage"/"current") and ``data-deg``, from
        the origin to the exact tip; a zero phasor is a dot (``<circle>``) at the origin
        with the same attributes and ``data-zero="true"``.
    """
    names = list(names)
    if not names:
        raise ValueError("name at least one element to draw")
    elements = result.get("elements", {})
    missing = [n for n in names if n not in elements]
    if missing:
        raise ValueError("no element named " + ", ".join(repr(n) for n in missing))
    data = [_Pair(n, _phasor(elements[n], "voltage"), n, _current(elements[n]), n)
            for n in names]
    return _diagram(result, data, width, height,
                    caption="Phasors at {frequency} ({amps} magnitudes)",
                    label="Phasor diagram of " + ", ".join(names))


class _Pair(NamedTuple):
    """One voltage and one current drawn in the same colour pair.

    ``v_label``/``i_label`` go inside ``V(…)``/``I(…)`` on the picture; ``element`` names
    the pair in the angle note and, with ``data``, fills the shafts' ``data-*``.
    """

    v_label: str
    v: complex
    i_label: str
    i: complex
    element: str
    data: dict | None = None


def _diagram(result: dict, data: list[_Pair], width: int, height: int, caption: str,
             label: str) -> str:
    """The picture itself: scales, grid, one colour pair per entry of ``data``."""
    vmax = max(abs(p.v) for p in data)
    imax = max(abs(p.i) for p in data)
    v_scale, i_scale = nice_ceiling(vmax), nice_ceiling(imax)
    # Round-off (a current of 1e-17 A beside amperes) is drawn as zero, not as a stub.
    v_zero, i_zero = fmt.ROUND_OFF * vmax, fmt.ROUND_OFF * imax

    any_zero = any(abs(p.v) <= v_zero or abs(p.i) <= i_zero for p in data)
    bottom = _BOTTOM + (18.0 if any_zero else 0.0)  # a third legend line names the dots
    radius = min((width - 2 * _SIDE) / 2, (height - _TOP - bottom) / 2) - _LABEL_PAD
    cx, cy = width / 2, _TOP + (height - _TOP - bottom) / 2
    body, grid_labels = _grid(cx, cy, radius)
    arrows, labels, zeros, angles, tips = [], _Labels(width, height), [], [], []
    for k, pair in enumerate(data):
        colours = PAIRS[k % len(PAIRS)]
        for quantity, z, name, scale, floor, colour in (
                ("voltage", pair.v, pair.v_label, v_scale, v_zero, colours[0]),
                ("current", pair.i, pair.i_label, i_scale, i_zero, colours[1])):
            unit = _UNIT[quantity]
            attributes = (pair.data or {}).get(quantity)
            if abs(z) <= floor:
                zeros.append(f"{_SYMBOL[quantity]}({name})")
                marks = attributes if attributes is not None else {"data_element": name}
                arrows.append(tag("circle", title(f"{_SYMBOL[quantity]}({name}) = 0 {unit}"),
                                  cx=cx, cy=cy, r=4.0, fill=colour, **marks,
                                  data_quantity=quantity, data_deg="0", data_zero="true"))
                continue
            r, deg = abs(z) / scale * radius, _deg(z)
            angles.append(deg)
            arrows.append(_arrow(cx, cy, r, deg, colour, quantity == "current", name, quantity,
                                 fmt.phasor(z, unit), deg, attributes))
            tips.append((r, deg, _SYMBOL[quantity], name, colour))
    arrows += [labels.place(cx, cy, r, deg, words, colour)
               for r, deg, words, colour in _merge_tips(tips)]

    first = data[0]
    zv0, zi0 = abs(first.v) <= v_zero, abs(first.i) <= i_zero
    if not (zv0 or zi0):
        body += _angle_arc(cx, cy, abs(first.v) / v_scale * radius,
                           abs(first.i) / i_scale * radius, first.v, first.i)
    body += [markup for box, markup in grid_labels if not labels.covers(box)]
    body += _ring_labels(cx, cy, radius, _free_direction(angles), v_scale, i_scale)
    body += arrows
    amps = "RMS" if result.get("amplitudes", "rms") == "rms" else "peak"
    body.append(text(_SIDE, 18, caption.format(frequency=fmt.eng(result.get("frequency_hz"), "Hz"),
                                               amps=amps),
                     font_weight="bold", class_="pb-caption"))
    own = first.v_label == first.i_label == first.element
    body.append(text(_SIDE, 36, _angle_note(first.element, first.v, first.i, zv0, zi0,
                                            None if own else (first.v_label, first.i_label)),
                     class_="pb-angle"))
    body += _legend(height, v_scale, i_scale, zeros)
    return svg_root("pb-phasor", width, height, label, body, style=_STYLE)


def three_phase_svg(result: dict, group: str, width: int = 520, height: int = 520) -> str:
    """The phasor diagram of a three-phase block: its phase voltages and line currents.

    Parameters
    ----------
    result : dict
        A solved-circuit contract dict with ``groups``.
    group : str
        A block of ``result["groups"]``; an unknown name raises ``ValueError``.
    width, height : int
        Size in px.

    Returns
    -------
    str
        The same picture as `phasor_diagram_svg`, one colour pair per phase. A wye
        block draws each phase element's voltage (line to star) and current (which is
        its line current), labelled by phase, ``V(a)``, ``I(a)``; a delta block draws
        its branch voltages ``V(ab)``, ``V(bc)``, ``V(ca)`` (line to line) with the line
        currents ``I(a)``, ``I(b)``, ``I(c)``, so the angle note of a delta compares
        ``I(a)`` with ``V(ab)``. A ``voltage3`` supply block draws the line currents it
        delivers (out into the lines). Each shaft carries ``data-group``, ``data-phase``
        and, when it is an element's own phasor, ``data-element``.

    Examples
    --------
    >>> from phasorbench.workflow import solve_text
    >>> r = solve_text("frequency 50 Hz\\nG: voltage3 a b c -> 0 230 V\\n"
    ...                "M: load3 wye a b c -> 0 8 + j6 ohm")
    >>> svg = three_phase_svg(r, "M")
    >>> svg.count('data-group="M"')
    6
    """
    groups = result.get("groups") or {}
    if group not in groups:
        raise ValueError(f"no three-phase block named {group!r}")
    g, elements = groups[group], result.get("elements", {})
    # a supply block draws the line currents it sends out (its `delivered` ones)
    lines_i = (g["delivered"]["line_current"] if isinstance(g.get("delivered"), dict)
               and "line_current" in g["delivered"] else g.get("line_current", {}))
    data = []
    for name in g["elements"]:
        el = elements[name]
        phase = name.rsplit(".", 1)[-1]
        line = phase[0]                    # the line a delta branch ab leaves from: a
        if g.get("connection") == "delta":
            current = complex(lines_i[line]["re"], lines_i[line]["im"])
            i_data = {"data_group": group, "data_phase": line}
        else:
            current = _current(el)
            i_data = {"data_element": name, "data_group": group, "data_phase": phase}
        data.append(_Pair(phase, _phasor(el, "voltage"), line, current, f"{group} phase {phase}",
                          {"voltage": {"data_element": name, "data_group": group,
                                       "data_phase": phase},
                           "current": i_data}))
    what = "branch voltages" if g.get("connection") == "delta" else "phase voltages"
    return _diagram(result, data, width, height,
                    caption=f"{group}: {what}, line currents ({{frequency}}, {{amps}})",
                    label=f"Three-phase phasor diagram of {group}: {what} "
                          f"({'line to line' if what[0] == 'b' else 'line to star'}) and line "
                          "currents")


def _ring_labels(cx, cy, radius, deg, v_scale, i_scale) -> list[str]:
    """Scale values where each ring meets the free direction: V above, I below."""
    v_colour, i_colour = PAIRS[0]
    out = []
    for frac in (0.5, 1.0):
        x, y = _point(cx, cy, radius * frac, deg)
        out.append(text(x, y - 2, fmt.eng(v_scale * frac, "V", 3), text_anchor="middle",
                        fill=v_colour, font_size=11, class_="pb-scale pb-scale-voltage"))
        out.append(text(x, y + 11, fmt.eng(i_scale * frac, "A", 3), text_anchor="middle",
                        fill=i_colour, font_size=11, class_="pb-scale pb-scale-current"))
    return out


def _legend(height, v_scale, i_scale, zeros) -> list[str]:
    """Line style key and full-scale values; names any phasor drawn as a dot."""
    y1, y2 = (height - 48, height - 30) if zeros else (height - 30, height - 12)
    x0 = _SIDE
    out = [tag("line", x1=x0, y1=y1 - 4, x2=x0 + 34, y2=y1 - 4, stroke=INK, stroke_width=2.5),
           text(x0 + 42, y1, f"voltage (solid): outer ring = {fmt.eng(v_scale, 'V', 3)}",
                halo=False, class_="pb-legend"),
           tag("line", x1=x0, y1=y2 - 4, x2=x0 + 34, y2=y2 - 4, stroke=INK, stroke_width=2.5,
               stroke_dasharray=DASH_CURRENT),
           text(x0 + 42, y2, f"current (dashed): outer ring = {fmt.eng(i_scale, 'A', 3)}",
                halo=False, class_="pb-legend")]
    if zeros:
        out.append(tag("circle", cx=x0 + 17, cy=y2 + 14, r=4.0, fill=INK))
        out.append(text(x0 + 42, y2 + 18, "zero, drawn as a dot at the origin: " + ", ".join(zeros),
                        halo=False, class_="pb-legend"))
    return out
