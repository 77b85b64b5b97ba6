"""Windows of the branch and node tables, for circuits too big to send every row.

Formatting a row's strings costs far more than solving for it; a circuit of 30,000
elements has rows nobody scrolls to. Up to ``FULL_ROWS`` rows an answer carries every
row (the page sorts and filters them itself); beyond, it carries the first
``ROW_WINDOW`` and the page asks for the window it scrolls to (``table_window``), in the
order and under the filter it shows. The order is the page's: numbers by value,
names and terminals in natural order (``R2`` before ``R10``), missing values last in
either direction, ties in circuit order.
"""

from __future__ import annotations

import re
from itertools import islice

from .formatting import element_rows, node_rows

__all__ = ["FULL_ROWS", "ROW_WINDOW", "MAX_WINDOW", "SORT_KEYS", "first_rows",
           "element_order", "node_order", "table_window"]

#: Rows an answer holds in full; a bigger table is sent a window at a time.
FULL_ROWS = 1000
#: Rows of a big table sent with the solve, and the most one window request returns.
ROW_WINDOW = 200
MAX_WINDOW = 500


def _phasor_part(field: str, part: str):
    def value(el: dict):
        ph = el.get(field)
        return ph.get(part) if isinstance(ph, dict) else None
    return value


#: Branch-table column → the contract value it sorts by (the page's columns).
SORT_KEYS = {
    "name": None,                                   # the name itself
    "kind": lambda el: el.get("kind"),
    "terminals": lambda el: f"{el.get('from')} {el.get('to')}",
    "voltage": _phasor_part("voltage", "mag"),
    "current": _phasor_part("current", "mag"),
    "impedance_rect": _phasor_part("impedance", "re"),
    "impedance_polar": _phasor_part("impedance", "mag"),
    "p": lambda el: el.get("p_w"),
    "q": lambda el: el.get("q_var"),
    "s": lambda el: el.get("s_va"),
    "pf": lambda el: el.get("pf"),
}

_DIGIT_RUNS = re.compile(r"(\d+)")


def _natural(text: str) -> tuple:
    """``R10`` after ``R2``: digit runs compare as numbers, the rest without case."""
    return tuple((0, int(part), "") if part.isdigit() else (1, 0, part.lower())
                 for part in _DIGIT_RUNS.split(text) if part)


def _matches(find: str):
    """Whether a name or its terminals contain ``find`` (no case); None: every row."""
    needle = (find or "").strip().lower()
    if not needle:
        return None
    return lambda *texts: any(needle in str(t).lower() for t in texts)


def element_order(result: dict, sort: str | None = None, direction: int = 1,
                  find: str = "") -> list[str]:
    """Element names in the branch table's order for ``sort`` (a ``SORT_KEYS`` column,
    None for circuit order) and ``direction`` (1 or -1), keeping those ``find`` matches."""
    elements = result.get("elements", {})
    match = _matches(find)
    names = [n for n, el in elements.items()
             if match is None or match(n, el.get("from", ""), el.get("to", ""))]
    if sort not in SORT_KEYS:
        return names
    key = SORT_KEYS[sort]
    present, missing = [], []
    for name in names:
        value = name if key is None else key(elements[name])
        if value is None:
            missing.append(name)
        else:
            present.append((_natural(value) if isinstance(value, str) else (value,), name))
    # sort is stable, and with reverse=True equal keys keep their circuit order too
    present.sort(key=lambda item: item[0], reverse=direction == -1)
    return [name for _key, name in present] + missing


def node_order(result: dict, find: str = "") -> list[str]:
    """Node names in circuit order, keeping those ``find`` matches."""
    match = _matches(find)
    return [n for n in result.get("nodes", {}) if match is None or match(n)]


def first_rows(result: dict) -> dict:
    """The rows a solve answer carries: every row of a small circuit, else the first
    ``ROW_WINDOW`` of each table; with the totals and whether rows were left out."""
    elements, nodes = result.get("elements", {}), result.get("nodes", {})
    partial = len(elements) > FULL_ROWS or len(nodes) > FULL_ROWS
    if not partial:
        return {"elements": element_rows(result), "nodes": node_rows(result),
                "element_total": len(elements), "node_total": len(nodes), "partial": False}
    return {"elements": element_rows(result, list(islice(elements, ROW_WINDOW))),
            "nodes": node_rows(result, list(islice(nodes, ROW_WINDOW))),
            "element_total": len(elements), "node_total": len(nodes), "partial": True}


def table_window(result: dict, table: str, start: int, count: int, sort: str | None = None,
                 direction: int = 1, find: str = "") -> dict:
    """Rows ``start`` to ``start + count`` of the branch (``table="elements"``) or node
    table in the order the page shows: ``{"table", "total", "start", "rows"}``, where
    ``total`` counts the rows under the filter."""
    count = max(0, min(count, MAX_WINDOW))
    start = max(0, start)
    if table == "nodes":
        order = node_order(result, find)
        rows = node_rows(result, order[start:start + count])
    else:
        order = element_order(result, sort, direction, find)
        rows = element_rows(result, order[start:start + count])
    return {"table": table, "total": len(order), "start": start, "rows": rows}
