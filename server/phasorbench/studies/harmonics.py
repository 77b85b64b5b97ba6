"""The harmonic study (studies.md, "Harmonic spectra"): distortion, IEEE 1459 powers,
IEEE 519 voltage limits at the PCC and IEEE 18 capacitor duty.

The circuit is solved once per frequency present (the fundamental, every ``spectrum``
order, every source with its own ``freq``) by ``superposition.circuit_at`` and the
solver; everything else is arithmetic over the per-order phasors, done as arrays of
elements × orders:

- per node: RMS voltage, THD_V = V_H / V_1 and each order's individual distortion
  ``100·|V_h| / |V_1|``;
- per element: RMS V and I and the IEEE Std 1459-2010 single-phase non-sinusoidal
  quantities (clause 3.2): P = Σ P_h, P1, Q1, S = V·I, S1 = V1·I1, SN = √(S² − S1²),
  DI = V1·I_H, DV = V_H·I1, SH = V_H·I_H, PF = |P|/S, PF1 = |P1|/S1;
- at the PCC: IEEE Std 519-2014 Table 1 voltage distortion limits for the nominal bus
  voltage, pass/fail per harmonic order (2 to 50) and for THD (harmonics up to 50);
- per capacitor: the order at which the network seen from its terminals resonates
  (peaks of ``Z(p, n)`` over a scan of orders), and with a rated voltage its IEEE Std
  18-2002 duty (``tools.capacitors``).
"""

from __future__ import annotations

import difflib
import gc
import math

import numpy as np

from ..errors import AnalysisError, CircuitError, Diagnostic
from ..model import Circuit
from ..results import zero_power_floor
from ..superposition import SAME_FREQUENCY, circuit_at, source_frequencies
from ..tools import capacitors as cap
from .order_tables import PHASOR, RATIO, REAL, OrderBlock

__all__ = ["IEEE519_EDITION", "IEEE519_TABLE1", "ieee519_limits", "order_key",
           "run_harmonics", "solve_orders"]

IEEE519_EDITION = "IEEE Std 519-2014, Table 1"
#: Voltage distortion limits at the PCC (IEEE Std 519-2014 Table 1, from memory):
#: (highest nominal bus voltage of the row in volts, individual harmonic %, THD %).
IEEE519_TABLE1 = ((1_000.0, 5.0, 8.0), (69_000.0, 3.0, 5.0), (161_000.0, 1.5, 2.5),
                  (math.inf, 1.0, 1.5))
#: Circuits up to this many elements get each order's phasors of every element; bigger
#: ones of their sources, capacitors and the elements named in ``detail``.
DETAIL_LIMIT = 500
#: Harmonic orders IEEE 519 counts in THD and judges one by one.
IEEE519_HIGHEST_ORDER = 50
#: The scan for each capacitor's resonance goes up to this order at least.
SCAN_ORDERS = 25.0
SCAN_POINTS_SMALL = 240      # systems solved as stacked dense matrices
SCAN_POINTS_LARGE = 80       # systems solved sparse, one factorisation per point
#: At most this many capacitors (the largest) get a resonance scan: each is one more
#: right-hand side per point and a refinement per peak.
MAX_SCANNED = 12


def ieee519_limits(nominal_v: float) -> dict:
    """The Table 1 row for a bus of ``nominal_v`` volts: individual and THD limits (%)."""
    for top, individual, thd in IEEE519_TABLE1:
        if nominal_v <= top:
            return {"individual_pct": individual, "thd_pct": thd,
                    "row_v": None if math.isinf(top) else top}
    raise AssertionError("unreachable")


def order_key(order: float) -> str:
    """The JSON key of an order: ``"5"`` for a harmonic, ``"2.5"`` for an interharmonic."""
    near = round(order)
    if abs(order - near) <= 1e-9 * max(1.0, order):
        return str(int(near))
    return f"{order:.6g}"


def _is_harmonic(order: float) -> bool:
    return abs(order - round(order)) <= 1e-9 * max(1.0, order)


def solve_orders(circuit: Circuit):
    """``(frequencies, solutions)``: one solve per frequency present, sorted by frequency.

    A singular system at one order is reported with that order named.
    """
    from ..solver import solve
    frequencies = sorted(source_frequencies(circuit))
    solutions = []
    for f in frequencies:
        try:
            solutions.append(solve(circuit_at(circuit, f)))
        except AnalysisError as exc:
            order = f / circuit.frequency
            raise AnalysisError([Diagnostic(
                f"at order {order_key(order)} ({f:g} Hz): {d.message}", d.hint,
                d.line, d.column, d.length) for d in exc.diagnostics]) from None
    return frequencies, solutions


def _check_request(circuit: Circuit, pcc, nominal, rated) -> None:
    problems = []
    nodes = [n for n in circuit.nodes() if n != "0"]
    if pcc is not None and pcc not in circuit.nodes():
        close = difflib.get_close_matches(pcc, nodes, n=1, cutoff=0.5)
        problems.append(Diagnostic(
            f"PCC '{pcc}' is not a node of this circuit",
            f"did you mean '{close[0]}'?" if close else
            "nodes: " + ", ".join(nodes[:12]) + (", …" if len(nodes) > 12 else "")))
    if (pcc is None) != (nominal is None):
        problems.append(Diagnostic(
            "the PCC check needs both the node and its nominal voltage",
            "give the PCC node and the bus's nominal (line-to-line) voltage, e.g. 400 V"))
    if nominal is not None and not (isinstance(nominal, (int, float)) and
                                    math.isfinite(nominal) and nominal > 0):
        problems.append(Diagnostic("the nominal voltage must be a finite number above 0 V",
                                   "the bus's nominal (line-to-line) voltage, e.g. 400 V"))
    capacitors = [n for n, e in circuit.elements.items() if e.kind == "capacitor"]
    for name, volts in (rated or {}).items():
        e = circuit.elements.get(name)
        if e is None:
            close = difflib.get_close_matches(name, capacitors or list(circuit.elements),
                                              n=1, cutoff=0.5)
            problems.append(Diagnostic(
                f"'{name}' (given a rated voltage) is not an element of this circuit",
                f"did you mean '{close[0]}'?" if close else
                ("capacitors: " + ", ".join(capacitors[:12]) if capacitors else
                 "this circuit has no capacitor")))
        elif e.kind != "capacitor":
            problems.append(Diagnostic(
                f"'{name}' is {'an' if e.kind[0] in 'aeiou' else 'a'} {e.kind}: a rated "
                "voltage applies to capacitors only",
                "capacitors: " + ", ".join(capacitors[:12]) if capacitors else
                "this circuit has no capacitor"))
        if not (isinstance(volts, (int, float)) and math.isfinite(volts) and volts > 0):
            problems.append(Diagnostic(
                f"the rated voltage of '{name}' must be a finite number above 0 V",
                "the rms voltage on the capacitor's nameplate, e.g. 480"))
    if problems:
        raise CircuitError(problems)


def _ratio(part: np.ndarray, whole: np.ndarray) -> np.ndarray:
    """``100·part/whole`` as an array, NaN where ``whole`` is not above 0; ``whole`` is
    one value per row of ``part``."""
    whole = whole.reshape(whole.shape + (1,) * (part.ndim - whole.ndim))
    out = np.full(part.shape, np.nan)
    np.divide(100.0 * part, whole, out=out, where=np.broadcast_to(whole > 0, part.shape))
    return out


def _ratio_pct(part: np.ndarray, whole: np.ndarray) -> list:
    """``_ratio`` as (nested) lists, None where it is not finite."""
    out = _ratio(part, whole)
    if np.isfinite(out).all():
        return out.tolist()
    if out.ndim == 1:
        return [None if not math.isfinite(v) else v for v in out.tolist()]
    return [[None if not math.isfinite(v) else v for v in row] for row in out.tolist()]


def ieee1459(v: np.ndarray, i: np.ndarray, k1: int, to_rms: float) -> dict:
    """IEEE Std 1459-2010 clause 3.2 quantities of elements × orders phasors ``v``, ``i``
    (the fundamental in column ``k1``), as arrays over the elements."""
    vr, ir = np.abs(v) * to_rms, np.abs(i) * to_rms
    s_h = v * np.conj(i) * to_rms ** 2
    others = np.ones(v.shape[1], dtype=bool)
    others[k1] = False
    v1, i1 = vr[:, k1], ir[:, k1]
    vh = np.sqrt(np.sum(vr[:, others] ** 2, axis=1))
    ih = np.sqrt(np.sum(ir[:, others] ** 2, axis=1))
    v_rms, i_rms = np.hypot(v1, vh), np.hypot(i1, ih)
    p = s_h.real.sum(axis=1)
    p1, q1 = s_h[:, k1].real, s_h[:, k1].imag
    s, s1 = v_rms * i_rms, v1 * i1
    di, dv, sh = v1 * ih, vh * i1, vh * ih
    sn = np.sqrt(di ** 2 + dv ** 2 + sh ** 2)          # = √(S² − S1²), without cancelling
    floor = zero_power_floor(s)
    pf = np.where(s > floor, np.abs(p) / np.where(s > 0, s, 1.0), 1.0)
    pf1 = np.where(s1 > floor, np.abs(p1) / np.where(s1 > 0, s1, 1.0), 1.0)
    return {"v_rms": v_rms, "i_rms": i_rms, "v1": v1, "i1": i1, "vh": vh, "ih": ih,
            "s_va": s, "p_w": p, "p1_w": p1, "ph_w": p - p1, "q1_var": q1, "s1_va": s1,
            "sn_va": sn, "di_var": di, "dv_var": dv, "sh_va": sh,
            "n_var": np.sqrt(np.maximum(s ** 2 - p ** 2, 0.0)), "pf": pf, "pf1": pf1,
            "p_h": s_h.real}


_IEEE1459_KEYS = ("s_va", "p_w", "p1_w", "ph_w", "q1_var", "s1_va", "sn_va", "di_var",
                  "dv_var", "sh_va", "n_var", "pf", "pf1")


def run_harmonics(circuit: Circuit, pcc: str | None = None, nominal: float | None = None,
                  rated: dict[str, float] | None = None, scan: bool = True,
                  detail=None) -> dict:
    """The harmonic study's JSON (studies.md): nodes, elements, pcc, capacitors, warnings.

    Each element's ``orders`` (its phasors order by order) is given for every element of
    a circuit of at most ``DETAIL_LIMIT`` elements, else for its sources, capacitors and
    the element names in ``detail``.
    """
    _check_request(circuit, pcc, nominal, rated)
    frequencies, solutions = solve_orders(circuit)
    # Hundreds of thousands of small dicts and no cycles among them: the cyclic
    # collector would walk the growing heap again and again while they are built.
    collecting = gc.isenabled()
    gc.disable()
    try:
        return _study(circuit, frequencies, solutions, pcc, nominal, rated, scan, detail)
    finally:
        if collecting:
            gc.enable()


def _study(circuit, frequencies, solutions, pcc, nominal, rated, scan, detail) -> dict:
    f1 = circuit.frequency
    orders = [f / f1 for f in frequencies]
    k1 = next(k for k, f in enumerate(frequencies)
              if math.isclose(f, f1, rel_tol=SAME_FREQUENCY))
    keys = [order_key(h) for h in orders]
    to_rms = 1 / math.sqrt(2) if circuit.amplitudes == "peak" else 1.0
    warnings: list[str] = []
    for sol in solutions:
        for d in sol.warnings:
            if d.message not in warnings:
                warnings.append(d.message)
    if len(frequencies) == 1:
        warnings.append("the circuit runs at one frequency: there is no distortion to "
                        "report (give a source a 'spectrum', e.g. spectrum 5: 18 %)")

    names = list(solutions[0].names)
    v = np.stack([s.voltage for s in solutions], axis=1)
    i = np.stack([s.current for s in solutions], axis=1)
    q = ieee1459(v, i, k1, to_rms)
    thd_v, thd_i = _ratio_pct(q["vh"], q["v1"]), _ratio_pct(q["ih"], q["i1"])
    columns = [q[key].tolist() for key in _IEEE1459_KEYS]
    kinds = [circuit.elements[name].kind for name in names]
    elements = {name: {
        "kind": kind, "rms_v": rms_v, "rms_i": rms_i, "thd_v_pct": tv, "thd_i_pct": ti,
        "p_w": p_w, "ieee1459": dict(zip(_IEEE1459_KEYS, quantities))}
        for name, kind, rms_v, rms_i, tv, ti, p_w, quantities in zip(
            names, kinds, q["v_rms"].tolist(), q["i_rms"].tolist(), thd_v, thd_i,
            columns[_IEEE1459_KEYS.index("p_w")], zip(*columns))}
    # Each order's phasors of every element of a small circuit; of a big one, of the
    # sources, the capacitors and the elements asked for (tens of thousands of elements
    # × 50 orders would be millions of entries nobody reads). Kept as arrays: each
    # element's ``orders`` reads them as a mapping (order_tables.py).
    if len(names) <= DETAIL_LIMIT:
        rows = list(range(len(names)))
    else:
        wanted = set(detail or ())
        rows = [e for e, name in enumerate(names)
                if kinds[e] in ("voltage", "current", "capacitor") or name in wanted]
    if rows:
        vd, id_ = v[rows], i[rows]
        block = OrderBlock(keys, [
            ("v", PHASOR, vd), ("i", PHASOR, id_),
            ("pct_v", RATIO, _ratio(np.abs(vd) * to_rms, q["v1"][rows])),
            ("pct_i", RATIO, _ratio(np.abs(id_) * to_rms, q["i1"][rows])),
            ("p_w", REAL, q["p_h"][rows])])
        for r, e in enumerate(rows):
            elements[names[e]]["orders"] = block.row(r)

    all_nodes = list(solutions[0].node_voltages)
    keep = [k for k, n in enumerate(all_nodes) if n != "0"]
    node_names = [all_nodes[k] for k in keep]
    nv = np.array([list(s.node_voltages.values()) for s in solutions],
                  dtype=complex).reshape(len(keys), len(all_nodes)).T[keep]
    nr = np.abs(nv) * to_rms
    n1 = nr[:, k1]
    nh = np.sqrt(np.sum(np.delete(nr, k1, axis=1) ** 2, axis=1))
    n_rms, n_thd = np.hypot(n1, nh).tolist(), _ratio_pct(nh, n1)
    block = OrderBlock(keys, [("v", PHASOR, nv), ("pct", RATIO, _ratio(nr, n1))])
    nodes = {name: {"rms_v": rms, "thd_pct": thd, "orders": block.row(r)}
             for r, (name, rms, thd) in enumerate(zip(node_names, n_rms, n_thd))}

    result = {"fundamental_hz": f1, "amplitudes": circuit.amplitudes,
              "orders": [int(round(h)) if _is_harmonic(h) else h for h in orders],
              "nodes": nodes, "elements": elements}
    result["pcc"] = (_pcc(nodes[pcc] if pcc != "0" else None, pcc, nominal, keys, orders,
                          k1, warnings) if pcc is not None else None)
    result["capacitors"] = _capacitors(circuit, elements, rated or {}, keys, orders, k1,
                                       scan, warnings, {n: e for e, n in enumerate(names)}, v)
    result["warnings"] = warnings
    return result


def _pcc(node: dict | None, name: str, nominal: float, keys, orders, k1, warnings) -> dict:
    limits = ieee519_limits(nominal)
    if node is None:
        raise CircuitError([Diagnostic("the PCC cannot be ground",
                                       "name the bus where the utility meets the plant")])
    judged, harmonic_sq, verdicts = {}, 0.0, []
    for k, (key, h) in enumerate(zip(keys, orders)):
        if k == k1 or h < 1:
            continue
        pct = node["orders"][key]["pct"]
        if pct is None:
            continue
        if _is_harmonic(h) and h <= IEEE519_HIGHEST_ORDER:
            ok = pct <= limits["individual_pct"]
            harmonic_sq += pct ** 2
            verdicts.append(ok)
            judged[key] = {"pct": pct, "limit_pct": limits["individual_pct"], "pass": ok}
        else:
            judged[key] = {"pct": pct, "limit_pct": None, "pass": None}
    if any(value["pass"] is None for value in judged.values()):
        warnings.append("IEEE 519 Table 1 judges harmonic orders 2 to 50: the "
                        "interharmonics and higher orders at the PCC are listed, not judged")
    thd = math.sqrt(harmonic_sq) if node["orders"][keys[k1]]["pct"] is not None else None
    thd_ok = thd is not None and thd <= limits["thd_pct"]
    return {"node": name, "nominal_v": nominal, "standard": IEEE519_EDITION,
            "limits": {"individual_pct": limits["individual_pct"],
                       "thd_pct": limits["thd_pct"]},
            "orders": judged, "thd_pct": thd, "thd_pass": thd_ok,
            "pass": bool(thd_ok and all(verdicts))}


def _capacitors(circuit, elements, rated, keys, orders, k1, scan, warnings, position,
                v) -> dict:
    names = [n for n, e in circuit.elements.items() if e.kind == "capacitor"]
    if not names:
        return {}
    # |V| of each capacitor at each order, and the sum of the components' peaks added
    # order by order as a running sum (the arrays the per-order dicts are read from)
    mags = np.abs(v[[position[n] for n in names]])
    peaks_sum = np.zeros(len(names))
    for k in range(mags.shape[1]):
        peaks_sum = peaks_sum + mags[:, k]
    peaks_sum = (peaks_sum * (1.0 if circuit.amplitudes == "peak" else math.sqrt(2))).tolist()
    scanned = sorted(names, key=lambda n: -circuit.elements[n].value.real)[:MAX_SCANNED]
    if scan and len(names) > len(scanned):
        warnings.append(f"the resonance order is scanned for the {MAX_SCANNED} largest of "
                        f"the {len(names):,} capacitors only")
    peaks = _resonance_orders(circuit, scanned, orders) if scan else {}
    present = [h for h in orders if h > 1]
    out = {}
    for c, name in enumerate(names):
        data = elements[name]
        entry = {"rms_v": data["rms_v"], "rms_i": data["rms_i"], "peak_v": peaks_sum[c],
                 "rated_v": rated.get(name), "duty_pct": None, "limits_pct": None,
                 "exceeded": [], "pass": None, "standard": cap.IEEE18_EDITION,
                 "resonance_orders": peaks.get(name, []),
                 "resonance_order": (peaks.get(name) or [None])[0]}
        if name in rated:
            to_rms = 1 / math.sqrt(2) if circuit.amplitudes == "peak" else 1.0
            per_unit = {h: mag * to_rms / rated[name]
                        for h, mag in zip(orders, mags[c].tolist())}
            check = cap.ieee18_check(cap.capacitor_duty(per_unit))
            entry["duty_pct"] = {"rms_v": 100 * check["duty"]["voltage_rms"],
                                 "peak_v": 100 * check["duty"]["voltage_peak"],
                                 "rms_i": 100 * check["duty"]["current_rms"],
                                 "q": 100 * check["duty"]["kvar"]}
            entry["limits_pct"] = {"rms_v": 100 * cap.IEEE18_LIMITS["voltage_rms"],
                                   "peak_v": 100 * cap.IEEE18_LIMITS["voltage_peak"],
                                   "rms_i": 100 * cap.IEEE18_LIMITS["current_rms"],
                                   "q": 100 * cap.IEEE18_LIMITS["kvar"]}
            renamed = {"voltage_rms": "rms_v", "voltage_peak": "peak_v",
                       "current_rms": "rms_i", "kvar": "q"}
            entry["exceeded"] = [renamed[x] for x in check["exceeded"]]
            entry["pass"] = check["ok"]
            if not check["ok"]:
                warnings.append(f"{name} runs beyond its {cap.IEEE18_EDITION} limits ("
                                + ", ".join(f"{x} {entry['duty_pct'][x]:.1f} %"
                                            for x in entry["exceeded"]) + ")")
        h = entry["resonance_order"]
        near = cap.near_characteristic_harmonic(h)
        driven = [o for o in present if h is not None and
                  abs(o - h) <= cap.NEAR_HARMONIC_BAND * o]
        if driven:
            warnings.append(f"the network seen from {name} resonates at order {h:.3g}, "
                            f"within 10 % of order {order_key(driven[0])} that a source "
                            "in this circuit injects")
        elif near is not None:
            warnings.append(f"the network seen from {name} resonates at order {h:.3g}, "
                            f"within 10 % of the characteristic harmonic {near}")
        out[name] = entry
    return out


def _resonance_orders(circuit, names, orders) -> dict[str, list[float]]:
    """The orders of the peaks of |Z| between each capacitor's terminals (the capacitor
    included: its parallel resonance with the network), refined on the exact solve."""
    from .engine import DENSE_LIMIT, SweepEngine
    from .probes import parse_probe
    from .resonance import peak_frequency
    from .sweep import grid

    f1 = circuit.frequency
    probes = {}
    for name in names:
        p, n = circuit.elements[name].nodes
        probes[name] = parse_probe(f"Z({p}, {n})")
    top = max([SCAN_ORDERS] + [1.5 * h for h in orders])
    system_size = len(circuit.nodes()) + len(circuit.elements)
    points = SCAN_POINTS_SMALL if system_size <= 2 * DENSE_LIMIT else SCAN_POINTS_LARGE
    frequencies = grid(f1, f1 * top, points, "log")
    unique = list({p.text: p for p in probes.values()}.values())
    engine = SweepEngine(circuit, unique)
    response = engine.response(frequencies)
    out = {}
    for name, probe in probes.items():
        mag = np.abs(response.values[probe.text])
        found = []
        scale = np.nanmax(mag) if np.any(np.isfinite(mag)) else 0.0
        for k in range(1, len(mag) - 1):
            if not (np.isfinite(mag[k - 1:k + 2]).all() and mag[k] > mag[k - 1]
                    and mag[k] >= mag[k + 1]):
                continue
            if abs(mag[k] - mag[k - 1]) <= 1e-9 * scale:
                continue
            # the scan's engine, asked for this probe alone: its pattern, stamps and
            # column order serve every peak (refining a peak builds nothing)
            f0 = peak_frequency(engine.for_probes([probe]), probe, frequencies[k - 1],
                                frequencies[k + 1])
            found.append(f0 / f1)
        out[name] = found
    return out


def element_waveforms(result: dict, name: str, periods: float = 2,
                      samples_per_period: int = 200) -> tuple[dict, dict]:
    """``(summed, fundamental)``: ``waveforms.sample_element`` of one element of a study,
    over every order and over the fundamental alone (the page's and the sheet's pair of
    pictures)."""
    from ..waveforms import sample_element
    e = result["elements"][name]
    keys = list(e["orders"])
    fundamental = next(k for k in keys if k == "1")

    def part(key):
        o = e["orders"][key]
        return {"kind": e["kind"], "voltage": o["v"], "current": o["i"], "p_w": o["p_w"]}
    one = {"frequency_hz": result["fundamental_hz"], "amplitudes": result["amplitudes"],
           "elements": {name: part(fundamental)}}
    every = dict(one, harmonics=[
        {"frequency_hz": result["fundamental_hz"] * float(k), "elements": {name: part(k)}}
        for k in keys if k != fundamental])
    return (sample_element(every, name, periods, samples_per_period),
            sample_element(one, name, periods, samples_per_period))
