"""Structure checks before solving: the errors a user can fix by reading the drawing.

A singular matrix tells a user nothing; these checks name the elements and nodes
involved instead: references to missing elements or nodes, couplings out of range,
loops of ideal voltage-type branches, nodes reached only through current-type
branches, nodes touched by a single terminal (usually a misspelling), and parts of the
circuit with no conductive path to ground (each gets its own reference node).
"""

from __future__ import annotations

import math
from collections import defaultdict, deque

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

from .errors import CircuitStructureError, CircuitSyntaxError, Diagnostic
from .language.suggest import NameIndex
from .model import CURRENT_KINDS, GROUND, PASSIVE_KINDS, VOLTAGE_KINDS, Circuit, Element

_SOURCE_WORDS = {"voltage": "voltage source", "vcvs": "vcvs", "ccvs": "ccvs",
                 "current": "current source", "vccs": "vccs", "cccs": "cccs",
                 "transformer": "transformer", "resistor": "0-ohm resistor",
                 "impedance": "zero impedance"}


def is_short(element: Element) -> bool:
    """A passive with zero impedance: it fixes a voltage (0 V) like a source does."""
    return element.kind in ("resistor", "impedance") and element.value == 0


def is_open(element: Element) -> bool:
    return element.kind == "admittance" and element.value == 0


def check_references(circuit: Circuit) -> list[Diagnostic]:
    """Names and values that must exist or lie in range; safe on a partly read circuit."""
    found: list[Diagnostic] = []
    nodes = set(circuit.nodes())
    elements = circuit.elements
    names = NameIndex(elements)
    for element in elements.values():
        if element.sense_element is not None:
            target = elements.get(element.sense_element)
            if target is None:
                sensed = element.sense_element
                if sensed in circuit.groups:
                    what, hint = ("a three-phase block", "sense one of its phase elements, "
                                  f"e.g. {circuit.groups[sensed].elements[0]}")
                elif sensed in circuit.couplings:
                    what, hint = "a coupling", "sense one of the coupled inductors"
                else:
                    what, hint = "not an element", _close_hint(sensed, names)
                found.append(Diagnostic(
                    f"{element.name} senses '{sensed}', which is {what}", hint, element.line,
                    1, len(element.name)))
            elif target.kind == "transformer":
                found.append(Diagnostic(
                    f"{element.name} senses transformer {target.name}: only two-terminal "
                    "elements can be sensed", "sense an element in series with a winding",
                    element.line, 1, len(element.name)))
        if element.sense_nodes is not None:
            for node in element.sense_nodes:
                if node not in nodes:
                    found.append(Diagnostic(
                        f"{element.name} senses node '{node}', which no element touches",
                        "check the spelling of the sensed nodes", element.line, 1,
                        len(element.name)))
    pairs: dict[frozenset, object] = {}
    for coupling in circuit.couplings.values():
        found.extend(_check_coupling(circuit, coupling))
        # Two couplings of one pair add their M: |k| could pass 1 with neither out of range.
        pair = frozenset(coupling.inductors)
        if len(pair) == 2 and pair in pairs:
            first = pairs[pair]
            found.append(Diagnostic(
                f"coupling {coupling.name} joins {' and '.join(coupling.inductors)} again "
                f"(first by {first.name} at line {first.line})",
                "give one coupling per pair of inductors", coupling.line, 1,
                len(coupling.name)))
        pairs.setdefault(pair, coupling)
    if len(circuit.couplings) > 1 and not any(d.severity == "error" for d in found):
        found.extend(_check_inductance_matrix(circuit))
    return found


def _check_inductance_matrix(circuit: Circuit) -> list[Diagnostic]:
    """Three or more coupled coils: each |k| ≤ 1 is not enough, the inductance matrix must
    also have no negative eigenvalue (a passive set of coils stores energy ½·iᵀLi ≥ 0)."""
    names = sorted({n for c in circuit.couplings.values() for n in c.inductors})
    position = {n: k for k, n in enumerate(names)}
    matrix = np.diag([circuit.elements[n].value.real for n in names])
    for c in circuit.couplings.values():
        a, b = (position[n] for n in c.inductors)
        matrix[a, b] = matrix[b, a] = c.m
    lowest = float(np.linalg.eigvalsh(matrix).min())
    if lowest >= -1e-12 * float(np.abs(matrix).max()):
        return []
    first = min(circuit.couplings.values(), key=lambda c: c.line or 0)
    return [Diagnostic(
        f"couplings {', '.join(circuit.couplings)} together are not physical: the "
        f"inductance matrix of {', '.join(names)} has a negative eigenvalue "
        f"({lowest:.3g} H), so the coils could give out energy they never stored",
        "with three or more coils each |k| ≤ 1 is not enough: the k must fit together "
        "(three coils cannot all oppose each other strongly); lower the |k| values",
        first.line, 1, len(first.name))]


def _check_coupling(circuit: Circuit, coupling) -> list[Diagnostic]:
    found = []
    where = dict(line=coupling.line, column=1, length=len(coupling.name))
    inductors = []
    for name in coupling.inductors:
        element = circuit.elements.get(name)
        if element is None or element.kind != "inductor":
            what = "is not an element" if element is None else f"is a {element.kind}"
            found.append(Diagnostic(f"coupling {coupling.name}: '{name}' {what}",
                                    "a coupling joins two inductors, e.g. K1: coupling L1 L2 "
                                    "k 0.95", **where))
        else:
            inductors.append(element)
    if found:
        return found
    if coupling.inductors[0] == coupling.inductors[1]:
        return [Diagnostic(f"coupling {coupling.name} joins {coupling.inductors[0]} to itself",
                           "name two different inductors", **where)]
    l1, l2 = (e.value.real for e in inductors)
    # sqrt of each, not of the product: L1·L2 of two tiny inductors underflows to 0.
    geometric = math.sqrt(l1) * math.sqrt(l2)
    if coupling.k is None:
        coupling.k = coupling.m / geometric
    else:
        coupling.m = coupling.k * geometric
    if not -1.0 - 1e-12 <= coupling.k <= 1.0 + 1e-12:
        given = f"k = {coupling.k:.6g}" + ("" if coupling.m is None else
                                           f" (M = {coupling.m:.6g} H)")
        found.append(Diagnostic(f"coupling {coupling.name}: {given} is outside [-1, 1]",
                                "|k| cannot exceed 1: M must not exceed sqrt(L1*L2)", **where))
    return found


def _close_hint(name: str, names: NameIndex) -> str:
    close = names.closest(name)
    return f"did you mean '{close}'?" if close else "name an element of the circuit"


class Forest:
    """Union-find that also remembers the branches it joined, to name a loop's members."""

    def __init__(self):
        self.parent: dict[str, str] = {}
        self.adjacent: dict[str, list[tuple[str, str]]] = defaultdict(list)

    def find(self, node: str) -> str:
        parent = self.parent
        parent.setdefault(node, node)
        root = node
        while parent[root] != root:
            root = parent[root]
        while parent[node] != root:
            parent[node], node = root, parent[node]
        return root

    def joined(self, a: str, b: str) -> bool:
        return self.find(a) == self.find(b)

    def join(self, a: str, b: str, label: str) -> None:
        self.parent[self.find(a)] = self.find(b)
        self.adjacent[a].append((b, label))
        self.adjacent[b].append((a, label))

    def path(self, a: str, b: str) -> list[str]:
        """Labels of the branches on the forest path from a to b."""
        previous: dict[str, tuple[str, str] | None] = {a: None}
        queue = deque([a])
        while queue:
            node = queue.popleft()
            if node == b:
                break
            for nxt, label in self.adjacent[node]:
                if nxt not in previous:
                    previous[nxt] = (node, label)
                    queue.append(nxt)
        labels = []
        node = b
        while previous.get(node):
            node, label = previous[node]
            labels.append(label)
        return labels


def _voltage_loops(circuit: Circuit) -> list[Diagnostic]:
    found = []
    forest = Forest()
    transformers = []
    for element in circuit.elements.values():
        kind = element.kind
        if kind == "transformer":
            transformers.append(element)
        elif kind in VOLTAGE_KINDS or (kind in ("resistor", "impedance") and is_short(element)):
            p, n = element.nodes
            if forest.joined(p, n):
                members = forest.path(p, n)[::-1] + [element.name]
                kinds = {circuit.elements[m].kind for m in members if m in circuit.elements}
                what = ("voltage sources" if kinds <= {"voltage"} else
                        "ideal voltage-type branches (voltage, vcvs, ccvs, zero impedance)")
                found.append(Diagnostic(
                    f"{what} {', '.join(members)} form a loop of ideal sources: the circuit "
                    "has no unique solution", "add a series impedance (a source's internal "
                    "impedance, a line) in the loop, or remove one of them",
                    element.line, 1, len(element.name)))
            else:
                forest.join(p, n, element.name)
    for element in transformers:
        p1, n1, p2, n2 = element.nodes
        if not forest.joined(p1, n1):
            forest.join(p1, n1, element.name)
        elif not forest.joined(p2, n2):
            forest.join(p2, n2, element.name)
        else:
            fixed = sorted(set(forest.path(p1, n1) + forest.path(p2, n2)))
            found.append(Diagnostic(
                f"transformer {element.name} has both windings held by ideal sources "
                f"({', '.join(fixed)}): the circuit has no unique solution",
                "keep a fixed voltage on one winding only, or add a series impedance",
                element.line, 1, len(element.name)))
    return found


class _Terminals:
    """The circuit's branches as node indices (``model.ElementTable``) plus which of them
    carry a fixed current, so the graph questions below are array operations."""

    def __init__(self, circuit: Circuit):
        table = circuit.table()
        self.nodes = table.node_names
        self.index = table.node_index
        self.elements = table.elements
        self.p, self.n, self.owner = table.p, table.n, table.owner
        current_type = np.array([kind in CURRENT_KINDS for kind in table.kinds], dtype=bool)
        current_type |= (table.values == 0) & np.array(
            [kind == "admittance" for kind in table.kinds], dtype=bool)
        self.current_type = current_type[self.owner]

    def components(self, mask=None) -> np.ndarray:
        """Connected-component label of every node, using the branches where ``mask``."""
        p, n = (self.p, self.n) if mask is None else (self.p[mask], self.n[mask])
        size = len(self.nodes)
        graph = coo_matrix((np.ones(len(p)), (p, n)), shape=(size, size))
        return connected_components(graph, directed=False)[1]


def conductive_parts(circuit: Circuit) -> dict[str, int]:
    """Each node's part: nodes joined by any branch or transformer winding share a label.

    A current drawn between two different parts has no way back, so a port across parts
    carries no current whatever is connected to it.
    """
    table = _Terminals(circuit)
    return dict(zip(table.nodes, table.components().tolist()))


def check_topology(circuit: Circuit) -> tuple[list[Diagnostic], tuple[str, ...]]:
    """Islands, source loops, current-only cuts and dangling nodes.

    Returns the diagnostics and the extra reference nodes (one per isolated part).
    """
    found = _voltage_loops(circuit)
    table = _Terminals(circuit)
    nodes, elements = table.nodes, table.elements
    island = table.components()
    references: list[str] = []
    if len(set(island.tolist())) > 1:
        references = _island_references(circuit, table, island, found)

    cut = table.components(~table.current_type)
    anchored = {cut[table.index[GROUND]]} | {cut[table.index[r]] for r in references}
    stranded: dict[int, list[str]] = defaultdict(list)
    for k in np.flatnonzero(~np.isin(cut, list(anchored))).tolist():
        stranded[cut[k]].append(nodes[k])
    stuck_nodes = set()
    for group in stranded.values():
        stuck_nodes.update(group)
        group_set = set(group)
        feeders = [e.name for e in elements if e.kind in CURRENT_KINDS or is_open(e)
                   if group_set & set(e.nodes)]
        line = min((circuit.elements[f].line or 0 for f in feeders), default=None)
        found.append(Diagnostic(
            f"node{'s' if len(group) > 1 else ''} {', '.join(group[:6])} "
            f"{'are' if len(group) > 1 else 'is'} reached only through current-type "
            f"branches ({', '.join(feeders[:6]) or 'none'}): their voltage is not determined",
            "add a path that fixes the voltage there (an impedance to ground, say), or check "
            "the connections", line or None, 1 if line else None, 1))

    found.extend(_dangling(table, stuck_nodes))
    found.extend(_self_loops(circuit))
    return found, tuple(references)


def _self_loops(circuit: Circuit) -> list[Diagnostic]:
    """Two-terminal elements whose both terminals are one node (voltage-type ones are
    already source loops): they carry nothing, and usually hide a misspelt node."""
    found = []
    for e in circuit.elements.values():
        if len(e.nodes) == 2 and e.nodes[0] == e.nodes[1] and e.kind not in VOLTAGE_KINDS:
            found.append(Diagnostic(
                f"{e.name} has both terminals on node '{e.nodes[0]}': it has no effect on "
                "the circuit; a misspelt node?", "check the terminals", e.line, 1,
                len(e.name), "warning"))
    return found


def _island_references(circuit, table: _Terminals, island: np.ndarray, found) -> list[str]:
    """One reference per part with no path to ground, with a warning naming the part.

    A part's reference is the 'n' terminal of the first element that reaches it (for a
    transformer: its secondary's n2), so V(p) of that element reads naturally.
    """
    members: dict[int, list[str]] = defaultdict(list)
    for node, label in zip(table.nodes, island.tolist()):
        members[label].append(node)
    seen = {island[table.index[GROUND]]}
    references = []
    for element in table.elements:
        nodes = element.nodes
        for node in (nodes[::-1] if len(nodes) == 4 else (nodes[1], nodes[0])):
            label = island[table.index[node]]
            if label in seen:
                continue
            seen.add(label)
            references.append(node)
            part = members[label]
            shown = ", ".join(part[:6]) + (", …" if len(part) > 6 else "")
            found.append(Diagnostic(
                f"nodes {shown} have no conductive path to ground: node '{node}' is taken "
                "as their reference", "currents and powers there are exact; node voltages "
                "there are relative to that node (connect the part to ground to fix it)",
                element.line, 1, 1, "warning"))
    return references


def _dangling(table: _Terminals, skip: set[str]) -> list[Diagnostic]:
    counts = np.bincount(np.concatenate([table.p, table.n]), minlength=len(table.nodes))
    # a controlled source's sense terminal is a terminal too: a node it reads on purpose
    # (an amplifier's input) is not a misspelling
    sensed = {node for e in table.elements if e.sense_nodes for node in e.sense_nodes}
    skip = set(skip) | sensed
    found = []
    for k in np.flatnonzero(counts == 1).tolist():
        node = table.nodes[k]
        if node == GROUND or node in skip:
            continue
        at = np.flatnonzero((table.p == k) | (table.n == k))[0]
        element = table.elements[table.owner[at]]
        found.append(Diagnostic(
            f"node '{node}' is reached by one terminal only ({element.name}): no current "
            f"can flow in {element.name}; a misspelt node?",
            "check the node's spelling, or connect it", element.line, 1,
            len(element.name), "warning"))
    return found


def check_structure(circuit: Circuit, earlier: list[Diagnostic] | None = None) -> None:
    """Run every check; raise ``CircuitStructureError`` with all diagnostics on any error.

    ``earlier`` holds diagnostics found while reading; the topology checks run only when
    there were no errors before them (a half-read circuit would give false alarms).
    On success, warnings are added to ``circuit.warnings`` and ``circuit.references`` is set.
    """
    diagnostics = list(earlier or [])
    diagnostics.extend(check_references(circuit))
    if not any(d.severity == "error" for d in diagnostics):
        topology, references = check_topology(circuit)
        diagnostics.extend(topology)
        circuit.references = references
    if any(d.severity == "error" for d in diagnostics):
        unread = any(d.severity == "error" for d in earlier or [])
        error_class = CircuitSyntaxError if unread else CircuitStructureError
        raise error_class(sorted(
            diagnostics, key=lambda d: (d.line is not None, d.line or 0, d.column or 0)))
    circuit.warnings = [d for d in diagnostics if d.severity == "warning"]
