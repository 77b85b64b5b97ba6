"""The ``display`` field of an answer: every string the page shows, made once here.

The page only places these strings; numbers are formatted by ``formatting.py`` alone,
so the page, the terminal and the sheet read the same. Besides the branch and node
rows this holds the header facts (frequency, RMS/peak, sign convention, power-balance
check), the power summary (each source, totals by kind of element), the three-phase
block rows and view, and the answers of the power tools (correction, port).
"""

from __future__ import annotations

import math

from .formatting import (ELEMENT_COLUMNS, LIMITED, MISSING, NODE_COLUMNS, ROUND_OFF, SHOWN_DIGITS,
                          element_rows, eng, phasor, plain, power_factor_of, shown_digits)
from .amplitudes import shown_word
from .rows import first_rows

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
    words = ("magnitudes are RMS (S = V·I*)" if amplitudes == "rms"
             else "magnitudes are peak (S = ½·V·I*)")
    own = result.get("amplitudes_input")
    if own and own != amplitudes:
        words = (f"shown as {'RMS' if amplitudes == 'rms' else 'peak'} "
                 f"(S = {'V·I*' if amplitudes == 'rms' else '½·V·I*'}); input in "
                 f"{'RMS' if own == 'rms' else 'peak'}")
    return {
        "title": result.get("title"),
        "frequency": eng(result.get("frequency_hz"), "Hz"),
        "amplitudes": words,
        "amplitudes_shown": amplitudes,
        "sign": SIGN_CONVENTION,
        "balance": balance_check(result),
    }


def _source_row(name: str, el: dict) -> dict:
    """A source as its supplier sees it: power delivered is shown positive."""
    p, q = -_number(el.get("p_w")), -_number(el.get("q_var"))
    floor = 1e-12 * max(_number(el.get("s_va")), 1e-300)
    d = shown_digits(el.get("digits"))      # never more digits than the solve trusts
    mark = "" if d >= SHOWN_DIGITS else LIMITED
    return {"name": name, "kind": el.get("kind"),
            "values": {"p_w": p, "q_var": q, "s_va": el.get("s_va"), "pf": el.get("pf")},
            "text": {"name": name, "kind": el.get("kind", ""),
                     "p": mark + eng(p, "W", d, floor=floor),
                     "q": mark + eng(q, "var", d, floor=floor),
                     "s": mark + eng(el.get("s_va"), "VA", d),
                     "pf": mark + power_factor_of(el.get("pf"), el.get("pf_sense"), el.get("s_va"),
                                                 floor, d)}}


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
                        "pf": power_factor_of(g.get("pf"), g.get("pf_sense"), g.get("s_va")),
                        "unbalance": _percent(g.get("voltage_unbalance"), _UNBALANCE_FLOOR)}}
              for name, g in (result.get("groups") or {}).items()]
    return {"sources": sources, "totals": totals, "groups": groups}


#: Columns holding voltage or current magnitudes: their headings say RMS or peak.
_MAGNITUDE_COLUMNS = {"voltage": ("|V|", "|V|"), "current": ("|I|", "|I|"), "rect": ("V", "V")}


def _headed(key: str, heading: str, result: dict) -> str:
    """A table heading with the convention of its magnitudes: ``|V| RMS ∠``."""
    if key not in _MAGNITUDE_COLUMNS:
        return heading
    word = shown_word(result)
    symbol = _MAGNITUDE_COLUMNS[key][0]
    return heading.replace(symbol, f"{symbol} {word}", 1)


def solve_display(result: dict) -> dict:
    """Everything the page shows of a solve, as strings (and raw numbers for sorting).

    A big circuit's tables come as their first rows (``rows.first_rows``:
    ``rows_partial`` true, ``element_total`` and ``node_total`` the full counts); the
    page asks for the other windows as it scrolls (``rows.table_window``).
    """
    first = first_rows(result)
    return {
        "facts": facts(result),
        "element_columns": [{"key": k, "heading": _headed(k, h, result)}
                            for k, h in ELEMENT_COLUMNS],
        "elements": first["elements"],
        "element_total": first["element_total"],
        "groups": group_rows(result),
        "node_columns": [{"key": k, "heading": _headed(k, h, result)} for k, h in NODE_COLUMNS],
        "nodes": first["nodes"],
        "node_total": first["node_total"],
        "rows_partial": first["partial"],
        "summary": power_summary(result),
        "warnings": [w.get("message", "") for w in result.get("warnings", [])],
        "tools": tool_choices(result),
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


# --- three-phase blocks ---------------------------------------------------------------

#: A voltage unbalance below this is round-off of a balanced solve (1e-16 of V₁), shown 0.
_UNBALANCE_FLOOR = 1e-12

_SEQUENCE_NAMES = (("zero", "zero (0)"), ("positive", "positive (1)"), ("negative", "negative (2)"))


def _mag(ph) -> float:
    return _number(ph.get("mag")) if isinstance(ph, dict) else 0.0


def _floors(result: dict) -> tuple[float, float, float]:
    """Round-off floors of power, voltage and current, as the branch rows use them."""
    elements = result.get("elements", {}).values()
    s = max((_number(e.get("s_va")) for e in elements), default=0.0)
    v = max([_mag(e.get("voltage")) for e in elements] +
            [_mag(n) for n in result.get("nodes", {}).values()], default=0.0)
    i = max((_mag(e.get("current")) for e in elements), default=0.0)
    return ROUND_OFF * s, ROUND_OFF * v, ROUND_OFF * i


def _percent(fraction, floor: float = 0.0, digits: int = 3) -> str:
    if fraction is None or not math.isfinite(fraction):
        return MISSING
    if abs(fraction) < floor or fraction == 0:
        return "0 %"
    return f"{plain(100.0 * fraction, digits)} %"


def _signed_percent(fraction) -> str:
    """``+0.1234 %`` / ``-0.5 %``: a change or a difference, its sign always shown."""
    text = _percent(fraction, digits=4)
    return text if text.startswith(("-", MISSING)) else "+" + text


def _group_terminals(name: str, g: dict) -> str:
    """``a b c → n`` for a wye (to its star point), ``a b c`` for a delta."""
    lines = " ".join(g.get("lines", []))
    if g.get("connection") == "delta":
        return lines
    return f"{lines} → {g['star']}" if g.get("star") else lines


def _own_star(name: str, g: dict) -> bool:
    """A wye block written without ``-> n`` has a star point of its own, no neutral wire."""
    return g.get("star") == f"{name}.n"


def _no_neutral(name: str, g: dict) -> str | None:
    """Why a block has no neutral current (a delta, or a wye with a star of its own), or None."""
    if g.get("connection") == "delta":
        return "no neutral (delta)"
    if _own_star(name, g) or g.get("neutral_current") is None:
        return "no neutral (own star)"
    return None


def group_rows(result: dict) -> list[dict]:
    """One row per three-phase block for the branch table, in the shape of a branch row.

    ``{"name", "kind", "connection", "elements", "values": {...}, "text": {...},
    "sub": {...}}``: ``values`` holds the totals (``p_w``, ``q_var``, ``s_va``, ``pf``,
    ``voltage_unbalance``; the phasor keys are None) for sorting; ``text`` the strings of
    every branch column — the |V| and |I| cells stay empty (a block has no one voltage or
    current; its phases' rows have them) — plus ``unbalance`` and ``neutral``, which the
    second line under the terminals cell says; ``sub`` that second line under some
    cells. A ``voltage3`` supply block's totals are the P and Q it delivers, like its
    phases' rows (see ``formatting.element_rows``).
    """
    s_floor, _, i_floor = _floors(result)
    rows = []
    for name, g in (result.get("groups") or {}).items():
        supply = g.get("delivered") if isinstance(g.get("delivered"), dict) else None
        seen = {**g, "p_w": supply["p_w"], "q_var": supply["q_var"]} if supply else g
        values = {f"{q}_{k}": None for q in ("v", "i", "z") for k in ("mag", "deg", "re", "im")}
        values.update({key: seen.get(key) for key in ("p_w", "q_var", "s_va", "pf")})
        values["voltage_unbalance"] = g.get("voltage_unbalance")
        connection = g.get("connection", "")
        # The magnitude only: the row stays as narrow as a phase's row (the angle is in
        # the three-phase view).
        neutral = None if _no_neutral(name, g) else eng(_mag(g["neutral_current"]), "A",
                                                        floor=i_floor)
        unbalance = _percent(g.get("voltage_unbalance"), _UNBALANCE_FLOOR)
        # two short lines (the cell stays as narrow as a phase's terminals)
        about = (f"V₂/V₁ {unbalance}\n" + (f"I_N {neutral}" if neutral else "no neutral")
                 ).replace(" ", "\u00a0")       # each line breaks only between the two
        total = "delivered total" if supply else "block total"
        rows.append({
            "name": name, "kind": g.get("kind"), "connection": connection,
            "elements": list(g.get("elements", [])), "lines": list(g.get("lines", [])),
            "from": " ".join(g.get("lines", [])), "to": g.get("star") or "",
            "values": values,
            "text": {"name": name, "kind": g.get("kind", ""),
                     "terminals": _group_terminals(name, g),
                     "voltage": "", "current": "",
                     "unbalance": unbalance, "neutral": neutral or MISSING,
                     "impedance_rect": "", "impedance_polar": "",
                     "p": eng(seen.get("p_w"), "W", floor=s_floor),
                     "q": eng(seen.get("q_var"), "var", floor=s_floor),
                     "s": eng(g.get("s_va"), "VA", floor=s_floor),
                     "pf": power_factor_of(g.get("pf"), g.get("pf_sense"), g.get("s_va"))},
            "sub": {"name": f"{len(g.get('elements', []))} phases", "kind": connection,
                    "terminals": about, "p": total, "q": total if supply else ""},
        })
    return rows


def _negated(ph: dict) -> dict:
    """A phasor dict turned through 180° (a delivered current from a passive-sign one)."""
    re, im = -float(ph.get("re", 0.0)) + 0.0, -float(ph.get("im", 0.0)) + 0.0
    return {"re": re, "im": im, "mag": ph.get("mag"), "deg": math.degrees(math.atan2(im, re))}


def _turns(g: dict) -> str:
    return "a, c, b" if g.get("rotation") == "acb" else "a, b, c"


def group_detail(result: dict, name: str) -> dict:
    """What the three-phase view lists beside its picture, as strings.

    ``{"name", "heading", "note", "phases": [branch row], "lines": [{"line", "current",
    "pair", "voltage"}], "sequence": [{"name", "voltage", "current"}], "facts": [{"term",
    "value"}]}``; the phase rows are the branch table's own rows of the block's elements.
    """
    g = result["groups"][name]
    s_floor, v_floor, i_floor = _floors(result)
    members = set(g.get("elements", []))
    phases = element_rows(result, [n for n in result["elements"] if n in members])
    pairs = ("ab", "bc", "ca")
    supply = g.get("delivered") if isinstance(g.get("delivered"), dict) else None
    # a supply block lists what it delivers: line currents out into the lines
    line_current = (supply or {}).get("line_current") or g.get("line_current", {})
    line_voltage = g.get("line_voltage", {})
    seq_current = {key: (_negated(ph) if supply else ph)
                   for key, ph in g.get("sequence_current", {}).items()}
    lines = [{"line": line, "current": phasor(line_current.get(phase), "A", floor=i_floor),
              "pair": f"{g['lines'][k]}–{g['lines'][(k + 1) % 3]}",
              "voltage": phasor(line_voltage.get(pairs[k]), "V", floor=v_floor)}
             for k, (phase, line) in enumerate(zip("abc", g.get("lines", [])))]
    sequence = [{"name": label,
                 "voltage": phasor(g["sequence_voltage"][key], "V", floor=v_floor),
                 "current": phasor(seq_current[key], "A", floor=i_floor)}
                for key, label in _SEQUENCE_NAMES]
    what = "branch" if g.get("connection") == "delta" else "phase"
    missing = _no_neutral(name, g)
    facts = [
        {"term": "P delivered" if supply else "P total",
         "value": eng((supply or g).get("p_w"), "W", floor=s_floor)},
        {"term": "Q delivered" if supply else "Q total",
         "value": eng((supply or g).get("q_var"), "var", floor=s_floor)},
        {"term": "|S| total", "value": eng(g.get("s_va"), "VA", floor=s_floor)},
        {"term": "power factor",
         "value": power_factor_of(g.get("pf"), g.get("pf_sense"), g.get("s_va"))},
        {"term": "voltage unbalance V₂/V₁",
         "value": _percent(g.get("voltage_unbalance"), _UNBALANCE_FLOOR)},
        {"term": "neutral current",
         "value": missing or f"I_N = {phasor(g['neutral_current'], 'A', floor=i_floor)}"},
    ]
    return {
        "name": name,
        "magnitudes": shown_word(result),
        "heading": f"{name}: {g.get('kind', '')} {g.get('connection', '')}, lines "
                   f"{_group_terminals(name, g)}",
        "note": (f"Sequence values are Fortescue's of the {what} voltages and currents, "
                 "phase a the reference (a = 1∠120°), labelled for the "
                 f"{g.get('rotation', 'abc')} rotation (positive turns {_turns(g)}); "
                 "the unbalance is negative over positive of the line voltages by the "
                 "same labels; " + ("currents, P and Q are the ones the supply delivers "
                                    "(out into the lines)." if supply else
                                    "totals use the passive sign.")),
        "phases": phases, "lines": lines, "sequence": sequence, "facts": facts,
    }


def tool_choices(result: dict) -> dict:
    """What the page's tools offer to pick: sources to correct, nodes, three-phase blocks.

    ``{"sources": [{"name", "kind", "three_phase", "lines", "label"}], "nodes": [...],
    "groups": [{"name", "label"}], "probes": ["Z(n)", "V(n)", "I(E)", ...], "sweep": the
    circuit's sweep line as the page's range fields show it, or None}``. A correctable source is an independent voltage or
    current source of its own, or a ``voltage3`` block (its phases are not offered alone).
    """
    sources = []
    for name, el in result.get("elements", {}).items():
        if el.get("kind") in ("voltage", "current") and not el.get("group"):
            sources.append({"name": name, "kind": el["kind"], "three_phase": False,
                            "lines": [el.get("from"), el.get("to")],
                            "label": f"{name} ({el['kind']} {el.get('from')} → {el.get('to')})"})
    groups = []
    for name, g in (result.get("groups") or {}).items():
        groups.append({"name": name, "label": f"{name} ({g.get('kind', '')} "
                                              f"{g.get('connection', '')})"})
        if g.get("kind") == "voltage3":
            sources.append({"name": name, "kind": "voltage3", "three_phase": True,
                            "lines": list(g.get("lines", [])),
                            "label": f"{name} (voltage3 {_group_terminals(name, g)})"})
    nodes = list(result.get("nodes", {}))
    # What the frequency-response tab offers to sweep (studies.md, "Probes").
    live = [n for n in nodes if n != "0"]
    probes = ([f"Z({n})" for n in live] + [f"V({n})" for n in live] +
              [f"I({name})" for name in result.get("elements", {})])
    return {"sources": sources, "nodes": nodes, "groups": groups, "probes": probes,
            "sweep": _sweep_choice(result.get("sweep")), "suggested": suggested_tool(result)}


def _sweep_choice(sweep: dict | None) -> dict | None:
    """The circuit's ``sweep`` line for the range fields' placeholders (numbers in Hz as
    the fields take them, 9 significant digits)."""
    if not sweep:
        return None
    return {"from": plain(sweep["from_hz"], 9), "to": plain(sweep["to_hz"], 9),
            "points": str(sweep["points"]), "spacing": sweep["spacing"],
            "words": f"{eng(sweep['from_hz'], 'Hz')} to {eng(sweep['to_hz'], 'Hz')}"}


#: A supply reads as mains-like at a power frequency (45–65 Hz: the 50 Hz and 60 Hz
#: systems with their tolerances; 400 Hz aircraft and ship supplies too) and at
#: 90 V RMS or more (the lowest public low-voltage supply, 100 V, less 10 %).
_MAINS_BANDS_HZ = ((45.0, 65.0), (360.0, 440.0))
_MAINS_MIN_V = 90.0


def _mains_like(result: dict, v_peak_or_rms: float) -> bool:
    f = _number(result.get("frequency_hz"))
    rms = v_peak_or_rms / (math.sqrt(2.0) if result.get("amplitudes") == "peak" else 1.0)
    return any(lo <= f <= hi for lo, hi in _MAINS_BANDS_HZ) and rms >= _MAINS_MIN_V


def suggested_tool(result: dict) -> str | None:
    """The tools tab worth opening first for this circuit, or None (the tables and the
    phasor diagram say most).

    ``"three-phase"`` for a circuit with three-phase blocks; ``"correct"`` when a
    voltage source or ``voltage3`` block that reads as a mains supply (`_mains_like`)
    delivers real power beyond round-off; otherwise None: a 1 V instrument bridge or a
    signal filter has no power factor worth correcting.
    """
    if result.get("groups"):
        return "three-phase"
    elements = result.get("elements", {})
    flow = max((_number(e.get("s_va")) for e in elements.values()), default=0.0)
    for el in elements.values():
        if el.get("kind") != "voltage" or el.get("group"):
            continue
        delivered = -_number(el.get("p_w"))       # passive sign: a supply's p_w < 0
        if delivered > ROUND_OFF * flow and delivered > 0 and \
                _mains_like(result, _mag(el.get("voltage"))):
            return "correct"
    return None
