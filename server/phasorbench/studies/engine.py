"""Solving one circuit at many frequencies (studies.md, "Probes", "Frequency response").

The solver's one assembly (``solver.assemble``) runs twice, at 1 Hz and 2 Hz, to learn
the pattern: every unsummed stamp of the MNA matrix is a constant, proportional to ω
(jωC, jωL, jωM) or inversely proportional to it (1/jωL, 1/jωC), and the right-hand
side does not depend on ω at all. Per frequency only the values are restamped, summed
per entry as the single solve rounds them (linear.py); small systems are then solved as
one stacked dense solve per chunk (or, with a narrow band, banded LU point by point),
large ones with SuperLU per frequency over the same pattern and the first point's
column ordering. Probes are read from the unknowns as arrays, a whole chunk at a time.

``Z`` probes use the same matrix with a unit test current as the right-hand side (the
independent sources only ever enter the right-hand side, so that is the circuit with
every independent source zeroed). A frequency where the system is singular is reported,
not raised: its values are NaN and its index is listed.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse as sp

from ..accuracy import CLD, EPS, LD, PI
from ..model import GROUND, PASSIVE_KINDS, Circuit
from ..solver import assemble
from .linear import Band, Component, KeptOrder, rounded
from .probes import Impedance, Probe, Voltage

__all__ = ["DENSE_LIMIT", "CHUNK_BYTES", "Response", "SweepEngine", "sweep_response",
           "zero_own_frequency_sources"]

#: Systems up to this many unknowns are solved as stacked dense matrices.
DENSE_LIMIT = 120
#: Bytes of one chunk of stacked matrices and stamp values (bounds a sweep's memory).
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


class SweepEngine:
    """The pattern of ``circuit``'s MNA system, built once; ``response(frequencies)``
    restamps values and solves (own-``freq`` sources zeroed by the caller).

    Every matrix entry is kept as three sums of its stamps, taken once in extended
    precision: the constant part, the part ∝ ω and the part ∝ 1/ω, with the sums of
    their magnitudes for the single solve's rounding rule. Entries are held in the
    column-major order of the CSC pattern, so one frequency's values are the data array
    of its sparse matrix as they come; only the entries that move with ω are computed
    per frequency. Large systems keep the column ordering of their first factorisation
    for every later point: the factor then skips the ordering."""

    def __init__(self, circuit: Circuit, probes: list[Probe]):
        self.circuit = circuit
        low, high = assemble(circuit, 1.0), assemble(circuit, 2.0)
        self.system = low
        size = self.size = low["size"]
        rows, cols, v1 = low["A"].joined()
        v2 = high["A"].joined()[2]
        w1 = 2 * PI
        with np.errstate(all="ignore"):
            ratio = np.where(v1 != 0, v2 / np.where(v1 != 0, v1, 1), 1)
        grows = np.abs(ratio - 2) < 1e-9
        falls = np.abs(ratio - 0.5) < 1e-9
        key = rows * size + cols
        order = np.argsort(key, kind="stable")
        key = key[order]
        const = np.where(grows | falls, 0, v1)[order].astype(CLD)
        grow = np.where(grows, v1 / w1, 0)[order].astype(CLD)
        fall = np.where(falls, v1 * w1, 0)[order].astype(CLD)
        starts = np.flatnonzero(np.r_[True, key[1:] != key[:-1]]) if len(key) \
            else np.zeros(0, dtype=np.int64)
        unique = key[starts]
        rows, cols = unique // max(size, 1), unique % max(size, 1)
        by_column = np.lexsort((rows, cols))           # the CSC pattern's order
        self._rows, self._cols = rows[by_column], cols[by_column]
        self._flat = self._rows * size + self._cols
        self._csc_indices = self._rows.astype(np.int32)
        self._csc_indptr = np.searchsorted(self._cols, np.arange(size + 1)).astype(np.int32)

        def per_entry(values):
            if not len(starts):
                return np.zeros(0, dtype=values.dtype)
            return np.add.reduceat(values, starts)[by_column]
        parts = [per_entry(v) for v in (const, grow, fall)]
        sizes = [per_entry(np.abs(v)) for v in (const, grow, fall)]
        moving = (parts[1] != 0) | (parts[2] != 0)
        self._moving = np.flatnonzero(moving)
        self._parts = [x[moving] for x in parts]
        self._plan = [Component(getattr(x[moving], name) for x in parts)
                      for name in ("real", "imag")]
        self._sizes = [x[moving].astype(float) for x in sizes]
        fixed = parts[0][~moving]
        self._fixed = np.flatnonzero(~moving)
        self._fixed_values = rounded(fixed, sizes[0][~moving])
        self._take_probes(probes)
        self.dense = size <= DENSE_LIMIT
        self._kept = KeptOrder(self._csc_indices, self._csc_indptr, size)
        # row sums of entry-by-entry products: the residual A·x from the pattern
        self._row_sum = sp.csr_matrix((np.ones(self.entries), (self._rows,
                                       np.arange(self.entries))),
                                      shape=(size, self.entries))
        self._band = Band.of(self._rows, self._cols, size) if self.dense else None

    def _take_probes(self, probes: list[Probe]) -> None:
        """The probes' right-hand sides (the sources' column, one unit-current column
        per ``Z`` pair) and their readers: all of the engine that depends on them."""
        self.probes = probes
        self._keys, self._rhs = _right_hand_sides(self.system, probes)
        self._readers = {p.text: [_reader(part, self.system, self.circuit, self._keys)
                                  for part in p.parts()] for p in probes}

    def for_probes(self, probes: list[Probe]) -> "SweepEngine":
        """An engine for other probes of the same circuit that shares this one's
        pattern, stamps, band order and kept column order (nothing is assembled or
        ordered again): its right-hand sides are those a new ``SweepEngine(circuit,
        probes)`` would have, so every point it solves has the same bits."""
        other = copy.copy(self)
        other._take_probes(probes)
        return other

    @property
    def entries(self) -> int:
        return len(self._rows)

    def matrices(self, frequencies) -> np.ndarray:
        """The rounded entries of the matrix at each frequency, shape (F, entries), in
        the CSC pattern's order."""
        count = len(frequencies)
        out = np.empty((count, self.entries), dtype=complex)
        out[:, self._fixed] = self._fixed_values
        out[:, self._moving] = self._moving_values(frequencies)
        return out

    def _moving_values(self, frequencies) -> np.ndarray:
        """The entries that move with ω, summed as the single solve sums its stamps: a
        real or imaginary part of two or three terms (an L and a C on one node) in
        extended precision and rounded once, a part of one term in double precision (one
        product or quotient, within an ulp of the extended value), an entry within the
        rounding of its own parts zero: shape (F, moving)."""
        omega = (2 * PI * np.asarray(frequencies, dtype=LD))[:, None]
        rounded = omega.astype(float)
        out = np.empty((len(omega), len(self._moving)), dtype=complex)
        for plan, part in zip(self._plan, (out.real, out.imag)):
            plan.fill(part, omega, rounded)
        ag, ac, ar = self._sizes
        out[np.abs(out) <= 4 * EPS * (ag + ac * rounded + ar / rounded)] = 0
        return out

    def sparse_matrix(self, entries: np.ndarray):
        """One frequency's entries as the CSC matrix the single solve factors."""
        return sp.csc_matrix((entries, self._csc_indices, self._csc_indptr),
                             shape=(self.size, self.size))

    def response(self, frequencies) -> Response:
        frequencies = np.asarray(frequencies, dtype=float)
        count = len(frequencies)
        values = {p.text: np.full(count, np.nan + 0j) for p in self.probes}
        singular, zero_den = [], {p.text: [] for p in self.probes}
        size = self.size
        stacked = self.dense and self._band is None
        width = self._band.width if self._band is not None else 0
        per_point = 80 * max(1, len(self._moving)) + 16 * self.entries + \
            (32 * size * size if stacked else 16 * size * width) + \
            48 * size * self._rhs.shape[1]
        chunk = max(1, min(count, CHUNK_BYTES // per_point))
        stack = None
        if stacked and size:
            stack = np.zeros((chunk, size, size), dtype=complex)
            stack.reshape(chunk, size * size)[:, self._flat[self._fixed]] = self._fixed_values
        with np.errstate(all="ignore"):
            for start in range(0, count, chunk):
                f = frequencies[start:start + chunk]
                x, bad = self._solve(f, stack)
                singular.extend((start + bad).tolist())
                omega = 2 * np.pi * f
                for probe in self.probes:
                    parts = [read(x, omega) for read in self._readers[probe.text]]
                    if len(parts) == 1:
                        out = parts[0]
                    else:
                        den = parts[1]
                        zero = ~np.isfinite(den) | (den == 0)
                        zero[bad] = False
                        zero_den[probe.text].extend((start + np.flatnonzero(zero)).tolist())
                        out = np.where(zero, np.nan, parts[0] / np.where(zero, 1, den))
                    out = np.asarray(out, dtype=complex) * np.ones(len(f))
                    out[bad] = np.nan
                    values[probe.text][start:start + len(f)] = out
        return Response(frequencies, values, sorted(singular), zero_den)

    def _solve(self, f: np.ndarray, stack):
        """Unknowns (F, size, right-hand sides) and the indices of singular points."""
        b = self._rhs
        if not self.size:
            return np.zeros((len(f), 0, b.shape[1]), dtype=complex), np.zeros(0, int)
        if self.dense:
            return self._dense(f, None if stack is None else stack[:len(f)], b)
        return self._sparse(f, b)

    def _dense(self, f, stack, b):
        """One stacked LAPACK solve (or, for a narrow band, LAPACK's banded solve point
        by point); a chunk with a singular point again point by point. The stack is kept
        from chunk to chunk: only the moving entries are written."""
        count, size = len(f), self.size
        moving = self._moving_values(f)
        if self._band is not None:
            x = self._band.solve(self._fixed, self._fixed_values, self._moving, moving, b)
            if self._well_posed(moving, np.nan_to_num(x), b, finite=np.isfinite(x)):
                return x, np.flatnonzero(~np.all(np.isfinite(x), axis=(1, 2)))
        else:
            stack.reshape(count, size * size)[:, self._flat[self._moving]] = moving
            try:
                x = np.linalg.solve(stack, b)
                if np.all(np.isfinite(x)) and self._well_posed(moving, x, b):
                    return x, np.zeros(0, int)
            except np.linalg.LinAlgError:
                x = None
        for k in range(count):          # a chunk with a singular point: one by one
            if self._band is None:
                try:
                    xk = np.linalg.solve(self._stacked(moving[k]), b)
                except np.linalg.LinAlgError:
                    xk = None
            else:
                xk = x[k]
            if xk is None or not (np.all(np.isfinite(xk)) and
                                  self._well_posed(moving[k:k + 1], xk[None], b)):
                xk = np.full((size, b.shape[1]), np.nan + 0j)
            if x is None:
                x = np.full((count, size, b.shape[1]), np.nan + 0j)
            x[k] = xk
        bad = np.flatnonzero(~np.all(np.isfinite(x), axis=(1, 2)))
        return x, bad

    def _stacked(self, moving):
        matrix = np.zeros(self.size * self.size, dtype=complex)
        matrix[self._flat[self._fixed]] = self._fixed_values
        matrix[self._flat[self._moving]] = moving
        return matrix.reshape(self.size, self.size)

    def _well_posed(self, moving, x, b, finite=None) -> bool:
        """A stacked dense solve of an exactly singular matrix can return huge finite
        values; the residual tells (each such chunk is redone point by point). The
        residual A·x − b is formed from the pattern's entries (a sparse row sum), not
        the dense stack; ``finite`` marks the points to judge (others are NaN anyway)."""
        if finite is not None:
            keep = np.all(finite, axis=(1, 2))
            if not keep.all():
                moving, x = moving[keep], x[keep]
            if not len(x):
                return True
        entries = np.empty((len(x), self.entries), dtype=complex)
        entries[:, self._fixed] = self._fixed_values
        entries[:, self._moving] = moving
        residual = 0.0
        for m in range(x.shape[2]):
            ax = self._row_sum @ (entries * np.take(x[:, :, m], self._cols, axis=1)).T
            residual = max(residual, float(np.abs(ax - b[:, m, None]).max()))
        scale = np.abs(entries).max() * np.abs(x).max() + np.abs(b).max()
        return bool(residual <= 1e-8 * max(scale, 1e-300))

    def _sparse(self, f, b):
        """SuperLU per point over the one pattern, the matrix's data array restamped in
        place; the column ordering found at the first point kept for the rest."""
        x = np.full((len(f), self.size, b.shape[1]), np.nan + 0j)
        data = np.zeros(self.entries, dtype=complex)      # the CSC data array
        data[self._fixed] = self._fixed_values
        per = max(1, CHUNK_BYTES // (80 * max(1, len(self._moving))))
        for first in range(0, len(f), per):
            moving = self._moving_values(f[first:first + per])
            for j in range(len(moving)):
                data[self._moving] = moving[j]
                xk = self._kept.solve(data, b)
                if xk is not None and np.all(np.isfinite(xk)):
                    x[first + j] = xk
        bad = np.flatnonzero(~np.all(np.isfinite(x), axis=(1, 2)))
        return x, bad


def sweep_response(circuit: Circuit, probes: list[Probe], frequencies) -> Response:
    """Every probe at every frequency (Hz) of ``circuit`` (own-``freq`` sources zeroed
    by the caller). NaN marks a singular frequency or a zero denominator."""
    return SweepEngine(circuit, probes).response(frequencies)


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


def _difference(column: int, a: int, b: int):
    def read(x, omega):
        va = x[:, a, column] if a >= 0 else 0j
        vb = x[:, b, column] if b >= 0 else 0j
        return va - vb
    return read


def _reader(part, system: dict, circuit: Circuit, keys: list):
    """A function (unknowns, ω) → the part's value at each frequency of a chunk."""
    if isinstance(part, Voltage):
        return _difference(0, _unknown(system, part.a.node),
                           _unknown(system, part.b.node) if part.b else -1)
    if isinstance(part, Impedance):
        key = (part.a.node, part.b.node if part.b else GROUND)
        return _difference(keys.index(key), _unknown(system, key[0]),
                           _unknown(system, key[1]))
    e = circuit.elements[part.element.name]
    branch = system["branch_of"].get(e.name)
    if branch is not None:
        return lambda x, omega: x[:, branch, 0]
    if e.kind in PASSIVE_KINDS:
        across = _difference(0, _unknown(system, e.nodes[0]), _unknown(system, e.nodes[1]))
        value = e.value
        if e.kind in ("resistor", "impedance"):
            return lambda x, omega: across(x, omega) / value
        if e.kind == "capacitor":
            return lambda x, omega: 1j * omega * value * across(x, omega)
        if e.kind == "inductor":
            return lambda x, omega: across(x, omega) / (1j * omega * value)
        return lambda x, omega: value * across(x, omega)          # admittance
    if e.kind == "current":
        return lambda x, omega: np.full(x.shape[0], complex(e.value))
    if e.kind == "vccs":
        sensed = _difference(0, _unknown(system, e.sense_nodes[0]),
                             _unknown(system, e.sense_nodes[1]))
        return lambda x, omega: e.value * sensed(x, omega)
    sense = system["branch_of"][e.sense_element]                   # cccs
    return lambda x, omega: e.value * x[:, sense, 0]


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
