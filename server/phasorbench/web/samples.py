"""The sample circuits offered in the page's samples menu, read from ``samples/``.

Samples are plain ``.circuit`` files; the menu shows each one's ``title`` directive,
so adding a sample is dropping a file in the folder.
"""

from __future__ import annotations

from pathlib import Path

SAMPLE_SUFFIX = ".circuit"


def sample_title(text: str, fallback: str) -> str:
    """The text of the first ``title`` directive, or ``fallback`` when there is none."""
    for raw in text.splitlines():
        line = raw.split("#", 1)[0].strip()
        head, _, rest = line.partition(" ")
        if head.lower() == "title" and rest.strip():
            return rest.strip()
    return fallback


def list_samples(folder: Path) -> list[dict]:
    """Every sample as ``{"name", "title", "netlist"}``, sorted by name.

    A missing folder gives an empty list (a server started outside a checkout);
    a file that is not UTF-8 text is skipped rather than breaking the menu.
    """
    if not folder.is_dir():
        return []
    out = []
    for path in sorted(folder.glob("*" + SAMPLE_SUFFIX)):
        try:
            text = path.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError):
            continue
        out.append({"name": path.stem, "title": sample_title(text, path.stem), "netlist": text})
    return out
