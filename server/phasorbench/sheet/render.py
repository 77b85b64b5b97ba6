"""Rendering the sheet: the Jinja2 template over `sheet_context`'s data, one HTML file.

The template folder is the web app's (``templates/``, or ``PHASORBENCH_TEMPLATES``),
so the sheet and the page are styled from one place; a missing folder or template
fails on first use with a message naming it. Autoescaping is on: circuit text,
titles and comments reach the file as text, never as markup.
"""

from __future__ import annotations

import functools
import os
from datetime import datetime
from pathlib import Path

from jinja2 import Environment, FileSystemLoader, StrictUndefined, TemplateNotFound

from .context import sheet_context

__all__ = ["SHEET_TEMPLATE", "cell_breaks", "render_context", "render_sheet", "templates_dir"]

SHEET_TEMPLATE = "sheet.html"
_REPO_ROOT = Path(__file__).resolve().parents[3]


def templates_dir() -> Path:
    """The template folder: ``PHASORBENCH_TEMPLATES`` when set, else the repository's."""
    return Path(os.environ.get("PHASORBENCH_TEMPLATES", str(_REPO_ROOT / "templates")))


_NBSP = "\u00a0"


def cell_breaks(text: str, key: str = "") -> str:
    """Where a printed table cell may wrap: before an angle, after an arrow, before a
    power factor's sense, nowhere else (a number stays with its unit).

    Only spaces change (to no-break spaces); the formatter's text is otherwise kept.

    >>> cell_breaks("38.65 A ∠-6.61°") == "38.65\u00a0A ∠-6.61°"
    True
    """
    kept = text.replace(" ", _NBSP)
    kept = kept.replace(_NBSP + "∠", " ∠").replace("→" + _NBSP, "→ ")
    if key == "pf":
        kept = kept.replace(_NBSP, " ")
    return kept


@functools.lru_cache(maxsize=4)
def _environment(folder: str) -> Environment:
    if not Path(folder).is_dir():
        raise RuntimeError(f"phasorbench sheet: template folder not found: {folder}")
    # StrictUndefined: a misspelt name in the template is an error, not a blank cell.
    env = Environment(loader=FileSystemLoader(folder), autoescape=True,
                      undefined=StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    env.filters["cell"] = cell_breaks
    return env


def render_context(context: dict) -> str:
    """The sheet's HTML from a `sheet_context` dict."""
    folder = templates_dir()
    try:
        template = _environment(str(folder)).get_template(SHEET_TEMPLATE)
    except TemplateNotFound:
        raise RuntimeError(f"phasorbench sheet: {SHEET_TEMPLATE} not found in {folder}") from None
    return template.render(context)


def render_sheet(text: str, filename: str = "<circuit>", *, now: datetime | None = None,
                 waveform_elements=None, phasor_elements=None, correction: dict | None = None,
                 port: dict | None = None) -> str:
    """Solve ``text`` and return its solved sheet: one self-contained HTML document.

    Parameters are those of `sheet_context`; bad input raises ``CircuitError``.

    >>> html = render_sheet("frequency 50 Hz\\nV1: voltage a -> 0 10 V\\nR1: resistor a -> 0 5 ohm")
    >>> html.startswith("<!doctype html>"), "R1" in html, "http:" in html
    (True, True, False)
    """
    return render_context(sheet_context(
        text, filename, now=now, waveform_elements=waveform_elements,
        phasor_elements=phasor_elements, correction=correction, port=port))
