"""The sweep engine's arithmetic (engine.py): matrix entries restamped per frequency as
the single solve rounds them, and the three ways a chunk of points is solved — banded
LU for a narrow band, SuperLU with the column ordering of the first point kept for
large systems (stacked dense LAPACK, the third, is numpy's own ``linalg.solve``).

>>> import numpy as np
>>> part = Component([np.array([1.0, 0.0]), np.array([0.0, 2.0]), np.array([0.0, 3.0])])
>>> out = np.zeros((1, 2)); part.fill(out, np.array([[LD(2)]]), np.array([[2.0]]))
>>> out.tolist()
[[1.0, 5.5]]
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.linalg.lapack import zgbsv
from scipy.sparse.csgraph import reverse_cuthill_mckee
from scipy.sparse.linalg import splu

from ..accuracy import EPS, LD

__all__ = ["BAND_MIN", "BAND_RATIO", "Band", "Component", "KeptOrder", "rounded"]

#: A system of this many unknowns or more whose band (in reverse Cuthill–McKee order,
#: 2·kl + ku + 1 rows with LAPACK's room for pivoting) is at most 1/BAND_RATIO of its
#: size is solved banded, point by point, rather than stacked dense.
BAND_MIN = 16
BAND_RATIO = 3


def rounded(summed, parts) -> np.ndarray:
    """Extended-precision sums rounded to double, a sum within the rounding of its own
    parts zero (the single solve's rule, accuracy.assembled)."""
    out = summed.astype(complex)
    out[np.abs(summed) <= 4 * EPS * parts] = 0
    return out


class Component:
    """The real or the imaginary part of the entries that move with ω, each g + c·ω +
    r/ω: a part with two or three terms (an L and a C on one node) is summed in
    extended precision and rounded once, a part of one term is one product or quotient
    in double precision (within an ulp of the extended value)."""

    def __init__(self, terms):
        g, c, r = (np.asarray(t, dtype=LD) for t in terms)
        present = np.stack([g != 0, c != 0, r != 0])
        count = present.sum(axis=0)
        one = count == 1
        self.constant = np.flatnonzero(one & present[0])
        self.constant_values = g[self.constant].astype(float)
        self.grow = np.flatnonzero(one & present[1])
        self.grow_values = c[self.grow].astype(float)
        self.fall = np.flatnonzero(one & present[2])
        self.fall_values = r[self.fall].astype(float)
        self.zero = np.flatnonzero(count == 0)
        self.several = np.flatnonzero(count > 1)
        self.terms = [t[self.several] for t in (g, c, r)]

    def fill(self, out, omega, omega_rounded) -> None:
        """Write the part at each ω (a column, extended and rounded) into ``out``."""
        out[:, self.zero] = 0
        out[:, self.constant] = self.constant_values
        out[:, self.grow] = self.grow_values * omega_rounded
        out[:, self.fall] = self.fall_values / omega_rounded
        if len(self.several):
            g, c, r = self.terms
            out[:, self.several] = (g + c * omega + r / omega).astype(float)


class Band:
    """LAPACK's banded LU with partial pivoting (zgbsv) over one pattern, in the reverse
    Cuthill–McKee order found once; ``Band.of`` is None where the band is too wide."""

    def __init__(self, order, kl, ku, where, size):
        self.order, self.kl, self.ku, self.where, self.size = order, kl, ku, where, size
        self.width = 2 * kl + ku + 1

    @classmethod
    def of(cls, rows, cols, size):
        if size < BAND_MIN or not len(rows):
            return None
        pattern = sp.csr_matrix((np.ones(len(rows)), (rows, cols)), shape=(size, size))
        order = np.asarray(reverse_cuthill_mckee((pattern + pattern.T).tocsr(),
                                                 symmetric_mode=True), dtype=np.int64)
        position = np.empty(size, dtype=np.int64)
        position[order] = np.arange(size)
        i, j = position[rows], position[cols]
        kl, ku = int(max(0, (i - j).max())), int(max(0, (j - i).max()))
        if (2 * kl + ku + 1) * BAND_RATIO > size:
            return None
        # entry (i, j) of the reordered matrix sits at ab[kl + ku + i − j, j]; the band of
        # point k is held as band[k] = abᵀ, so band[k].T is LAPACK's column-major ab
        return cls(order, kl, ku, j * (2 * kl + ku + 1) + (kl + ku + i - j), size)

    def solve(self, fixed, fixed_values, moving, moving_values, b) -> np.ndarray:
        """Unknowns (points, size, right-hand sides); a zero pivot leaves a point NaN."""
        count, size, width = len(moving_values), self.size, self.width
        band = np.zeros((count, size, width), dtype=complex)
        flat = band.reshape(count, size * width)
        flat[:, self.where[fixed]] = fixed_values
        flat[:, self.where[moving]] = moving_values
        rhs = np.asfortranarray(b[self.order])
        y = np.empty((count, size, b.shape[1]), dtype=complex)
        for k in range(count):
            _, _, y[k], info = zgbsv(self.kl, self.ku, band[k].T, rhs, overwrite_ab=1)
            if info:
                y[k] = np.nan
        x = np.empty_like(y)
        x[:, self.order] = y
        return x


class KeptOrder:
    """SuperLU over one CSC pattern: the first factorisation with COLAMD, its column
    order kept for every later matrix (the same factors as a fresh ``splu`` of each,
    less the ordering). ``solve`` returns None for an exactly singular matrix."""

    def __init__(self, indices, indptr, size):
        self.indices, self.indptr, self.size = indices, indptr, size
        self.kept = None

    def solve(self, data, b):
        try:
            if self.kept is None:
                return self._first(data, b)
            order, permuted, take = self.kept
            permuted.data[:] = data[take]
            y = splu(permuted, permc_spec="NATURAL").solve(b)
        except RuntimeError:
            return None
        x = np.empty_like(y)
        x[order] = y
        return x

    def _first(self, data, b):
        shape = (self.size, self.size)
        lu = splu(sp.csc_matrix((data, self.indices, self.indptr), shape=shape))
        order = np.argsort(lu.perm_c)          # the factor's columns, in their order
        # the permuted pattern, and where its data comes from in the unpermuted one
        index = sp.csc_matrix((np.arange(1, len(data) + 1, dtype=float), self.indices,
                               self.indptr), shape=shape)[:, order]
        index.sort_indices()
        take = index.data.astype(np.int64) - 1
        permuted = sp.csc_matrix((data[take], index.indices, index.indptr), shape=shape)
        self.kept = (order, permuted, take)
        return lu.solve(b)
