"""The waveform picture: v(t), i(t) and p(t) of one element over a few periods.

Drawn once here from `phasorbench.waveforms.sample_element`'s dict, for the page (via
the API) and the sheet (inlined). The three traces share the time axis and the zero
line but each has its own scale, labelled in its own colour; the mean power is a
level line, and where p(t) < 0 (the element hands energy back) the area is shaded and
the energy per cycle is stated.
"""

from __future__ import annotations

import math

from .. import formatting as fmt
from ._svg import (DASH_CURRENT, DASH_POWER, GRID, GRID_STRONG, PAIRS, nice_ceiling, num,
                   svg_root, tag, text, title)
from .labels import ASCENT, Placer, text_box, text_width

__all__ = ["waveform_svg"]

_V_COLOUR, _I_COLOUR = PAIRS[0]
_P_COLOUR = PAIRS[1][0]
_TOP, _BOTTOM, _LEFT, _RIGHT = 80.0, 40.0, 114.0, 62.0
#: p(t) below −1e-9·|S| counts as returned energy; smaller is round-off (a resistor).
_NEGATIVE = 1e-9


def _time_step(span: float) -> float:
    """A tick step of 1, 2, 2.5 or 5 × 10ⁿ giving about 5 to 10 ticks over ``span``."""
    raw = span / 8.0
    decade = 10.0 ** math.floor(math.log10(raw))
    for step in (1.0, 2.0, 2.5, 5.0, 10.0):
        if step * decade >= raw:
            return step * decade
    return 10.0 * decade


def _polyline(xs, ys, **kw) -> str:
    return tag("polyline", points=" ".join(f"{num(x)},{num(y)}" for x, y in zip(xs, ys)),
               fill="none", stroke_linejoin="round", **kw)


def _negative_regions(xs, ps, y_of, tol) -> list[list[tuple[float, float]]]:
    """Polygons between p(t) and the zero line wherever p < −tol (crossings interpolated)."""
    regions, current = [], None
    zero_y = y_of(0.0)
    for k, (x, p) in enumerate(zip(xs, ps)):
        if p < -tol:
            if current is None:
                if k == 0:
                    current = [(x, zero_y)]
                else:
                    x0, p0 = xs[k - 1], ps[k - 1]
                    xc = x0 + (x - x0) * p0 / (p0 - p)
                    current = [(xc, zero_y)]
            current.append((x, y_of(p)))
        elif current is not None:
            x0, p0 = xs[k - 1], ps[k - 1]
            xc = x0 + (x - x0) * p0 / (p0 - p)
            current.append((xc, zero_y))
            regions.append(current)
            current = None
    if current is not None:
        current.append((current[-1][0], zero_y))
        regions.append(current)
    return regions


def _crosses(box, xs, ys) -> bool:
    """Whether the polyline through ``(xs, ys)`` passes through ``box`` (exact per segment)."""
    left, top, right, bottom = box
    for k in range(1, len(xs)):
        xa, xb = xs[k - 1], xs[k]
        if xb < left or xa > right:
            continue
        ya, yb = ys[k - 1], ys[k]
        # the segment's y over the part of it inside [left, right]
        span = xb - xa
        ta = 0.0 if span == 0 else max(0.0, (left - xa) / span)
        tb = 1.0 if span == 0 else min(1.0, (right - xa) / span)
        y1, y2 = ya + (yb - ya) * ta, ya + (yb - ya) * tb
        if min(y1, y2) <= bottom and max(y1, y2) >= top:
            return True
    return False


def _mean_label_place(placer: Placer, words: str, frame, y_mean, traces, header_y):
    """Where the mean-power label goes: on its line where no trace runs through it, else
    in a band of the plot no trace crosses, else in the heading's free room.

    Returns ``(x, y)`` of the label's left end and baseline.
    """
    x0, y_top, x1, y_bot = frame
    w, size = text_width(words, 12, bold=True), 12.0
    up, down = ASCENT * size, 0.27 * size

    def box_at(left, base):
        return (left, base - up, left + w, base + down)

    lefts = [x1 - 6 - w, x0 + 6, (x0 + x1 - w) / 2, x0 + (x1 - x0) * 0.25 - w / 2,
             x0 + (x1 - x0) * 0.75 - w / 2]
    bases = [y_mean - 5, y_mean + 5 + up]
    # then bands across the plot, from the top down
    step = up + down + 2
    bands = [y_top + 2 + up + n * step for n in range(int((y_bot - y_top) // step))]
    for base in bases + bands:
        for left in lefts:
            box = box_at(left, base)
            if box[1] < y_top + 1 or box[3] > y_bot - 1 or box[0] < x0 + 1 or box[2] > x1 - 1:
                continue
            if placer.free(box) and not any(_crosses(box, xs, ys) for xs, ys in traces):
                placer.add(box)
                return box[0], base
    # the band just above the plot, between the scale heads, then the heading's rows
    outside = [(x1 - w, y_top - 11), (x0, y_top - 11)]
    outside += [(left, base) for base in header_y for left in (placer.width - 12 - w, 12.0)]
    for left, base in outside:
        box = box_at(left, base)
        if placer.free(box):
            placer.add(box)
            return box[0], base
    return None


def waveform_svg(samples: dict, width: int = 640, height: int = 360) -> str:
    """An SVG of v(t), i(t), p(t) from `phasorbench.waveforms.sample_element`'s dict.

    Parameters
    ----------
    samples : dict
        As returned by ``sample_element`` (``t_s``, ``v``, ``i``, ``p``, ``p_avg``,
        ``s_va``, ``v_peak``, ``i_peak``, ``returned_energy_j``, ...).
    width, height : int
        Size in px (the picture scales through its viewBox).

    Returns
    -------
    str
        A standalone ``<svg>``: traces are ``<polyline>`` with ``data-quantity`` "v",
        "i", "p"; the mean-power line has class ``pb-mean``; shaded regions where
        p(t) < 0 are ``<polygon class="pb-returned">`` (none for a resistor).
    """
    t_ms = [1000.0 * t for t in samples["t_s"]]
    v, i, p = samples["v"], samples["i"], samples["p"]
    s_va, p_avg = float(samples["s_va"]), float(samples["p_avg"])
    v_scale = nice_ceiling(max(map(abs, v), default=0.0))
    i_scale = nice_ceiling(max(map(abs, i), default=0.0))
    p_scale = nice_ceiling(max(map(abs, p), default=0.0))

    x0, x1 = _LEFT, width - _RIGHT
    y_top, y_bot = _TOP, height - _BOTTOM
    y_zero, half = (y_top + y_bot) / 2, (y_bot - y_top) / 2
    span = (t_ms[-1] - t_ms[0]) or 1.0

    def x_of(t):
        return x0 + (t - t_ms[0]) / span * (x1 - x0)

    def y_for(scale):
        return lambda value: y_zero - value / scale * half

    xs = [x_of(t) for t in t_ms]
    body = []
    placer = Placer(width, height)     # every text's box: the mean label goes clear of them
    # Level grid shared by the three scales: −1, −½, 0, ½, 1 of each full scale.
    for frac in (-1.0, -0.5, 0.0, 0.5, 1.0):
        y = y_zero - frac * half
        body.append(tag("line", x1=x0, y1=y, x2=x1, y2=y,
                        stroke=GRID_STRONG if frac == 0 else GRID, stroke_width=1))
        for xx, scale, unit, colour, anchor in ((x0 - 62, v_scale, "V", _V_COLOUR, "end"),
                                                (x0 - 6, i_scale, "A", _I_COLOUR, "end"),
                                                (x1 + 6, p_scale, "W", _P_COLOUR, "start")):
            words = fmt.eng(frac * scale, unit, 3)
            body.append(text(xx, y, words, halo=False, dy="0.35em",
                             text_anchor=anchor, fill=colour, font_size=11,
                             class_="pb-scale"))
            placer.add(text_box(xx, y, words, 11, anchor, dy_em=0.35))
    # Time axis.
    step = _time_step(span)
    k = math.ceil(t_ms[0] / step - 1e-9)
    while k * step <= t_ms[-1] + 1e-9 * span:
        x = x_of(k * step)
        body.append(tag("line", x1=x, y1=y_top, x2=x, y2=y_bot, stroke=GRID, stroke_width=1))
        body.append(text(x, y_bot + 18, fmt.plain(k * step), halo=False, text_anchor="middle",
                         font_size=11, fill="#555555", class_="pb-time-label"))
        placer.add(text_box(x, y_bot + 18, fmt.plain(k * step), 11, "middle"))
        k += 1
    body.append(tag("rect", x=x0, y=y_top, width=x1 - x0, height=y_bot - y_top, fill="none",
                    stroke=GRID_STRONG))
    body.append(text((x0 + x1) / 2, height - 6, "t (ms)", halo=False, text_anchor="middle",
                     class_="pb-axis-title"))
    axis_title = text_box((x0 + x1) / 2, height - 6, "t (ms)", anchor="middle")

    # Returned energy: shade p < 0 before the traces so the lines stay on top.
    p_y = y_for(p_scale)
    tol = _NEGATIVE * max(s_va, abs(p_avg))
    regions = _negative_regions(xs, p, p_y, tol)
    returned = float(samples.get("returned_energy_j", 0.0))
    energy = fmt.eng(returned, "J", 4)
    for region in regions:
        hover = title(f"p(t) < 0: the element returns energy, {energy} per cycle")
        body.append(tag("polygon", hover,
                        points=" ".join(f"{num(x)},{num(y)}" for x, y in region),
                        fill=_P_COLOUR, fill_opacity=0.22, stroke="none", class_="pb-returned"))

    traces = [(xs, [y_for(v_scale)(a) for a in v]), (xs, [y_for(i_scale)(a) for a in i]),
              (xs, [p_y(a) for a in p])]
    body.append(_polyline(*traces[0], stroke=_V_COLOUR, stroke_width=2,
                          data_quantity="v", class_="pb-trace"))
    body.append(_polyline(*traces[1], stroke=_I_COLOUR, stroke_width=2,
                          stroke_dasharray=DASH_CURRENT, data_quantity="i", class_="pb-trace"))
    body.append(_polyline(*traces[2], stroke=_P_COLOUR, stroke_width=2.4,
                          stroke_dasharray=DASH_POWER, data_quantity="p", class_="pb-trace"))
    y_mean = p_y(p_avg)
    mean_text = f"P = {fmt.eng(p_avg, 'W', floor=tol)}"
    body.append(tag("line", title(f"mean power {mean_text}"), x1=x0, y1=y_mean, x2=x1, y2=y_mean,
                    stroke=_P_COLOUR, stroke_width=1.4, stroke_dasharray="2 3",
                    class_="pb-mean"))
    mean_at = len(body)          # the label goes here once the heading's room is known

    # Heading, energy statement and the key to the three traces.
    placer.add(axis_title)
    name, kind = samples.get("element", ""), samples.get("kind") or ""
    port = " primary" if samples.get("port") == "primary" else ""
    freq = fmt.eng(samples["frequency_hz"], "Hz")
    head = f"{name}{port} ({kind}): instantaneous values at {freq}"
    body.append(text(12, 17, head, halo=False, font_weight="bold", class_="pb-caption"))
    placer.add(text_box(12, 17, head, bold=True))
    if regions and p_avg < -tol:
        # Passive sign: a source's p(t) < 0 is the energy it feeds in, not a return.
        note = f"Shaded: p(t) < 0, energy delivered to the circuit: {energy} per cycle"
    elif regions:
        note = f"Shaded: p(t) < 0, energy returned to the circuit: {energy} per cycle"
    else:
        note = "p(t) ≥ 0 throughout: no energy returned to the circuit"
    body.append(text(12, 34, note, halo=False, class_="pb-energy"))
    placer.add(text_box(12, 34, note))
    # Key: line style and colour of each trace; column heads name each scale.
    kx = 12.0
    for words, colour, dash, stroke_w in (("v(t)", _V_COLOUR, None, 2),
                                          ("i(t)", _I_COLOUR, DASH_CURRENT, 2),
                                          ("p(t)", _P_COLOUR, DASH_POWER, 2.4),
                                          ("mean power", _P_COLOUR, "2 3", 1.4)):
        body.append(tag("line", x1=kx, y1=48, x2=kx + 30, y2=48, stroke=colour,
                        stroke_width=stroke_w, stroke_dasharray=dash))
        body.append(text(kx + 36, 52, words, halo=False, fill=colour, class_="pb-key"))
        placer.add((kx, 46, kx + 30, 50))
        placer.add(text_box(kx + 36, 52, words))
        kx += 46 + 7.5 * len(words)
    for xx, words, colour, anchor in ((x0 - 62, "v", _V_COLOUR, "end"),
                                      (x0 - 6, "i", _I_COLOUR, "end"),
                                      (x1 + 6, "p", _P_COLOUR, "start")):
        body.append(text(xx, y_top - 11, words, halo=False, fill=colour, font_weight="bold",
                         text_anchor=anchor, class_="pb-scale-head"))
        placer.add(text_box(xx, y_top - 11, words, bold=True, anchor=anchor))
    # The mean power's value in a band no trace crosses: on its line where it is free.
    at = _mean_label_place(placer, mean_text, (x0, y_top, x1, y_bot), y_mean, traces,
                           header_y=(52.0, 34.0, 17.0, height - 8.0))
    if at is not None:
        body.insert(mean_at, text(at[0], at[1], mean_text, fill=_P_COLOUR, font_weight="bold",
                                  class_="pb-mean-label"))
    label = f"Waveforms v(t), i(t), p(t) of {name}"
    return svg_root("pb-wave", width, height, label, body)
