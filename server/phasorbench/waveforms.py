"""Instantaneous v(t), i(t) and p(t) of an element, from its phasors.

A phasor hides time; the page and the sheet show it back (the waveform picture, the
energy a reactive element hands back each cycle). Sampling lives here once, so the
picture, the API and the tests read the same numbers.

Reference: cosines. A phasor ``X = |X|∠θ`` stands for ``x(t) = Xpk·cos(ωt + θ)``,
with ``Xpk = √2·|X|`` for RMS phasors and ``Xpk = |X|`` for peak phasors. Then, with
the contract's complex power ``S = P + jQ`` (``V·I*`` for RMS, ``½·V·I*`` for peak),

    p(t) = v(t)·i(t) = P + |S|·cos(2ωt + θv + θi)

in both conventions.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["MAX_SAMPLES", "instantaneous", "returned_energy", "sample_element"]

#: Upper bound on samples per request: the result travels as JSON to the browser and
#: is drawn as a polyline; beyond this a picture gains nothing and the reply grows.
MAX_SAMPLES = 20_000


def _peak_factor(amplitudes: str) -> float:
    if amplitudes == "rms":
        return math.sqrt(2.0)
    if amplitudes == "peak":
        return 1.0
    raise ValueError(f"amplitudes must be 'rms' or 'peak', not {amplitudes!r}")


def instantaneous(voltage: complex, current: complex, frequency_hz: float,
                  amplitudes: str, t) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """v(t), i(t) and p(t) = v·i of one element at the times ``t`` (s).

    Parameters
    ----------
    voltage, current : complex
        The element's phasors, RMS or peak per ``amplitudes``.
    frequency_hz : float
        Analysis frequency.
    amplitudes : {"rms", "peak"}
        How the phasor magnitudes are meant.
    t : array_like
        Times in seconds.

    Examples
    --------
    >>> v, i, p = instantaneous(10, 2, 50.0, "rms", [0.0])
    >>> round(float(v[0]), 6), round(float(i[0]), 6), round(float(p[0]), 6)  # peaks at t = 0
    (14.142136, 2.828427, 40.0)
    """
    k = _peak_factor(amplitudes)
    t = np.asarray(t, dtype=float)
    rotor = np.exp(1j * 2.0 * math.pi * float(frequency_hz) * t)
    v = np.real(k * complex(voltage) * rotor)
    i = np.real(k * complex(current) * rotor)
    return v, i, v * i


def returned_energy(p_w: float, s_va: float, frequency_hz: float) -> float:
    """Energy per cycle of v that flows back out of the element: ∫ max(0, −p) dt over T.

    Closed form from ``p(t) = P + |S|·cos(x)``, ``x = 2ωt + φ``, which runs over two
    full turns in one period T. With ``α = arccos(−P/|S|)`` (clipped to [0, π]),

        E = (2·|S|·sin α − 2·P·(π − α)) / ω.

    It is 0 when ``P ≥ |S|`` (a resistor), ``2|S|/ω`` for a pure reactance and ``−P·T``
    when ``P ≤ −|S|`` (a source that only delivers, in the passive sign convention).
    """
    omega = 2.0 * math.pi * float(frequency_hz)
    p, s = float(p_w), abs(float(s_va))
    if p >= s:
        return 0.0  # never negative (exact, where the formula leaves sin(π) ≈ 1e-16)
    if p <= -s:
        return -p * 2.0 * math.pi / omega
    alpha = math.acos(min(1.0, max(-1.0, -p / s)))
    return max(0.0, (2.0 * s * math.sin(alpha) - 2.0 * p * (math.pi - alpha)) / omega)


def _complex(ph) -> complex:
    if ph is None:
        raise ValueError("the element has no phasor here")
    return complex(ph["re"], ph["im"]) if isinstance(ph, dict) else complex(ph)


def _finite(x: float) -> float:
    """A plain float for JSON: numpy scalars become float, a non-finite value is an error."""
    x = float(x)
    if not math.isfinite(x):
        raise OverflowError("a sampled value is not finite")    # errors.NUMERIC_RANGE_ERRORS
    return x


def sample_element(result: dict, name: str, periods: float = 2,
                   samples_per_period: int = 200) -> dict:
    """Sample v(t), i(t), p(t) of the element ``name`` of a contract dict.

    A transformer is sampled at its primary port (its ``voltage``/``current``), so
    ``p_avg`` is the primary port's power, not the element's two-port total.

    Parameters
    ----------
    result : dict
        A solved-circuit contract dict.
    name : str
        Element name; a missing name raises ``ValueError``.
    periods : float
        How many periods of the analysis frequency to cover, from t = 0.
    samples_per_period : int
        Samples per period; ``periods·samples_per_period + 1`` points in all (both ends).

    Returns
    -------
    dict
        JSON-safe (plain floats, no NaN): ``element``, ``kind``, ``port``,
        ``frequency_hz``, ``period_s``, ``amplitudes``, ``t_s``, ``v``, ``i``, ``p``
        (lists), ``v_peak``, ``i_peak``, ``p_avg`` (W), ``q_var``, ``s_va``, ``p_max``,
        ``p_min``, ``p_phase_deg`` (θv + θi: p(t) = p_avg + s_va·cos(2ωt + p_phase)),
        ``returned_energy_j`` and ``absorbed_energy_j`` per period, and ``units``.
    """
    elements = result.get("elements", {})
    if name not in elements:
        raise ValueError(f"no element named {name!r} in the results")
    el = elements[name]
    f = float(result["frequency_hz"])
    amplitudes = result.get("amplitudes", "rms")
    k = _peak_factor(amplitudes)
    if not (periods > 0 and samples_per_period >= 4):
        raise ValueError("periods must be > 0 and samples_per_period at least 4")
    n = int(round(periods * samples_per_period))
    if n > MAX_SAMPLES:
        raise ValueError(f"{n} samples asked; at most {MAX_SAMPLES}")
    voltage, current = _complex(el.get("voltage")), _complex(el.get("current"))
    period = 1.0 / f
    t = np.linspace(0.0, periods * period, n + 1)
    v, i, p = instantaneous(voltage, current, f, amplitudes, t)
    # S of the port from its phasors: V·I* (RMS) or ½·V·I* (peak) = (k²/2)·V·I*.
    s = (k * k / 2.0) * voltage * current.conjugate()
    p_avg, q, s_va = s.real, s.imag, abs(s)
    returned = returned_energy(p_avg, s_va, f)
    p_max, p_min = p_avg + s_va, p_avg - s_va
    phase = math.degrees(math.atan2(voltage.imag, voltage.real)
                         + math.atan2(current.imag, current.real))
    components = [h for h in result.get("harmonics") or () if name in h.get("elements", {})]
    if components:
        # Sources at other frequencies add their own v and i (superposition.py); p(t) is
        # then no longer one sinusoid at 2f, so its extremes and the returned energy are
        # read from the samples, and the mean is the sum of the per-frequency powers.
        for h in components:
            hv = _complex(h["elements"][name].get("voltage"))
            hi = _complex(h["elements"][name].get("current"))
            dv, di, _ = instantaneous(hv, hi, h["frequency_hz"], amplitudes, t)
            v, i = v + dv, i + di
            p_avg += h["elements"][name]["p_w"]
        p = v * i
        p_max, p_min = float(p.max()), float(p.min())
        one = t <= period * (1 + 1e-12)
        returned = float(np.trapezoid(np.maximum(0.0, -p[one]), t[one]))
    return {
        "element": name,
        "kind": el.get("kind"),
        "port": "primary" if "secondary" in el else None,
        "frequency_hz": f,
        "period_s": period,
        "amplitudes": amplitudes,
        "t_s": [_finite(x) for x in t],
        "v": [_finite(x) for x in v],
        "i": [_finite(x) for x in i],
        "p": [_finite(x) for x in p],
        "v_peak": _finite(k * abs(voltage)),
        "i_peak": _finite(k * abs(current)),
        "p_avg": _finite(p_avg),
        "q_var": _finite(q),
        "s_va": _finite(s_va),
        "p_max": _finite(p_max),
        "p_min": _finite(p_min),
        "p_phase_deg": _finite(phase),
        "returned_energy_j": _finite(returned),
        "absorbed_energy_j": _finite(returned + p_avg * period),
        "harmonics_hz": [h["frequency_hz"] for h in components],
        "units": {"t_s": "s", "v": "V", "i": "A", "p": "W", "energy": "J"},
    }
