"""Text boxes and a label placer: pictures whose labels never cover one another.

The pictures name DejaVu Sans first (``_svg.FONT_FAMILY``); the advance widths below are
that face's, in em, read from its font files (regular and bold), so a label's box is
known before a browser lays it out. Characters not listed count as a full em, which
errs on the wide side. A box is ``(left, top, right, bottom)`` in px, y down.

`Placer` keeps the boxes already on the picture; `Placer.place` tries candidate positions
in order and takes the first that stays inside the picture and clear of every box, and
`Placer.around` is the search used for phasor tips: positions on rings round the tip,
nearest first, the arrow's own direction first on each ring. A label that had to move
away from its tip gets a leader line back to it (`leader`).
"""

from __future__ import annotations

import math
from collections.abc import Iterable

Box = tuple[float, float, float, float]

_REGULAR = {
    0.275: "'", 0.278: "ijl", 0.295: "IJ", 0.318: " .,·", 0.337: ":;/|", 0.352: "f",
    0.361: "-", 0.39: "()[]", 0.392: "t", 0.401: "²!₀₁₂₃", 0.411: "r", 0.46: '"',
    0.5: "–°_*", 0.521: "s", 0.525: "z", 0.528: "⁺", 0.531: "?", 0.55: "c", 0.557: "L",
    0.575: "F", 0.579: "k", 0.592: "vxyλ", 0.603: "Pπ", 0.611: "TY", 0.612: "oθ",
    0.615: "ae", 0.632: "EΣ", 0.636: "hnubdgpqS0123456789µ{}√", 0.656: "K", 0.66: "φ",
    0.686: "AVΔXZB", 0.698: "RC", 0.732: "U", 0.752: "NH", 0.764: "Ω", 0.775: "DG",
    0.787: "OQ&", 0.818: "w", 0.838: "=+−→←×≈≤≥#<>~^", 0.863: "M", 0.896: "∠",
    0.95: "%", 0.974: "m", 0.989: "W", 1.0: "—@…",
}
_BOLD = {
    0.306: "'", 0.343: "ijl", 0.348: " ", 0.365: "/|", 0.372: "IJ", 0.38: ".,·",
    0.4: ":;", 0.415: "-", 0.435: "f", 0.438: "²₀₁₂₃", 0.457: "!()[]", 0.478: "t",
    0.493: "r", 0.5: "–°_", 0.523: '"*', 0.528: "⁺", 0.58: "?", 0.582: "z", 0.595: "cs",
    0.633: "λ", 0.637: "L", 0.652: "xvy", 0.667: "k√", 0.678: "ae", 0.683: "TEFΣ",
    0.687: "oθ", 0.696: "0123456789", 0.716: "hnu{}bdgpq", 0.725: "SYZ", 0.736: "PCµ",
    0.762: "B", 0.775: "RXAVΔK", 0.791: "φπ", 0.812: "U", 0.83: "GD", 0.838:
    "=+−→←×≈≤≥#<>~^HN", 0.85: "OQΩ", 0.872: "&", 0.896: "∠", 0.924: "w", 0.995: "M",
    1.0: "—@…", 1.002: "%", 1.042: "m", 1.103: "W",
}
_WIDTHS = {weight: {c: w for w, chars in table.items() for c in chars}
           for weight, table in (("regular", _REGULAR), ("bold", _BOLD))}
#: The face's ascent and descent (hhea, 0.928 and 0.236 em), the height a browser gives a
#: text's box; the descent is taken a little deeper, as Chromium rounds it up to a pixel.
ASCENT, DESCENT = 0.929, 0.27
#: Hinting at small sizes rounds advances to whole pixels: a few percent and a pixel more.
_SLACK_REL, _SLACK_PX = 0.03, 1.0


def text_width(words: str, size: float = 12.0, bold: bool = False) -> float:
    """Advance width of ``words`` in px at ``size`` px."""
    table = _WIDTHS["bold" if bold else "regular"]
    return size * sum(table.get(c, 1.0) for c in words) * (1 + _SLACK_REL) + _SLACK_PX


def text_box(x: float, y: float, words: str, size: float = 12.0, anchor: str = "start",
             bold: bool = False, dy_em: float = 0.0) -> Box:
    """The box of an SVG ``<text>`` at ``(x, y)`` (baseline) with ``text-anchor`` and a
    ``dy`` of ``dy_em`` em."""
    w = text_width(words, size, bold)
    left = x if anchor == "start" else x - w if anchor == "end" else x - w / 2
    base = y + dy_em * size
    return (left, base - ASCENT * size, left + w, base + DESCENT * size)


def overlap(a: Box, b: Box, pad: float = 0.0) -> bool:
    """Whether two boxes overlap (closer than ``pad`` counts)."""
    return a[0] < b[2] + pad and b[0] < a[2] + pad and a[1] < b[3] + pad and b[1] < a[3] + pad


def near_point(box: Box, x: float, y: float) -> tuple[float, float]:
    """The point of ``box`` nearest to ``(x, y)``."""
    return min(max(x, box[0]), box[2]), min(max(y, box[1]), box[3])


class Placer:
    """Boxes on one picture; new labels go where they cover none of them.

    Parameters
    ----------
    width, height : float
        The picture; labels stay ``margin`` px inside it.
    pad : float
        Clear space kept between two labels (room for the text's white halo).
    """

    def __init__(self, width: float, height: float, pad: float = 2.0, margin: float = 3.0):
        self.width, self.height, self.pad, self.margin = width, height, pad, margin
        self.boxes: list[Box] = []

    def inside(self, box: Box) -> bool:
        m = self.margin
        return box[0] >= m and box[1] >= m and box[2] <= self.width - m and \
            box[3] <= self.height - m

    def free(self, box: Box) -> bool:
        """Inside the picture and clear of every box placed."""
        return self.inside(box) and not any(overlap(box, b, self.pad) for b in self.boxes)

    def add(self, box: Box) -> Box:
        """Take ``box`` (a fixed text, or a mark labels must not cover)."""
        self.boxes.append(box)
        return box

    def place(self, candidates: Iterable[Box]) -> Box | None:
        """The first free candidate, taken; None when every one is blocked."""
        for box in candidates:
            if self.free(box):
                return self.add(box)
        return None

    def around(self, x: float, y: float, deg: float, w: float, h: float,
               rings: Iterable[float] = (6.0, 14.0, 24.0, 36.0, 50.0, 66.0, 84.0, 104.0,
                                         126.0, 150.0, 176.0, 204.0, 234.0, 266.0, 300.0),
               ) -> tuple[Box, bool] | None:
        """A ``w`` × ``h`` box near the point ``(x, y)``, beyond it along ``deg``
        (degrees counter-clockwise, screen y up) when free, else the nearest free place.

        Returns ``(box, moved)`` — ``moved`` when the box is not next to the point, so a
        leader should join them — or None when no place is free.
        """
        first = True
        for d in rings:
            for turn in (0, 30, -30, 60, -60, 90, -90, 120, -120, 150, -150, 180):
                th = math.radians(deg + turn)
                c, s = math.cos(th), math.sin(th)
                px, py = x + d * c, y - d * s
                left = px if c > 0.38 else px - w if c < -0.38 else px - w / 2
                top = py - h if s > 0.38 else py if s < -0.38 else py - h / 2
                box = (left, top, left + w, top + h)
                if self.free(box):
                    self.add(box)
                    return box, not (first or (d <= 14.0 and abs(turn) <= 30))
                first = False
        return None


def leader(box: Box, x: float, y: float, gap: float = 2.0) -> tuple[float, float, float, float] | None:
    """A line from ``(x, y)`` to the nearest point of ``box``, stopping ``gap`` px short;
    None when the box is already that close."""
    bx, by = near_point(box, x, y)
    d = math.hypot(bx - x, by - y)
    if d <= gap + 4.0:
        return None
    k = (d - gap) / d
    return x, y, x + (bx - x) * k, y + (by - y) * k
