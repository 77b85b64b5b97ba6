"""Circuit surgery and probe solves shared by the power tools.

The tools answer questions about one place in a circuit (a port): what the network
looks like from there, what a capacitor there would do. Both follow from the
circuit's linearity: every node voltage and branch current is an affine function of a
current drawn at the port. So one solve of the circuit as it is, plus one solve per
port with the independent sources set to zero and a 1 A test current drawn at that
port, give exact coefficients, and anything added at the ports can then be evaluated
without another solve. Derived circuits are always new ``Circuit`` objects: the
caller's circuit is never changed.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
from dataclasses import dataclass

import numpy as np

from ..checks import Forest, check_structure, is_short
from ..errors import CircuitError, Diagnostic
from ..model import GROUND, SOURCE_KINDS, VOLTAGE_KINDS, Circuit, Element
from ..solver import Solution, solve


def input_error(message: str, hint: str = "", line: int | None = None) -> CircuitError:
    """A ``CircuitError`` with one diagnostic (the shells report it as bad input)."""
    return CircuitError([Diagnostic(message, hint, line, 1 if line else None, 1)])


def canonical_node(circuit: Circuit, node: str, what: str = "node") -> str:
    """The circuit's spelling of ``node`` ("gnd" and "0" are ground); raise if unknown."""
    text = str(node).strip()
    if text.lower() in ("0", "gnd"):
        return GROUND
    nodes = circuit.nodes()
    if text in nodes:
        return text
    close = difflib.get_close_matches(text, nodes, n=1)
    hint = f"did you mean '{close[0]}'?" if close else "nodes of this circuit: " + \
        ", ".join(nodes[:12]) + (", …" if len(nodes) > 12 else "")
    raise input_error(f"{what} '{text}' is not a node of this circuit", hint)


def fresh_name(circuit: Circuit, base: str, taken: set[str] = frozenset()) -> str:
    """``base1``, ``base2``, … : the first name no element, value or block uses."""
    used = set(circuit.elements) | set(circuit.values) | set(circuit.groups) | \
        set(circuit.couplings) | set(taken)
    k = 1
    while f"{base}{k}" in used or any(u.startswith(f"{base}{k}_") for u in used):
        k += 1
    return f"{base}{k}"


def derived(circuit: Circuit, add: tuple[Element, ...] = (),
            replace: dict[str, Element] | None = None) -> Circuit:
    """A new circuit: ``circuit`` with elements replaced and added, structure-checked.

    Raises ``CircuitError`` when the change leaves no unique solution (a short across
    an ideal source, say); the caller decides what that means.
    """
    elements = dict(circuit.elements)
    elements.update(replace or {})
    for element in add:
        elements[element.name] = element
    new = dataclasses.replace(circuit, elements=elements, warnings=[], references=())
    check_structure(new)
    return new


def killed(circuit: Circuit) -> Circuit:
    """The circuit with every independent source set to zero (controlled ones kept).

    A zeroed voltage source is a short and a zeroed current source an open circuit,
    so the MNA matrix is the one of the original circuit: if that solved, this does.
    """
    replace = {e.name: dataclasses.replace(e, value=0j)
               for e in circuit.elements.values() if e.kind in SOURCE_KINDS}
    return derived(circuit, replace=replace)


def probe_element(circuit: Circuit, p: str, n: str, taken: set[str] = frozenset()) -> Element:
    """A 1 A current source drawing its current out of ``p`` and back into ``n``."""
    name = fresh_name(circuit, "probe", taken)
    return Element(name, "current", (p, n), 1.0 + 0j)


def voltage_joined(circuit: Circuit, a: str, b: str) -> bool:
    """True when ideal branches alone fix V(a) − V(b), so the impedance between is 0.

    Voltage-type branches and zero impedances fix the voltage across them; an ideal
    transformer with one winding fixed fixes the other too.
    """
    forest = Forest()

    def join(x: str, y: str) -> bool:
        if forest.joined(x, y):
            return False
        forest.join(x, y, "")
        return True

    for e in circuit.elements.values():
        if e.kind in VOLTAGE_KINDS or is_short(e):
            join(e.nodes[0], e.nodes[1])
    windings = [e.nodes for e in circuit.elements.values() if e.kind == "transformer"]
    changed = True
    while changed:
        changed = False
        for p1, n1, p2, n2 in windings:
            if forest.joined(p1, n1):
                changed |= join(p2, n2)
            elif forest.joined(p2, n2):
                changed |= join(p1, n1)
    return a == b or forest.joined(a, b)


def port_voltages(solution: Solution, ports) -> np.ndarray:
    v = solution.node_voltages
    return np.array([v[p] - v[n] for p, n in ports], dtype=complex)


@dataclass(frozen=True)
class PortModel:
    """Exact linear model of a circuit seen from ``m`` ports and a set of sources.

    With ``I`` the currents drawn at the ports (each from its ``p`` through whatever is
    connected back to its ``n``): port voltages ``V = v_oc − z·I``, the sources'
    voltages ``v0 + kv·I`` and currents ``i0 + ki·I``. ``half`` is ½ for peak
    amplitudes and 1 for RMS, so complex power is ``half·V·I*``.
    """

    ports: tuple[tuple[str, str], ...]
    sources: tuple[str, ...]
    v_oc: np.ndarray
    z: np.ndarray
    v0: np.ndarray
    i0: np.ndarray
    kv: np.ndarray
    ki: np.ndarray
    half: float
    omega: float

    def response(self, y: np.ndarray):
        """Port voltages, port currents, source voltages and currents with ``I = y·V``."""
        m = len(self.ports)
        v = np.linalg.solve(np.eye(m) + self.z @ y, self.v_oc)
        i = y @ v
        return v, i, self.v0 + self.kv @ i, self.i0 + self.ki @ i

    def source_power(self, y: np.ndarray) -> complex:
        """Complex power into the sources (passive sign: a feeding source is negative)."""
        _, _, vs, is_ = self.response(y)
        return complex(self.half * np.sum(vs * np.conj(is_)))


def port_model(circuit: Circuit, ports, sources) -> tuple[PortModel, Solution]:
    """Build the ``PortModel`` with 1 + m solves; also return the plain solution.

    Every port's two nodes must lie in one conductive part (checked by the caller).
    """
    names = list(circuit.elements)
    at = {name: k for k, name in enumerate(names)}
    base = solve(circuit)
    rows = [at[s] for s in sources]
    m = len(ports)
    z = np.zeros((m, m), dtype=complex)
    kv = np.zeros((len(rows), m), dtype=complex)
    ki = np.zeros((len(rows), m), dtype=complex)
    quiet = killed(circuit)
    for j, (p, n) in enumerate(ports):
        probe = probe_element(quiet, p, n)
        solution = solve(derived(quiet, add=(probe,)))
        # With the sources at zero, drawing 1 A at port j leaves V = −z[:, j].
        z[:, j] = -port_voltages(solution, ports)
        kv[:, j] = solution.voltage[rows]
        ki[:, j] = solution.current[rows]
    half = 0.5 if circuit.amplitudes == "peak" else 1.0
    model = PortModel(tuple(ports), tuple(sources), port_voltages(base, ports), z,
                      base.voltage[rows].copy(), base.current[rows].copy(), kv, ki, half,
                      2.0 * math.pi * circuit.frequency)
    return model, base
