"""Sources at several frequencies: one phasor solve per frequency, added by superposition.

A linear circuit driven at several frequencies (a fundamental and harmonic sources, say)
is the sum of its responses to each frequency alone. Each solve keeps every element
and sets the sources of the other frequencies to zero (a voltage source becomes a
short, a current source an open). The contract's top level stays the analysis
frequency; the other frequencies come as full contract dicts under ``harmonics``, and
``rms_totals`` holds what a meter would read: V and I as the root-sum-square of the
components, P as the sum of the per-frequency powers, S = V·I and PF = P/S (the
IEEE Std 1459-2010 definitions for non-sinusoidal quantities).
"""

from __future__ import annotations

import math
from dataclasses import replace

from .errors import Diagnostic
from .language.spectrum import component
from .model import Circuit
from .results import zero_power_floor

#: Two source frequencies closer than this (relative) are the same frequency.
SAME_FREQUENCY = 1e-12


def source_components(circuit: Circuit, e) -> list[tuple[float, complex]]:
    """``(frequency, phasor)`` of every component of a source: its own value at its
    frequency, then each ``spectrum`` entry at its order × that frequency."""
    own = circuit.frequency if e.frequency is None else e.frequency
    return [(own, e.value)] + [(own * order, component(e.value, order, fraction, angle))
                               for order, fraction, angle in e.spectrum]


def source_frequencies(circuit: Circuit) -> list[float]:
    """Distinct frequencies of the circuit, the analysis frequency first."""
    found = [circuit.frequency]
    for e in circuit.elements.values():
        if e.frequency is None and not e.spectrum:
            continue
        for f, _ in source_components(circuit, e):
            if not any(math.isclose(f, g, rel_tol=SAME_FREQUENCY) for g in found):
                found.append(f)
    return [found[0]] + sorted(found[1:])


def circuit_at(circuit: Circuit, frequency: float) -> Circuit:
    """A copy of ``circuit`` at ``frequency`` with each source at its component there
    (zero for a source with none: a voltage source shorted, a current source opened)."""
    elements = dict(circuit.elements)
    changed = {}
    table = circuit.table()
    for k in _source_rows(table):
        e = table.elements[k]
        name = e.name
        value = sum((v for f, v in source_components(circuit, e)
                     if math.isclose(f, frequency, rel_tol=SAME_FREQUENCY)), 0j)
        if value != e.value or e.spectrum:
            elements[name] = replace(e, value=value, spectrum=())
            changed[k] = elements[name]
    at = replace(circuit, frequency=frequency, elements=elements)
    _share_table(circuit, at, changed)
    return at


def _source_rows(table) -> list[int]:
    """Positions of the independent sources in an element table, found once per table
    (a study asks at every order of a circuit of tens of thousands of elements)."""
    rows = getattr(table, "source_rows", None)
    if rows is None:
        rows = table.source_rows = [k for k, kind in enumerate(table.kinds)
                                    if kind == "voltage" or kind == "current"]
    return rows


def _share_table(circuit: Circuit, at: Circuit, changed: dict) -> None:
    """Give ``at`` the element table of ``circuit`` with only the sources' values
    changed: building a table walks every element, which over many frequencies of a
    big circuit would cost as much as the solves."""
    import copy

    base = circuit.table()
    table = copy.copy(base)
    table.key = (id(at.elements), len(at.elements))
    if changed:
        table.elements = list(base.elements)
        table.values = base.values.copy()
        for k, e in changed.items():
            table.elements[k] = e
            table.values[k] = e.value
    at._table = table


def solve_superposed(circuit: Circuit) -> dict:
    """The contract dict of a circuit whose sources run at several frequencies."""
    from .results import contract
    from .solver import solve

    frequencies = source_frequencies(circuit)
    results = [contract(solve(circuit_at(circuit, f))) for f in frequencies]
    main = results[0]
    main["harmonics"] = results[1:]
    main["rms_totals"] = _rms_totals(results, circuit.amplitudes)
    driven = any(e.kind in ("voltage", "current") and (
        e.frequency is None or math.isclose(e.frequency, frequencies[0], rel_tol=SAME_FREQUENCY))
        for e in circuit.elements.values())
    if not driven:
        main["warnings"].append(Diagnostic(
            f"no source runs at the analysis frequency {frequencies[0]:g} Hz: the tables "
            "show zero there", "remove the 'frequency' line to show the lowest source "
            "frequency, or set it to the frequency you mean", severity="warning").as_dict())
    shown = ", ".join(f"{f:g} Hz" for f in frequencies)
    main["warnings"].append(Diagnostic(
        f"sources run at {len(frequencies)} frequencies ({shown}): the tables show "
        f"{frequencies[0]:g} Hz; each other frequency is solved on its own and the totals "
        "add them", "RMS totals: V and I root-sum-square, P summed, PF = P/(V·I)",
        severity="warning").as_dict())
    return main


def _rms_totals(results: list[dict], amplitudes: str) -> dict:
    to_rms = 1 / math.sqrt(2) if amplitudes == "peak" else 1.0
    totals = {}
    # one rule for zero power (results.zero_power_floor): a zeroed source's P, Q are
    # round-off, its pf is 1.0
    floor = max((zero_power_floor([e["s_va"] for e in r["elements"].values()])
                 for r in results), default=0.0)
    for name in results[0]["elements"]:
        parts = [r["elements"][name] for r in results]
        v = math.sqrt(sum(p["voltage"]["mag"] ** 2 for p in parts)) * to_rms
        i = math.sqrt(sum(p["current"]["mag"] ** 2 for p in parts)) * to_rms
        p_w = sum(p["p_w"] for p in parts)
        s = v * i
        totals[name] = {"v_rms": v, "i_rms": i, "p_w": p_w, "s_va": s,
                        "pf": abs(p_w) / s if s > floor else 1.0}
    return totals


def analysis_frequency_only(circuit: Circuit) -> tuple[Circuit, Diagnostic | None]:
    """The circuit as the tools see it: only the analysis frequency's sources.

    A power-factor correction or a Thevenin equivalent is a one-frequency question; the
    sources at other frequencies are set to zero, and the warning says so (None when the
    circuit has one frequency).
    """
    frequencies = source_frequencies(circuit)
    if len(frequencies) == 1:
        return circuit, None
    others = ", ".join(f"{f:g} Hz" for f in frequencies[1:])
    return circuit_at(circuit, circuit.frequency), Diagnostic(
        f"this result is at {circuit.frequency:g} Hz only: the sources at {others} are set "
        "to zero for it", "each frequency is a separate question for this tool",
        severity="warning")
