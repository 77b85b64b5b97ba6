"""Windows of the branch and node tables, for circuits too big to send every row.

Formatting a row's strings costs far more than solving for it; a circuit of 30,000
elements has rows nobody scrolls to. Up to ``FULL_ROWS`` rows an answer carries every
row (the page sorts and filters them itself); beyond, it carries the first
``ROW_WINDOW`` and the page asks for the window it scrolls to (``table_window``), in the
order and under the filter it shows. The order is the page's: numbers by value,
names and terminals in natural order (``R2`` before ``R10``), missing values last in
either direction, ties in circuit order.

A circuit with three-phase blocks shows each block as a unit: the block's row, then its
phase rows (when the page has the block open), placed where its first phase appears;
sorting and finding move units, a block's phases stay under it in circuit order — the
same rows and grouping as the page's table of every row.
"""

from __future__ import annotations

import re
from itertools import islice

from .formatting import element_rows, node_rows

__all__ = ["FULL_ROWS", "ROW_WINDOW", "MAX_WINDOW", "SORT_KEYS", "first_rows",
           "element_order", "branch_units", "node_order", "table_window"]

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


def _seen(entry: dict) -> dict:
    """What a row shows of an element or block: a supply's current and power are the
    ones it delivers (its ``delivered`` field), as ``formatting.element_rows`` shows."""
    supply = entry.get("delivered")
    return {**entry, **supply} if isinstance(supply, dict) else entry


def _block_entry(block: dict) -> dict:
    """A block's sort values, as its row (``display.group_rows``) holds them: totals,
    terminals its lines and star point, no one voltage, current or impedance."""
    seen = _seen(block)
    return {"kind": block.get("kind"), "from": " ".join(block.get("lines", [])),
            "to": block.get("star") or "", "p_w": seen.get("p_w"),
            "q_var": seen.get("q_var"), "s_va": block.get("s_va"), "pf": block.get("pf")}


def _ordered(items: list[tuple[str, dict]], sort: str | None, direction: int) -> list:
    """``items`` (name, entry) in the order of ``sort`` and ``direction``."""
    if sort not in SORT_KEYS:
        return items
    key = SORT_KEYS[sort]
    present, missing = [], []
    for item in items:
        name, entry = item
        value = name if key is None else key(_seen(entry))
        if value is None:
            missing.append(item)
        else:
            present.append((_natural(value) if isinstance(value, str) else (value,), item))
    # sort is stable, and with reverse=True equal keys keep their circuit order too
    present.sort(key=lambda pair: pair[0], reverse=direction == -1)
    return [item for _key, item in present] + missing


def element_order(result: dict, sort: str | None = None, direction: int = 1,
                  find: str = "") -> list[str]:
    """Element names in the branch table's order for ``sort`` (a ``SORT_KEYS`` column,
    None for circuit order) and ``direction`` (1 or -1), keeping those ``find`` matches
    (every element a row of its own, blocks or not)."""
    elements = result.get("elements", {})
    match = _matches(find)
    items = [(n, el) for n, el in elements.items()
             if match is None or match(n, el.get("from", ""), el.get("to", ""))]
    return [name for name, _el in _ordered(items, sort, direction)]


def branch_units(result: dict, sort: str | None = None, direction: int = 1,
                 find: str = "") -> list[tuple[str | None, list[str]]]:
    """The branch table's units in the order shown: ``(None, [name])`` for an element of
    no block, ``(block, [phases])`` for a three-phase block. A block is kept when it or
    any of its phases matches ``find``, and then with every phase."""
    elements = result.get("elements", {})
    blocks = result.get("groups") or {}
    owner = {name: block for block, g in blocks.items() for name in g.get("elements", ())}
    members: dict[str, list[str]] = {}
    units: list[tuple[str, dict, str | None, list[str]]] = []
    for name, el in elements.items():
        block = owner.get(name)
        if block is None:
            units.append((name, el, None, [name]))
        elif block not in members:
            members[block] = [name]
            units.append((block, _block_entry(blocks[block]), block, members[block]))
        else:
            members[block].append(name)
    match = _matches(find)
    if match is not None:
        units = [u for u in units if match(u[0], u[1].get("from", ""), u[1].get("to", ""))
                 or (u[2] is not None and any(
                     match(n, elements[n].get("from", ""), elements[n].get("to", ""))
                     for n in u[3]))]
    by_item = {id(u[1]): u for u in units}
    ordered = _ordered([(u[0], u[1]) for u in units], sort, direction)
    return [(by_item[id(entry)][2], by_item[id(entry)][3]) for _name, entry in ordered]


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
                 direction: int = 1, find: str = "", expanded=(), block_rows=None) -> dict:
    """Rows ``start`` to ``start + count`` of the branch (``table="elements"``) or node
    table in the order the page shows: ``{"table", "total", "start", "rows",
    "matched"}``, where ``total`` counts the rows under the filter and ``matched`` the
    elements among them.

    In a circuit with three-phase blocks the branch table's rows are its units
    (``branch_units``): a block's row (``block_rows(result)``'s, with ``"unit":
    "block"`` and ``"open"``), then, when the block is in ``expanded``, its phases' rows
    (``"unit": "phase"``, ``"block"``); ``matched`` counts the phases of closed blocks too.
    """
    count = max(0, min(count, MAX_WINDOW))
    start = max(0, start)
    if table == "nodes":
        order = node_order(result, find)
        rows = node_rows(result, order[start:start + count])
        return {"table": table, "total": len(order), "start": start, "rows": rows,
                "matched": len(order)}
    if not result.get("groups") or block_rows is None:
        order = element_order(result, sort, direction, find)
        rows = element_rows(result, order[start:start + count])
        return {"table": table, "total": len(order), "start": start, "rows": rows,
                "matched": len(order)}
    open_blocks = set(expanded or ())
    flat: list[tuple[str, str | None]] = []       # (element or block name, its block)
    matched = 0
    for block, names in branch_units(result, sort, direction, find):
        matched += len(names)
        if block is None:
            flat.append((names[0], None))
            continue
        flat.append((block, block))
        if block in open_blocks:
            flat.extend((name, block) for name in names)
    window = flat[start:start + count]
    phases = element_rows(result, [name for name, block in window if name != block])
    blocks = {row["name"]: row for row in block_rows(result)} if any(
        name == block for name, block in window) else {}
    rows, taken = [], iter(phases)
    for name, block in window:
        if block is None:
            rows.append(next(taken))
        elif name == block:
            rows.append({**blocks[block], "unit": "block", "open": block in open_blocks})
        else:
            rows.append({**next(taken), "unit": "phase", "block": block})
    return {"table": table, "total": len(flat), "start": start, "rows": rows,
            "matched": matched}
