"""Modified nodal analysis at the analysis frequency: sparse complex assembly and SuperLU.

Unknowns are the voltages of every node except the references (ground and one node per
isolated part), then one branch current for every element that needs one: voltage-type
elements, transformers, coupled inductors, zero-impedance passives, and every element
whose current a ``ccvs``/``cccs`` senses. Everything else is stamped as an admittance
or a current, vectorised over all elements of a kind (no Python loop per matrix entry).
After the solve every element's voltage and current is recovered, so results never
depend on which elements happened to have a current unknown.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from .checks import is_short
from .errors import AnalysisError, Diagnostic
from .model import GROUND, Circuit

#: Above this estimated condition number (of the equilibrated matrix) fewer than about
#: four significant digits of the answer can be trusted, and the result says so.
CONDITION_WARNING = 1e12
#: Below this many unknowns a dense SVD is cheap enough to say which unknowns a singular
#: system leaves undetermined.
DIAGNOSE_DENSE_LIMIT = 600


@dataclass(frozen=True)
class Solution:
    """Solved phasors of one circuit, in the circuit's amplitude convention.

    ``voltage`` and ``current`` hold one complex value per element of ``names`` (for a
    transformer: its primary); ``secondary`` maps transformer names to (V2, I2).
    """

    circuit: Circuit
    names: tuple[str, ...]
    node_voltages: dict[str, complex]
    voltage: np.ndarray
    current: np.ndarray
    secondary: dict[str, tuple[complex, complex]] = field(default_factory=dict)
    warnings: tuple[Diagnostic, ...] = ()
    condition: float | None = None

    def __repr__(self) -> str:
        return (f"Solution({len(self.names)} elements, {len(self.node_voltages)} nodes, "
                f"f={self.circuit.frequency:g} Hz, warnings={len(self.warnings)})")


class _Triplets:
    """Growing lists of (row, col, value) numpy chunks, joined once into a sparse matrix."""

    def __init__(self):
        self.rows, self.cols, self.vals = [], [], []

    def add(self, rows, cols, vals) -> None:
        rows = np.asarray(rows, dtype=np.int64)
        cols = np.asarray(cols, dtype=np.int64)
        vals = np.broadcast_to(np.asarray(vals, dtype=complex), rows.shape)
        keep = (rows >= 0) & (cols >= 0)
        self.rows.append(rows[keep])
        self.cols.append(cols[keep])
        self.vals.append(vals[keep])

    def matrix(self, size: int) -> sp.csc_matrix:
        if not self.rows:
            return sp.csc_matrix((size, size), dtype=complex)
        return sp.csc_matrix((np.concatenate(self.vals),
                              (np.concatenate(self.rows), np.concatenate(self.cols))),
                             shape=(size, size))


def _admittance(kind: str, value: complex, omega: float) -> complex:
    if kind == "resistor" or kind == "impedance":
        return 1.0 / value
    if kind == "capacitor":
        return 1j * omega * value
    if kind == "inductor":
        return 1.0 / (1j * omega * value)
    return value  # admittance


def solve(circuit: Circuit) -> Solution:
    """Solve ``circuit`` (already through ``checks.check_structure``) at its frequency.

    Raises ``AnalysisError`` when the equations are singular, naming what is undetermined.

    >>> from phasorbench.workflow import read_circuit
    >>> c = read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 10 V\\nR1: resistor a -> 0 5")
    >>> solve(c).current[1]
    (2+0j)
    """
    omega = 2.0 * math.pi * circuit.frequency
    elements = list(circuit.elements.values())
    names = tuple(e.name for e in elements)
    position = {name: i for i, name in enumerate(names)}

    references = {GROUND, *circuit.references}
    node_names = [n for n in circuit.nodes() if n not in references]
    n_nodes = len(node_names)
    index = {name: i for i, name in enumerate(node_names)}
    for ref in references:
        index[ref] = -1

    sensed = {e.sense_element for e in elements if e.sense_element is not None}
    coupled = {name for c in circuit.couplings.values() for name in c.inductors}
    branch_of: dict[str, int] = {}
    for e in elements:
        if (e.kind in ("voltage", "vcvs", "ccvs", "transformer") or e.name in sensed
                or e.name in coupled or is_short(e)):
            branch_of[e.name] = n_nodes + len(branch_of)
    size = n_nodes + len(branch_of)

    A = _Triplets()
    b = np.zeros(size, dtype=complex)

    # Admittance-form passives: the bulk of any large circuit, stamped in one go.
    nodal = [e for e in elements if e.name not in branch_of and
             e.kind in ("resistor", "capacitor", "inductor", "impedance", "admittance")]
    if nodal:
        p = np.fromiter((index[e.nodes[0]] for e in nodal), np.int64, len(nodal))
        n = np.fromiter((index[e.nodes[1]] for e in nodal), np.int64, len(nodal))
        y = _admittances(nodal, omega)
        A.add(np.concatenate([p, n, p, n]), np.concatenate([p, n, n, p]),
              np.concatenate([y, y, -y, -y]))

    for e in elements:
        kind = e.kind
        col = branch_of.get(e.name)
        if col is None:
            p, n = index[e.nodes[0]], index[e.nodes[1]]
            if kind == "current":
                if p >= 0:
                    b[p] -= e.value
                if n >= 0:
                    b[n] += e.value
            elif kind == "vccs":
                c, d = index[e.sense_nodes[0]], index[e.sense_nodes[1]]
                A.add([p, p, n, n], [c, d, c, d], [e.value, -e.value, -e.value, e.value])
            elif kind == "cccs":
                s = branch_of[e.sense_element]
                A.add([p, n], [s, s], [e.value, -e.value])
            continue
        # Branch form: KCL gets +I at p and -I at n, and row `col` defines I.
        if kind == "transformer":
            p1, n1, p2, n2 = (index[x] for x in e.nodes)
            ratio = e.value.real
            A.add([p1, n1, p2, n2], [col] * 4, [1.0, -1.0, -ratio, ratio])
            A.add([col] * 4, [p1, n1, p2, n2], [1.0, -1.0, -ratio, ratio])
            continue
        p, n = index[e.nodes[0]], index[e.nodes[1]]
        A.add([p, n], [col, col], [1.0, -1.0])
        if kind in ("voltage", "vcvs", "ccvs") or kind in ("resistor", "impedance",
                                                          "inductor", "capacitor"):
            A.add([col, col], [p, n], [1.0, -1.0])
        if kind == "voltage":
            b[col] = e.value
        elif kind == "vcvs":
            c, d = index[e.sense_nodes[0]], index[e.sense_nodes[1]]
            A.add([col, col], [c, d], [-e.value, e.value])
        elif kind == "ccvs":
            A.add([col], [branch_of[e.sense_element]], [-e.value])
        elif kind in ("resistor", "impedance", "capacitor"):
            z = 1.0 / _admittance(kind, e.value, omega) if not is_short(e) else 0.0
            A.add([col], [col], [-z])
        elif kind == "inductor":
            A.add([col], [col], [-1j * omega * e.value])
        elif kind == "admittance":          # sensed: I - Y·(Vp - Vn) = 0
            A.add([col, col, col], [col, p, n], [1.0, -e.value, e.value])
        elif kind == "current":
            A.add([col], [col], [1.0])
            b[col] = e.value
        elif kind == "vccs":
            c, d = index[e.sense_nodes[0]], index[e.sense_nodes[1]]
            A.add([col, col, col], [col, c, d], [1.0, -e.value, e.value])
        elif kind == "cccs":
            A.add([col, col], [col, branch_of[e.sense_element]], [1.0, -e.value])
    for coupling in circuit.couplings.values():
        a, c = coupling.inductors
        zm = 1j * omega * coupling.m
        A.add([branch_of[a], branch_of[c]], [branch_of[c], branch_of[a]], [-zm, -zm])

    matrix = A.matrix(size)
    x, condition, warnings = _factor_and_solve(matrix, b, circuit, node_names, branch_of)

    v_ext = np.append(x[:n_nodes], 0.0)           # index -1 reads the appended 0 V
    voltage = np.empty(len(elements), dtype=complex)
    current = np.empty(len(elements), dtype=complex)
    if elements:
        p = np.fromiter((index[e.nodes[0]] for e in elements), np.int64, len(elements))
        n = np.fromiter((index[e.nodes[1]] for e in elements), np.int64, len(elements))
        voltage[:] = v_ext[p] - v_ext[n]
    if nodal:
        rows = np.fromiter((position[e.name] for e in nodal), np.int64, len(nodal))
        current[rows] = y * voltage[rows]
    secondary = {}
    for e in elements:
        i = position[e.name]
        col = branch_of.get(e.name)
        if col is not None:
            current[i] = x[col]
            if e.kind == "transformer":
                v2 = v_ext[index[e.nodes[2]]] - v_ext[index[e.nodes[3]]]
                secondary[e.name] = (complex(v2), complex(-e.value.real * x[col]))
        elif e.kind == "current":
            current[i] = e.value
        elif e.kind == "vccs":
            current[i] = e.value * (v_ext[index[e.sense_nodes[0]]] -
                                    v_ext[index[e.sense_nodes[1]]])
        elif e.kind == "cccs":
            current[i] = e.value * x[branch_of[e.sense_element]]

    node_voltages = {GROUND: 0j}
    for ref in circuit.references:
        node_voltages[ref] = 0j
    node_voltages.update(zip(node_names, x[:n_nodes].tolist()))
    ordered = {name: node_voltages[name] for name in circuit.nodes()}
    return Solution(circuit, names, ordered, voltage, current, secondary,
                    tuple(circuit.warnings) + tuple(warnings), condition)


def _admittances(nodal, omega: float) -> np.ndarray:
    kinds = np.array([e.kind for e in nodal])
    values = np.fromiter((e.value for e in nodal), complex, len(nodal))
    y = values.copy()
    by_z = (kinds == "resistor") | (kinds == "impedance")
    y[by_z] = 1.0 / values[by_z]
    cap = kinds == "capacitor"
    y[cap] = 1j * omega * values[cap]
    ind = kinds == "inductor"
    y[ind] = 1.0 / (1j * omega * values[ind])
    return y


def _factor_and_solve(matrix, b, circuit, node_names, branch_of):
    size = matrix.shape[0]
    if size == 0:
        return np.zeros(0, dtype=complex), 1.0, []
    # Equilibrate rows and columns: MNA mixes siemens with dimensionless rows, and
    # scaling keeps SuperLU's pivoting and the condition estimate meaningful.
    magnitude = abs(matrix)
    row_scale = _safe_inverse(magnitude.max(axis=1).toarray().ravel())
    scaled = sp.diags(row_scale) @ matrix
    col_scale = _safe_inverse(abs(scaled).max(axis=0).toarray().ravel())
    scaled = (scaled @ sp.diags(col_scale)).tocsc()
    try:
        lu = splu(scaled)
        y = lu.solve(row_scale * b)
    except RuntimeError:
        raise _singular(scaled, circuit, node_names, branch_of) from None
    x = col_scale * y
    if not np.all(np.isfinite(x)):
        raise _singular(scaled, circuit, node_names, branch_of)
    warnings = []
    condition = _condition_estimate(scaled, lu)
    if not math.isfinite(condition) or condition > CONDITION_WARNING:
        digits = max(0, int(16 - math.log10(condition))) if math.isfinite(condition) else 0
        warnings.append(Diagnostic(
            f"the equations are ill-conditioned (condition number about {condition:.1e}): "
            f"only about {digits} significant digits of the results can be trusted",
            "very large and very small impedances side by side, or a circuit at or near "
            "resonance, cause this; check values and units", severity="warning"))
    return x, condition, warnings


def _safe_inverse(values: np.ndarray) -> np.ndarray:
    out = np.ones_like(values, dtype=float)
    nonzero = values > 0
    out[nonzero] = 1.0 / values[nonzero]
    return out


def _condition_estimate(matrix, lu, iterations: int = 2) -> float:
    """1-norm condition estimate (Hager's method, as in LAPACK's xLACON), a few solves."""
    n = matrix.shape[0]
    norm = abs(matrix).sum(axis=0).max()
    x = np.full(n, 1.0 / n, dtype=complex)
    estimate = 0.0
    for _ in range(iterations):
        y = lu.solve(x)
        estimate = float(np.abs(y).sum())
        if not math.isfinite(estimate):
            return math.inf
        magnitude = np.abs(y)
        xi = np.where(magnitude > 0, y / np.where(magnitude > 0, magnitude, 1), 1.0)
        z = lu.solve(xi, trans="H")
        j = int(np.argmax(np.abs(z)))
        if np.abs(z[j]) <= np.real(np.vdot(z, x)):
            break
        x = np.zeros(n, dtype=complex)
        x[j] = 1.0
    return float(norm) * estimate


def _singular(matrix, circuit, node_names, branch_of) -> AnalysisError:
    f = circuit.frequency
    undetermined = ""
    if matrix.shape[0] <= DIAGNOSE_DENSE_LIMIT:
        dense = matrix.toarray()
        if np.all(np.isfinite(dense)):
            _, _, vh = np.linalg.svd(dense)
            null = np.abs(vh[-1].conj())
            labels = node_names + [f"I({name})" for name in branch_of]
            picked = [labels[i] for i in np.argsort(-null) if null[i] > 0.1 * null.max()]
            nodes = [p for p in picked if not p.startswith("I(")]
            currents = [p[2:-1] for p in picked if p.startswith("I(")]
            parts = []
            if nodes:
                parts.append("the voltage of node" + ("s " if len(nodes) > 1 else " ")
                             + ", ".join(nodes[:8]))
            if currents:
                parts.append("the current of " + ", ".join(currents[:8]))
            undetermined = " (" + " and ".join(parts) + " not determined)"
    return AnalysisError([Diagnostic(
        f"the circuit equations are singular at {f:g} Hz{undetermined}: the circuit has no "
        "unique solution",
        "common causes: an ideal inductor and capacitor at exact resonance with nothing else "
        "in the loop or at the node, controlled-source gains that cancel a path, or a "
        "coupling with |k| = 1 and nothing to limit the current")])
