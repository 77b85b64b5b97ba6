"""How many digits of a solve can be trusted: extended-precision residuals of the
unassembled element equations, iterative refinement, and a per-element digit count.

The matrix handed to SuperLU is the sum of every element's stamp rounded to double
precision. Where stamps nearly cancel (an L and a C close to resonance on one node, a
tiny impedance beside large ones) that sum has lost digits before any solving starts,
and no condition estimate of the assembled matrix can see it. So the stamps are kept
unsummed in numpy's ``longdouble`` (64-bit mantissa on x86-64, about 19 digits), the
residual ``b − Σ stamps·x`` is formed from them, and the double-precision factors
correct ``x`` (Wilkinson's iterative refinement) until the correction stops shrinking.

The error left is estimated componentwise as ``|A⁻¹|·(ε·|A|·|x| + |r|)`` (Oettli–Prager
backward error through the solve, evaluated with the same factors), and carried to every
element's voltage and current. Values whose relative error exceeds ``TRUST_DIGITS`` get a
warning that names them and the digits that can be trusted.
"""

from __future__ import annotations

import math

import numpy as np

LD = np.longdouble
CLD = np.clongdouble
#: π to extended precision (ω = 2πf is formed in it: near resonance the rounding of a
#: double ω alone moves the answer).
PI = np.arccos(LD(-1))
EPS_LD = float(np.finfo(LD).eps)
EPS = float(np.finfo(float).eps)
#: Refinement steps at most (each costs two triangular solves).
MAX_STEPS = 4
#: A correction within this many units of extended round-off of the largest unknown is
#: noise of the residual itself: refinement stops there (measured: one step takes a
#: 100×100 mesh from 2e-15 to 5e-19 relative, and further steps wander at that level).
NOISE_FLOOR = 64
#: Below this many trusted significant digits a result carries a warning naming the
#: elements concerned.
TRUST_DIGITS = 10


class Stamps:
    """Unsummed (row, col, value) stamps in extended precision; once ``assembled`` has
    run, their per-entry sums (still extended) in compressed rows, for the products."""

    def __init__(self):
        self.rows, self.cols, self.vals = [], [], []
        self._exact = None

    def add(self, rows, cols, vals) -> None:
        rows = np.asarray(rows, dtype=np.int64)
        cols = np.asarray(cols, dtype=np.int64)
        vals = np.broadcast_to(np.asarray(vals, dtype=CLD), rows.shape)
        keep = (rows >= 0) & (cols >= 0)
        self.rows.append(rows[keep])
        self.cols.append(cols[keep])
        self.vals.append(vals[keep])
        self._exact = None

    def joined(self):
        if self.rows:
            return (np.concatenate(self.rows), np.concatenate(self.cols),
                    np.concatenate(self.vals))
        empty = np.zeros(0, dtype=np.int64)
        return empty, empty, np.zeros(0, dtype=CLD)

    def exact(self, size: int):
        """(row of each entry, start of each non-empty row, which rows, columns, sums,
        sums of magnitudes): every (row, col) entry summed once in extended precision,
        in row-major order. Summing per entry before multiplying changes nothing but
        the order of extended-precision additions."""
        if self._exact is None or self._exact[0] != size:
            rows, cols, vals = self.joined()
            key = rows * size + cols
            order = np.argsort(key, kind="stable")
            key, vals = key[order], vals[order]
            if len(key):
                starts = np.flatnonzero(np.r_[True, key[1:] != key[:-1]])
                summed = np.add.reduceat(vals, starts)
                parts = np.add.reduceat(np.abs(vals), starts)
                unique = key[starts]
            else:
                summed, parts = np.zeros(0, dtype=CLD), np.zeros(0, dtype=LD)
                unique = key
            entry_rows, entry_cols = unique // size, unique % size
            row_starts = np.flatnonzero(np.r_[True, entry_rows[1:] != entry_rows[:-1]]) \
                if len(unique) else np.zeros(0, dtype=np.int64)
            self._exact = (size, entry_rows, entry_cols, summed, parts, row_starts,
                           entry_rows[row_starts] if len(unique) else entry_rows)
        return self._exact[1:]

    def _rowsum(self, terms, size, dtype):
        _, _, _, _, row_starts, which = self.exact(size)
        out = np.zeros(size, dtype=dtype)
        if len(row_starts):
            out[which] = np.add.reduceat(terms, row_starts)
        return out

    def product(self, x: np.ndarray, size: int) -> np.ndarray:
        """Σ over stamps of value·x[col] per row, accumulated in extended precision."""
        _, cols, summed, _, _, _ = self.exact(size)
        return self._rowsum(summed * x[cols], size, CLD)

    def magnitude_product(self, x: np.ndarray, size: int) -> np.ndarray:
        """Σ |value|·|x[col]| per row: the scale a row's residual is judged against."""
        _, cols, _, parts, _, _ = self.exact(size)
        return self._rowsum(parts * np.abs(x[cols]), size, LD)


def refine(lu, stamps: Stamps, b: np.ndarray, x: np.ndarray):
    """Refine ``x`` (double solve of the assembled system) against the unassembled
    stamps; returns (x in extended precision, componentwise error estimate, steps)."""
    size = len(b)
    b = np.asarray(b, dtype=CLD)
    x = np.asarray(x, dtype=CLD)
    previous = math.inf
    steps = 0
    last = np.zeros(size)
    for steps in range(1, MAX_STEPS + 1):
        r = b - stamps.product(x, size)
        dx = lu.solve(r.astype(complex))
        if not np.all(np.isfinite(dx)):
            break
        size_dx = float(np.abs(dx).max(initial=0.0))
        if size_dx >= previous:          # no longer converging: keep the better x
            break
        x = x + dx.astype(CLD)
        last = np.abs(dx)
        previous = size_dx
        if size_dx <= NOISE_FLOOR * EPS_LD * float(np.abs(x).max(initial=0.0)):
            break                        # at extended precision's own round-off
    r = b - stamps.product(x, size)
    w = (EPS_LD * 4 * (stamps.magnitude_product(x, size) + np.abs(b)) +
         np.abs(r)).astype(float)
    error = _through_inverse(lu, w)
    # the last correction is an error bound of the step before it, kept when larger
    # than the estimate while refinement was still converging slowly
    error = np.maximum(error, 0.1 * last)
    return x, error, steps


def _through_inverse(lu, w: np.ndarray) -> np.ndarray:
    """An estimate of |A⁻¹|·w by two solves with different sign patterns of w."""
    if not len(w) or not np.any(w):
        return np.zeros(len(w))
    signs = np.where(np.arange(len(w)) % 2 == 0, 1.0, -1.0)
    both = np.abs(lu.solve(np.stack([w, w * signs], axis=1).astype(complex)))
    est = both.max(axis=1)
    return np.where(np.isfinite(est), est, np.inf)


def relative_error(error: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Relative error of each value, judged against the circuit's scale of that quantity
    when the value itself is far below it (a current of round-off size is right to the
    circuit's scale, not wrong in all its digits)."""
    magnitude = np.abs(values).astype(float)
    scale = float(magnitude.max(initial=0.0))
    floor = max(scale * 1e-13, np.finfo(float).tiny)
    return np.asarray(error, dtype=float) / np.maximum(magnitude, floor) + EPS


def digits(relative: np.ndarray) -> np.ndarray:
    """Significant digits a relative error leaves (0 to 15)."""
    with np.errstate(divide="ignore"):
        d = np.floor(-np.log10(np.maximum(relative, 1e-16)))
    return np.clip(np.nan_to_num(d, nan=0.0, posinf=15.0, neginf=0.0), 0, 15).astype(int)


def assembled(stamps: Stamps, size: int):
    """The stamps summed per (row, col) in extended precision, then rounded once to a
    double-precision CSC matrix for the factorisation."""
    import scipy.sparse as sp

    rows, cols, summed, parts, _, _ = stamps.exact(size)
    if not len(rows):
        return sp.csc_matrix((size, size), dtype=complex)
    # an entry within the double-precision rounding of its own parts is zero: the
    # input values (decimal text to double) do not determine it any better, so an L
    # and a C tuned to resonance in the input's own digits are at resonance
    rounded = summed.astype(complex)
    rounded[np.abs(summed) <= 4 * EPS * parts] = 0
    return sp.csc_matrix((rounded, (rows, cols)), shape=(size, size))
