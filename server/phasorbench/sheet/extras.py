"""Optional sections of the sheet: a power-factor correction or a port equivalent.

Those results come from the power tools (``phasorbench.tools``) as plain dicts. The
sheet shows them with the page's own strings for them (``presentation/display.py``:
``correction_display``, ``port_display``), so a result reads the same on the page and
on paper. A dict those cannot read is shown as a two-column list instead: its key,
and its value formatted by `phasorbench.formatting` with the unit its key names
(``q_var`` → var, ``c_f`` → F, a phasor ``thevenin_v`` → V). Either way the tool's own
warnings are listed, and no number is formatted twice.
"""

from __future__ import annotations

import math

from ..presentation import formatting as fmt

__all__ = ["extra_section", "tool_section"]

#: Key endings that name a unit (longest first, so ``_var`` wins over ``_a``...).
_SUFFIX_UNITS = (("_ohm", "Ω"), ("_var", "var"), ("_va", "VA"), ("_hz", "Hz"), ("_w", "W"),
                 ("_j", "J"), ("_f", "F"), ("_h", "H"), ("_v", "V"), ("_a", "A"))
#: A phasor's quantity from the key's last word (``thevenin_z``) or first (``v_th``).
_PHASOR_UNITS = {"v": "V", "voltage": "V", "i": "A", "current": "A", "z": "Ω", "y": "S",
                 "s": "VA"}
#: Keys whose list of strings or dicts is a list of notes, shown as bullets.
_NOTE_KEYS = ("warnings", "notes", "cautions")
_TEXT_KEYS = ("title", "summary", "description")
#: Said once for the whole sheet already.
_SKIP_KEYS = ("scope_note",)
_HEADINGS = {"correction": "Power-factor correction", "port": "Port equivalent"}
_MAX_DEPTH = 3


def _unit(key: str) -> str:
    low = key.lower()
    for suffix, unit in _SUFFIX_UNITS:
        if low.endswith(suffix):
            return unit
    return ""


def _is_phasor(value) -> bool:
    return isinstance(value, dict) and {"re", "im"} <= value.keys()


def _value_text(key: str, value) -> str:
    low = key.lower()
    if value is None:
        return fmt.MISSING
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    if isinstance(value, (int, float)):
        if isinstance(value, float) and not math.isfinite(value):
            return fmt.eng(value, _unit(key))
        if low == "pf" or low.startswith("pf_") or low.endswith("_pf"):
            return fmt.power_factor(value)
        unit = _unit(key)
        return fmt.eng(value, unit) if unit else fmt.plain(value)
    if _is_phasor(value):
        words = low.split("_")
        unit = (_unit(key) or _PHASOR_UNITS.get(words[-1]) or _PHASOR_UNITS.get(words[0], ""))
        if "mag" in value:
            return fmt.phasor(value, unit)
        return fmt.rect(value, unit)
    if isinstance(value, complex):
        return fmt.rect(value, _unit(key))
    return str(value)


def _note_text(item) -> str:
    if isinstance(item, dict):
        if "title" in item:                   # a caution with this result's detail
            return f"{item['title']}: {item.get('detail') or item.get('text') or ''}"
        where = f"line {item['line']}: " if item.get("line") else ""
        hint = f" ({item['hint']})" if item.get("hint") else ""
        return f"{where}{item.get('message') or item.get('text') or ''}{hint}"
    return str(item)


def _rows(data: dict, prefix: str, depth: int, out: list, notes: list) -> None:
    for key, value in data.items():
        label = f"{prefix}{key}"
        if key in _NOTE_KEYS and isinstance(value, (list, tuple)):
            notes.extend(value)
        elif isinstance(value, dict) and not _is_phasor(value) and depth < _MAX_DEPTH:
            _rows(value, f"{label} › ", depth + 1, out, notes)
        elif isinstance(value, (list, tuple)) and depth < _MAX_DEPTH:
            if all(isinstance(v, dict) and not _is_phasor(v) for v in value):
                for k, item in enumerate(value, start=1):
                    _rows(item, f"{label} {k} › ", depth + 1, out, notes)
            else:
                out.append({"label": label,
                            "text": ", ".join(_value_text(key, v) for v in value)})
        else:
            out.append({"label": label, "text": _value_text(key, value)})


def extra_section(data: dict | None, heading: str, known=()) -> dict | None:
    """A tool's result dict as ``{"heading", "title", "summary", "rows", "notes", ...}``.

    ``rows`` are ``{"label", "text"}`` in the dict's order (nested dicts flattened to
    ``outer › inner``); ``notes`` collects ``warnings``/``notes``/``cautions`` lists,
    leaving out warnings whose message is in ``known`` (the circuit's own, listed
    elsewhere); ``facts``, ``capacitors``, ``lines`` and ``cautions`` stay empty here
    (see `tool_section`).

    >>> extra_section({"q_var": -1685.26, "pf": 0.95}, "Correction")["rows"]
    [{'label': 'q_var', 'text': '-1.685 kvar'}, {'label': 'pf', 'text': '0.95'}]
    """
    if data is None:
        return None
    rows: list[dict] = []
    notes: list = []
    body = {k: v for k, v in data.items() if k not in _TEXT_KEYS + _SKIP_KEYS}
    _rows(body, "", 0, rows, notes)
    return {"heading": heading, "title": data.get("title") if isinstance(data.get("title"), str)
            else None,
            "summary": data.get("summary") if isinstance(data.get("summary"), str) else None,
            "rows": rows, "notes": _notes(notes, known), "facts": [], "capacitors": [],
            "lines": [], "cautions": []}


def _notes(items, known) -> list[str]:
    known = set(known)
    return [_note_text(item) for item in items
            if not (isinstance(item, dict) and item.get("message") in known)]


def tool_section(data: dict | None, tool: str, known=()) -> dict | None:
    """The section of a ``correction`` or ``port`` result, as the page shows it.

    Adds to `extra_section`'s keys the page's ``facts`` (``{"term", "value", "flag"}``),
    a bank's ``capacitors``, the circuit ``lines`` to add and the ``cautions`` with this
    result's numbers; the tool's warnings not in ``known`` are the ``notes``. A dict the
    page's display cannot read keeps the plain key/value ``rows``.
    """
    if data is None:
        return None
    section = extra_section(data, _HEADINGS[tool], known)
    from ..presentation.tools_display import correction_display, port_display
    try:
        shown = (correction_display if tool == "correction" else port_display)(data)
    except (KeyError, TypeError, AttributeError, ValueError):
        return section      # not the tools' shape: the plain list says it all
    capacitors = shown.get("capacitors", [])
    section.update({
        "title": shown["heading"], "summary": shown.get("method"), "rows": [],
        "facts": shown["facts"],
        # One capacitor's voltage and current are among the facts already.
        "capacitors": capacitors if len(capacitors) > 1 else [],
        "lines": shown.get("lines", []),
        "cautions": shown.get("cautions", []),
        "standard": shown.get("standard"),
        "notes": _notes(data.get("warnings", []), known) + list(shown.get("notes", [])),
    })
    return section
