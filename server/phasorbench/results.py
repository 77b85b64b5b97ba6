"""From solved phasors to the contract dict (results-contract.md): the one shape every
shell reads — the command line's JSON, the web API, the page and the sheet.

Complex power into each element is ``V·I*`` for RMS phasors and ``½·V·I*`` for peak
phasors (passive sign convention), computed for all elements at once. The power
balance (Tellegen: the sum over all elements is zero) is in every result, with its
residual relative to the total apparent power so a reader can judge it.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import AnalysisError, Diagnostic
from .model import (CONTROLLED_KINDS, PASSIVE_KINDS, SOURCE_KINDS, SWEEP_DEFAULT_POINTS,
                    SWEEP_SPACINGS)
from .solver import Solution

#: |Q| at or below this fraction of |S| counts as "unity" power factor.
UNITY_Q_FRACTION = 1e-9
#: |Σ S| at or below this fraction of Σ|S| is a passed power-balance check.
BALANCE_TOLERANCE = 1e-9

_A = complex(-0.5, math.sqrt(3) / 2)             # Fortescue's operator a = 1∠120°
_FORTESCUE = np.array([[1, 1, 1], [1, _A, _A * _A], [1, _A * _A, _A]]) / 3


def _degrees(values: np.ndarray) -> np.ndarray:
    deg = np.degrees(np.angle(values))
    deg[deg <= -180.0] += 360.0                    # the contract's range is (-180, 180]
    return deg


def phasor_dicts(values: np.ndarray) -> list[dict]:
    """``{"re", "im", "mag", "deg"}`` for each complex value (plain floats, no NaN)."""
    values = np.asarray(values, dtype=complex)
    return [{"re": re, "im": im, "mag": mag, "deg": deg} for re, im, mag, deg in
            zip(values.real.tolist(), values.imag.tolist(), np.abs(values).tolist(),
                _degrees(values).tolist())]


def phasor_dict(value: complex) -> dict:
    return phasor_dicts(np.array([value]))[0]


#: |S| at or below this many double-precision round-offs of the circuit's largest |S|
#: is zero power: its P and Q are round-off, so it reports pf 1.0 and 'unity'.
ZERO_POWER_ROUNDOFFS = 1024


def zero_power_floor(apparent: np.ndarray | list) -> float:
    """The |S| below which an element's power is round-off of the circuit's scale."""
    largest = float(np.max(np.abs(apparent), initial=0.0))
    return ZERO_POWER_ROUNDOFFS * float(np.finfo(float).eps) * largest


def power_factor(p: float, q: float, s: float, source: bool,
                 floor: float = 0.0) -> tuple[float, str]:
    """The contract's ``pf`` and ``pf_sense`` for one element or group: one rule for
    zero power (``s`` at or below ``floor``, see ``zero_power_floor``): 1.0, 'unity'."""
    if s <= floor:
        return 1.0, "unity"
    pf = abs(p) / s if s > 0 else 1.0
    if s == 0 or abs(q) <= UNITY_Q_FRACTION * s:
        return min(pf, 1.0), "unity"
    takes_q = q > 0
    if source:       # a supply quotes the sense of the load it feeds
        return min(pf, 1.0), "leading" if takes_q else "lagging"
    return min(pf, 1.0), "lagging" if takes_q else "leading"


def contract(solution: Solution) -> dict:
    """The contract dict of a solved circuit (see ``_contract``); never holds NaN or inf.

    Raises ``AnalysisError`` when a power overflows double precision.
    """
    with np.errstate(all="ignore"):
        return _contract(solution)


def _contract(solution: Solution) -> dict:
    """The contract dict of a solved circuit.

    >>> from phasorbench.workflow import read_circuit
    >>> from phasorbench.solver import solve
    >>> r = contract(solve(read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 10\\nR1: resistor a -> 0 5")))
    >>> r["elements"]["V1"]["p_w"], r["elements"]["R1"]["pf_sense"]
    (-20.0, 'unity')
    """
    circuit = solution.circuit
    half = 0.5 if circuit.amplitudes == "peak" else 1.0
    elements = [circuit.elements[name] for name in solution.names]
    v, i = solution.voltage, solution.current
    power = half * v * np.conj(i)
    for k, e in enumerate(elements):
        if e.kind == "transformer":
            v2, i2 = solution.secondary[e.name]
            power[k] += half * v2 * np.conj(i2)
    if not np.all(np.isfinite(power)):
        bad = [solution.names[k] for k in np.flatnonzero(~np.isfinite(power))[:6]]
        raise AnalysisError([Diagnostic(
            f"the power of {', '.join(bad)} exceeds the range of double-precision numbers",
            "check the values and units of the circuit")])
    p_list, q_list = power.real.tolist(), power.imag.tolist()
    s_list = np.abs(power).tolist()
    z = _impedances(elements, v, i, circuit)
    z_dicts = phasor_dicts(np.nan_to_num(z))
    z_ok = np.isfinite(z).tolist()
    v_dicts, i_dicts = phasor_dicts(v), phasor_dicts(i)
    supplies = [k for k, e in enumerate(elements)
                if e.kind in SOURCE_KINDS or e.kind in CONTROLLED_KINDS]
    # what a supply delivers: the current out of its `from` terminal into the circuit
    # and the power it gives, both the negatives of the passive-sign values (0 − x
    # keeps a zero's sign positive, so its angle stays 0°)
    delivered_i = dict(zip(supplies, phasor_dicts(0.0 - i[supplies]))) if supplies else {}

    digits = (np.asarray(solution.digits).astype(np.int64) if solution.digits is not None
              else np.full(len(elements), 15, dtype=np.int64))
    floor = zero_power_floor(s_list)
    out_elements = _element_entries(solution, elements, power, s_list, p_list, q_list,
                                    v_dicts, i_dicts, z_dicts, z_ok, digits, floor)
    for k, current in delivered_i.items():
        e = elements[k]
        out_elements[e.name]["delivered"] = {"current": current, "p_w": 0.0 - p_list[k],
                                             "q_var": 0.0 - q_list[k]}

    total = complex(power.sum()) if len(power) else 0j
    apparent = float(np.abs(power).sum())
    if not (math.isfinite(abs(total)) and math.isfinite(apparent)):
        raise AnalysisError([Diagnostic(
            "the total power exceeds the range of double-precision numbers",
            "check the values and units of the circuit")])
    relative = abs(total) / apparent if apparent > 0 else 0.0
    node_names = list(solution.node_voltages)
    node_dicts = phasor_dicts(np.array(list(solution.node_voltages.values()), dtype=complex))
    result = {
        "title": circuit.title,
        "frequency_hz": circuit.frequency,
        "amplitudes": circuit.amplitudes,
        "nodes": dict(zip(node_names, node_dicts)),
        "elements": out_elements,
        "balance": {"p_w": total.real, "q_var": total.imag, "relative": relative,
                    "tolerance": BALANCE_TOLERANCE, "ok": relative <= BALANCE_TOLERANCE},
        # trusted significant digits of node voltages, for the nodes with fewer than 15
        "node_digits": dict(solution.node_digits),
        "references": list(circuit.references),
        "condition_estimate": (solution.condition if solution.condition is not None and
                               math.isfinite(solution.condition) else None),
        "warnings": [d.as_dict() for d in solution.warnings] +
                    _plausibility(solution, relative, z),
    }
    if circuit.couplings:
        result["couplings"] = {
            c.name: {"inductors": list(c.inductors), "k": c.k, "m_h": c.m, "line": c.line}
            for c in circuit.couplings.values()}
    if circuit.sweep is not None:
        # the file's default frequency-response range (its ``sweep`` line), with the
        # study's defaults where the line leaves the points or the spacing out
        s = circuit.sweep
        result["sweep"] = {"from_hz": s.start, "to_hz": s.stop,
                           "points": s.points or SWEEP_DEFAULT_POINTS,
                           "spacing": s.spacing or SWEEP_SPACINGS[0], "line": s.line}
    if circuit.groups:
        result["groups"] = {name: _group(group, result, solution, floor)
                            for name, group in circuit.groups.items()}
    return result



def _senses(p: np.ndarray, q: np.ndarray, s: np.ndarray, source: np.ndarray,
            floor: float) -> tuple[list, list]:
    """``power_factor`` for every element at once: (pf list, pf_sense list)."""
    zero = s <= floor
    pf = np.where(zero, 1.0, np.minimum(np.abs(p) / np.where(zero, 1.0, s), 1.0))
    unity = zero | (np.abs(q) <= UNITY_Q_FRACTION * s)
    takes_q = q > 0
    # a supply quotes the sense of the load it feeds
    lagging = np.where(source, ~takes_q, takes_q)
    sense = np.where(unity, "unity", np.where(lagging, "lagging", "leading"))
    return pf.tolist(), sense.tolist()


def _element_entries(solution, elements, power, s_list, p_list, q_list, v_dicts, i_dicts,
                     z_dicts, z_ok, digits, floor) -> dict[str, dict]:
    """Every element's contract entry, built from columns (one pass of plain zips)."""
    kinds = [e.kind for e in elements]
    nodes = [e.nodes for e in elements]
    lines = [e.line for e in elements]
    source = np.array([k in SOURCE_KINDS or k in CONTROLLED_KINDS for k in kinds], dtype=bool)
    pf, sense = _senses(power.real, power.imag, np.asarray(s_list), source, floor)
    keeps_z = (~source).tolist()
    out = {}
    for e, kind, (first, second, *_), v, i, z, own, zok, p, q, s, f, fs, line, d in zip(
            elements, kinds, nodes, v_dicts, i_dicts, z_dicts, keeps_z, z_ok, p_list,
            q_list, s_list, pf, sense, lines, digits.tolist()):
        entry = {
            "kind": kind, "from": first, "to": second, "voltage": v, "current": i,
            "impedance": z if (own and zok and kind != "transformer") else None,
            "p_w": p, "q_var": q, "s_va": s, "pf": f, "pf_sense": fs, "line": line,
            # significant digits of V and I the extended-precision check trusts
            "digits": d,
        }
        if kind == "transformer":
            v2, i2 = solution.secondary[e.name]
            entry["secondary"] = {"from": e.nodes[2], "to": e.nodes[3],
                                  "voltage": phasor_dict(v2), "current": phasor_dict(i2)}
            entry["ratio"] = e.value.real
        if e.group is not None:
            entry["group"] = e.group
        out[e.name] = entry
    return out


def _impedances(elements, v: np.ndarray, i: np.ndarray, circuit) -> np.ndarray:
    """The element's own impedance, exact from its value (a coupled inductor's is its
    own jωL: the mutual term belongs to the coupling, reported with ``m_h``).

    Infinite or undefined impedances (an open admittance, a current of zero) are NaN
    here and null in the contract.
    """
    omega = 2 * math.pi * circuit.frequency
    coupled = {name for c in circuit.couplings.values() for name in c.inductors}
    kinds = np.array([e.kind for e in elements], dtype=object)
    values = np.array([e.value for e in elements], dtype=complex)
    free = np.array([e.name not in coupled for e in elements], dtype=bool)
    z = np.where(i != 0, v / np.where(i != 0, i, 1), np.nan)
    by_value = free & ((kinds == "resistor") | (kinds == "impedance"))
    z[by_value] = values[by_value]
    cap = free & (kinds == "capacitor")
    z[cap] = 1 / (1j * omega * values[cap])
    ind = kinds == "inductor"           # coupled too: its own jωL; M is on the coupling
    z[ind] = 1j * omega * values[ind]
    adm = free & (kinds == "admittance")
    z[adm] = np.where(values[adm] != 0, 1 / np.where(values[adm] != 0, values[adm], 1), np.nan)
    return z


#: Results this many times larger than anything the sources could drive through the
#: circuit's own impedances come from a lossless resonance or a near-singular structure.
IMPLAUSIBLE_GAIN = 1e9


def _plausibility(solution: Solution, relative: float, z: np.ndarray) -> list[dict]:
    """Warnings for results that solved but should not be trusted as they stand."""
    found = []
    if relative > BALANCE_TOLERANCE:
        found.append(Diagnostic(
            f"the power balance does not close: the sum of S over all elements is "
            f"{relative:.1e} of the total |S|, so some currents or powers have lost digits",
            "very small impedances next to very large ones lose digits to cancellation: "
            "write a short as a 0 ohm element, and keep leakage paths out unless they "
            "matter", severity="warning").as_dict())
    kinds = solution.circuit.table().kinds
    values = np.abs(solution.circuit.table().values)
    is_v = np.array([k == "voltage" for k in kinds], dtype=bool)
    is_i = np.array([k == "current" for k in kinds], dtype=bool)
    passive = np.array([k in PASSIVE_KINDS for k in kinds], dtype=bool)
    own = z[passive]
    finite_z = np.abs(own[np.isfinite(own)])
    z_scale = float(finite_z.max()) if finite_z.size else 1.0
    drive = max([float(values[is_v].max())] if is_v.any() else [0.0]) + \
        (float(values[is_i].max()) * z_scale if is_i.any() else 0.0)
    largest = float(np.abs(solution.voltage).max()) if len(solution.voltage) else 0.0
    if drive > 0 and largest > IMPLAUSIBLE_GAIN * drive:
        k = int(np.argmax(np.abs(solution.voltage)))
        found.append(Diagnostic(
            f"results exceed what the sources drive by more than {IMPLAUSIBLE_GAIN:.0e} "
            f"({solution.names[k]} has {largest:.3g} against sources of about {drive:.3g}): "
            "an ideal, lossless resonance or a nearly singular circuit",
            "at exact resonance an ideal L and C with nothing to limit the current have no "
            "finite answer: add the losses (winding resistance, ESR) or move off resonance",
            severity="warning").as_dict())
    return found


def sequence_components(phases, rotation: str = "abc") -> tuple[complex, complex, complex]:
    """Fortescue's zero, positive and negative sequence of (a, b, c), phase a reference.

    'Positive' is the set turning in the declared ``rotation``: for ``acb`` it is the
    set with b leading a by 120° (the one the a-b-c formulas call negative), so a
    healthy source is positive-sequence whichever way it turns.
    """
    zero, positive, negative = _FORTESCUE @ np.asarray(phases, dtype=complex)
    if rotation == "acb":
        positive, negative = negative, positive
    return complex(zero), complex(positive), complex(negative)


def group_rotation(group, circuit) -> str:
    """The phase rotation a block's sequence values are labelled for.

    A three-phase source has its declared ``sequence``; a load takes the rotation of
    the circuit's three-phase sources when they all agree, else (none, or mixed) abc.
    """
    if group.rotation is not None:
        return group.rotation
    declared = {g.rotation for g in circuit.groups.values() if g.rotation is not None}
    return declared.pop() if len(declared) == 1 else "abc"


def _group(group, result: dict, solution: Solution, floor: float = 0.0) -> dict:
    members = [result["elements"][name] for name in group.elements]
    p = sum(m["p_w"] for m in members)
    q = sum(m["q_var"] for m in members)
    s = math.hypot(p, q)
    pf, sense = power_factor(p, q, s, group.kind == "voltage3", floor)
    index = {name: k for k, name in enumerate(solution.names)}
    v = np.array([solution.voltage[index[n]] for n in group.elements])
    i = np.array([solution.current[index[n]] for n in group.elements])
    nodes = solution.node_voltages
    a, b, c = (nodes[x] for x in group.lines)
    line_voltages = np.array([a - b, b - c, c - a])
    rotation = group_rotation(group, solution.circuit)
    seq_v = sequence_components(v, rotation)
    seq_i = sequence_components(i, rotation)
    _, v1, v2 = sequence_components(line_voltages, rotation)
    out = {
        "kind": group.kind, "connection": group.connection, "lines": list(group.lines),
        "elements": list(group.elements),
        "p_w": p, "q_var": q, "s_va": s, "pf": pf, "pf_sense": sense,
        "sequence_voltage": dict(zip(("zero", "positive", "negative"),
                                     phasor_dicts(np.array(seq_v)))),
        "sequence_current": dict(zip(("zero", "positive", "negative"),
                                     phasor_dicts(np.array(seq_i)))),
        "line_voltage": dict(zip(("ab", "bc", "ca"), phasor_dicts(line_voltages))),
        # |V2|/|V1| of the line-to-line set, both labelled for ``rotation`` like the
        # sequence values above (one rule for both).
        "rotation": rotation,
        "voltage_unbalance": (abs(v2) / abs(v1) if abs(v1) > 0 else None),
        "line": group.line,
    }
    supply = group.kind == "voltage3"
    if supply:
        out["delivered"] = {"p_w": 0.0 - p, "q_var": 0.0 - q}
    if group.connection == "wye":
        out["star"] = group.neutral if group.neutral is not None else f"{group.name}.n"
        out["neutral_current"] = phasor_dict(complex(i.sum()))
        line_currents = i
    else:
        line_currents = np.array([i[0] - i[2], i[1] - i[0], i[2] - i[1]])
    out["line_current"] = dict(zip("abc", phasor_dicts(line_currents)))
    if supply:
        # the line currents the block sends out into the lines
        out["delivered"]["line_current"] = dict(zip("abc", phasor_dicts(0.0 - line_currents)))
    return out
