"""Resonances of a swept probe: interior peaks and dips of |probe|, refined on the exact
solve (golden-section bracketing, to 1e-6 relative in frequency), with the half-power
bandwidth and Q of studies.md ("Frequency response")."""

from __future__ import annotations

import math

import numpy as np

from ..presentation.formatting import ordinal
from .engine import SweepEngine
from .probes import Impedance

TOLERANCE = 1e-6
#: The half-power points are found closer (log frequency), so Q keeps its digits.
CROSSING_TOLERANCE = 1e-10
_GOLD = (math.sqrt(5) - 1) / 2


def _value(engine, probe, f: float) -> complex:
    return engine.response([f]).values[probe.text][0]


def _magnitude(engine, probe, f: float) -> float:
    value = _value(engine, probe, f)
    return abs(value) if np.isfinite(value) else math.nan


def _refine(engine, probe, lo, hi, sign) -> float:
    """Golden-section search of sign·|probe| on [lo, hi] (log frequency)."""
    a, b = math.log(lo), math.log(hi)
    c, d = b - _GOLD * (b - a), a + _GOLD * (b - a)
    fc = sign * _magnitude(engine, probe, math.exp(c))
    fd = sign * _magnitude(engine, probe, math.exp(d))
    while b - a > TOLERANCE / 4:
        if fc > fd:
            b, d, fd = d, c, fc
            c = b - _GOLD * (b - a)
            fc = sign * _magnitude(engine, probe, math.exp(c))
        else:
            a, c, fc = c, d, fd
            d = a + _GOLD * (b - a)
            fd = sign * _magnitude(engine, probe, math.exp(d))
    return math.exp((a + b) / 2)


def _crossing(engine, probe, inner, outer, level) -> float:
    """Bisection (log frequency) for |probe| = level between inner and outer."""
    g_in = _magnitude(engine, probe, inner) - level
    a, b = math.log(inner), math.log(outer)
    while abs(b - a) > CROSSING_TOLERANCE:
        m = (a + b) / 2
        g = _magnitude(engine, probe, math.exp(m)) - level
        if (g > 0) == (g_in > 0):
            a = m
        else:
            b = m
    return math.exp((a + b) / 2)


def find_resonances(engine: SweepEngine, probes, response, base) -> tuple[list[dict], list[str]]:
    """The peaks and dips of each probe's ``response`` (the sweep of ``engine``), each
    refined on the circuit itself, with its value, Q and bandwidth; and the warnings of
    impedance resonances near odd harmonics of ``base``. Each probe's refinement solves
    with ``engine.for_probes``: the sweep's pattern and orderings, set up once."""
    f = response.frequencies
    out, warnings = [], []
    for probe in probes:
        mag = np.abs(response.values[probe.text])
        if len(mag) < 3 or not np.all(np.isfinite(mag)):
            continue
        scale = mag.max()
        one = None
        for k, kind, sign in _candidates(mag, scale):
            one = one or engine.for_probes([probe])
            f0 = _refine(one, probe, f[k - 1], f[k + 1], sign)
            value = _value(one, probe, f0)
            level = abs(value) / math.sqrt(2) if kind == "peak" else \
                abs(value) * math.sqrt(2)
            band = _bandwidth(one, probe, f, mag, k, level, kind, f0)
            entry = {"probe": probe.text, "kind": kind, "frequency_hz": float(f0),
                     "value": {"re": float(value.real), "im": float(value.imag), "mag": float(abs(value)),
                               "deg": math.degrees(math.atan2(value.imag,
                                                              value.real))},
                     "q": f0 / band if band else None, "bandwidth_hz": band,
                     "harmonic_order": f0 / base if base else None}
            out.append(entry)
            if base and isinstance(probe.expr, Impedance):
                order = f0 / base
                odd = 2 * round((order - 1) / 2) + 1
                if odd >= 3 and abs(order - odd) <= 0.1 * odd:
                    warnings.append(
                        f"{probe.text} has a {'parallel' if kind == 'peak' else 'series'}"
                        f" resonance at {f0:.6g} Hz, order {order:.3g}: within 10 % "
                        f"of the {ordinal(odd)} harmonic (a bank resonance risk)")
    return out, warnings


def _candidates(mag, scale):
    """Interior grid extrema of ``mag`` that stand clear of round-off on both sides
    (judged over a window, so a fine grid near a broad maximum still counts)."""
    window = max(1, len(mag) // 200)
    found = []
    for kind, sign in (("peak", 1.0), ("dip", -1.0)):
        m = sign * mag
        for k in np.flatnonzero((m[1:-1] > m[:-2]) & (m[1:-1] >= m[2:])) + 1:
            k = int(k)
            left = m[k] - m[max(0, k - window):k].min()
            right = m[k] - m[k + 1:k + 1 + window].min()
            if min(left, right) > 1e-9 * scale:
                found.append((k, kind, sign))
    return sorted(found)


def _bandwidth(engine, probe, f, mag, k, level, kind, f0):
    def beyond(j):
        return mag[j] < level if kind == "peak" else mag[j] > level
    below = int(np.searchsorted(f, f0)) - 1           # the grid point just below f0
    lo = next((j for j in range(below, -1, -1) if beyond(j)), None)
    hi = next((j for j in range(below + 1, len(mag)) if beyond(j)), None)
    if lo is None or hi is None:
        return None
    f_lo = _crossing(engine, probe, f0, f[lo], level)
    f_hi = _crossing(engine, probe, f0, f[hi], level)
    return f_hi - f_lo


def peak_frequency(engine: SweepEngine, probe, lo: float, hi: float) -> float:
    """The frequency of the peak of |probe| between ``lo`` and ``hi`` (Hz), refined on the
    exact solve like every resonance here (the harmonic study's capacitor scan)."""
    return _refine(engine, probe, lo, hi, 1.0)
