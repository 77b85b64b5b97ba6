"""The node, branch and three-phase tables as data for a spreadsheet: CSV or
tab-separated text, units in the headings, numbers as numbers.

One home for the page's "CSV" and "Copy" buttons (through ``POST /api/table``) and
``phasorbench solve --table``. The rows follow the tables the page shows: a source's
current, P and Q are the ones it delivers (column ``Convention`` says which), and no
value carries more significant digits than the solve's accuracy check trusts.
"""

from __future__ import annotations

import csv
import io
import math

from .amplitudes import shown_word


__all__ = ["TABLES", "table_rows", "table_text"]

#: The tables, by the name the command line and the API take.
TABLES = ("nodes", "branches", "three-phase")

#: ``{m}`` in a heading: the convention of its magnitudes, "RMS" or "peak" as the page's
#: table headings say it (``amplitudes.shown_word``); powers and angles have none.
_NODE_HEADINGS = ["Node", "|V| {m} (V)", "∠V (°)", "Re V {m} (V)", "Im V {m} (V)"]
_BRANCH_HEADINGS = ["Element", "Kind", "From", "To", "|V| {m} (V)", "∠V (°)", "|I| {m} (A)",
                    "∠I (°)", "R (Ω)", "X (Ω)", "P (W)", "Q (var)", "|S| (VA)", "PF",
                    "PF sense", "Convention"]
_GROUP_HEADINGS = ["Block", "Kind", "Connection", "Lines", "P (W)", "Q (var)", "|S| (VA)",
                   "PF", "PF sense", "V unbalance V2/V1 (%)", "|I_N| {m} (A)", "Convention"]
#: Significant digits written for a fully trusted value: what a double holds.
_FULL = 15


def _number(value, digits: int = _FULL):
    """A finite float cut to ``digits`` significant digits; None stays empty."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return value
    return float(f"{value:.{max(1, digits) - 1}e}")


def _phasor(ph, digits: int, prefix: bool = False) -> list:
    if not isinstance(ph, dict):
        return ["", ""] if not prefix else ["", "", "", ""]
    angle_digits = max(3, digits)           # an angle's own digits follow its phasor's
    polar = [_number(ph.get("mag"), digits), _number(ph.get("deg"), angle_digits)]
    return polar + ([_number(ph.get("re"), digits), _number(ph.get("im"), digits)]
                    if prefix else [])


def _digits(trusted) -> int:
    """Digits to write: the trusted count, or every digit of a double when fully trusted."""
    if trusted is None or trusted >= _FULL:
        return _FULL
    return max(1, int(trusted))


def _headings(headings: list[str], result: dict) -> list[str]:
    word = shown_word(result)
    return [h.replace("{m}", word) for h in headings]


def table_rows(result: dict, table: str) -> tuple[list[str], list[list]]:
    """(headings, rows) of one of `TABLES` for a contract dict; rows hold str and float.

    The voltage and current magnitudes are in ``result``'s ``amplitudes`` convention
    (``amplitudes.shown_as`` reads them the other way), and their headings say which:
    ``|V| RMS (V)``, ``|I| peak (A)``. An unknown table raises ``ValueError``.
    """
    if table == "nodes":
        trusted = result.get("node_digits") or {}
        return _headings(_NODE_HEADINGS, result), [
            [name, *_phasor(ph, _digits(trusted.get(name)), True)]
            for name, ph in result.get("nodes", {}).items()]
    if table == "branches":
        rows = []
        for name, el in result.get("elements", {}).items():
            d = _digits(el.get("digits"))
            supply = el.get("delivered") if isinstance(el.get("delivered"), dict) else None
            seen = {**el, **supply} if supply else el
            z = el.get("impedance")
            rows.append([name, el.get("kind", ""), el.get("from", ""), el.get("to", ""),
                         *_phasor(el.get("voltage"), d), *_phasor(seen.get("current"), d),
                         _number(z["re"], d) if isinstance(z, dict) else "",
                         _number(z["im"], d) if isinstance(z, dict) else "",
                         _number(seen.get("p_w"), d), _number(seen.get("q_var"), d),
                         _number(el.get("s_va"), d), _number(el.get("pf"), min(d, 6)),
                         el.get("pf_sense", ""), "delivered" if supply else "passive"])
        return _headings(_BRANCH_HEADINGS, result), rows
    if table == "three-phase":
        rows = []
        for name, g in (result.get("groups") or {}).items():
            supply = g.get("delivered") if isinstance(g.get("delivered"), dict) else None
            seen = {**g, "p_w": supply["p_w"], "q_var": supply["q_var"]} if supply else g
            vuf = g.get("voltage_unbalance")
            neutral = g.get("neutral_current")
            rows.append([name, g.get("kind", ""), g.get("connection", ""),
                         " ".join(g.get("lines", [])), _number(seen.get("p_w")),
                         _number(seen.get("q_var")), _number(g.get("s_va")),
                         _number(g.get("pf"), 6), g.get("pf_sense", ""),
                         _number(100 * vuf) if vuf is not None else "",
                         _number(neutral["mag"]) if isinstance(neutral, dict) else "",
                         "delivered" if supply else "passive"])
        return _headings(_GROUP_HEADINGS, result), rows
    raise ValueError(f"no table named {table!r}: the tables are {', '.join(TABLES)}")


def table_text(result: dict, table: str, separator: str = ",") -> str:
    """One table as CSV (``separator=","``) or tab-separated text (``"\\t"``, what a
    spreadsheet takes from the clipboard), headings first, CRLF line ends as RFC 4180."""
    headings, rows = table_rows(result, table)
    out = io.StringIO()
    writer = csv.writer(out, delimiter=separator, lineterminator="\r\n")
    writer.writerow(headings)
    for row in rows:
        writer.writerow([repr(v) if isinstance(v, float) else v for v in row])
    return out.getvalue()
