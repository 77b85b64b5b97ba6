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

from . import accuracy
from .accuracy import CLD, Stamps
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
    #: Significant digits of each element's voltage and current that the extended-
    #: precision check trusts (0 to 15), in the order of ``names``.
    digits: np.ndarray | None = None
    #: Trusted significant digits of the node voltages that have fewer than 15.
    node_digits: dict[str, int] = field(default_factory=dict)

    def __repr__(self) -> str:
        return (f"Solution({len(self.names)} elements, {len(self.node_voltages)} nodes, "
                f"f={self.circuit.frequency:g} Hz, warnings={len(self.warnings)})")


def _impedance(kind: str, value: complex, omega) -> complex:
    """A passive's own impedance (in extended precision when ``omega`` is)."""
    if kind == "resistor" or kind == "impedance":
        return CLD(value)
    if kind == "capacitor":
        return 1.0 / (1j * omega * CLD(value))
    if kind == "inductor":
        return 1j * omega * CLD(value)
    return 1.0 / CLD(value)  # admittance


def solve(circuit: Circuit) -> Solution:
    """Solve ``circuit`` (already through ``checks.check_structure``) at its frequency.

    Raises ``AnalysisError`` when the equations are singular, naming what is undetermined,
    or when values are so extreme that double precision overflows.

    >>> from phasorbench.workflow import read_circuit
    >>> c = read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 10 V\\nR1: resistor a -> 0 5")
    >>> solve(c).current[1]
    (2+0j)
    """
    # Overflow and division by zero are checked explicitly below (names the element), so
    # numpy's floating-point warnings would only duplicate them.
    try:
        with np.errstate(all="ignore"):
            solution = _solve(circuit)
    except (ZeroDivisionError, OverflowError):
        raise AnalysisError([Diagnostic(
            f"a value of the circuit is out of range at {circuit.frequency:g} Hz "
            "(a division by zero or an overflow)", "check the values and units: values "
            "this extreme cannot be solved in double precision")]) from None
    _require_finite(solution)
    return solution


def _require_finite(solution: "Solution") -> None:
    bad = ~(np.isfinite(solution.voltage) & np.isfinite(solution.current))
    secondary_bad = [name for name, (v, i) in solution.secondary.items()
                     if not (np.isfinite(v) and np.isfinite(i))]
    if bad.any() or secondary_bad:
        names = [solution.names[k] for k in np.flatnonzero(bad)[:6]] + secondary_bad[:6]
        raise AnalysisError([Diagnostic(
            f"the results of {', '.join(names)} exceed the range of double-precision "
            "numbers", "check the values and units of the circuit: results above about "
            "1e308 cannot be represented")])


_ASSEMBLY_FIELDS = ("omega", "table", "elements", "names", "count", "all_nodes", "unknown",
                    "n_nodes", "node_names", "index", "p_all", "n_all", "branch_mask",
                    "branch_rows", "branch_of", "size", "A", "b", "nodal_rows", "y",
                    "others", "matrix")


def assemble(circuit: Circuit, frequency: float, tiny: frozenset = frozenset()) -> dict:
    """The MNA system of ``circuit`` at ``frequency`` (Hz): ``matrix`` (double CSC),
    ``b`` (extended precision), ``n_nodes``, ``node_names``, ``branch_of`` and the
    bookkeeping that reads element values back. The one builder shared by the
    single-frequency solve and the studies' engine."""
    omega = 2 * accuracy.PI * accuracy.LD(frequency)   # extended precision
    table = circuit.table()              # built once, shared with the structure checks
    elements, names, values = table.elements, table.names, table.values
    count = len(elements)
    codes = np.fromiter(map(_KIND_CODE.__getitem__, table.kinds), np.int8, count)

    # Unknown number of every node; references (ground, isolated parts' own) read the
    # appended 0 V at position -1.
    all_nodes = table.node_names
    is_reference = np.zeros(len(all_nodes), dtype=bool)
    for ref in (GROUND, *circuit.references):
        is_reference[table.node_index[ref]] = True
    unknown = np.full(len(all_nodes), -1, dtype=np.int64)
    n_nodes = int((~is_reference).sum())
    unknown[~is_reference] = np.arange(n_nodes)
    node_names = [all_nodes[k] for k in np.flatnonzero(~is_reference).tolist()]
    index = _NodeIndex(table.node_index, unknown)
    p_all, n_all = unknown[table.p[:count]], unknown[table.n[:count]]

    # Which elements need a branch-current unknown.
    branch_mask = codes >= _FIRST_BRANCH_CODE
    branch_mask |= (values == 0) & (codes <= _KIND_CODE["impedance"])
    sensing = np.flatnonzero((codes == _KIND_CODE["ccvs"]) | (codes == _KIND_CODE["cccs"]))
    special = {elements[k].sense_element for k in sensing.tolist()}
    special |= {name for c in circuit.couplings.values() for name in c.inductors}
    special |= set(tiny)
    if special:
        position = dict(zip(names, range(count)))
        branch_mask[[position[name] for name in special]] = True
    branch_rows = np.flatnonzero(branch_mask)
    branch_of = {names[k]: n_nodes + j for j, k in enumerate(branch_rows.tolist())}
    size = n_nodes + len(branch_of)

    A = Stamps()
    b = np.zeros(size, dtype=CLD)

    # Admittance-form passives: the bulk of any large circuit, stamped in one go.
    nodal_mask = (codes <= _KIND_CODE["admittance"]) & ~branch_mask
    nodal_rows = np.flatnonzero(nodal_mask)
    y = _admittances(codes[nodal_rows], values[nodal_rows], omega)
    if not np.all(np.isfinite(y)):
        bad = [names[k] for k in nodal_rows[~np.isfinite(y)][:6].tolist()]
        raise AnalysisError([Diagnostic(
            f"the admittance of {', '.join(bad)} at {circuit.frequency:g} Hz is out of "
            "range (infinite or not a number)", "check the values and units: a value "
            "this extreme cannot be solved in double precision")])
    p, n = p_all[nodal_rows], n_all[nodal_rows]
    A.add(np.concatenate([p, n, p, n]), np.concatenate([p, n, n, p]),
          np.concatenate([y, y, -y, -y]))

    others = np.flatnonzero(~nodal_mask).tolist()
    for k in others:
        _stamp(elements[k], branch_of.get(names[k]), index, branch_of, omega, A, b)
    for coupling in circuit.couplings.values():
        a, c = coupling.inductors
        zm = 1j * omega * accuracy.LD(coupling.m)
        A.add([branch_of[a], branch_of[c]], [branch_of[c], branch_of[a]], [-zm, -zm])

    matrix = accuracy.assembled(A, size)
    scope = locals()
    return {name: scope[name] for name in _ASSEMBLY_FIELDS}


def _solve(circuit: Circuit, tiny: frozenset = frozenset()) -> Solution:
    """One assembly and solve; ``tiny`` names passives given a branch-current unknown
    because, solved in admittance form, their current came from a cancelling difference
    of node voltages (see ``CANCELLATION_LIMIT``)."""
    system = assemble(circuit, circuit.frequency, tiny)
    (omega, table, elements, names, count, all_nodes, unknown, n_nodes, node_names, index,
     p_all, n_all, branch_mask, branch_rows, branch_of, size, A, b, nodal_rows, y, others,
     matrix) = (system[name] for name in _ASSEMBLY_FIELDS)
    x, error, condition, warnings = _factor_and_solve(matrix, A, b, circuit, node_names,
                                                      branch_of)

    v_ext = np.append(x[:n_nodes], CLD(0))       # index -1 reads the appended 0 V
    e_ext = np.append(error[:n_nodes], 0.0)
    voltage = v_ext[p_all] - v_ext[n_all]
    v_error = e_ext[p_all] + e_ext[n_all]
    current = np.zeros(count, dtype=CLD)
    i_error = np.zeros(count)
    current[nodal_rows] = y * voltage[nodal_rows]
    i_error[nodal_rows] = np.abs(y).astype(float) * v_error[nodal_rows]
    current[branch_rows] = x[n_nodes:]
    i_error[branch_rows] = error[n_nodes:]
    secondary = {}
    for k in others:
        e = elements[k]
        if e.kind == "transformer":
            v2 = v_ext[index[e.nodes[2]]] - v_ext[index[e.nodes[3]]]
            secondary[e.name] = (complex(v2), complex(-e.value.real * current[k]))
        elif branch_mask[k]:
            if e.name in tiny:
                # V = Z·I from the element's own unknown: no difference of node voltages
                voltage[k] = _impedance(e.kind, e.value, omega) * current[k]
                v_error[k] = abs(complex(_impedance(e.kind, e.value, omega))) * i_error[k]
            continue
        elif e.kind == "current":
            current[k] = e.value
        elif e.kind == "vccs":
            current[k] = e.value * (v_ext[index[e.sense_nodes[0]]] -
                                    v_ext[index[e.sense_nodes[1]]])
            i_error[k] = abs(e.value) * (e_ext[index[e.sense_nodes[0]]] +
                                         e_ext[index[e.sense_nodes[1]]])
        elif e.kind == "cccs":
            current[k] = e.value * x[branch_of[e.sense_element]]
            i_error[k] = abs(e.value) * error[branch_of[e.sense_element]]

    trust = _trust(names, voltage, current, v_error, i_error)
    if not tiny and len(nodal_rows) and trust[1]:
        # A passive whose voltage is a difference of nearly equal node voltages: its
        # current y·(Vp − Vn) has lost the digits the difference cancelled. Solved
        # again, only when that left it short of trusted digits, with a current
        # unknown of its own.
        big = np.maximum(np.abs(v_ext[p_all[nodal_rows]]),
                         np.abs(v_ext[n_all[nodal_rows]])).astype(float)
        small = np.abs(voltage[nodal_rows]).astype(float)
        cancelling = ((big > CANCELLATION_LIMIT * small) & (big > 0) &
                      (trust[0][nodal_rows] < accuracy.TRUST_DIGITS))
        if cancelling.any():
            return _solve(circuit, frozenset(names[k] for k in nodal_rows[cancelling]))

    node_voltages = dict(zip(all_nodes, v_ext[unknown].astype(complex).tolist()))
    node_digits = accuracy.digits(accuracy.relative_error(error[:n_nodes], x[:n_nodes]))
    short = np.flatnonzero(node_digits < 15).tolist()
    return Solution(circuit, names, node_voltages, voltage.astype(complex),
                    current.astype(complex), secondary,
                    tuple(circuit.warnings) + tuple(warnings) + trust[1], condition,
                    trust[0], {node_names[k]: int(node_digits[k]) for k in short})


#: An element whose voltage is this many times smaller than its nodes' voltages is
#: solved again with a current unknown of its own (its current is then not a
#: difference that cancels).
CANCELLATION_LIMIT = 1e3


def _trust(names, voltage, current, v_error, i_error):
    """Trusted significant digits of every element (the fewer of V and I), and the
    warning naming those below ``accuracy.TRUST_DIGITS``."""
    rel = np.maximum(accuracy.relative_error(v_error, voltage),
                     accuracy.relative_error(i_error, current))
    digits = accuracy.digits(rel)
    low = np.flatnonzero(digits < accuracy.TRUST_DIGITS)
    if not len(low):
        return digits, ()
    order = low[np.argsort(digits[low], kind="stable")]
    listed = ", ".join(f"{names[k]} ({digits[k]} digits)" for k in order[:8].tolist())
    more = f" and {len(low) - 8} more" if len(low) > 8 else ""
    fewest = int(digits[order[0]])
    return digits, (Diagnostic(
        f"results have lost digits to round-off: only about {fewest} significant digits "
        f"can be trusted for {listed}{more} (checked by the residual of the element "
        "equations in extended precision)",
        "values far apart in size (a tiny impedance beside large ones) or a circuit very "
        "near resonance cause this; the digits shown are limited to those that can be "
        "trusted", severity="warning"),)


class _NodeIndex:
    """Node name → unknown number (-1 for a reference), for the few per-element stamps."""

    __slots__ = ("_position", "_unknown")

    def __init__(self, position: dict[str, int], unknown: np.ndarray):
        self._position, self._unknown = position, unknown

    def __getitem__(self, name: str) -> int:
        return int(self._unknown[self._position[name]])


_KIND_CODE = {"resistor": 0, "impedance": 1, "capacitor": 2, "inductor": 3, "admittance": 4,
              "current": 5, "vccs": 6, "cccs": 7,
              "voltage": 8, "vcvs": 9, "ccvs": 10, "transformer": 11}
_FIRST_BRANCH_CODE = _KIND_CODE["voltage"]


def _stamp(e, col, index, branch_of, omega, A: Stamps, b: np.ndarray) -> None:
    """Stamp one element that is not a plain admittance (sources, branch-form elements)."""
    kind = e.kind
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
        return
    # Branch form: KCL gets +I at p and -I at n, and row `col` defines I.
    if kind == "transformer":
        p1, n1, p2, n2 = (index[x] for x in e.nodes)
        ratio = e.value.real
        A.add([p1, n1, p2, n2], [col] * 4, [1.0, -1.0, -ratio, ratio])
        A.add([col] * 4, [p1, n1, p2, n2], [1.0, -1.0, -ratio, ratio])
        return
    p, n = index[e.nodes[0]], index[e.nodes[1]]
    A.add([p, n], [col, col], [1.0, -1.0])
    if kind in ("voltage", "vcvs", "ccvs", "resistor", "impedance", "inductor", "capacitor"):
        A.add([col, col], [p, n], [1.0, -1.0])
    if kind == "voltage":
        b[col] = e.value
    elif kind == "vcvs":
        c, d = index[e.sense_nodes[0]], index[e.sense_nodes[1]]
        A.add([col, col], [c, d], [-e.value, e.value])
    elif kind == "ccvs":
        A.add([col], [branch_of[e.sense_element]], [-e.value])
    elif kind in ("resistor", "impedance", "capacitor"):
        z = 0.0 if is_short(e) else _impedance(kind, e.value, omega)
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


def _admittances(codes: np.ndarray, values: np.ndarray, omega) -> np.ndarray:
    values = values.astype(CLD)
    y = values.copy()
    by_z = codes <= _KIND_CODE["impedance"]
    y[by_z] = 1.0 / values[by_z]
    cap = codes == _KIND_CODE["capacitor"]
    y[cap] = 1j * omega * values[cap]
    ind = codes == _KIND_CODE["inductor"]
    y[ind] = 1.0 / (1j * omega * values[ind])
    return y


def _factor_and_solve(matrix, stamps, b, circuit, node_names, branch_of):
    """Factor, solve, refine against the unassembled stamps; returns (x in extended
    precision, componentwise error estimate, condition estimate, warnings)."""
    size = matrix.shape[0]
    if size == 0:
        return np.zeros(0, dtype=CLD), np.zeros(0), 1.0, []
    scaling = _equilibration(matrix)
    try:
        lu = splu(matrix)
        # the solve and the condition estimate's first step share one pass over the
        # factors
        first = np.stack([b.astype(complex), np.full(size, 1.0 / size) / scaling[0]], 1)
        both = lu.solve(first)
    except RuntimeError:
        raise _singular(matrix, circuit, node_names, branch_of) from None
    x = both[:, 0]
    if not np.all(np.isfinite(x)):
        raise _singular(matrix, circuit, node_names, branch_of)
    warnings = []
    condition = _condition_estimate(lu, scaling, both[:, 1])
    if not math.isfinite(condition) or condition > CONDITION_WARNING:
        digits = max(0, int(16 - math.log10(condition))) if math.isfinite(condition) else 0
        trust = (f"only about {digits} significant digits of the results can be trusted"
                 if digits else "the results may have no correct digits")
        warnings.append(Diagnostic(
            f"the equations are ill-conditioned (condition number about {condition:.1e}): "
            f"{trust}",
            "very large and very small impedances side by side, or a circuit at or near "
            "resonance, cause this; check values and units", severity="warning"))
    x, error, _ = accuracy.refine(lu, stamps, b, x)
    return x, error, condition, warnings


def _safe_inverse(values: np.ndarray) -> np.ndarray:
    out = np.ones_like(values, dtype=float)
    nonzero = values > 0
    out[nonzero] = 1.0 / values[nonzero]
    return out


def _equilibration(matrix):
    """Row and column scalings (r, c) to unit maximum magnitude, and the 1-norm of the
    scaled matrix B = R·A·C."""
    magnitude = abs(matrix).tocsr()
    r = _safe_inverse(magnitude.max(axis=1).toarray().ravel())
    scaled = magnitude.multiply(r[:, None]).tocsc()
    c = _safe_inverse(scaled.max(axis=0).toarray().ravel())
    norm = float((scaled.multiply(c[None, :])).sum(axis=0).max()) if matrix.shape[0] else 0.0
    return r, c, norm


def _condition_estimate(lu, scaling, first, iterations: int = 2) -> float:
    """1-norm condition estimate of the equilibrated matrix B = R·A·C (Hager's method,
    as in LAPACK's xLACON), reusing the factors of A; ``first`` is A⁻¹·(x₀/r) for the
    starting vector x₀ = 1/n, solved together with the circuit's own right-hand side.

    MNA rows mix siemens with dimensionless constraint rows, so the raw matrix's
    condition says more about units than about accuracy; scaling rows and columns to
    unit maximum first makes the number mean digits lost. A is factored unscaled (its
    pivots then keep the fill of a plain nodal matrix); B⁻¹ = C⁻¹·A⁻¹·R⁻¹ is applied
    through the same factors, so the estimate costs a few triangular solves.
    """
    r, c, norm = scaling
    n = len(r)
    x = np.full(n, 1.0 / n, dtype=complex)
    estimate = 0.0
    for step in range(iterations):
        y = (first if step == 0 else lu.solve(x / r)) / c      # B⁻¹·x
        estimate = max(estimate, float(np.abs(y).sum()))
        if not math.isfinite(estimate):
            return math.inf
        if step == iterations - 1:
            break
        magnitude_y = np.abs(y)
        xi = np.where(magnitude_y > 0, y / np.where(magnitude_y > 0, magnitude_y, 1), 1.0)
        z = lu.solve(xi / c, trans="H") / r           # B⁻ᴴ·ξ
        j = int(np.argmax(np.abs(z)))
        if np.abs(z[j]) <= np.real(np.vdot(z, x)):
            break
        x = np.zeros(n, dtype=complex)
        x[j] = 1.0
    return norm * estimate


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
