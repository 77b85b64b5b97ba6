"""Every string and row of the tolerance study that the page, the sheet and the command
line show (reads the study's JSON only).

>>> settings_line({"runs": 10000, "seed": 1, "chunk_runs": 2000, "frequency_hz": 50})
'10,000 runs at 50 Hz, seed 1 (chunks of 2,000 runs)'
"""

from __future__ import annotations

from ..formatting import degrees, eng, phasor, plain

UNIT_OF_QUANTITY = {"resistor": "Ω", "impedance": "Ω", "capacitor": "F", "inductor": "H",
                    "admittance": "S", "voltage": "V", "current": "A"}


def quantity_unit(result: dict, name: str) -> str:
    for q in result["quantities"]:
        if q["name"] == name:
            return UNIT_OF_QUANTITY.get(q.get("kind"), "")
    return ""
PERCENTILE_LABELS = {"0.135": "−3σ (0.135 %)", "2.275": "−2σ (2.275 %)", "50": "50 % (median)",
                     "97.725": "+2σ (97.725 %)", "99.865": "+3σ (99.865 %)"}


def settings_line(result: dict) -> str:
    return (f"{result['runs']:,} runs at {eng(result['frequency_hz'], 'Hz')}, seed "
            f"{result['seed']} (chunks of {result['chunk_runs']:,} runs)")


def quantity_rows(result: dict) -> list[dict]:
    """One row per toleranced quantity: name, where it comes from, tolerance, law."""
    rows = []
    for q in result["quantities"]:
        unit = UNIT_OF_QUANTITY.get(q.get("kind"), "")
        law = "uniform ±tol" if q["distribution"] == "uniform" else "normal, σ = tol/3"
        rows.append({"name": q["name"], "source": "named value (one draw shared by its "
                     "users)" if q["source"] == "value" else "element",
                     "nominal": phasor(q["nominal"], unit) if q["nominal"]["im"] else
                     eng(q["nominal"]["re"], unit, 6),
                     "tol": f"±{plain(q['tol_pct'])} %", "law": law,
                     "line": q["line"] or ""})
    return rows


def statistic_rows(probe: dict) -> list[dict]:
    """Rows of magnitude and angle statistics of one probe."""
    unit = probe["unit"]
    mag, deg = probe["mag"], probe["deg"]
    rows = [{"label": "nominal", "mag": eng(probe["nominal"]["mag"], unit, 6),
             "deg": degrees(probe["nominal"]["deg"], 3)}]
    for key, label in (("mean", "mean"), ("std", "standard deviation"), ("min", "minimum"),
                       ("max", "maximum")):
        rows.append({"label": label, "mag": eng(mag[key], unit, 6),
                     "deg": f"{deg[key]:.3f}°" if key == "std" else degrees(deg[key], 3)})
    for key, label in PERCENTILE_LABELS.items():
        rows.append({"label": f"percentile {label}", "mag": eng(mag["percentiles"][key],
                                                                unit, 6),
                     "deg": degrees(deg["percentiles"][key], 3)})
    return rows


def sensitivity_rows(probe: dict) -> list[dict]:
    """The ranking: ∂ln|X|/∂ln p and ∂arg X/∂ln p in degrees, largest first."""
    return [{"name": name, "mag": f"{s['mag']:+.4f}", "deg": f"{s['deg']:+.4f}°",
             "value": s["mag"]} for name, s in probe["sensitivities"].items()]


def worst_rows(probe: dict, result: dict | None = None) -> list[dict]:
    """One row per toleranced quantity with its value at the worst maximum and minimum."""
    wc = probe.get("worst_case")
    if not wc:
        return []
    high, low = wc["mag"].get("max"), wc["mag"].get("min")
    names = list((high or low or {}).get("scales", {}))
    rows = []
    for name in names:
        unit = quantity_unit(result, name) if result else ""
        rows.append({"name": name, "max": _scaled(high, name, unit),
                     "min": _scaled(low, name, unit)})
    return rows


def _scaled(case, name, unit="") -> str:
    if not case:
        return "—"
    s = case["scales"][name]
    return f"{eng(case['corner'][name], unit, 6)} ({(s - 1) * 100:+.3g} %)"


def worst_line(probe: dict) -> str:
    wc = probe.get("worst_case")
    if not wc:
        return ""
    unit = probe["unit"]
    method = ("every corner of the box" if wc["method"] == "corners" else
              "a sensitivity-guided corner search")
    parts = []
    for sense in ("max", "min"):
        case = wc["mag"].get(sense)
        if case:
            where = "inside the box" if case["at"] == "interior" else "at a corner"
            parts.append(f"{sense} {eng(case['value'], unit, 6)} ({where})")
    return f"Worst case of |X| by {method}, refined inside the box: " + "; ".join(parts)


def yield_line(y: dict | None) -> str:
    if not y:
        return ""
    return (f"yield {y['fraction'] * 100:.2f} % ({y['inside']:,} of {y['runs']:,} runs "
            f"inside the limits), {y['confidence'] * 100:g} % interval "
            f"{y['low'] * 100:.2f} … {y['high'] * 100:.2f} %")


def limit_text(limit: dict, unit: str) -> str:
    return f"{eng(limit['min'], unit)} ≤ |X| ≤ {eng(limit['max'], unit)}"


def view(result: dict) -> dict:
    """Everything the page's tab and the sheet's section show of one study: strings,
    rows and the pictures (drawn by ``drawing/tolerance.py``)."""
    from ..drawing.tolerance import histogram_svg, sensitivity_svg
    probes = []
    for text, probe in result["probes"].items():
        limits = [(l["min"], l["max"]) for l in probe["limits"]]
        probes.append({
            "text": text, "unit": probe["unit"],
            "nominal": phasor(probe["nominal"], probe["unit"]),
            "stats": statistic_rows(probe),
            "mag_svg": histogram_svg(probe["mag"], f"|{text}|", probe["unit"],
                                     probe["nominal"]["mag"], limits),
            "deg_svg": histogram_svg(probe["deg"], f"arg {text}", "°",
                                     probe["nominal"]["deg"]),
            "sens_svg": sensitivity_svg(probe["sensitivities"], f"sensitivity of |{text}|: "
                                        "∂ln|X|/∂ln p"),
            "sensitivities": sensitivity_rows(probe),
            "worst": worst_line(probe), "worst_rows": worst_rows(probe, result),
            "limits": [limit_text(l, probe["unit"]) for l in probe["limits"]],
            "yield": yield_line(probe["yield"])})
    return {"settings": settings_line(result), "quantities": quantity_rows(result),
            "probes": probes, "yield": yield_line(result["yield"]),
            "warnings": list(result["warnings"])}


def check_rows(checks: list[dict], result: dict) -> list[dict]:
    """The worst cases re-solved: reported, re-solved, relative difference."""
    rows = []
    for c in checks:
        unit = result["probes"][c["probe"]]["unit"]
        rows.append({"probe": c["probe"], "sense": c["sense"],
                     "reported": eng(c["reported"], unit, 8),
                     "resolved": eng(c["resolved"], unit, 8),
                     "difference": f"{c['relative']:.1e}", "ok": c["relative"] < 1e-8})
    return rows
