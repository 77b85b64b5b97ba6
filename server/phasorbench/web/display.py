"""The ``display`` field of a solve answer: every string the page shows, made once here.

The page only places these strings; numbers are formatted by ``formatting.py`` alone,
so the page, the terminal and the sheet read the same. Besides the branch and node
rows this holds the header facts (frequency, RMS/peak, sign convention, power-balance
check) and the power summary (each source, totals by kind of element).
"""

from __future__ import annotations

import math

from ..formatting import (ELEMENT_COLUMNS, NODE_COLUMNS, element_rows, eng, node_rows,
                          plain, power_factor)

#: Used only when a result carries no balance verdict of its own (results.py gives one):
#: the residual may be this fraction of the summed |S| (double-precision round-off
#: times the matrix condition stays far below it).
BALANCE_TOLERANCE = 1e-9

SIGN_CONVENTION = "passive sign: P, Q > 0 taken, < 0 delivered; V = V(from) − V(to), I from → to"

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

    Reads the verdict the core put in ``result["balance"]``; returns ``{"ok",
    "residual_va", "relative", "text", "detail"}``. ``text`` says the outcome in words, so the
    page never relies on colour alone.
    """
    balance = result.get("balance") or {}
    residual = math.hypot(_number(balance.get("p_w")), _number(balance.get("q_var")))
    if "relative" in balance and "ok" in balance:
        relative, ok = _number(balance["relative"]), bool(balance["ok"])
        tolerance = _number(balance.get("tolerance", BALANCE_TOLERANCE))
    else:
        total = sum(_number(e.get("s_va")) for e in result.get("elements", {}).values())
        relative = residual / total if total > 0 else 0.0
        tolerance = BALANCE_TOLERANCE
        ok = relative <= tolerance
    shown = eng(residual, "VA", digits=2)
    detail = (f"sum of S over all elements = {shown}, {plain(relative, digits=2)} of Σ|S| "
              f"(limit {plain(tolerance, digits=2)})")
    if ok:
        text = f"power balance closes (residual {shown})"
    else:
        text = f"power balance does NOT close: residual {shown}"
    return {"ok": ok, "residual_va": residual, "relative": relative, "text": text,
            "detail": detail}


def facts(result: dict) -> dict:
    """The header's facts: frequency, amplitude convention, sign rule, balance."""
    amplitudes = result.get("amplitudes", "rms")
    return {
        "title": result.get("title"),
        "frequency": eng(result.get("frequency_hz"), "Hz"),
        "amplitudes": ("magnitudes are RMS (S = V·I*)" if amplitudes == "rms"
                       else "magnitudes are peak (S = ½·V·I*)"),
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

    ``{"sources": [row], "totals": [{"label", "count", "values", "text"}], "groups":
    [row]}`` (``groups``: three-phase blocks, passive sign); totals use
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
    groups = [{"name": name, "kind": g.get("kind"),
               "values": {"p_w": g.get("p_w"), "q_var": g.get("q_var"), "s_va": g.get("s_va")},
               "text": {"name": name, "kind": g.get("kind", ""),
                        "p": eng(g.get("p_w"), "W", floor=floor),
                        "q": eng(g.get("q_var"), "var", floor=floor),
                        "s": eng(g.get("s_va"), "VA", floor=floor),
                        "pf": power_factor(g.get("pf"), g.get("pf_sense"))}}
              for name, g in (result.get("groups") or {}).items()]
    return {"sources": sources, "totals": totals, "groups": groups}


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


def waveform_display(samples: dict) -> dict:
    """The numbers listed beside a waveform picture, as text."""
    # Round-off (a resistor's returned energy of 1e-18 J) reads as 0.
    floor = 1e-9 * max(abs(samples.get("s_va", 0.0)), abs(samples.get("p_avg", 0.0)))
    period = samples.get("period_s", 0.0)
    return {
        "p_avg": eng(samples.get("p_avg"), "W", floor=floor),
        "q_var": eng(samples.get("q_var"), "var", floor=floor),
        "s_va": eng(samples.get("s_va"), "VA"),
        "v_peak": eng(samples.get("v_peak"), "V"),
        "i_peak": eng(samples.get("i_peak"), "A"),
        "p_range": (f"{eng(samples.get('p_min'), 'W', floor=floor)} to "
                    f"{eng(samples.get('p_max'), 'W', floor=floor)}"),
        "returned_energy": eng(samples.get("returned_energy_j"), "J", floor=floor * period),
        "absorbed_energy": eng(samples.get("absorbed_energy_j"), "J", floor=floor * period),
        "period": eng(period, "s"),
    }
