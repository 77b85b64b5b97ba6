"""The frequency-response picture: magnitude and phase of swept probes against frequency.

Drawn once here from the sweep JSON (studies.md, "Frequency response"), for the page
(via the API) and the sheet (inlined). Two panels share the frequency axis (log for a
log grid, linear for a linear one): magnitude on top, phase below. Every probe is
overlaid in its own colour and dash. The magnitude is drawn twice, in decibels
(``20·log10|X|``: the natural scale of a ratio) and in the probe's own units, as two
groups ``<g class="pb-mag" data-scale="db|units">``; the one not chosen is hidden
(``display="none"``), so the page switches scale without a new request, and the sheet
carries only the one it shows. The analysis frequency and its harmonics are marked,
resonances carry numbered markers whose ``<title>`` is their readout.

Curves are decimated for drawing only: per pixel column the first, lowest, highest and
last point are kept, so a peak between two drawn points is never lost, and a 100,000
point sweep draws as a few thousand points. The numbers themselves are never thinned.

The root ``<svg>`` carries the plot frame and scales as ``data-*`` attributes, so the
page's cursor places itself on the same geometry.
"""

from __future__ import annotations

import math

import numpy as np

from .. import formatting as fmt
from ..studies.sweep import resonance_words
from ._svg import GRID, GRID_STRONG, INK, PAIRS, nice_ceiling, num, svg_root, tag, text, title

__all__ = ["COLOURS", "DASHES", "decimate", "magnitude_scale", "probe_style", "response_svg"]

#: One colour per probe (the pictures' pairs, voltage colours first), then again dashed.
COLOURS = tuple(c for pair in zip(*PAIRS) for c in pair)
DASHES = (None, "7 4", "2 3", "11 3 2 3")
#: The decibel axis spans at most this much below the highest value (a notch's depth
#: is in the readout and the CSV; the picture keeps the pass band readable).
DB_SPAN = 160.0
#: A units axis is logarithmic when the values span more than this ratio.
LOG_RATIO = 30.0
#: Harmonic marks are labelled only this many pixels apart or more.
_LABEL_GAP = 16.0
#: Harmonic lines stop where they come closer than this (px), and after this order
#: (the orders power-quality practice counts: IEC 61000-3-2 and IEEE 519 tables end
#: at the 40th and 50th, from memory).
_LINE_GAP = 10.0
MAX_HARMONIC = 50
#: Every order up to this one is marked; above it only the characteristic orders of
#: six-pulse converters, h = 6k ± 1 (the ones drives and rectifiers inject; common
#: practice, no source), so a range far above the fundamental is not a fence of lines.
EVERY_ORDER_UP_TO = 13
_LEFT, _RIGHT, _BOTTOM = 78.0, 24.0, 42.0


def marked_orders(base: float, f_lo: float, f_hi: float, x_of) -> list[tuple[int, float]]:
    """(order, x) of the harmonic lines between ``f_lo`` and ``f_hi``: every order up to
    ``EVERY_ORDER_UP_TO``, then the 6k ± 1 ones, up to ``MAX_HARMONIC``; none nearer
    than ``_LINE_GAP`` px to the last one drawn. Where the orders crowd, the others give
    way to the 6k ± 1 ones; where those crowd too, the lines stop."""
    out: list[tuple[int, float]] = []
    for h in range(1, min(int(f_hi // base), MAX_HARMONIC) + 1):
        if h * base < f_lo * (1 - 1e-12):
            continue
        characteristic = h % 6 in (1, 5)
        if h > EVERY_ORDER_UP_TO and not characteristic:
            continue
        x = float(x_of(h * base))
        if out and x - out[-1][1] < _LINE_GAP:
            if characteristic:
                break                     # the orders that matter crowd from here on
            continue
        out.append((h, x))
    return out


def probe_style(k: int) -> tuple[str, str | None]:
    """Colour and dash of the k-th probe: solid for the first four, then dashed too, so
    colours that read alike to a colour-blind eye still differ."""
    return COLOURS[k % len(COLOURS)], (DASHES[(k // 4) % len(DASHES)] if k >= 4 else None)


def magnitude_scale(result: dict, wanted: str = "auto") -> str:
    """``"db"`` or ``"units"``: decibels when every probe is a ratio of like quantities
    (no unit), the probes' units otherwise, unless ``wanted`` says which."""
    if wanted in ("db", "units"):
        return wanted
    probes = result["probes"].values()
    return "db" if probes and all(p.get("ratio") and not p["unit"] for p in probes) \
        else "units"


def _array(values) -> np.ndarray:
    return np.array([np.nan if v is None else v for v in values], dtype=float)


def decimate(x: np.ndarray, y: np.ndarray, breaks: np.ndarray | None = None):
    """Segments ``[(xs, ys), ...]`` of the finite runs of ``y`` over pixel positions
    ``x`` (ascending), keeping per whole pixel column the first, lowest, highest and
    last point. ``breaks[k]`` True starts a new segment at point k (a phase wrap)."""
    finite = np.isfinite(y) & np.isfinite(x)
    brk = np.zeros(len(y), dtype=bool) if breaks is None else np.asarray(breaks, dtype=bool)
    starts = np.flatnonzero(finite & np.r_[True, ~finite[:-1] | brk[1:]])
    stops = np.flatnonzero(finite & np.r_[~finite[1:] | brk[1:], True]) + 1
    segments = []
    for s, stop in zip(starts.tolist(), stops.tolist()):
        xs, ys = x[s:stop], y[s:stop]
        column = np.floor(xs).astype(np.int64)
        if len(xs) <= 4 or len(np.unique(column)) * 4 >= len(xs):
            segments.append((xs, ys))
            continue
        group = np.flatnonzero(np.r_[True, column[1:] != column[:-1]])
        last = np.r_[group[1:], len(xs)] - 1
        by_value = np.lexsort((ys, np.repeat(np.arange(len(group)), np.diff(np.r_[group, len(xs)]))))
        low = by_value[group]
        high = by_value[last]
        keep = np.unique(np.concatenate([group, low, high, last]))
        segments.append((xs[keep], ys[keep]))
    return segments


def _path(segments, y_of) -> str:
    parts = []
    for xs, ys in segments:
        ys = y_of(ys)
        points = [f"{num(a)} {num(b)}" for a, b in zip(xs.tolist(), ys.tolist())]
        if len(points) == 1:
            points.append(points[0])
        parts.append("M" + " L".join(points))
    return " ".join(parts)


class _Axis:
    """A linear map from data (already in its display form: dB, log10 or plain) to pixels."""

    def __init__(self, lo: float, hi: float, p_lo: float, p_hi: float):
        if not hi > lo:
            lo, hi = lo - 1, hi + 1
        self.lo, self.hi, self.p_lo, self.p_hi = lo, hi, p_lo, p_hi

    def __call__(self, v):
        return self.p_lo + (np.asarray(v, dtype=float) - self.lo) / (self.hi - self.lo) * \
            (self.p_hi - self.p_lo)


def _step(span: float, ticks: int = 6, steps=(1.0, 2.0, 2.5, 5.0, 10.0)) -> float:
    raw = span / ticks
    decade = 10.0 ** math.floor(math.log10(raw))
    return next(s * decade for s in steps if s * decade >= raw * (1 - 1e-12))


def _frequency_ticks(lo: float, hi: float, log: bool):
    """(frequency, labelled) pairs for the frequency axis."""
    if not log:
        step = _step(hi - lo, 7)
        k = math.ceil(lo / step - 1e-9)
        out = []
        while k * step <= hi * (1 + 1e-12):
            out.append((k * step, True))
            k += 1
        return out
    decades = math.log10(hi / lo)
    minor = (1, 2, 5) if decades <= 2.5 else (1,)
    out = []
    for e in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1):
        for m in range(1, 10):
            f = m * 10.0 ** e
            if lo * (1 - 1e-12) <= f <= hi * (1 + 1e-12):
                out.append((f, m in minor))
    return out


def _magnitude_panel(result, probes, mode, x_px, y_top, y_bot, x0, x1, hidden):
    """One magnitude group (decibels or units) with its axis, curves and markers."""
    unit_set = sorted({result["probes"][p]["unit"] for p in probes})
    series = {p: _array(result["probes"][p]["mag"]) for p in probes}
    finite = np.concatenate([v[np.isfinite(v) & (v > 0)] for v in series.values()] or
                            [np.zeros(0)])
    body = []
    if mode == "db":
        top = 20 * math.log10(finite.max()) if len(finite) else 0.0
        bottom = 20 * math.log10(finite.min()) if len(finite) else -20.0
        bottom = max(bottom, top - DB_SPAN)
        step = _step(max(top - bottom, 1e-9), 5, (1.0, 2.0, 5.0, 10.0, 20.0))
        lo, hi = math.floor(bottom / step) * step, math.ceil(top / step) * step
        if hi - lo < step:
            lo, hi = lo - step, hi + step

        def transform(v):
            with np.errstate(divide="ignore"):
                return np.maximum(20 * np.log10(v), lo - 1e3)
        ticks = [(t, f"{fmt.plain(t)} dB") for t in np.arange(lo, hi + step / 2, step)]
        kind = "db"
        heading = "magnitude (dB)"
    else:
        big = finite.max() if len(finite) else 1.0
        small = finite.min() if len(finite) else 1.0
        shared = unit_set[0] if len(unit_set) == 1 else ""
        if big / max(small, 1e-300) > LOG_RATIO:
            hi = math.ceil(math.log10(big) - 1e-12)
            lo = max(math.floor(math.log10(small) + 1e-12), hi - 12)
            if hi - lo < 1:
                lo = hi - 1
            every = max(1, math.ceil((hi - lo) / 7))

            def transform(v):
                with np.errstate(divide="ignore"):
                    return np.maximum(np.log10(v), lo - 50)
            ticks = [(e, fmt.eng(10.0 ** e, shared, 3)) for e in range(lo, hi + 1, every)]
            kind = "log"
        else:
            lo, hi = 0.0, nice_ceiling(big)
            step = _step(hi, 5)

            def transform(v):
                return np.asarray(v, dtype=float)
            ticks = [(t, fmt.eng(t, shared, 3)) for t in np.arange(0, hi + step / 2, step)]
            kind = "linear"
        heading = "magnitude" + (f" ({', '.join(u or 'ratio' for u in unit_set)})")
    axis = _Axis(lo, hi, y_bot, y_top)
    for value, label in ticks:
        y = float(axis(value))
        body.append(tag("line", x1=x0, y1=y, x2=x1, y2=y, stroke=GRID, stroke_width=1))
        body.append(text(x0 - 6, y, label, halo=False, dy="0.35em", text_anchor="end",
                         font_size=11, fill="#555555", class_="pb-mag-label"))
    body.append(text(12, y_top - 8, heading, halo=False, font_weight="bold",
                     class_="pb-panel-title"))
    clip = (y_top - 2, y_bot + 2)
    for k, p in enumerate(probes):
        y = transform(series[p])
        y_px = np.clip(axis(y), *clip) if len(y) else y
        d = _path(decimate(x_px, np.where(np.isfinite(y), y_px, np.nan)), lambda v: v)
        colour, dash = probe_style(k)
        body.append(tag("path", d=d, fill="none", stroke=colour, stroke_width=1.8,
                        stroke_dasharray=dash, stroke_linejoin="round", data_probe=p,
                        class_="pb-curve"))
    group = tag("g", "\n".join(body), class_="pb-mag", data_scale=mode,
                data_y_kind=kind, data_y_min=float(lo), data_y_max=float(hi),
                display="none" if hidden else None)
    return group, transform, axis


def response_svg(result: dict, width: int = 760, height: int = 480, magnitude: str = "auto",
                 both: bool = True) -> str:
    """An SVG of the sweep ``result`` (the JSON of ``studies.sweep.run_sweep``).

    Parameters
    ----------
    result : dict
        ``frequencies_hz``, ``range``, ``probes`` (``unit``, ``ratio``, ``mag``, ``deg``
        per point, None where undefined), ``resonances``, ``frequency_hz``.
    width, height : int
        Size in px (the picture scales through its viewBox).
    magnitude : str
        ``"db"``, ``"units"`` or ``"auto"`` (`magnitude_scale`): the scale shown.
    both : bool
        Also draw the other scale, hidden (the page switches between them).

    Returns
    -------
    str
        A standalone ``<svg class="pb-response">``: curves are ``<path class="pb-curve"
        data-probe=...>``; resonance markers ``<g class="pb-resonance" data-index=...>``.
    """
    probes = list(result["probes"])
    freqs = np.asarray(result["frequencies_hz"], dtype=float)
    f_lo, f_hi = float(freqs[0]), float(freqs[-1])
    log = result.get("range", {}).get("spacing", "log") == "log"
    shown = magnitude_scale(result, magnitude)

    # Key: one swatch per probe, wrapping to further rows as needed.
    key, kx, ky = [], 12.0, 40.0
    for k, p in enumerate(probes):
        unit = result["probes"][p]["unit"]
        words = f"{p}" + (f" ({unit})" if unit else "")
        span = 44 + 7.0 * len(words)
        if kx + span > width - 12 and kx > 12:
            kx, ky = 12.0, ky + 18
        colour, dash = probe_style(k)
        key.append(tag("line", x1=kx, y1=ky - 4, x2=kx + 28, y2=ky - 4, stroke=colour,
                       stroke_width=2.2, stroke_dasharray=dash))
        key.append(text(kx + 34, ky, words, halo=False, fill=colour, class_="pb-key"))
        kx += span

    x0, x1 = _LEFT, width - _RIGHT
    top = ky + 30
    plot = height - _BOTTOM - top
    mag_top, mag_bot = top, top + plot * 0.6
    ph_top, ph_bot = mag_bot + 30, height - _BOTTOM

    if log:
        lf_lo, lf_hi = math.log10(f_lo), math.log10(f_hi)
        x_axis = _Axis(lf_lo, lf_hi, x0, x1)

        def x_of(f):
            return x_axis(np.log10(np.asarray(f, dtype=float)))
    else:
        x_axis = _Axis(f_lo, f_hi, x0, x1)

        def x_of(f):
            return x_axis(f)
    x_px = x_of(freqs)

    body = list(key)
    r = result.get("range") or {}
    head = (f"Frequency response, {fmt.eng(f_lo, 'Hz')} to {fmt.eng(f_hi, 'Hz')}, "
            f"{len(freqs):,} points {r.get('spacing', 'log')}")
    body.append(text(12, 18, head, halo=False, font_weight="bold", class_="pb-caption"))

    # Frequency grid and labels on both panels.
    ticks = _frequency_ticks(f_lo, f_hi, log)
    labelled = [f for f, on in ticks if on]
    if len(labelled) > 12:
        labelled = labelled[::math.ceil(len(labelled) / 12)]
    for f, on in ticks:
        x = float(x_of(f))
        for a, b in ((mag_top, mag_bot), (ph_top, ph_bot)):
            body.append(tag("line", x1=x, y1=a, x2=x, y2=b, stroke=GRID,
                            stroke_width=1 if on else 0.6))
        if f in labelled:
            body.append(text(x, ph_bot + 15, fmt.eng(f, "Hz", 3), halo=False,
                             text_anchor="middle", font_size=11, fill="#555555",
                             class_="pb-freq-label"))
    body.append(text((x0 + x1) / 2, height - 6, "frequency" + (" (log scale)" if log else ""),
                     halo=False, text_anchor="middle", class_="pb-axis-title"))

    # The analysis frequency and its harmonics inside the range.
    base = result.get("frequency_hz")
    if base:
        last_label = -1e9
        for h, x in marked_orders(base, f_lo, f_hi, x_of):
            f = h * base
            words = (f"analysis frequency {fmt.eng(base, 'Hz')}" if h == 1 else
                     f"harmonic {h}: {fmt.eng(f, 'Hz')}")
            for a, b in ((mag_top, mag_bot), (ph_top, ph_bot)):
                body.append(tag("line", title(words), x1=x, y1=a, x2=x, y2=b,
                                stroke="#6b6b6b" if h == 1 else "#a0a0a0",
                                stroke_width=1.4 if h == 1 else 1,
                                stroke_dasharray=None if h == 1 else "3 3",
                                class_="pb-base" if h == 1 else "pb-harmonic",
                                data_order=h))
            if x - last_label >= _LABEL_GAP and x <= x1 - 4:
                body.append(text(x, mag_top + 12, "f" if h == 1 else str(h),
                                 text_anchor="middle", font_size=11, fill="#555555",
                                 class_="pb-order-label"))
                last_label = x

    # Magnitude: the scale shown, and (for the page) the other one hidden.
    scales = [shown] + ([{"db": "units", "units": "db"}[shown]] if both else [])
    transforms = {}
    for mode in scales:
        group, transform, axis = _magnitude_panel(result, probes, mode, x_px, mag_top,
                                                  mag_bot, x0, x1, hidden=mode != shown)
        transforms[mode] = (transform, axis, group)
    # Phase panel.
    degs = {p: _array(result["probes"][p]["deg"]) for p in probes}
    every = np.concatenate([d[np.isfinite(d)] for d in degs.values()] or [np.zeros(0)])
    span = 90.0 if len(every) and np.abs(every).max() <= 90 + 1e-9 else 180.0
    step = 45.0 if span == 90 else 90.0
    ph_axis = _Axis(-span, span, ph_bot, ph_top)
    for t in np.arange(-span, span + step / 2, step):
        y = float(ph_axis(t))
        body.append(tag("line", x1=x0, y1=y, x2=x1, y2=y,
                        stroke=GRID_STRONG if t == 0 else GRID, stroke_width=1))
        body.append(text(x0 - 6, y, f"{fmt.plain(t)}°", halo=False, dy="0.35em",
                         text_anchor="end", font_size=11, fill="#555555",
                         class_="pb-phase-label"))
    body.append(text(12, ph_top - 8, "phase (degrees)", halo=False, font_weight="bold",
                     class_="pb-panel-title"))
    for k, p in enumerate(probes):
        d = degs[p]
        wrap = np.r_[False, np.abs(np.diff(d)) > 180]
        path = _path(decimate(x_px, d, wrap), lambda v: ph_axis(v))
        colour, dash = probe_style(k)
        body.append(tag("path", d=path, fill="none", stroke=colour, stroke_width=1.6,
                        stroke_dasharray=dash, stroke_linejoin="round", data_probe=p,
                        class_="pb-curve pb-phase"))
    for mode in scales:
        body.append(transforms[mode][2])
    for a, b in ((mag_top, mag_bot), (ph_top, ph_bot)):
        body.append(tag("rect", x=x0, y=a, width=x1 - x0, height=b - a, fill="none",
                        stroke=GRID_STRONG))

    # Resonance markers, numbered as in the resonance tables, on each magnitude scale.
    for n, res in enumerate(result.get("resonances", []), start=1):
        if res["probe"] not in result["probes"]:
            continue
        k = probes.index(res["probe"])
        colour = probe_style(k)[0]
        x = float(x_of(res["frequency_hz"]))
        words = resonance_words(n, res, result["probes"][res["probe"]]["unit"])
        for mode in scales:
            transform, axis, _ = transforms[mode]
            y = float(np.clip(axis(transform(np.array([res["value"]["mag"]]))), mag_top,
                              mag_bot)[0])
            dy = -13 if res["kind"] == "peak" else 13
            marker = "\n".join([
                title(words),
                tag("circle", cx=x, cy=y, r=3.2, fill=colour, stroke="#ffffff",
                    stroke_width=1),
                tag("line", x1=x, y1=y, x2=x, y2=y + dy * 0.55, stroke=colour,
                    stroke_width=1),
                text(x, y + dy + (0 if dy < 0 else 8), str(n), fill=colour,
                     font_weight="bold", text_anchor="middle", font_size=11)])
            body.append(tag("g", marker, class_="pb-resonance", data_index=n,
                            data_scale=mode, display=None if mode == shown else "none",
                            data_frequency=repr(float(res["frequency_hz"]))))
    label = f"Frequency response of {', '.join(probes)}"
    svg = svg_root("pb-response", width, height, label, body)
    frame = {"data-plot-left": x0, "data-plot-right": x1, "data-mag-top": mag_top,
             "data-mag-bottom": mag_bot, "data-phase-top": ph_top,
             "data-phase-bottom": ph_bot, "data-phase-span": span,
             "data-x-scale": "log" if log else "linear",
             "data-f-min": repr(f_lo), "data-f-max": repr(f_hi),
             "data-magnitude": shown}
    extra = " ".join(f'{k}="{num(v) if isinstance(v, float) else v}"' for k, v in frame.items())
    return svg.replace('<svg ', f'<svg {extra} ', 1)
