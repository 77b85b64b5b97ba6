"""Small SVG-writing pieces shared by the pictures: escaping, numbers, scales, palette.

The pictures are plain strings with presentation attributes (no external files, no
ids, no script), so they look the same inlined in the page, in a standalone sheet and
in print, and two pictures on one page cannot clash.
"""

from __future__ import annotations

import math
from xml.sax.saxutils import escape

#: Text face for every picture: the fonts a browser is sure to have last.
FONT_FAMILY = "'DejaVu Sans', 'Segoe UI', system-ui, sans-serif"

#: Neutral inks.
INK = "#222222"
GRID = "#d4d4d4"
GRID_STRONG = "#9a9a9a"

#: Voltage/current colour pairs, cycled per element. Chosen for this project so that
#: within a pair and across pairs the colours differ in lightness and on the blue-yellow
#: axis, which red-green colour-blind readers still see; the line style (solid V,
#: dashed I) carries the distinction as well.
PAIRS = (
    ("#1f4e99", "#d1651c"),  # deep blue / orange
    ("#0f7b6c", "#b0337c"),  # teal / magenta
    ("#5a3d9a", "#9c7a00"),  # violet / ochre
    ("#2b2b2b", "#3f9fd8"),  # near black / sky blue
)

#: Dash patterns: voltage solid, current dashed, power dash-dot.
DASH_CURRENT = "7 4"
DASH_POWER = "11 3 2 3"

#: One colour pair per element of a phasor diagram: `PAIRS` and two more, twelve colours
#: that differ in hue and lightness. Past them the colours come round again with other
#: line styles (`LINE_STYLES`), so no two elements of one picture look alike.
ELEMENT_PAIRS = PAIRS + (
    ("#a11d21", "#4f9a3a"),  # crimson / leaf green
    ("#6a4423", "#7474c8"),  # brown / periwinkle
)
#: (voltage, current) dash patterns, one set per round of `ELEMENT_PAIRS`: solid and
#: dashed first, then long-dashed and dotted, then dash-dot and long-short.
LINE_STYLES = ((None, DASH_CURRENT), ("14 4", "2 3"), ("12 3 3 3", "8 2 2 2"))

_NICE_STEPS = (1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0)


def nice_ceiling(x: float) -> float:
    """The smallest 'round' number (1, 1.5, 2, 2.5, 3, 4, 5, 6, 8 × 10ⁿ) ≥ x > 0.

    Steps this fine keep the largest arrow or trace above two thirds of the scale.
    """
    if not (x > 0 and math.isfinite(x)):
        return 1.0
    decade = 10.0 ** math.floor(math.log10(x))
    for step in _NICE_STEPS:
        if step * decade >= x * (1 - 1e-12):
            return _usable(step * decade, x)
    return _usable(10.0 * decade, x)


def _usable(ceiling: float, x: float) -> float:
    """``ceiling``, or ``x`` itself where a power of ten left the float range (a
    subnormal's decade is 0, the decade above 1.8e308 is infinite): a scale one
    divides by is never 0 or infinite."""
    return ceiling if ceiling > 0 and math.isfinite(ceiling) else x


def num(x: float) -> str:
    """A coordinate: three decimals, zeros trimmed (keeps files small, geometry exact enough)."""
    text = f"{x:.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def attrs(**kw) -> str:
    """``key="value"`` pairs; ``_`` in a key becomes ``-``; None values are left out."""
    parts = []
    for key, value in kw.items():
        if value is None:
            continue
        key = key.rstrip("_").replace("_", "-")
        if isinstance(value, float):
            value = num(value)
        parts.append(f'{key}="{escape(str(value), {chr(34): "&quot;"})}"')
    return " ".join(parts)


def tag(name: str, content: str | None = None, **kw) -> str:
    """One element; ``content`` is already-escaped markup (use `text` for plain text)."""
    a = attrs(**kw)
    head = f"<{name} {a}" if a else f"<{name}"
    return f"{head}/>" if content is None else f"{head}>{content}</{name}>"


def text(x: float, y: float, words: str, halo: bool = True, **kw) -> str:
    """A text element; a white halo keeps it readable where it crosses lines."""
    if halo:
        kw.setdefault("stroke", "#ffffff")
        kw.setdefault("stroke_width", "3")
        kw.setdefault("paint_order", "stroke")
        kw.setdefault("stroke_linejoin", "round")
    kw.setdefault("fill", INK)
    if kw.get("font_size") == 11:
        # Also as a class, so the scoped style below can hold the size against page CSS.
        kw["class_"] = f"{kw.get('class_', '')} pb-small".strip()
    return tag("text", escape(words), x=float(x), y=float(y), **kw)


def title(words: str) -> str:
    """A ``<title>`` child: the browser shows it on hover."""
    return f"<title>{escape(words)}</title>"


def svg_root(css_class: str, width: int, height: int, label: str, body: list[str],
             style: str = "") -> str:
    """The outer ``<svg>`` with a white background, an accessible title and ``body``."""
    head = (f'<svg xmlns="http://www.w3.org/2000/svg" class="{css_class}" '
            f'{attrs(width=width, height=height, viewBox=f"0 0 {width} {height}")} '
            f'role="img" {attrs(aria_label=label, font_family=FONT_FAMILY, font_size=12)}>')
    # Presentation attributes lose to any page rule such as ``text {font-size: 2em}``;
    # this style, scoped to the picture's class, outranks such plain element rules.
    scoped = (f"svg.{css_class} text{{font-family:{FONT_FAMILY};font-size:12px}}"
              f"svg.{css_class} text.pb-small{{font-size:11px}}")
    parts = [head, title(label), f"<style>{scoped}{style}</style>"]
    parts.append(tag("rect", x=0, y=0, width=width, height=height, fill="#ffffff"))
    parts.extend(body)
    parts.append("</svg>")
    return "\n".join(parts)
