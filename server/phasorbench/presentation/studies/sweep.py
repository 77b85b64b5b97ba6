"""Every string and row of the frequency response that the page, the sheet and the
command line show, from the sweep JSON (studies.md, "Frequency response"), and its CSV.

The cursor readout of the page is prepared here too: the page formats no numbers, so
the readout strings of up to ``READOUT_POINTS`` grid points (every point of a smaller
sweep, evenly spread ones of a larger) travel with the picture. The numbers of every
point stay in the JSON and the CSV.
"""

from __future__ import annotations

from .. import formatting as fmt

__all__ = ["READOUT_POINTS", "check_row", "csv_text", "probe_rows", "readout",
           "resonance_rows", "resonance_words", "settings_rows", "sheet_view", "sweep_display",
           "value_text"]

#: The worked check agrees when the sweep and the single solve differ by less than this
#: share of the value (both solve the same system; they differ in round-off only).
CHECK_AGREES = 1e-9

#: Grid points the page's cursor reads out at most (a pointer resolves fewer pixels).
READOUT_POINTS = 2001


def value_text(mag, deg, unit: str, ratio: bool = False) -> str:
    """One probe value: ``1.234 Ω ∠-12.30°``; a ratio of like quantities leads with dB."""
    if mag is None:
        return "undefined"
    text = f"{fmt.eng(mag, unit)} {fmt.angle(deg)}"
    return f"{fmt.decibels(mag)}, {text}" if ratio and not unit else text


def _kind(res: dict) -> str:
    if res["probe"].startswith("Z(") and "/" not in res["probe"]:
        return "peak (parallel resonance)" if res["kind"] == "peak" else \
            "dip (series resonance)"
    return res["kind"]


def resonance_words(n: int, res: dict, unit: str) -> str:
    """The readout of one resonance marker (also its hover title on the picture)."""
    value = fmt.eng(res["value"]["mag"], unit) + " " + fmt.angle(res["value"]["deg"])
    order = f", order {fmt.plain(res['harmonic_order'], 3)}" if res.get("harmonic_order") \
        else ""
    q = (f", Q {fmt.plain(res['q'], 4)}, bandwidth {fmt.eng(res['bandwidth_hz'], 'Hz')}"
         if res.get("q") else "")
    return (f"{n}: {res['probe']} {_kind(res)} at {fmt.eng(res['frequency_hz'], 'Hz', 6)}"
            f"{order}: {value}{q}")


RESONANCE_COLUMNS = ("#", "Probe", "Kind", "Frequency", "Order", "Value", "Q", "Bandwidth")


def resonance_rows(result: dict) -> list[dict]:
    """One row per resonance, numbered as the picture's markers."""
    rows = []
    for n, res in enumerate(result.get("resonances", []), start=1):
        unit = result["probes"][res["probe"]]["unit"]
        rows.append({
            "n": n, "probe": res["probe"], "frequency_hz": res["frequency_hz"],
            "cells": [str(n), res["probe"], _kind(res),
                      fmt.eng(res["frequency_hz"], "Hz", 6),
                      fmt.plain(res["harmonic_order"], 3) if res.get("harmonic_order")
                      else fmt.MISSING,
                      value_text(res["value"]["mag"], res["value"]["deg"], unit),
                      fmt.plain(res["q"], 4) if res.get("q") else fmt.MISSING,
                      fmt.eng(res["bandwidth_hz"], "Hz", 4) if res.get("bandwidth_hz")
                      else "beyond the range"],
            "words": resonance_words(n, res, unit)})
    return rows


def settings_rows(result: dict) -> list[tuple[str, str]]:
    """The sweep's settings as (term, value) pairs."""
    r = result["range"]
    rows = [("range", f"{fmt.eng(r['from_hz'], 'Hz')} to {fmt.eng(r['to_hz'], 'Hz')}"),
            ("points", f"{r['points']:,}, {r['spacing']} spacing (both ends exact)")]
    base = result.get("frequency_hz")
    rows.append(("analysis frequency", fmt.eng(base, "Hz") if base else "none (no frequency line)"))
    rows.append(("probes", ", ".join(result["probes"])))
    if result.get("singular_hz"):
        rows.append(("singular at", f"{len(result['singular_hz'])} point(s)"))
    return rows


def probe_rows(result: dict) -> list[dict]:
    """What each probe observes, in words, with its unit."""
    return [{"probe": p, "unit": data["unit"] or "ratio (no unit)",
             "meaning": data.get("meaning", "")} for p, data in result["probes"].items()]


def readout(result: dict, limit: int = READOUT_POINTS) -> dict:
    """The page's cursor readout: for evenly spread grid indices (all of them when there
    are at most ``limit``), the frequency and each probe's value as text, with the raw
    magnitude and angle the cursor uses to place its marks."""
    count = len(result["frequencies_hz"])
    if count <= limit:
        picks = list(range(count))
    else:
        picks = sorted({round(k * (count - 1) / (limit - 1)) for k in range(limit)})
    freqs = result["frequencies_hz"]
    out = {"index": picks, "hz": [freqs[k] for k in picks],
           "frequency": [fmt.eng(freqs[k], "Hz", 6) for k in picks], "probes": {}}
    for p, data in result["probes"].items():
        ratio = bool(data.get("ratio"))
        mags, degs = [data["mag"][k] for k in picks], [data["deg"][k] for k in picks]
        out["probes"][p] = {"mag": mags, "deg": degs,
                            "text": [value_text(m, d, data["unit"], ratio)
                                     for m, d in zip(mags, degs)]}
    return out


def sweep_display(result: dict, with_readout: bool = True) -> dict:
    """The strings the page and the sheet show for one sweep."""
    r = result["range"]
    heading = (f"{', '.join(result['probes'])} from {fmt.eng(r['from_hz'], 'Hz')} to "
               f"{fmt.eng(r['to_hz'], 'Hz')}")
    found = len(result.get("resonances", []))
    display = {
        "heading": heading,
        "settings": [{"term": t, "value": v} for t, v in settings_rows(result)],
        "probes": probe_rows(result),
        "resonance_columns": list(RESONANCE_COLUMNS),
        "resonances": resonance_rows(result),
        "resonance_note": (f"{found} resonance{'s' if found != 1 else ''} in the range"
                           if found else "no resonance in the range"),
        "warnings": list(result.get("warnings", [])),
    }
    if with_readout:
        display["readout"] = readout(result)
    return display


def check_row(check: dict | None, result: dict) -> dict | None:
    """The worked check (``studies/sweepcheck.py``) as the sheet shows it: the grid point,
    both values in full (rectangular and polar) and their relative difference."""
    if check is None:
        return None
    unit = result["probes"][check["probe"]]["unit"]

    def full(ph):
        if ph is None:
            return "no value"
        return (f"{fmt.rect(ph, unit, 12)} = {fmt.eng(ph['mag'], unit, 12)} "
                f"{fmt.angle(ph['deg'], 9)}")
    rel = check.get("relative")
    return {"probe": check["probe"], "point": f"grid point {check['index'] + 1:,} of "
                                              f"{len(result['frequencies_hz']):,}",
            "frequency": fmt.eng(check["frequency_hz"], "Hz", 12),
            "sweep": full(check["sweep"]), "single": full(check["single"]),
            "difference": fmt.MISSING if rel is None else
            ("0 (identical)" if rel == 0 else fmt.plain(rel, 2)),
            "ok": rel is not None and rel < CHECK_AGREES,
            "problem": check.get("problem")}


_ORIGIN = {"asked": "as asked for", "default": "the default: two decades either side of "
           "the analysis frequency"}


def sheet_view(result: dict, check: dict | None, origin: dict, svg: str,
               cautions) -> dict:
    """The sheet's frequency-response section: the page's strings (`sweep_display`), the
    picture, where the range came from (``origin``: ``{"kind": "asked" | "line" |
    "default", "line": n}``), the worked check and the resonance cautions."""
    view = sweep_display(result, with_readout=False)
    words = (f"the circuit's sweep line (line {origin.get('line')})"
             if origin.get("kind") == "line" else _ORIGIN.get(origin.get("kind"), ""))
    if words:
        view["settings"].insert(1, {"term": "range from", "value": words})
    view["svg"] = svg
    view["check"] = check_row(check, result)
    view["cautions"] = [{"title": t, "text": x} for t, x in cautions]
    return view


def _num(value) -> str:
    return "" if value is None else f"{value:.9g}"


def csv_text(result: dict) -> str:
    """One row per frequency: magnitude (in the probe's unit), angle, re, im per probe;
    an undefined value is an empty cell. Numbers to 9 significant digits."""
    probes = list(result["probes"])
    head = ["frequency_hz"]
    for p in probes:
        unit = result["probes"][p]["unit"]
        head += [f"{p} mag{f' ({unit})' if unit else ''}", f"{p} deg",
                 f"{p} re", f"{p} im"]
    rows = [",".join('"' + h.replace('"', '""') + '"' for h in head)]
    columns = [[result["probes"][p][key] for key in ("mag", "deg", "re", "im")]
               for p in probes]
    for k, f in enumerate(result["frequencies_hz"]):
        cells = [_num(f)]
        for data in columns:
            cells += [_num(series[k]) for series in data]
        rows.append(",".join(cells))
    return "\n".join(rows) + "\n"
