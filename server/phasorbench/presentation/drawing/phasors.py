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
from ..amplitudes import shown_word
from ._svg import (ELEMENT_PAIRS, GRID, GRID_STRONG, INK, LINE_STYLES, nice_ceiling, num,
                   svg_root, tag, text, title)
from .labels import ASCENT, DESCENT, Placer, leader, overlap, text_box, text_width

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
    that another label would cover can be left out (its neighbours still read).
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
        labels.append((text_box(lx, ly, words, 11, anchor, dy_em=0.35),
                       text(lx, ly, words, halo=False, text_anchor=anchor, dy="0.35em",
                            fill="#666666", font_size=11, class_="pb-grid-label")))
    return out, labels


def _free_directions(angles: list[float]) -> list[float]:
    """The 30°-sector middles, farthest from every drawn arrow first: where the ring
    labels go (the next one when labels already fill the first)."""
    def gap(cand):
        return min((abs((cand - a + 180.0) % 360.0 - 180.0) for a in angles), default=180.0)
    order = [15.0 + 30.0 * k for k in range(12)]
    # −75° (lower right) first among equals: the historical place of the scale values
    order.sort(key=lambda c: (-round(gap(c), 9), (c - 285.0) % 360.0))
    return order


def _arrow(cx, cy, r, deg, colour, dash, name, quantity, mag_text, ph_deg,
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
            stroke_dasharray=dash, class_="pb-shaft",
            **(data if data is not None else {"data_element": name}),
            data_quantity=quantity, data_deg=f"{ph_deg:.6g}"),
        tag("polygon", points=pts, fill=colour),
    ]), class_="pb-arrow")


#: Tip labels are bold 12 px; their boxes are as tall as the face's ascent and descent.
_TIP_SIZE = 12.0
_TIP_H = (ASCENT + DESCENT) * _TIP_SIZE


def _tip_label(placer: Placer, x: float, y: float, deg: float, words: str,
               colour: str) -> list[str]:
    """A tip label where it covers no other label, with a leader when it had to move."""
    found = placer.around(x, y, deg, text_width(words, _TIP_SIZE, bold=True), _TIP_H)
    if found is None:
        return []          # no room anywhere: the key and the arrow's hover title name it
    box, moved = found
    out = []
    line = leader(box, x, y) if moved else None
    if line is not None:
        out.append(tag("line", x1=line[0], y1=line[1], x2=line[2], y2=line[3], stroke=colour,
                       stroke_width=0.8, stroke_opacity=0.8, class_="pb-leader"))
    out.append(text(box[0], box[1] + ASCENT * _TIP_SIZE, words, fill=colour,
                    font_weight="bold", class_="pb-tip-label"))
    return out


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


def _angle_arc(cx, cy, rv, ri, v: complex, i: complex, placer: Placer) -> list[str]:
    """A small arc from V's direction to I's, the short way round, with its angle placed
    clear of the other labels (first of them, next to the centre)."""
    dv, di = _deg(v), _deg(i)
    phi = (di - dv + 180.0) % 360.0 - 180.0
    if abs(phi) < 0.5:
        return []
    r = max(14.0, min(40.0, 0.7 * min(rv, ri)))
    x1, y1 = _point(cx, cy, r, dv)
    x2, y2 = _point(cx, cy, r, di)
    sweep = 0 if phi > 0 else 1  # counter-clockwise on screen is SVG's negative sweep
    path = f"M {num(x1)} {num(y1)} A {num(r)} {num(r)} 0 0 {sweep} {num(x2)} {num(y2)}"
    out = [tag("path", d=path, fill="none", stroke="#555555", stroke_width=1.2,
               class_="pb-angle-arc")]
    words = fmt.degrees(abs(phi))
    mx, my = _point(cx, cy, r, dv + phi / 2)
    found = placer.around(mx, my, dv + phi / 2, text_width(words, 11), (ASCENT + DESCENT) * 11,
                          rings=(4.0, 10.0, 18.0, 28.0, 40.0, 54.0, 70.0))
    if found is not None:
        box, moved = found
        line = leader(box, mx, my) if moved else None
        if line is not None:
            out.append(tag("line", x1=line[0], y1=line[1], x2=line[2], y2=line[3],
                           stroke="#555555", stroke_width=0.8, class_="pb-leader"))
        out.append(text(box[0], box[1] + ASCENT * 11, words, font_size=11, fill="#444444",
                        class_="pb-angle-value"))
    return out


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


def _styles(k: int) -> tuple[str, str, str | None, str | None]:
    """(voltage colour, current colour, voltage dash, current dash) of entry ``k``."""
    v_colour, i_colour = ELEMENT_PAIRS[k % len(ELEMENT_PAIRS)]
    v_dash, i_dash = LINE_STYLES[(k // len(ELEMENT_PAIRS)) % len(LINE_STYLES)]
    return v_colour, i_colour, v_dash, i_dash


def _key_name(pair: "_Pair") -> str:
    return pair.v_label if pair.v_label == pair.i_label else f"{pair.v_label} / {pair.i_label}"


def _key_rows(data: list["_Pair"], width: float) -> list[list[tuple[float, int]]]:
    """The key's entries flowed into rows: ``[(x, index into data)]`` per row."""
    rows, row, x = [], [], _SIDE + text_width("shown:", 12) + 8
    start = x
    for k, pair in enumerate(data):
        w = _KEY_SWATCH + text_width(_key_name(pair), 12) + 14
        if row and x + w > width - _SIDE:
            rows.append(row)
            row, x = [], start
        row.append((x, k))
        x += w
    if row:
        rows.append(row)
    return rows


#: Width of a key entry's two line samples (voltage, then current) and the gap after.
_KEY_SWATCH = 46.0
_ROW = 18.0


def _diagram(result: dict, data: list[_Pair], width: int, height: int, caption: str,
             label: str) -> str:
    """The picture itself: scales, grid, one colour pair per entry of ``data``, a key
    naming every entry, and labels placed so that none covers another."""
    vmax = max(abs(p.v) for p in data)
    imax = max(abs(p.i) for p in data)
    v_scale, i_scale = nice_ceiling(vmax), nice_ceiling(imax)
    # Round-off (a current of 1e-17 A beside amperes) is drawn as zero, not as a stub.
    v_zero, i_zero = fmt.ROUND_OFF * vmax, fmt.ROUND_OFF * imax

    zeros = [f"{_SYMBOL[q]}({name})" for p in data
             for q, z, name, floor in (("voltage", p.v, p.v_label, v_zero),
                                       ("current", p.i, p.i_label, i_zero)) if abs(z) <= floor]
    key_rows = _key_rows(data, width)
    zero_rows = _zero_rows(zeros, width)
    rows = 2 + len(zero_rows) + len(key_rows)
    bottom = _BOTTOM + _ROW * (rows - 2)
    radius = max(20.0, min((width - 2 * _SIDE) / 2, (height - _TOP - bottom) / 2) - _LABEL_PAD)
    cx, cy = width / 2, _TOP + (height - _TOP - bottom) / 2
    placer = Placer(width, height)
    body, grid_labels = _grid(cx, cy, radius)

    amps = shown_word(result)
    first = data[0]
    zv0, zi0 = abs(first.v) <= v_zero, abs(first.i) <= i_zero
    own = first.v_label == first.i_label == first.element
    head = caption.format(frequency=fmt.eng(result.get("frequency_hz"), "Hz"), amps=amps)
    note = _angle_note(first.element, first.v, first.i, zv0, zi0,
                       None if own else (first.v_label, first.i_label))
    fixed = [text(_SIDE, 18, head, font_weight="bold", class_="pb-caption"),
             text(_SIDE, 36, note, class_="pb-angle")]
    placer.add(text_box(_SIDE, 18, head, 12, bold=True))
    placer.add(text_box(_SIDE, 36, note, 12))
    legend, legend_boxes = _legend(height, width, v_scale, i_scale, data, key_rows, rows,
                                   zero_rows)
    for box in legend_boxes:
        placer.add(box)

    arrows, angles, tips = [], [], []
    for k, pair in enumerate(data):
        v_colour, i_colour, v_dash, i_dash = _styles(k)
        for quantity, z, name, scale, floor, colour, dash in (
                ("voltage", pair.v, pair.v_label, v_scale, v_zero, v_colour, v_dash),
                ("current", pair.i, pair.i_label, i_scale, i_zero, i_colour, i_dash)):
            unit = _UNIT[quantity]
            attributes = (pair.data or {}).get(quantity)
            if abs(z) <= floor:
                marks = attributes if attributes is not None else {"data_element": name}
                arrows.append(tag("circle", title(f"{_SYMBOL[quantity]}({name}) = 0 {unit}"),
                                  cx=cx, cy=cy, r=4.0, fill=colour, **marks,
                                  data_quantity=quantity, data_deg="0", data_zero="true"))
                continue
            r, deg = abs(z) / scale * radius, _deg(z)
            angles.append(deg)
            arrows.append(_arrow(cx, cy, r, deg, colour, dash, name, quantity,
                                 fmt.phasor(z, unit), deg, attributes))
            tips.append((r, deg, _SYMBOL[quantity], name, colour))
    # Arrow heads and the origin stay uncovered by any label.
    placer.add((cx - 4, cy - 4, cx + 4, cy + 4))
    for r, deg, *_ in tips:
        x, y = _point(cx, cy, r, deg)
        placer.add((x - 3, y - 3, x + 3, y + 3))

    labels = []
    if not (zv0 or zi0):
        body += _angle_arc(cx, cy, abs(first.v) / v_scale * radius,
                           abs(first.i) / i_scale * radius, first.v, first.i, placer)
    # Longest arrows first: their labels have the most room; short ones crowd the centre.
    for r, deg, words, colour in sorted(_merge_tips(tips), key=lambda t: -t[0]):
        x, y = _point(cx, cy, r, deg)
        labels += _tip_label(placer, x, y, deg, words, colour)
    rings = _ring_labels(cx, cy, radius, _free_directions(angles), v_scale, i_scale, placer)
    body += [markup for box, markup in grid_labels if placer.place([box])]
    body += rings
    body += arrows
    body += labels
    body += fixed
    body += legend
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


_SCALE_INK = "#3a3a3a"


def _ring_labels(cx, cy, radius, directions, v_scale, i_scale, placer: Placer) -> list[str]:
    """Scale values where each ring meets the freest direction with room for them: V
    above, I below; nothing when no direction has room (the legend states full scale)."""
    for deg in directions:
        items = []
        for frac in (0.5, 1.0):
            x, y = _point(cx, cy, radius * frac, deg)
            for words, yy, quantity in ((fmt.eng(v_scale * frac, "V", 3), y - 3, "voltage"),
                                        (fmt.eng(i_scale * frac, "A", 3), y + 12, "current")):
                items.append((text_box(x, yy, words, 11, "middle"), x, yy, words, quantity))
        if all(placer.free(box) for box, *_ in items) and not any(
                _overlaps_any(b, [o for o, *_ in items if o is not b]) for b, *_ in items):
            for box, *_ in items:
                placer.add(box)
            return [text(x, yy, words, text_anchor="middle", fill=_SCALE_INK, font_size=11,
                         class_=f"pb-scale pb-scale-{quantity}")
                    for _, x, yy, words, quantity in items]
    return []


def _overlaps_any(box, others) -> bool:
    return any(overlap(box, o) for o in others)


def _zero_rows(zeros: list[str], width: float) -> list[str]:
    """The line naming the phasors drawn as dots, wrapped to the picture's width."""
    if not zeros:
        return []
    rows, line = [], "zero, drawn as a dot at the origin:"
    room = width - 2 * _SIDE - 42
    for k, name in enumerate(zeros):
        piece = f" {name}" + ("," if k < len(zeros) - 1 else "")
        if text_width(line + piece) > room and line.strip():
            rows.append(line)
            line = piece.lstrip()
        else:
            line += piece
    rows.append(line)
    return rows


def _legend(height, width, v_scale, i_scale, data, key_rows, rows, zero_rows) -> tuple:
    """Line style key with full-scale values, the line naming phasors drawn as dots, and
    the key of every entry drawn (its voltage and current line samples, then its name).

    Returns ``(markup, boxes)``.
    """
    x0 = _SIDE
    ys = [height - 12 - _ROW * (rows - 1 - k) for k in range(rows)]
    styles = {_styles(k)[2:] for k in range(len(data))}
    v_words = "solid" if all(v is None for v, _ in styles) else "solid, long-dashed"
    i_words = "dashed" if len(styles) == 1 else "dashed, dotted"
    v_text = f"voltage ({v_words}): outer ring = {fmt.eng(v_scale, 'V', 3)}"
    i_text = f"current ({i_words}): outer ring = {fmt.eng(i_scale, 'A', 3)}"
    out = [tag("line", x1=x0, y1=ys[0] - 4, x2=x0 + 34, y2=ys[0] - 4, stroke=INK,
               stroke_width=2.5),
           text(x0 + 42, ys[0], v_text, halo=False, class_="pb-legend"),
           tag("line", x1=x0, y1=ys[1] - 4, x2=x0 + 34, y2=ys[1] - 4, stroke=INK,
               stroke_width=2.5, stroke_dasharray=LINE_STYLES[0][1]),
           text(x0 + 42, ys[1], i_text, halo=False, class_="pb-legend")]
    boxes = [(x0, ys[0] - 12, x0 + 42 + text_width(v_text), ys[0] + 4),
             (x0, ys[1] - 12, x0 + 42 + text_width(i_text), ys[1] + 4)]
    at = 2
    for n, words in enumerate(zero_rows):
        y = ys[at]
        if n == 0:
            out.append(tag("circle", cx=x0 + 17, cy=y - 4, r=4.0, fill=INK))
        out.append(text(x0 + 42, y, words, halo=False, class_="pb-legend"))
        boxes.append((x0, y - 12, x0 + 42 + text_width(words), y + 4))
        at += 1
    for n, row in enumerate(key_rows):
        y = ys[at + n]
        if n == 0:
            out.append(text(x0, y, "shown:", halo=False, class_="pb-legend pb-key-head"))
        for x, k in row:
            v_colour, i_colour, v_dash, i_dash = _styles(k)
            name = _key_name(data[k])
            out.append(tag("g", "".join([
                tag("line", x1=x, y1=y - 4, x2=x + 18, y2=y - 4, stroke=v_colour,
                    stroke_width=2.5, stroke_dasharray=v_dash),
                tag("line", x1=x + 22, y1=y - 4, x2=x + 40, y2=y - 4, stroke=i_colour,
                    stroke_width=2.5, stroke_dasharray=i_dash),
                text(x + _KEY_SWATCH, y, name, halo=False, class_="pb-legend")]),
                class_="pb-key", data_entry=name))
        boxes.append((x0, y - 12, width - _SIDE, y + 4))
    return out, boxes

