"""The tolerance study's pictures, drawn once here for the page (via the API) and the
sheet (inlined), from the study's JSON:

- ``histogram_svg``: the runs of one probe's magnitude or angle as bars, with the
  nominal value (solid), the mean (dashed), mean ± 3σ (dotted) and the limits (the
  region outside them shaded);
- ``sensitivity_svg``: the sensitivity ranking as bars either side of zero, largest at
  the top (∂ln|X|/∂ln p, or ∂arg X/∂ln p in degrees).
"""

from __future__ import annotations

import math

from .. import formatting as fmt
from ._svg import GRID, GRID_STRONG, INK, PAIRS, svg_root, tag, text, title

__all__ = ["histogram_svg", "sensitivity_svg"]

_BAR = PAIRS[0][0]
_MEAN = PAIRS[0][1]
_SIGMA = PAIRS[1][1]
_LIMIT = "#c0392b"
_OUTSIDE = "#f6d5d1"
_POSITIVE, _NEGATIVE = PAIRS[1][0], PAIRS[2][0]
_LEFT, _RIGHT, _TOP, _BOTTOM = 56.0, 18.0, 58.0, 44.0


def _ticks(low: float, high: float, count: int = 6) -> list[float]:
    span = high - low
    if not span > 0:
        return [low]
    raw = span / count
    decade = 10.0 ** math.floor(math.log10(raw))
    step = next(s * decade for s in (1, 2, 2.5, 5, 10) if s * decade >= raw)
    first = math.ceil(low / step - 1e-9) * step
    out = []
    k = 0
    while first + k * step <= high + step * 1e-9:
        out.append(first + k * step)
        k += 1
    return out


def histogram_svg(stats: dict, label: str, unit: str = "", nominal: float | None = None,
                  limits: list[tuple[float, float]] | None = None, width: int = 560,
                  height: int = 240) -> str:
    """Bars of ``stats["histogram"]`` (the study's statistics of one quantity) with the
    nominal, mean, ±3σ and limits marked. ``label`` names the quantity (``|V(out)|``)."""
    edges = stats["histogram"]["edges"]
    counts = stats["histogram"]["counts"]
    mean, std = stats["mean"], stats["std"]
    marks = [mean - 3 * std, mean + 3 * std, edges[0], edges[-1]]
    if nominal is not None:
        marks.append(nominal)
    for low, high in limits or ():
        marks += [v for v in (low, high) if math.isfinite(v)]
    lo, hi = min(marks), max(marks)
    pad = (hi - lo) * 0.04 or max(abs(lo), 1.0) * 0.01
    lo, hi = lo - pad, hi + pad
    plot_w = width - _LEFT - _RIGHT
    plot_h = height - _TOP - _BOTTOM
    top = max(counts) if counts and max(counts) > 0 else 1

    def x_of(v):
        return _LEFT + (v - lo) / (hi - lo) * plot_w

    def y_of(c):
        return _TOP + plot_h - c / top * plot_h
    body = []
    for low, high in limits or ():
        for a, b in ((lo, low), (high, hi)):
            a, b = max(a, lo), min(b, hi)
            if b > a:
                body.append(tag("rect", x=x_of(a), y=_TOP, width=x_of(b) - x_of(a),
                                height=plot_h, fill=_OUTSIDE))
    for t in _ticks(lo, hi):
        x = x_of(t)
        body.append(tag("line", x1=x, y1=_TOP, x2=x, y2=_TOP + plot_h, stroke=GRID))
        body.append(text(x, _TOP + plot_h + 16, fmt.plain(t, 5), halo=False,
                         text_anchor="middle", font_size=11))
    for k, c in enumerate(counts):
        if c <= 0:
            continue
        x0, x1 = x_of(edges[k]), x_of(edges[k + 1])
        body.append(tag("rect", title(f"{c:,} runs from {fmt.plain(edges[k], 6)} to "
                                      f"{fmt.plain(edges[k + 1], 6)}"),
                        x=x0, y=y_of(c), width=max(0.6, x1 - x0 - 0.6),
                        height=_TOP + plot_h - y_of(c), fill=_BAR, fill_opacity="0.85"))
    base = _TOP + plot_h
    body.append(tag("line", x1=_LEFT, y1=base, x2=_LEFT + plot_w, y2=base,
                    stroke=GRID_STRONG))
    body.append(text(_LEFT - 6, _TOP + 4, f"{top:,}", halo=False, text_anchor="end",
                     font_size=11))
    body.append(text(_LEFT - 6, base, "0", halo=False, text_anchor="end", font_size=11))
    lines = [(mean, _MEAN, "6 3", "mean"), (mean - 3 * std, _SIGMA, "2 3", "−3σ"),
             (mean + 3 * std, _SIGMA, "2 3", "+3σ")]
    if nominal is not None:
        lines.insert(0, (nominal, INK, None, "nominal"))
    for low, high in limits or ():
        lines += [(v, _LIMIT, None, "limit") for v in (low, high) if math.isfinite(v)]
    for value, colour, dash, name in lines:
        x = x_of(value)
        body.append(tag("line", title(f"{name} {fmt.plain(value, 6)}"), x1=x, y1=_TOP - 4,
                        x2=x, y2=base, stroke=colour, stroke_width="2",
                        stroke_dasharray=dash))
    unit_text = f" ({unit})" if unit else ""
    body.append(text(_LEFT, 20, f"{label}{unit_text}: {sum(counts):,} runs", halo=False,
                     font_weight="bold"))
    legend = [("nominal", INK, None)] if nominal is not None else []
    legend += [("mean", _MEAN, "6 3"), ("mean ± 3σ", _SIGMA, "2 3")]
    if limits:
        legend.append(("limits (outside shaded)", _LIMIT, None))
    x = _LEFT
    for name, colour, dash in legend:
        body.append(tag("line", x1=x, y1=38, x2=x + 22, y2=38, stroke=colour,
                        stroke_width="2", stroke_dasharray=dash))
        body.append(text(x + 27, 42, name, halo=False, font_size=11))
        x += 40 + 6.5 * len(name)
    body.append(text(_LEFT + plot_w / 2, height - 8, f"{label}{unit_text}", halo=False,
                     text_anchor="middle", font_size=11))
    return svg_root("pb-histogram", width, height, f"histogram of {label} over the runs",
                    body)


def sensitivity_svg(sensitivities: dict, label: str, key: str = "mag", rows: int = 12,
                    width: int = 560) -> str:
    """The ranking of ``sensitivities`` (the study's dict, largest first) as bars."""
    items = list(sensitivities.items())[:rows]
    row_h = 22.0
    height = int(_TOP + row_h * max(1, len(items)) + 30)
    name_w = min(160.0, 16 + 7.0 * max([len(n) for n, _ in items] or [4]))
    values = [s[key] for _, s in items]
    span = max([abs(v) for v in values] + [1e-300])
    left, right = name_w + 8, width - 70.0
    mid = (left + right) / 2

    def x_of(v):
        return mid + v / span * (right - left) / 2
    unit = "°" if key == "deg" else ""
    body = [text(8, 20, label, halo=False, font_weight="bold"),
            tag("line", x1=mid, y1=_TOP - 12, x2=mid, y2=_TOP + row_h * len(items),
                stroke=GRID_STRONG)]
    for k, (name, s) in enumerate(items):
        v = s[key]
        y = _TOP + k * row_h
        x0, x1 = sorted((mid, x_of(v)))
        body.append(text(name_w, y + 14, name, halo=False, text_anchor="end"))
        body.append(tag("rect", title(f"{name}: {v:+.6g}{unit}"), x=x0, y=y + 3,
                        width=max(0.8, x1 - x0), height=row_h - 7,
                        fill=_POSITIVE if v >= 0 else _NEGATIVE))
        anchor = "start" if v >= 0 else "end"
        body.append(text(x1 + 4 if v >= 0 else x0 - 4, y + 14, f"{v:+.4g}{unit}",
                         halo=False, text_anchor=anchor, font_size=11))
    body.append(text(mid, _TOP - 18, "0", halo=False, text_anchor="middle", font_size=11))
    body.append(text(right, _TOP - 18, "raises it →", halo=False, text_anchor="end",
                     font_size=11))
    body.append(text(left, _TOP - 18, "← lowers it", halo=False, font_size=11))
    return svg_root("pb-sensitivity", width, height, label, body)
