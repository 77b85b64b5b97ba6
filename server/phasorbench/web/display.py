"""The ``display`` field of a solve answer: every string the page shows, made once here.

The page only places these strings; numbers are formatted by ``formatting.py`` alone,
so the page, the terminal and the sheet read the same. Besides the branch and node
rows this holds the header facts (frequency, RMS/peak, sign convention, power-balance
check) and the power summary (each source, totals by kind of element).
"""

from __future__ import annotations

import math

from ..formatting import (ELEMENT_COLUMNS, NODE_COLUMNS, element_rows, eng, node_rows,
                          power_factor)

#: The balance is "closed" when its residual is below this fraction of the power that
#: flows (half the sum of |S|, since every VA delivered is also taken): solves in double
#: precision leave ~1e-16 relative error times the matrix condition.
BALANCE_TOLERANCE = 1e-9

SIGN_CONVENTION = ("passive sign: P, Q > 0 taken by an element, < 0 delivered; "
                   "V = V(from) − V(to), I flows from → to")

SOURCE_KINDS = ("voltage", "current", "vcvs", "vccs", "ccvs", "cccs")

#: Rows of the totals table: (label, the element kinds it adds up).
TOTAL_GROUPS = (
    ("resistive (resistors)", ("resistor",)),
    ("reactive: inductors", ("inductor",)),
    ("reactive: capacitors", ("capacitor",)),
    ("impedances and admittances", ("impedance", "admittance")),
    ("transformers", ("transformer",)),
    ("sources (independent and controlled)", SOURCE_KINDS),
)


def _number(value) -> float:
    return float(value) if isinstance(value, (int, float)) and math.isfinite(value) else 0.0


def balance_check(result: dict) -> dict:
    """Is the sum of complex power zero up to round-off (Tellegen's theorem)?

    Returns ``{"ok", "residual_va", "scale_va", "text"}``; ``text`` says the outcome in
    words, so the page never relies on colour alone.
    """
    balance = result.get("balance") or {}
    residual = math.hypot(_number(balance.get("p_w")), _number(balance.get("q_var")))
    scale = 0.5 * sum(_number(e.get("s_va")) for e in result.get("elements", {}).values())
    ok = residual <= BALANCE_TOLERANCE * scale or residual == 0.0
    shown = eng(residual, "VA", digits=2)
    if ok:
        text = f"power balance closes (residual {shown})"
    else:
        text = (f"power balance does NOT close: residual {shown} of "
                f"{eng(scale, 'VA')} flowing")
    return {"ok": ok, "residual_va": residual, "scale_va": scale, "text": text}


def facts(result: dict) -> dict:
    """The header's facts: frequency, amplitude convention, sign rule, balance."""
    amplitudes = result.get("amplitudes", "rms")
    return {
        "title": result.get("title"),
        "frequency": eng(result.get("frequency_hz"), "Hz"),
        "amplitudes": ("RMS phasors (|V|, |I| are RMS values)" if amplitudes == "rms"
                       else "peak phasors (|V|, |I| are peak values; S = ½·V·I*)"),
        "sign": SIGN_CONVENTION,
        "balance": balance_check(result),
    }


def _source_row(name: str, el: dict) -> dict:
    """A source as its supplier sees it: power delivered is shown positive."""
    p, q = -_number(el.get("p_w")), -_number(el.get("q_var"))
    floor = 1e-12 * max(_number(el.get("s_va")), 1e-300)
    return {"name": name, "kind": el.get("kind"),
            "values": {"p_w": p, "q_var": q, "s_va": el.get("s_va"), "pf": el.get("pf")},
            "text": {"name": name, "kind": el.get("kind", ""),
                     "p": eng(p, "W", floor=floor), "q": eng(q, "var", floor=floor),
                     "s": eng(el.get("s_va"), "VA"),
                     "pf": power_factor(el.get("pf"), el.get("pf_sense"))}}


def power_summary(result: dict) -> dict:
    """Each source's delivered P, Q, |S|, PF, and the totals taken by each kind of element.

    ``{"sources": [row], "totals": [{"label", "count", "values", "text"}]}``; totals use
    the passive sign (taken > 0), so the sources' row is negative and all rows add to
    the balance residual.
    """
    elements = result.get("elements", {})
    sources = [_source_row(n, e) for n, e in elements.items() if e.get("kind") in SOURCE_KINDS]
    flow = max((_number(e.get("s_va")) for e in elements.values()), default=0.0)
    floor = 1e-12 * flow
    totals = []
    for label, kinds in TOTAL_GROUPS:
        members = [e for e in elements.values() if e.get("kind") in kinds]
        if not members:
            continue
        p = sum(_number(e.get("p_w")) for e in members)
        q = sum(_number(e.get("q_var")) for e in members)
        totals.append({"label": label, "count": len(members),
                       "values": {"p_w": p, "q_var": q},
                       "text": {"p": eng(p, "W", floor=floor), "q": eng(q, "var", floor=floor)}})
    return {"sources": sources, "totals": totals}


def solve_display(result: dict) -> dict:
    """Everything the page shows of a solve, as strings (and raw numbers for sorting)."""
    return {
        "facts": facts(result),
        "element_columns": [{"key": k, "heading": h} for k, h in ELEMENT_COLUMNS],
        "elements": element_rows(result),
        "node_columns": [{"key": k, "heading": h} for k, h in NODE_COLUMNS],
        "nodes": node_rows(result),
        "summary": power_summary(result),
        "warnings": [w.get("message", "") for w in result.get("warnings", [])],
    }
