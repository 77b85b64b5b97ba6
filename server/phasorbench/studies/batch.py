"""Many runs of one circuit with moving part values: the MNA pattern built once by the
solver's own assembly, each run's matrix the nominal one plus the moving parts' stamps
(studies.md, "Tolerance"). Small systems are solved as stacked dense matrices, large
ones sparse per run over the one shared pattern (SuperLU). Probes are read by the
sweep's probe evaluator (``engine._simple_value``) over all runs at once.

Sensitivities come from the adjoint system: for a probe X = cᵀx with A x = b,
dX/dq = −λᵀ(∂A/∂q x − ∂b/∂q) + ∂X/∂q|explicit where Aᵀλ = c: one transposed solve per
probe part, whatever the number of quantities.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

from ..model import GROUND, Circuit
from ..solver import assemble
from .engine import CHUNK_BYTES, DENSE_LIMIT, _right_hand_sides, _simple_value, _unknown
from .parameters import Quantities, entities, value_derivatives, value_matrix
from .probes import Current, Impedance, Probe, Voltage

#: g(v) of each stamp law and its derivative g'(v); ``jw`` is ω, filled per circuit.
_LAWS = ("inv", "jw", "invjw", "id")


def _stamp_laws(w: float):
    """g(v) of each law of ``_LAWS`` at ω = ``w``, None for "id" (g(v) = v)."""
    return (lambda x: 1 / x, lambda x: (1j * w) * x, lambda x: 1 / ((1j * w) * x), None)


@dataclass
class Values:
    """Probe values of a batch of runs; ``bad`` marks singular runs or zero denominators."""

    values: dict[str, np.ndarray]
    bad: np.ndarray


class Batch:
    """One circuit, its moving parts' stamps, and solves of any number of runs."""

    def __init__(self, circuit: Circuit, q: Quantities, probes: list[Probe],
                 frequency: float):
        self.circuit, self.q, self.probes = circuit, q, probes
        self.omega = 2 * math.pi * frequency
        system = assemble(circuit, frequency)
        self.system = system
        self.size = system["size"]
        self.keys, b = _right_hand_sides(system, probes)
        self.B0 = np.asarray(b, dtype=complex)
        self.A0 = sp.csc_matrix(system["matrix"], dtype=complex)
        self.entities = entities(q)
        self._stamps()
        self.v0 = value_matrix(q, np.ones((1, len(q.params))))[0]
        #: the moving elements a probe reads a value of (a current of a passive)
        self.read = {part.element.name: self.entities.index(part.element.name)
                     for p in probes for part in p.parts()
                     if isinstance(part, Current) and part.element.name in self.entities}
        self.g0 = self._g(self.v0[None, :])[0]
        self.dense = self.size <= DENSE_LIMIT
        self._sparse_pattern()
        self._buffers = None        # (stack, b): kept between blocks, only moving entries reset

    # -- the moving stamps --------------------------------------------------------------

    def _stamps(self) -> None:
        system, circuit = self.system, self.circuit
        branch_of = system["branch_of"]
        rows, cols, signs, owner = [], [], [], []
        rhs_rows, rhs_signs, rhs_owner = [], [], []
        laws = []

        def entry(r, c, sign, j):
            if r >= 0 and c >= 0:
                rows.append(r), cols.append(c), signs.append(sign), owner.append(j)

        def rhs(r, sign, j):
            if r >= 0:
                rhs_rows.append(r), rhs_signs.append(sign), rhs_owner.append(j)
        for j, name in enumerate(self.entities):
            if name in circuit.couplings:
                a, c = (branch_of[n] for n in circuit.couplings[name].inductors)
                entry(a, c, -1.0, j), entry(c, a, -1.0, j)
                laws.append("jw")
                continue
            e = circuit.elements[name]
            p, n = _unknown(system, e.nodes[0]), _unknown(system, e.nodes[1])
            col = branch_of.get(name)
            if e.kind in ("voltage", "current"):
                laws.append("id")
                if col is not None:
                    rhs(col, 1.0, j)
                else:
                    rhs(p, -1.0, j), rhs(n, 1.0, j)
                continue
            if col is None:
                law = {"resistor": "inv", "impedance": "inv", "capacitor": "jw",
                       "inductor": "invjw", "admittance": "id"}[e.kind]
                entry(p, p, 1.0, j), entry(n, n, 1.0, j)
                entry(p, n, -1.0, j), entry(n, p, -1.0, j)
            elif e.kind == "admittance":
                law = "id"
                entry(col, p, -1.0, j), entry(col, n, 1.0, j)
            else:
                law = {"resistor": "id", "impedance": "id", "capacitor": "invjw",
                       "inductor": "jw"}[e.kind]
                entry(col, col, -1.0, j)
            laws.append(law)
        self.laws = np.array([_LAWS.index(law) for law in laws], dtype=np.int8)
        #: the entities of each law (indices, in ``_LAWS`` order): g(v) and g'(v) are
        #: computed law by law, over runs × entities and entities × runs alike
        self._law_index = [np.flatnonzero(self.laws == code)
                           for code in range(len(_LAWS))]
        self.rows, self.cols = np.array(rows, dtype=np.int64), np.array(cols, dtype=np.int64)
        self.signs, self.owner = np.array(signs), np.array(owner, dtype=np.int64)
        self.rhs_rows = np.array(rhs_rows, dtype=np.int64)
        self.rhs_signs, self.rhs_owner = np.array(rhs_signs), np.array(rhs_owner,
                                                                       dtype=np.int64)

    def _g(self, v: np.ndarray) -> np.ndarray:
        """The stamped quantity g(v) of every entity (columns) for every run (rows)."""
        out = np.empty_like(v)
        with np.errstate(all="ignore"):
            for cols, fn in zip(self._law_index, _stamp_laws(self.omega)):
                if len(cols):
                    out[:, cols] = v[:, cols] if fn is None else fn(v[:, cols])
        return out

    def _dg(self, v: np.ndarray) -> np.ndarray:
        """g'(v) per entity (a vector of entity values)."""
        w = self.omega
        out = np.empty_like(v)
        laws = (lambda x: -1 / x ** 2, lambda x: 1j * w + 0 * x,
                lambda x: -1 / (1j * w * x ** 2), lambda x: 1 + 0 * x)
        for cols, fn in zip(self._law_index, laws):
            out[cols] = fn(v[cols])
        return out

    def _sparse_pattern(self) -> None:
        """The nominal matrix with explicit room for every moving entry, and where each
        moving entry sits in its data."""
        size = self.size
        a0 = self.A0.tocoo()
        zeros = np.zeros(len(self.rows), dtype=complex)
        pattern = sp.coo_matrix((np.concatenate([a0.data, zeros]),
                                 (np.concatenate([a0.row, self.rows]),
                                  np.concatenate([a0.col, self.cols]))),
                                shape=(size, size)).tocsc()
        pattern.sum_duplicates()
        pattern.sort_indices()
        self.pattern = pattern
        column_of = np.repeat(np.arange(size), np.diff(pattern.indptr))
        keys = column_of * size + pattern.indices
        self.position = np.searchsorted(keys, self.cols * size + self.rows)
        # sparse map from entity changes to data changes, and to flat dense positions
        self.to_data = sp.csr_matrix((self.signs, (self.owner, self.position)),
                                     shape=(len(self.entities), len(pattern.data)))
        flat = self.rows * size + self.cols
        self.flat, where = np.unique(flat, return_inverse=True)
        self.to_flat = sp.csr_matrix((self.signs, (self.owner, where)),
                                     shape=(len(self.entities), len(self.flat)))
        self.to_rhs = sp.csr_matrix((self.rhs_signs, (self.rhs_owner, self.rhs_rows)),
                                    shape=(len(self.entities), size))

    # -- many runs ----------------------------------------------------------------------

    def run(self, scales: np.ndarray) -> Values:
        """The probes for every row of ``scales`` (rows: runs; columns: quantities)."""
        v = value_matrix(self.q, scales)
        values = {name: v[:, j] for name, j in self.read.items()}
        dv = v - self.v0 if self.to_rhs.nnz else None      # sources move the right side
        runs = len(scales)
        step = max(1, CHUNK_BYTES // max(1, 16 * self.size * self.size))
        if self.dense:
            if runs <= step:
                return self._read(self._dense(v, dv), values)
            x = np.full((runs, self.size, self.B0.shape[1]), np.nan + 0j)
            for start in range(0, runs, step):
                block = slice(start, min(start + step, runs))
                x[block] = self._dense(v[block], None if dv is None else dv[block])
            return self._read(x, values)
        dg = self._g(v)
        dg -= self.g0
        x = np.full((runs, self.size, self.B0.shape[1]), np.nan + 0j)
        for k in range(runs):
            x[k] = self._sparse(dg[k], None if dv is None else dv[k])
        return self._read(x, values)

    def _rhs(self, dv: np.ndarray | None, runs: int = 1) -> np.ndarray:
        b = np.broadcast_to(self.B0, (runs if dv is None else len(dv),) +
                            self.B0.shape).copy()
        if dv is not None and self.to_rhs.nnz:
            b[:, :, 0] += (self.to_rhs.T @ dv.T).T
        return b

    def _g_by_entity(self, v: np.ndarray) -> np.ndarray:
        """g(v) as entity × run (rows: entities), the layout the moving entries are
        made from: each law's rows gathered whole."""
        vt = np.ascontiguousarray(v.T)
        with np.errstate(all="ignore"):
            for rows, fn in zip(self._law_index, _stamp_laws(self.omega)):
                if fn is not None and len(rows):
                    vt[rows] = fn(vt[rows])
        return vt

    def _dense(self, v: np.ndarray, dv: np.ndarray | None) -> np.ndarray:
        """One block of runs by a stacked dense solve. The kept stack holds each run's
        matrix transposed (column by column, the order LAPACK reads): only the moving
        entries are rewritten, and the solve copies no rows into columns."""
        n, runs = self.size, len(v)
        if self._buffers is None or len(self._buffers[0]) < runs:
            self._dense_setup(runs)
        columns, b = (buffer[:runs] for buffer in self._buffers)
        stack = columns.transpose(0, 2, 1)                   # each run's A, a view
        # the moving entries position by position (rows), run by run (columns)
        moving = np.zeros((0, runs), complex)
        if len(self.flat):          # linalg.solve leaves its input alone: reset what moves
            moving = self._flat_of @ self._g_by_entity(v)
            moving += self._flat_c0[:, None]
            columns.reshape(runs, n * n)[:, self._flat_t] = moving.T
        if dv is not None and len(self._rhs_rows):
            b[:, self._rhs_rows, 0] = self.B0[self._rhs_rows, 0] + \
                (self.to_rhs.T @ dv.T).T[:, self._rhs_rows]
        with np.errstate(all="ignore"):
            try:
                x = np.linalg.solve(stack, b)
                if np.all(np.isfinite(x)) and self._well_posed(moving, x, b):
                    return x
            except np.linalg.LinAlgError:
                pass
        return np.stack([self._solve_one(stack[k], b[k]) for k in range(runs)])

    def _dense_setup(self, runs: int) -> None:
        """The kept stack (each run's nominal matrix, transposed) and right-hand sides,
        and the maps of the moving entries: from the entities' values, and to the rows
        they sit in."""
        n = self.size
        a0 = self.A0.toarray()
        self._rhs_rows = np.unique(self.rhs_rows)
        self._buffers = (np.broadcast_to(a0.T, (runs, n, n)).copy(),
                         np.broadcast_to(self.B0, (runs,) + self.B0.shape).copy())
        self._flat_of = self.to_flat.T.tocsr()             # moving entry × entity
        # a moving entry = its nominal value + Σ sign·(g − g0): the constant part once
        self._flat_c0 = a0.reshape(-1)[self.flat] - self._flat_of @ self.g0
        rows, self._flat_cols = np.divmod(self.flat, n)
        self._flat_t = self._flat_cols * n + rows            # where it sits transposed
        self._to_rows = sp.csr_matrix((np.ones(len(self.flat)),
                                       (rows, np.arange(len(self.flat)))),
                                      shape=(n, len(self.flat)))
        # the matrix less its moving entries: A = rest + the moving entries
        keep = np.ones(n * n, bool)
        keep[self.flat] = False
        rest = np.where(keep.reshape(n, n), a0, 0)
        self._rest_rows = sp.csr_matrix(rest)

    def _well_posed(self, moving, x, b) -> bool:
        """engine._well_posed's residual test, its scale from the nominal matrix and the
        moving entries rather than a pass over the whole stack (|z| ≤ |re| + |im|).

        The residual is the fixed entries times x (one sparse product over all runs)
        plus the moving entries times x, less b, each unknown a row and each run a
        column: the stack is not read again."""
        def bound(a):
            if not a.size:
                return 0.0
            re, im = a.real, a.imag          # max |·| without a temporary of |·|
            return float(max(re.max(), -re.min()) + max(im.max(), -im.min()))
        if not hasattr(self, "_a0_bound"):
            self._a0_bound = bound(self.A0.data) if self.A0.nnz else 0.0
            self._b0_bound = bound(self.B0)
        residual = 0.0
        for j in range(x.shape[2]):
            xj = np.ascontiguousarray(x[:, :, j].T)                 # unknown × run
            r = self._rest_rows @ xj
            if len(moving):
                r += self._to_rows @ (moving * xj[self._flat_cols])
            r -= b[:, :, j].T
            residual = max(residual, bound(r))
        # b is the nominal right side in every run unless sources move
        rhs_bound = bound(b) if len(self._rhs_rows) else self._b0_bound
        x_bound = bound(x)
        if residual <= 1e-8 * max(self._a0_bound * x_bound + rhs_bound, 1e-300):
            return True      # passes with the nominal scale: the moving entries' larger
        #                      scale (the max below) could only pass it too
        scale = max(self._a0_bound, bound(moving)) * x_bound + rhs_bound
        return residual <= 1e-8 * max(scale, 1e-300)

    def _matrix(self, dg: np.ndarray) -> sp.csc_matrix:
        data = self.pattern.data + self.to_data.T @ dg
        return sp.csc_matrix((data, self.pattern.indices, self.pattern.indptr),
                             shape=self.pattern.shape)

    def _sparse(self, dg: np.ndarray, dv: np.ndarray | None) -> np.ndarray:
        b = self._rhs(None if dv is None else dv[None, :])[0]
        return self._solve_one(self._matrix(dg), b)

    def _solve_one(self, matrix, b) -> np.ndarray:
        try:
            with np.errstate(all="ignore"):
                x = splu(sp.csc_matrix(matrix)).solve(b)
        except RuntimeError:
            return np.full(b.shape, np.nan + 0j)
        return x if np.all(np.isfinite(x)) else np.full(b.shape, np.nan + 0j)

    def _read(self, x: np.ndarray, values: dict) -> Values:
        """Every probe over all runs, by the sweep's probe evaluator."""
        runs = x.shape[0]
        bad = ~np.all(np.isfinite(x), axis=(1, 2))
        test = {key: x[:, :, j].T for j, key in enumerate(self.keys) if key is not None}
        out = {}
        with np.errstate(all="ignore"):
            for probe in self.probes:
                parts = [np.broadcast_to(_simple_value(part, x[:, :, 0].T, self.system,
                                                       self.circuit, self.omega, test,
                                                       values), (runs,))
                         for part in probe.parts()]
                value = parts[0] if len(parts) == 1 else parts[0] / parts[1]
                if len(parts) == 2:
                    bad = bad | (parts[1] == 0)
                out[probe.text] = np.asarray(value, dtype=complex)
        return Values(out, bad)

    # -- sensitivities ----------------------------------------------------------------

    def point(self, scales: np.ndarray | None = None):
        """(probe values, d ln X / d ln q per probe) at ``scales`` (default nominal): the
        adjoint system, one transposed solve per probe part."""
        m = len(self.q.params)
        at = np.ones(m) if scales is None else np.asarray(scales, dtype=float)
        v = value_matrix(self.q, at[None, :])[0]
        dg = self._g(v[None, :])[0] - self.g0
        matrix = self._matrix(dg)
        b = self._rhs((v - self.v0)[None, :])[0]
        lu = splu(sp.csc_matrix(matrix))
        x = lu.solve(b)
        dv = value_derivatives(self.q, at)                     # entity × quantity
        dgq = self._dg(v)[:, None] * dv
        flat = {name: v[j] for j, name in enumerate(self.entities)}
        result, sens = {}, {}
        for probe in self.probes:
            pieces = [self._part(part, x, lu, flat, dv, dgq) for part in probe.parts()]
            if len(pieces) == 1:
                value, dlog = pieces[0][0], pieces[0][1] / pieces[0][0]
            else:
                (n, dn), (d, dd) = pieces
                value, dlog = n / d, dn / n - dd / d
            result[probe.text] = value
            sens[probe.text] = dlog
        return result, sens

    def _part(self, part, x, lu, values, dv, dgq):
        """(value, dX/dln q for every q) of one simple probe."""
        size = self.size
        c = np.zeros(size, dtype=complex)
        explicit = np.zeros(dv.shape[1], dtype=complex)
        column = 0
        system, circuit = self.system, self.circuit
        if isinstance(part, (Voltage, Impedance)):
            for node, sign in ((part.a.node, 1.0),
                               (part.b.node if part.b else GROUND, -1.0)):
                k = _unknown(system, node)
                if k >= 0:
                    c[k] += sign
            if isinstance(part, Impedance):
                column = self.keys.index((part.a.node, part.b.node if part.b else GROUND))
        else:
            e = circuit.elements[part.element.name]
            j = self.entities.index(e.name) if e.name in values else None
            col = system["branch_of"].get(e.name)
            if col is not None:
                c[col] = 1.0
            elif e.kind in ("current",):
                if j is not None:
                    explicit += dv[j]
            elif e.kind in ("vccs", "cccs"):
                if e.kind == "vccs":
                    for node, sign in zip(e.sense_nodes, (1.0, -1.0)):
                        k = _unknown(system, node)
                        if k >= 0:
                            c[k] += sign * e.value
                else:
                    c[system["branch_of"][e.sense_element]] = e.value
            else:
                p, n = _unknown(system, e.nodes[0]), _unknown(system, e.nodes[1])
                value = values.get(e.name, e.value)
                y = _simple_value(part, _unit(size, p, n), system,
                                  circuit, self.omega, {}, {e.name: value})
                if p >= 0:
                    c[p] += y
                if n >= 0:
                    c[n] -= y
                if j is not None:
                    explicit += dgq[j] * ((x[p, 0] if p >= 0 else 0) -
                                          (x[n, 0] if n >= 0 else 0))
        xj = x[:, column]
        value = c @ xj + (values.get(part.element.name, 0) if isinstance(part, Current) and
                          circuit.elements[part.element.name].kind == "current" and
                          system["branch_of"].get(part.element.name) is None else 0)
        lam = lu.solve(c, trans="T") if np.any(c) else np.zeros(size, complex)
        t = np.zeros(len(self.entities), dtype=complex)
        np.add.at(t, self.owner, self.signs * lam[self.rows] * xj[self.cols])
        d = -(dgq.T @ t)
        if column == 0 and len(self.rhs_rows):
            r = np.zeros(len(self.entities), dtype=complex)
            np.add.at(r, self.rhs_owner, self.rhs_signs * lam[self.rhs_rows])
            d = d + dv.T @ r
        return value, d + explicit


def _unit(size, p, n):
    """A unit voltage across p→n (what the probe evaluator turns into the admittance)."""
    x = np.zeros(max(size, 1), dtype=complex)
    if p >= 0:
        x[p] = 1.0
    else:
        x[n] = -1.0
    return x
