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
#: Below this many trusted significant digits a result carries a warning naming the
#: elements concerned.
TRUST_DIGITS = 10


class Stamps:
    """Unsummed (row, col, value) stamps in extended precision, and b·x products."""

    def __init__(self):
        self.rows, self.cols, self.vals = [], [], []
        self._joined = None

    def add(self, rows, cols, vals) -> None:
        rows = np.asarray(rows, dtype=np.int64)
        cols = np.asarray(cols, dtype=np.int64)
        vals = np.broadcast_to(np.asarray(vals, dtype=CLD), rows.shape)
        keep = (rows >= 0) & (cols >= 0)
        self.rows.append(rows[keep])
        self.cols.append(cols[keep])
        self.vals.append(vals[keep])
        self._joined = None

    def joined(self):
        if self._joined is None:
            if self.rows:
                self._joined = (np.concatenate(self.rows), np.concatenate(self.cols),
                                np.concatenate(self.vals))
            else:
                empty = np.zeros(0, dtype=np.int64)
                self._joined = (empty, empty, np.zeros(0, dtype=CLD))
        return self._joined

    def product(self, x: np.ndarray, size: int) -> np.ndarray:
        """Σ over stamps of value·x[col] per row, accumulated in extended precision."""
        rows, cols, vals = self.joined()
        out = np.zeros(size, dtype=CLD)
        np.add.at(out, rows, vals * x[cols])
        return out

    def magnitude_product(self, x: np.ndarray, size: int) -> np.ndarray:
        """Σ |value|·|x[col]| per row: the scale a row's residual is judged against."""
        rows, cols, vals = self.joined()
        out = np.zeros(size, dtype=LD)
        np.add.at(out, rows, np.abs(vals) * np.abs(x[cols]))
        return out


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
        if size_dx <= EPS_LD * float(np.abs(x).max(initial=0.0)):
            break
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
    one = np.abs(lu.solve(w.astype(complex)))
    two = np.abs(lu.solve((w * signs).astype(complex)))
    est = np.maximum(one, two)
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

    rows, cols, vals = stamps.joined()
    if not len(rows):
        return sp.csc_matrix((size, size), dtype=complex)
    key = rows * size + cols
    unique, inverse = np.unique(key, return_inverse=True)
    summed = np.zeros(len(unique), dtype=CLD)
    np.add.at(summed, inverse, vals)
    parts = np.zeros(len(unique), dtype=LD)
    np.add.at(parts, inverse, np.abs(vals))
    # an entry within the double-precision rounding of its own parts is zero: the
    # input values (decimal text to double) do not determine it any better, so an L
    # and a C tuned to resonance in the input's own digits are at resonance
    summed[np.abs(summed) <= 4 * EPS * parts] = 0
    return sp.csc_matrix((summed.astype(complex), (unique // size, unique % size)),
                         shape=(size, size))
