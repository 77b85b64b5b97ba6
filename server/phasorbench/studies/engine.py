"""Solving one circuit at many frequencies: the solver's own assembly per frequency,
small systems as one stacked dense solve per chunk, large ones sparse (SuperLU) per
frequency; probes read from the unknowns (studies.md, "Probes", "Frequency response").

``Z`` probes use the same matrix with a unit test current as the right-hand side (the
independent sources only ever enter the right-hand side, so that is the circuit with
every independent source zeroed). A frequency where the system is singular is reported,
not raised: its values are NaN and its index is listed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy.sparse.linalg import splu

from ..model import GROUND, PASSIVE_KINDS, Circuit
from ..solver import assemble
from .probes import Current, Impedance, Probe, Voltage

#: Systems up to this many unknowns are solved as stacked dense matrices.
DENSE_LIMIT = 120
#: Bytes of one chunk of stacked dense matrices (bounds the memory of a sweep).
CHUNK_BYTES = 64 * 2**20


@dataclass
class Response:
    """Complex values of every probe at every frequency; ``singular`` lists indices."""

    frequencies: np.ndarray
    values: dict[str, np.ndarray]
    singular: list[int]
    zero_denominator: dict[str, list[int]]


def zero_own_frequency_sources(circuit: Circuit) -> tuple[Circuit, list[str]]:
    """The circuit with every source that has its own ``freq`` set to 0, and their names."""
    own = [name for name, e in circuit.elements.items()
           if e.kind in ("voltage", "current") and e.frequency is not None]
    if not own:
        return circuit, []
    elements = dict(circuit.elements)
    for name in own:
        elements[name] = replace(elements[name], value=0j, frequency=None)
    return replace(circuit, elements=elements), own


def _unknown(system: dict, node: str) -> int:
    return system["index"][node] if node != GROUND else -1


def _simple_value(part, x: np.ndarray, system: dict, circuit: Circuit, omega: float,
                  test: dict, values: dict | None = None) -> complex:
    """One simple probe from the unknowns ``x`` (a vector, or one row per unknown and a
    column per run); ``values`` overrides element values (arrays over runs)."""
    def v(node):
        k = _unknown(system, node)
        return x[k] if k >= 0 else 0j
    if isinstance(part, Voltage):
        return v(part.a.node) - (v(part.b.node) if part.b else 0j)
    if isinstance(part, Impedance):
        xz = test[(part.a.node, part.b.node if part.b else GROUND)]
        k_a = _unknown(system, part.a.node)
        k_b = _unknown(system, part.b.node if part.b else GROUND)
        return (xz[k_a] if k_a >= 0 else 0j) - (xz[k_b] if k_b >= 0 else 0j)
    e = circuit.elements[part.element.name]
    value = e.value if values is None else values.get(e.name, e.value)
    branch = system["branch_of"].get(e.name)
    if branch is not None:
        return x[branch]
    if e.kind in PASSIVE_KINDS:
        if e.kind in ("resistor", "impedance"):
            y = 1 / value
        elif e.kind == "capacitor":
            y = 1j * omega * value
        elif e.kind == "inductor":
            y = 1 / (1j * omega * value)
        else:
            y = value
        return y * (v(e.nodes[0]) - v(e.nodes[1]))
    if e.kind == "current":
        return value
    if e.kind == "vccs":
        return value * (v(e.sense_nodes[0]) - v(e.sense_nodes[1]))
    return value * x[system["branch_of"][e.sense_element]]      # cccs


def _right_hand_sides(system: dict, probes: list[Probe]):
    size = system["size"]
    columns = [np.asarray(system["b"], dtype=complex)]
    keys = [None]
    for probe in probes:
        for part in probe.parts():
            if isinstance(part, Impedance):
                key = (part.a.node, part.b.node if part.b else GROUND)
                if key in keys:
                    continue
                rhs = np.zeros(size, dtype=complex)
                for node, sign in ((key[0], 1.0), (key[1], -1.0)):
                    k = _unknown(system, node)
                    if k >= 0:
                        rhs[k] += sign          # 1 A pushed into a, drawn from b
                keys.append(key)
                columns.append(rhs)
    return keys, np.stack(columns, axis=1)


def sweep_response(circuit: Circuit, probes: list[Probe], frequencies) -> Response:
    """Every probe at every frequency (Hz) of ``circuit`` (own-``freq`` sources zeroed
    by the caller). NaN marks a singular frequency or a zero denominator."""
    frequencies = np.asarray(frequencies, dtype=float)
    values = {p.text: np.full(len(frequencies), np.nan + 0j) for p in probes}
    singular, zero_den = [], {p.text: [] for p in probes}
    with np.errstate(all="ignore"):
        first = assemble(circuit, float(frequencies[0]))
        size = first["size"]
        dense = size <= DENSE_LIMIT
        chunk = max(1, CHUNK_BYTES // max(1, 16 * size * size)) if dense else 1
        for start in range(0, len(frequencies), chunk):
            block = range(start, min(start + chunk, len(frequencies)))
            systems = [first if k == 0 else assemble(circuit, float(frequencies[k]))
                       for k in block]
            solved = _solve_block(systems, probes, dense)
            for k, system, result in zip(block, systems, solved):
                if result is None:
                    singular.append(k)
                    continue
                keys, x = result
                test = {key: x[:, j] for j, key in enumerate(keys) if key is not None}
                omega = 2 * math.pi * float(frequencies[k])
                for probe in probes:
                    parts = [_simple_value(part, x[:, 0], system, circuit, omega, test)
                             for part in probe.parts()]
                    if len(parts) == 1:
                        values[probe.text][k] = parts[0]
                    elif parts[1] == 0 or not np.isfinite(parts[1]):
                        zero_den[probe.text].append(k)
                    else:
                        values[probe.text][k] = parts[0] / parts[1]
    return Response(frequencies, values, singular, zero_den)


def _solve_block(systems, probes, dense):
    rhs = [_right_hand_sides(s, probes) for s in systems]
    if dense and systems[0]["size"]:
        stack = np.stack([s["matrix"].toarray() for s in systems])
        b = np.stack([r[1] for r in rhs])
        try:
            x = np.linalg.solve(stack, b)
            if np.all(np.isfinite(x)) and _well_posed(stack, x, b):
                return [(r[0], xi) for r, xi in zip(rhs, x)]
        except np.linalg.LinAlgError:
            pass
    out = []
    for s, (keys, b) in zip(systems, rhs):
        if not s["size"]:
            out.append((keys, np.zeros((0, b.shape[1]), dtype=complex)))
            continue
        try:
            x = splu(s["matrix"]).solve(b)
        except RuntimeError:
            out.append(None)
            continue
        out.append((keys, x) if np.all(np.isfinite(x)) else None)
    return out


def _well_posed(stack, x, b) -> bool:
    """A stacked dense solve of an exactly singular matrix can return huge finite values;
    the residual tells (each such chunk is redone point by point)."""
    residual = np.abs(np.einsum("kij,kjm->kim", stack, x) - b).max()
    scale = (np.abs(stack).max() * np.abs(x).max() + np.abs(b).max())
    return bool(residual <= 1e-8 * max(scale, 1e-300))
