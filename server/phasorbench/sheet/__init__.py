"""The solved sheet: a self-contained HTML record of one solved circuit.

A reviewer can check the calculation from the sheet alone, offline, years later: the
input verbatim with its SHA-256, the conventions assumed, every node and branch, the
power summary and balance, the diagrams, the warnings, worked checks and the safety
cautions. Like the web layer this package is a shell over the core (it uses Jinja2);
``render_sheet`` is its one entry point, ``sheet_context`` the data it renders.
"""

from .context import sheet_context, sheet_filename
from .render import render_context, render_sheet

__all__ = ["render_context", "render_sheet", "sheet_context", "sheet_filename"]
