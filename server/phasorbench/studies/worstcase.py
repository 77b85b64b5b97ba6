"""The worst case of each probe's magnitude over the tolerance box (studies.md,
"Tolerance"): every corner by enumeration up to ``MAX_ENUMERATED`` quantities, a
sensitivity-guided corner search (the corner the sensitivities point at, then single
flips while they improve) beyond; then a bounded local refinement from the best corner
inside the box (L-BFGS-B on ln|X| with the adjoint gradient), which finds an interior
extremum such as a resonance. The result says which method and where it ended.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import minimize

from .batch import Batch

#: Corners are enumerated up to this many toleranced quantities (2^16 corners).
MAX_ENUMERATED = 16
#: Rounds of single flips in the corner search beyond MAX_ENUMERATED.
MAX_FLIP_ROUNDS = 40
#: Iterations of the refinement inside the box.
MAX_REFINE = 60
#: Corners solved per batch.
_CORNER_BATCH = 4096
#: A refined value counts as better than its corner above this relative margin.
_MARGIN = 1e-9


def corners(m: int, start: int = 0, stop: int | None = None) -> np.ndarray:
    """Corners ``start``..``stop`` of the m-cube as rows of 0 (low) / 1 (high)."""
    stop = 2 ** m if stop is None else stop
    k = np.arange(start, stop, dtype=np.int64)[:, None]
    return ((k >> np.arange(m, dtype=np.int64)) & 1).astype(float)


def worst_case(batch: Batch, nominal_sens: dict) -> dict:
    """Per probe text: ``{"mag": {"max": …, "min": …}, "method": …}``."""
    q = batch.q
    low, high = q.bounds()
    m = len(q.params)
    texts = [p.text for p in batch.probes]
    best = {t: {"max": (-np.inf, None), "min": (np.inf, None)} for t in texts}
    if m <= MAX_ENUMERATED:
        method = "corners"
        total = 2 ** m
        for start in range(0, total, _CORNER_BATCH):
            bits = corners(m, start, min(total, start + _CORNER_BATCH))
            scales = low + bits * (high - low)
            result = batch.run(scales)
            for t in texts:
                mag = np.where(result.bad, np.nan, np.abs(result.values[t]))
                if np.all(np.isnan(mag)):
                    continue
                k_max, k_min = int(np.nanargmax(mag)), int(np.nanargmin(mag))
                if mag[k_max] > best[t]["max"][0]:
                    best[t]["max"] = (float(mag[k_max]), scales[k_max].copy())
                if mag[k_min] < best[t]["min"][0]:
                    best[t]["min"] = (float(mag[k_min]), scales[k_min].copy())
    else:
        method = "corner search"
        for t in texts:
            for sense, sign in (("max", 1.0), ("min", -1.0)):
                best[t][sense] = _search(batch, t, sign * nominal_sens[t].real, sign,
                                         low, high)
    out = {}
    for t in texts:
        entry = {}
        for sense, sign in (("max", 1.0), ("min", -1.0)):
            value, scales = best[t][sense]
            if scales is None:
                entry[sense] = None
                continue
            entry[sense] = _refine(batch, t, sign, value, scales, low, high)
        out[t] = {"mag": entry, "method": method,
                  "corners_solved": 2 ** m if method == "corners" else None}
    return out


def _search(batch, text, direction, sign, low, high):
    """The corner the sensitivities point at, then the best single flip while it helps."""
    bits = (direction > 0).astype(float)
    value = _values(batch, text, low + bits * (high - low))[0]
    for _ in range(MAX_FLIP_ROUNDS):
        flips = np.tile(bits, (len(bits), 1))
        np.fill_diagonal(flips, 1 - np.diag(flips))
        got = _values(batch, text, low + flips * (high - low))
        k = int(np.nanargmax(sign * got)) if np.any(np.isfinite(got)) else None
        if k is None or not sign * got[k] > sign * value * (1 + sign * _MARGIN):
            break
        bits, value = flips[k], got[k]
    return float(value), low + bits * (high - low)


def _values(batch, text, scales):
    result = batch.run(np.atleast_2d(scales))
    return np.where(result.bad, np.nan, np.abs(result.values[text]))


def _refine(batch, text, sign, value, scales, low, high) -> dict:
    """A bounded local search from the best corner inside the box."""
    def objective(s):
        values, sens = batch.point(s)
        x = values[text]
        if not np.isfinite(x) or x == 0:
            return np.inf, np.zeros_like(s)
        return -sign * float(np.log(abs(x))), -sign * sens[text].real / s
    start = np.asarray(scales, dtype=float)
    found, where = value, "corner"
    best_scales = start
    try:
        with np.errstate(all="ignore"):
            result = minimize(objective, start, jac=True, method="L-BFGS-B",
                              bounds=list(zip(low, high)),
                              options={"maxiter": MAX_REFINE})
        refined = float(np.exp(-sign * result.fun)) if np.isfinite(result.fun) else None
    except (ValueError, RuntimeError, np.linalg.LinAlgError):
        refined = None
    if refined is not None and sign * (refined - value) > _MARGIN * abs(value):
        found, best_scales = refined, np.clip(result.x, low, high)
        inside = (best_scales > low * (1 + 1e-7)) & (best_scales < high * (1 - 1e-7))
        where = "interior" if inside.any() else "corner"
    q = batch.q
    return {"value": found, "at": where,
            "scales": {p.name: float(s) for p, s in zip(q.params, best_scales)},
            "corner": {p.name: _shown(p.nominal * s) for p, s in
                       zip(q.params, best_scales)}}


def _shown(value: complex):
    value = complex(value)
    return value.real if value.imag == 0 else abs(value)
