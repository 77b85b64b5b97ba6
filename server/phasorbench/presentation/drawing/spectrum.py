"""The spectrum picture: one bar per order, in percent of the fundamental.

Drawn once here from the bars ``presentation/studies/harmonics.py`` lists (the page
gets it through the API, the sheet inlines it). The fundamental (100 %) is stated in
words, not drawn, so the harmonics keep the height of the chart; a limit, when given,
is a dashed level line, and a bar above it is drawn hatched with a cross over it, so
the verdict does not rest on colour alone.
"""

from __future__ import annotations

from .. import formatting as fmt
from ._svg import GRID, GRID_STRONG, INK, PAIRS, nice_ceiling, num, svg_root, tag, text, title

__all__ = ["spectrum_svg"]

_BAR, _OVER = PAIRS[0][0], PAIRS[0][1]
_TOP, _BOTTOM, _LEFT, _RIGHT = 58.0, 46.0, 64.0, 24.0


def spectrum_svg(bars: list[dict], heading: str, unit_note: str, limit_pct: float | None = None,
                 width: int = 560, height: int = 260) -> str:
    """An SVG bar chart.

    Parameters
    ----------
    bars : list of dict
        ``{"label": "5", "pct": 18.0, "value": "41.4 A", "over": bool}`` per order
        (the fundamental left out); ``pct`` None is drawn as a gap.
    heading : str
        The first line of the picture (what is shown: "V(bus)", "I(Drive)").
    unit_note : str
        The second line (the fundamental's value the percentages refer to).
    limit_pct : float, optional
        A limit drawn as a dashed line (IEEE 519's individual limit at the PCC).
    """
    shown = [b for b in bars if b.get("pct") is not None]
    top_value = max([b["pct"] for b in shown] + ([limit_pct] if limit_pct else []) + [0.0])
    scale = nice_ceiling(top_value * 1.08) if top_value > 0 else 1.0
    plot_w = width - _LEFT - _RIGHT
    plot_h = height - _TOP - _BOTTOM
    base_y = _TOP + plot_h

    def y_of(pct: float) -> float:
        return base_y - plot_h * min(pct, scale) / scale

    label = f"Spectrum of {heading}: " + (", ".join(
        f"order {b['label']} {fmt.plain(b['pct'], 3)} %" for b in shown) or "no harmonics")
    body = [
        text(_LEFT, 20, heading, halo=False, font_weight="bold"),
        text(_LEFT, 38, unit_note, halo=False, font_size=11),
    ]
    for k in range(5):
        value = scale * k / 4
        y = y_of(value)
        body.append(tag("line", x1=_LEFT, x2=_LEFT + plot_w, y1=y, y2=y,
                        stroke=GRID_STRONG if k == 0 else GRID, stroke_width="1"))
        body.append(text(_LEFT - 6, y + 4, f"{fmt.plain(value, 3)} %", halo=False,
                         font_size=11, text_anchor="end"))
    count = max(1, len(bars))
    slot = plot_w / count
    bar_w = max(3.0, min(34.0, slot * 0.62))
    for k, b in enumerate(bars):
        x_mid = _LEFT + slot * (k + 0.5)
        body.append(text(x_mid, base_y + 16, b["label"], halo=False, font_size=11,
                         text_anchor="middle"))
        if b.get("pct") is None:
            continue
        y = y_of(b["pct"])
        over = bool(b.get("over"))
        hover = title(f"order {b['label']}: {fmt.plain(b['pct'], 4)} % of the fundamental"
                      + (f" ({b['value']})" if b.get("value") else "")
                      + (" — above the limit" if over else ""))
        body.append(tag("rect", hover, x=x_mid - bar_w / 2, y=y, width=bar_w,
                        height=max(0.5, base_y - y), fill="#ffffff" if over else _BAR,
                        stroke=_OVER if over else _BAR, stroke_width="1.5",
                        class_="pb-bar pb-over" if over else "pb-bar", data_order=b["label"]))
        if over:
            body.append(_hatch(x_mid - bar_w / 2, y, bar_w, base_y - y))
        if over:
            body.append(text(x_mid, y - 18, "✖", halo=False, fill=INK, text_anchor="middle",
                             font_weight="bold"))
        if count <= 24:
            body.append(text(x_mid, y - 5, fmt.plain(b["pct"], 3), font_size=11,
                             text_anchor="middle"))
    if limit_pct:
        y = y_of(limit_pct)
        body.append(tag("line", x1=_LEFT, x2=_LEFT + plot_w, y1=y, y2=y, stroke=INK,
                        stroke_width="1.5", stroke_dasharray="6 4", class_="pb-limit"))
        body.append(text(_LEFT + plot_w, y - 5, f"limit {fmt.plain(limit_pct, 3)} %",
                         font_size=11, text_anchor="end"))
    body.append(text(_LEFT + plot_w / 2, height - 8, "harmonic order (percent of the "
                     "fundamental)", halo=False, font_size=11, text_anchor="middle"))
    body.append(tag("line", x1=_LEFT, x2=_LEFT, y1=_TOP, y2=base_y, stroke=GRID_STRONG,
                    stroke_width="1"))
    return svg_root("pb-spectrum", width, height, label, body)


def _hatch(x: float, y: float, w: float, h: float, step: float = 6.0) -> str:
    """Diagonal lines filling a rectangle (no pattern ids: two charts on one page never
    clash). A line is u + v = t with u across from the left and v up from the bottom."""
    parts = []
    t = step
    while t < w + h:
        u0, u1 = max(0.0, t - h), min(w, t)
        parts.append(f"M{num(x + u0)},{num(y + h - (t - u0))} "
                     f"L{num(x + u1)},{num(y + h - (t - u1))}")
        t += step
    return tag("path", d=" ".join(parts) or "M0,0", stroke=_OVER, stroke_width="1.2",
               fill="none")
