"""The solved circuit as aligned text tables for a terminal.

Every number comes from ``formatting.py`` (the one formatter), so the terminal shows
exactly the strings of the page and the sheet.
"""

from __future__ import annotations

from ..presentation.formatting import (ELEMENT_COLUMNS, NODE_COLUMNS, ROUND_OFF, eng, element_rows, node_rows,
                         power_factor)


def _table(headings: list[str], rows: list[list[str]], right: set[int]) -> list[str]:
    widths = [max([len(h)] + [len(r[k]) for r in rows]) for k, h in enumerate(headings)]

    def line(cells):
        return "  ".join(c.rjust(w) if k in right else c.ljust(w)
                         for k, (c, w) in enumerate(zip(cells, widths))).rstrip()

    return [line(headings), line(["-" * w for w in widths])] + [line(r) for r in rows]


def header_lines(result: dict) -> list[str]:
    """Title, frequency, amplitude convention, sign convention and the balance check."""
    balance = result["balance"]
    convention = ("RMS phasors, S = V·I*" if result["amplitudes"] == "rms"
                  else "peak phasors, S = ½·V·I*")
    state = "ok" if balance.get("ok", True) else "FAILED"
    lines = []
    if result.get("title"):
        lines.append(result["title"])
    lines.append(f"frequency {eng(result['frequency_hz'], 'Hz')}   {convention}   "
                 "passive sign: P > 0 taken, P < 0 delivered; angles in degrees")
    lines.append(f"power balance (sum of S over all elements): "
                 f"{balance['p_w']:.3g} W {balance['q_var']:+.3g} var, "
                 f"{balance.get('relative', 0.0):.1e} of total |S|: {state}")
    refs = result.get("references") or []
    if refs:
        lines.append("own reference nodes of isolated parts: " + ", ".join(refs))
    return lines


def result_table(result: dict) -> str:
    """The whole terminal report: header, node table, branch table, three-phase groups."""
    out = header_lines(result) + [""]
    rows = node_rows(result)
    out += _table([h for _, h in NODE_COLUMNS],
                  [[r["text"][k] for k, _ in NODE_COLUMNS] for r in rows], {1, 2})
    out.append("")
    columns = [c for c in ELEMENT_COLUMNS if c[0] != "impedance_polar"]
    branch_rows = []
    for row in element_rows(result):
        branch_rows.append([row["text"][k] for k, _ in columns])
        if row.get("secondary"):
            cells = [""] * len(columns)
            cells[1] = "  secondary"
            element = result["elements"][row["name"]]["secondary"]
            cells[2] = f"{element['from']} → {element['to']}"
            cells[3] = row["secondary"]["voltage"]
            cells[4] = row["secondary"]["current"]
            branch_rows.append(cells)
    out += _table([h for _, h in columns], branch_rows, set(range(3, len(columns))))
    groups = result.get("groups") or {}
    if groups:
        out.append("")
        heading = ["Group", "Kind", "P", "Q", "|S|", "PF", "V unbalance"]
        # The element rows' round-off floor, so a balanced resistive bank shows 0 var, not
        # 177.6 fvar.
        floor = ROUND_OFF * max([abs(e.get("s_va") or 0.0) for e in
                                 result["elements"].values()] + [0.0])
        group_rows = []
        for name, g in groups.items():
            vuf = g.get("voltage_unbalance")
            group_rows.append([
                name, f"{g['kind']} {g['connection']}", eng(g["p_w"], "W", floor=floor),
                eng(g["q_var"], "var", floor=floor), eng(g["s_va"], "VA", floor=floor),
                power_factor(g["pf"], g["pf_sense"]),
                "—" if vuf is None else f"{100 * vuf:.3f} %"])
        out += _table(heading, group_rows, {2, 3, 4, 5, 6})
    totals = result.get("rms_totals")
    if totals:
        shown = ", ".join(eng(h["frequency_hz"], "Hz") for h in result.get("harmonics", []))
        out += ["", f"RMS totals over every frequency (tables above: "
                f"{eng(result['frequency_hz'], 'Hz')}; also solved: {shown})"]
        heading = ["Element", "V rms", "I rms", "P", "V·I", "PF"]
        floor = 1e-12 * max(t["s_va"] for t in totals.values())     # round-off shows as 0
        rows = [[name, eng(t["v_rms"], "V"), eng(t["i_rms"], "A"),
                 eng(t["p_w"], "W", floor=floor),
                 eng(t["s_va"], "VA"), f"{t['pf']:.4f}"] for name, t in totals.items()]
        out += _table(heading, rows, {1, 2, 3, 4, 5})
    return "\n".join(out) + "\n"
