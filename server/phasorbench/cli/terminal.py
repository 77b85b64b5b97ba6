"""The solved circuit as aligned text tables for a terminal.

Every number comes from ``formatting.py`` (the one formatter), so the terminal shows
exactly the strings of the page and the sheet.
"""

from __future__ import annotations

from ..presentation.amplitudes import shown_word
from ..presentation.display import group_detail, group_rows
from ..presentation.formatting import ELEMENT_COLUMNS, NODE_COLUMNS, eng, element_rows, node_rows


def _table(headings: list[str], rows: list[list[str]], right: set[int]) -> list[str]:
    widths = [max([len(h)] + [len(r[k]) for r in rows]) for k, h in enumerate(headings)]

    def line(cells):
        return "  ".join(c.rjust(w) if k in right else c.ljust(w)
                         for k, (c, w) in enumerate(zip(cells, widths))).rstrip()

    return [line(headings), line(["-" * w for w in widths])] + [line(r) for r in rows]


def header_lines(result: dict) -> list[str]:
    """Title, frequency, amplitude convention, sign convention and the balance check."""
    balance = result["balance"]
    convention = f"{shown_word(result)} phasors, " + (
        "S = V·I*" if result["amplitudes"] == "rms" else "S = ½·V·I*")
    own = result.get("amplitudes_input")
    if own and own != result["amplitudes"]:
        # --show read the answer the other way (the page's words: "shown as ...; input in ...")
        convention = f"shown as {convention}; input in {shown_word({'amplitudes': own})}"
    state = "ok" if balance.get("ok", True) else "FAILED"
    lines = []
    if result.get("title"):
        lines.append(result["title"])
    lines.append(f"frequency {eng(result['frequency_hz'], 'Hz')}   {convention}   "
                 "passive sign: P > 0 taken, P < 0 delivered; angles in degrees")
    lines.append(f"power balance (sum of S over all elements): "
                 f"{balance['p_w']:.3g} W {balance['q_var']:+.3g} var, "
                 f"{balance.get('relative', 0.0):.1e} of total |S|: {state}")
    lines.append("sources (marked delivered): the current out of their first terminal "
                 "into the circuit, P and Q delivered (> 0 when supplying)")
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
        if row.get("sub"):
            # a source: the line below says its I, P and Q are the delivered ones
            keys = [k for k, _ in columns]
            branch_rows.append([row["sub"].get(k, "") for k in keys])
        if row.get("secondary"):
            cells = [""] * len(columns)
            cells[1] = "  secondary"
            element = result["elements"][row["name"]]["secondary"]
            cells[2] = f"{element['from']} → {element['to']}"
            cells[3] = row["secondary"]["voltage"]
            cells[4] = row["secondary"]["current"]
            branch_rows.append(cells)
    out += _table([h for _, h in columns], branch_rows, set(range(3, len(columns))))
    if result.get("groups"):
        out += _group_lines(result)
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


def _group_lines(result: dict) -> list[str]:
    """The three-phase blocks: totals, then each block's line currents, line-to-line
    voltages and sequence values (the three-phase view's own lists)."""
    out = [""]
    heading = ["Block", "Kind", "Lines", "P", "Q", "|S|", "PF", "V unbalance", "Neutral"]
    rows = []
    for row in group_rows(result):
        t = row["text"]
        supply = row["sub"].get("p") == "delivered total"
        rows.append([t["name"], f"{t['kind']} {row['connection']}", t["terminals"],
                     t["p"], t["q"], t["s"], t["pf"], t["unbalance"], t["neutral"]])
        if supply:
            rows.append(["", "", "", "delivered", "delivered", "", "", "", ""])
    out += _table(heading, rows, {3, 4, 5, 6, 7, 8})
    for name in result["groups"]:
        detail = group_detail(result, name)
        out += ["", detail["heading"]]
        out += _table(["Line", "Line current", "Pair", "Line-to-line voltage"],
                      [[x["line"], x["current"], x["pair"], x["voltage"]]
                       for x in detail["lines"]], {1, 3})
        out += _table(["Sequence", "Voltage", "Current"],
                      [[x["name"], x["voltage"], x["current"]] for x in detail["sequence"]],
                      {1, 2})
        out.append(detail["note"])
    return out
