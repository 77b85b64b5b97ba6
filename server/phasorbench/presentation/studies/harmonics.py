"""Every string the harmonic study shows — the page's tab, the sheet's section and the
terminal — made once here from the study's JSON (``studies/harmonics.py``).

Verdicts are words and marks (``✓ pass`` / ``✖ FAIL``), never colour alone; numbers
come from ``formatting.py``; the spectrum charts from ``drawing/spectrum.py``.
"""

from __future__ import annotations

from ..cautions import HARMONIC_CAUTIONS, HARMONIC_SOURCES, SCOPE_NOTE
from ..drawing.spectrum import spectrum_svg
from ..drawing.waveforms import waveform_svg
from ..display import SOURCE_KINDS
from ..formatting import MISSING, ROUND_OFF, eng, plain

__all__ = ["MAX_ROWS", "MAX_ORDER_COLUMNS", "chosen", "harmonics_display", "verdict"]

#: Rows of the node and element tables shown (the JSON holds them all).
MAX_ROWS = 40
#: Orders shown as columns of the distortion table.
MAX_ORDER_COLUMNS = 12

PASS, FAIL, NOT_JUDGED = "✓ pass", "✖ FAIL", "not judged"
_DUTY_COLUMNS = (("rms_v", "V rms"), ("peak_v", "V peak"), ("rms_i", "I rms"),
                 ("q", "Q"))
#: The IEEE 1459 quantities of one element: (key, name, symbol, unit, clause).
IEEE1459_ROWS = (
    ("v_rms", "rms voltage", "V", "V", "3.2.1"),
    ("i_rms", "rms current", "I", "A", "3.2.1"),
    ("p_w", "active power", "P", "W", "3.2.2"),
    ("p1_w", "fundamental active power", "P1", "W", "3.2.2.1"),
    ("ph_w", "harmonic active power", "PH", "W", "3.2.2.2"),
    ("q1_var", "fundamental reactive power", "Q1", "var", "3.2.3.1"),
    ("s_va", "apparent power", "S", "VA", "3.2.4"),
    ("s1_va", "fundamental apparent power", "S1", "VA", "3.2.4.1"),
    ("sn_va", "non-fundamental apparent power", "SN", "VA", "3.2.4.2"),
    ("di_var", "current distortion power", "DI", "var", "3.2.4.3"),
    ("dv_var", "voltage distortion power", "DV", "var", "3.2.4.4"),
    ("sh_va", "harmonic apparent power", "SH", "VA", "3.2.4.5"),
    ("n_var", "non-active power", "N", "var", "3.2.3"),
    ("pf", "power factor P/S", "PF", "", "3.2.5"),
    ("pf1", "displacement power factor P1/S1", "PF1", "", "3.2.5"),
)


def verdict(ok) -> str:
    return NOT_JUDGED if ok is None else PASS if ok else FAIL


#: A percentage below this is round-off of the solve (a harmonic at an ideal source's
#: node), shown as 0.
PCT_ROUND_OFF = 1e-9


def _pct(value, digits: int = 3) -> str:
    if value is None:
        return MISSING
    return "0 %" if abs(value) < PCT_ROUND_OFF else f"{plain(value, digits)} %"


def _table(key: str, caption: str, headings: list[str], rows: list[list[str]],
           flags: list[str | None] | None = None, note: str = "") -> dict:
    return {"key": key, "caption": caption, "headings": headings, "rows": rows,
            "flags": flags or [None] * len(rows), "note": note}


def _power_floor(result: dict) -> float:
    """Powers below this are round-off (``formatting.ROUND_OFF`` of the largest |S|)."""
    return ROUND_OFF * max((e["ieee1459"]["s_va"] for e in result["elements"].values()),
                           default=0.0)


#: The signed powers a source shows as delivered (> 0 when it supplies); the other
#: IEEE 1459 quantities are magnitudes and read the same either way.
_SIGNED = ("p_w", "p1_w", "ph_w", "q1_var")
DELIVERED_NOTE = ("sources (independent and controlled) show the power they deliver: P, P1, "
                  "PH and Q1 > 0 when supplying; every other element the power it takes "
                  "(the JSON keeps the passive sign)")


def _values(e: dict) -> dict:
    """An element's IEEE 1459 values as shown: a source's signed powers as delivered."""
    values = {**e["ieee1459"], "v_rms": e["rms_v"], "i_rms": e["rms_i"]}
    if e.get("kind") in SOURCE_KINDS:
        values.update({k: -values[k] for k in _SIGNED if values.get(k) is not None})
    return values


def _label(name: str, e: dict) -> str:
    return f"{name} (delivered)" if e.get("kind") in SOURCE_KINDS else name


def _quantity(key: str, values: dict, floor: float) -> str:
    unit = next((r[3] for r in IEEE1459_ROWS if r[0] == key), "")
    if key in ("pf", "pf1"):
        p = values["p_w" if key == "pf" else "p1_w"]
        return "0" if abs(p) < floor else plain(values[key], 4)
    return eng(values[key], unit, floor=None if key in ("v_rms", "i_rms") else floor)


def _cut(names: list[str], what: str) -> tuple[list[str], str]:
    if len(names) <= MAX_ROWS:
        return names, ""
    return names[:MAX_ROWS], (f"the first {MAX_ROWS} of {len(names):,} {what} are shown; "
                              "the JSON holds them all")


def _distortion_table(result: dict, keys: list[str], k1: str) -> dict:
    others = [k for k in keys if k != k1]
    shown = others[:MAX_ORDER_COLUMNS]
    names, note = _cut(list(result["nodes"]), "nodes")
    if len(others) > len(shown):
        note = (note + "; " if note else "") + (f"orders {', '.join(shown)} are shown as "
                                                f"columns, {len(others) - len(shown)} more "
                                                "are in the JSON")
    rows = []
    for name in names:
        n = result["nodes"][name]
        rows.append([name, eng(n["rms_v"], "V"), eng(n["orders"][k1]["v"]["mag"], "V"),
                     _pct(n["thd_pct"])] + [_pct(n["orders"][k]["pct"]) for k in shown])
    return _table("distortion", "Voltage distortion per node (percent of the fundamental)",
                  ["Node", "V rms", "V1", "THD"] + [f"h{k}" for k in shown], rows, note=note)


def _pcc_table(pcc: dict) -> dict:
    rows, flags = [], []
    for key, o in pcc["orders"].items():
        rows.append([f"h{key}", _pct(o["pct"]), _pct(o["limit_pct"]), verdict(o["pass"])])
        flags.append(None if o["pass"] is None else "ok" if o["pass"] else "fail")
    rows.append(["THD", _pct(pcc["thd_pct"]), _pct(pcc["limits"]["thd_pct"]),
                 verdict(pcc["thd_pass"])])
    flags.append("ok" if pcc["thd_pass"] else "fail")
    return _table("pcc", f"Voltage limits at the PCC {pcc['node']} "
                  f"({eng(pcc['nominal_v'], 'V')} nominal, {pcc['standard']})",
                  ["Order", "Distortion", "Limit", "Verdict"], rows, flags)


def _ieee1459_table(result: dict) -> dict:
    names, note = _cut(list(result["elements"]), "elements")
    floor = _power_floor(result)
    keys = ("v_rms", "i_rms", "p_w", "p1_w", "q1_var", "s_va", "s1_va", "sn_va", "di_var",
            "dv_var", "sh_va", "pf", "pf1")
    symbols = [next(r[2] for r in IEEE1459_ROWS if r[0] == k) for k in keys]
    rows = []
    for name in names:
        e = result["elements"][name]
        values = _values(e)
        rows.append([_label(name, e)] + [_quantity(k, values, floor) for k in keys])
    if any(result["elements"][n].get("kind") in SOURCE_KINDS for n in names):
        note = "; ".join(filter(None, [DELIVERED_NOTE, note]))
    return _table("ieee1459", "Powers under distortion (IEEE Std 1459-2010, clause 3.2)",
                  ["Element"] + symbols, rows, note=note)


def _element_table(result: dict, name: str) -> dict:
    e = result["elements"][name]
    values = _values(e)
    floor = _power_floor(result)
    delivered = " delivered" if e.get("kind") in SOURCE_KINDS else ""
    rows = [[f"{label}{delivered if key in _SIGNED else ''} {symbol}",
             _quantity(key, values, floor), clause]
            for key, label, symbol, _unit, clause in IEEE1459_ROWS]
    rows.insert(2, ["current distortion THD_I", _pct(e["thd_i_pct"]), "3.2.1"])
    rows.insert(2, ["voltage distortion THD_V", _pct(e["thd_v_pct"]), "3.2.1"])
    return _table("element", f"{name}: every IEEE 1459 quantity",
                  ["Quantity", "Value", "Clause"], rows,
                  note=DELIVERED_NOTE if delivered else "")


def _capacitor_table(result: dict) -> dict | None:
    caps = result["capacitors"]
    if not caps:
        return None
    rows, flags = [], []
    for name, c in caps.items():
        duty = c["duty_pct"]
        cells = [name, eng(c["rated_v"], "V") if c["rated_v"] else "not given"]
        for key, _label in _DUTY_COLUMNS:
            if duty is None:
                cells.append(MISSING)
                continue
            over = key in c["exceeded"]
            cells.append(f"{_pct(duty[key], 4)} {'✖ over' if over else '✓'} "
                         f"{_pct(c['limits_pct'][key], 3)}")
        cells.append(verdict(c["pass"]) if c["rated_v"] else "give a rated voltage")
        h = c["resonance_order"]
        cells.append(MISSING if h is None else plain(h, 4))
        rows.append(cells)
        flags.append(None if c["pass"] is None else "ok" if c["pass"] else "fail")
    return _table("capacitors", f"Capacitor duty ({next(iter(caps.values()))['standard']}: "
                  "percent of rating, against the limit) and resonance order",
                  ["Capacitor", "Rated", "V rms", "V peak", "I rms", "Q", "Verdict",
                   "Resonance order"], rows, flags,
                  note="the resonance order is the peak of |Z| between the capacitor's "
                  "terminals (the network seen from it, the capacitor included)")


def _bars(orders: dict, keys: list[str], k1: str, part: str, pct_key: str, unit: str,
          limit: float | None, to_rms: float) -> list[dict]:
    bars = []
    for k in keys:
        if k == k1:
            continue
        o = orders[k]
        pct = o[pct_key]
        bars.append({"label": k, "pct": pct, "value": eng(o[part]["mag"] * to_rms, unit),
                     "over": limit is not None and pct is not None and pct > limit})
    return bars


def _default_node(result: dict) -> str | None:
    if result.get("pcc"):
        return result["pcc"]["node"]
    nodes = result["nodes"]
    return max(nodes, key=lambda n: nodes[n]["thd_pct"] or 0.0) if nodes else None


def _default_element(result: dict) -> str | None:
    if result["capacitors"]:
        return next(iter(result["capacitors"]))
    elements = {n: e for n, e in result["elements"].items() if "orders" in e}
    return max(elements, key=lambda n: elements[n]["thd_i_pct"] or 0.0) if elements else None


def chosen(result: dict, node: str | None = None, element: str | None = None):
    """The node and element whose spectra are drawn: the ones asked for when they exist,
    else the PCC or the most distorted node, the first capacitor or the most distorted
    current."""
    node = node if node in result["nodes"] else _default_node(result)
    element = (element if "orders" in result["elements"].get(element, {}) else
               _default_element(result))
    return node, element


def harmonics_display(result: dict, node: str | None = None,
                      element: str | None = None, waveforms=None) -> dict:
    """The strings, tables and charts of one harmonic study.

    ``{"heading", "facts", "node", "element", "choices": {"nodes", "elements"},
    "spectra": [{"key", "caption", "svg"}], "tables": [{"key", "caption", "headings",
    "rows", "flags", "note"}], "warnings", "cautions": [{"title", "text"}], "sources",
    "scope_note", "waveforms": [{"key", "caption", "svg"}]}``; ``node`` and ``element``
    pick the two spectra (see ``chosen``); ``waveforms`` is the chosen element's
    ``(summed, fundamental)`` samples (``studies.harmonics.element_waveforms``), drawn
    side by side.
    """
    keys = [str(o) if isinstance(o, int) else f"{o:.6g}" for o in result["orders"]]
    k1 = "1"
    to_rms = 2 ** -0.5 if result.get("amplitudes") == "peak" else 1.0
    node, element = chosen(result, node, element)
    pcc = result.get("pcc")
    facts = [{"key": "fundamental", "term": "fundamental", "value": eng(
        result["fundamental_hz"], "Hz"), "flag": None},
        {"key": "orders", "term": "orders present", "value": ", ".join(keys), "flag": None}]
    if pcc:
        facts.append({"key": "pcc", "term": f"PCC {pcc['node']}", "value":
                      f"THD {_pct(pcc['thd_pct'])} (limit {_pct(pcc['limits']['thd_pct'])}): "
                      f"{verdict(pcc['pass'])}", "flag": "ok" if pcc["pass"] else "fail"})
    for name, c in result["capacitors"].items():
        if c["pass"] is not None:
            facts.append({"key": f"cap-{name}", "term": f"{name} duty", "value":
                          verdict(c["pass"]) + ("" if c["pass"] else " (" + ", ".join(
                              dict(_DUTY_COLUMNS)[x] for x in c["exceeded"]) + ")"),
                          "flag": "ok" if c["pass"] else "fail"})
    spectra = []
    if node is not None:
        n = result["nodes"][node]
        limit = pcc["limits"]["individual_pct"] if pcc and pcc["node"] == node else None
        spectra.append({"key": "node", "caption": f"Voltage spectrum of node {node}",
                        "svg": spectrum_svg(
                            _bars(n["orders"], keys, k1, "v", "pct", "V", limit, to_rms),
                            f"V({node})", f"percent of V1 = {eng(n['orders'][k1]['v']['mag'] * to_rms, 'V')}; "
                            f"THD {_pct(n['thd_pct'])}", limit)})
    if element is not None:
        e = result["elements"][element]
        spectra.append({"key": "element", "caption": f"Current spectrum of {element}",
                        "svg": spectrum_svg(
                            _bars(e["orders"], keys, k1, "i", "pct_i", "A", None, to_rms),
                            f"I({element})", f"percent of I1 = {eng(e['orders'][k1]['i']['mag'] * to_rms, 'A')}; "
                            f"THD {_pct(e['thd_i_pct'])}")})
    tables = [_distortion_table(result, keys, k1)]
    if pcc:
        tables.append(_pcc_table(pcc))
    caps = _capacitor_table(result)
    if caps:
        tables.append(caps)
    if element is not None:
        tables.append(_element_table(result, element))
    tables.append(_ieee1459_table(result))
    orders_text = ", ".join(keys)
    return {"heading": f"Harmonic study at {eng(result['fundamental_hz'], 'Hz')}: orders "
                       f"{orders_text}",
            "facts": facts, "node": node, "element": element,
            "choices": {"nodes": list(result["nodes"]), "elements": list(result["elements"])},
            "spectra": spectra, "tables": tables, "warnings": list(result["warnings"]),
            "cautions": [{"title": t, "text": x} for t, x in HARMONIC_CAUTIONS],
            "sources": list(HARMONIC_SOURCES), "scope_note": SCOPE_NOTE,
            "waveforms": _waveforms(element, waveforms)}


def _waveforms(element, samples) -> list[dict]:
    if not samples or element is None:
        return []
    summed, fundamental = samples
    return [{"key": "summed", "caption": f"{element}: every order added",
             "svg": waveform_svg(summed, width=520, height=300)},
            {"key": "fundamental", "caption": f"{element}: the fundamental alone",
             "svg": waveform_svg(fundamental, width=520, height=300)}]
