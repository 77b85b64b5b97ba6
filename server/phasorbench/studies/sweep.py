"""Frequency response (studies.md, "Frequency response"): the grid, the sweep, the JSON.

>>> from phasorbench.workflow import read_circuit
>>> c = read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 1 V\\nR1: resistor a -> 0 5")
>>> r = run_sweep(c, ["I(R1)"], start=10, stop=1000, points=3)
>>> r["frequencies_hz"], r["probes"]["I(R1)"]["mag"]
([10.0, 100.0, 1000.0], [0.2, 0.2, 0.2])
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import CircuitError, Diagnostic
from ..model import SWEEP_DEFAULT_POINTS, SWEEP_MAX_POINTS
from .engine import SweepEngine, zero_own_frequency_sources
from .probes import describe, parse_probes

DEFAULT_POINTS = SWEEP_DEFAULT_POINTS
MAX_POINTS = SWEEP_MAX_POINTS


def grid(start: float, stop: float, points: int, spacing: str = "log") -> np.ndarray:
    """``points`` frequencies from ``start`` to ``stop``, both ends exact."""
    if spacing == "log":
        f = np.logspace(math.log10(start), math.log10(stop), points)
    else:
        f = np.linspace(start, stop, points)
    f[0], f[-1] = start, stop
    return f


def chosen_points(circuit, points):
    """The points asked for, else the circuit's ``sweep`` line's, else the default."""
    if points is None and circuit.sweep is not None:
        points = circuit.sweep.points
    return DEFAULT_POINTS if points is None else points


def check_range(circuit, start, stop, points, spacing) -> tuple[float, float, int, str]:
    """The range with studies.md's defaults; every problem in one ``CircuitError``.

    What the request leaves out (the range, the points, the spacing, each on its own)
    comes from the circuit's ``sweep`` line when it has one, else from the defaults.
    """
    problems = []
    own = circuit.sweep
    if own is not None:
        if start is None and stop is None:
            start, stop = own.start, own.stop
        spacing = spacing or own.spacing
    points = chosen_points(circuit, points)
    base = circuit.frequency if circuit.frequency and circuit.frequency > 0 else None
    if start is None and stop is None:
        if base is None:
            problems.append(Diagnostic("the circuit has no frequency: give a range",
                                       "for example --from 10 --to 10000"))
        else:
            start, stop = base / 100, base * 100
    elif start is None or stop is None:
        problems.append(Diagnostic("give both ends of the range, or neither",
                                   "for example --from 10 --to 10000"))
    for name, value in (("FROM", start), ("TO", stop)):
        if value is not None and not (isinstance(value, (int, float)) and
                                      math.isfinite(value) and value > 0):
            problems.append(Diagnostic(f"{name} must be a finite frequency above 0 Hz",
                                       "frequencies are in Hz, e.g. 50"))
    if not problems and start >= stop:
        problems.append(Diagnostic(f"FROM ({start:g} Hz) must be below TO ({stop:g} Hz)",
                                   "swap the two ends"))
    if not isinstance(points, int) or not 2 <= points <= MAX_POINTS:
        problems.append(Diagnostic(f"points must be a whole number from 2 to {MAX_POINTS:,}",
                                   "for example 400"))
    spacing = spacing or "log"
    if spacing not in ("log", "linear"):
        problems.append(Diagnostic(f"spacing '{spacing}' is not log or linear", ""))
    if problems:
        raise CircuitError(problems)
    return float(start), float(stop), points, spacing


def _phasors(values: np.ndarray) -> dict:
    finite = np.isfinite(values)

    def listed(array):
        return [float(v) if ok else None for v, ok in zip(array.tolist(), finite)]
    return {"re": listed(values.real), "im": listed(values.imag),
            "mag": listed(np.abs(values)), "deg": listed(np.degrees(np.angle(values)))}


def run_sweep(circuit, probe_texts, start=None, stop=None, points=None,
              spacing=None) -> dict:
    """The sweep's JSON (studies.md): frequencies, probes, resonances, warnings."""
    problems = []
    try:
        probes = parse_probes(probe_texts, circuit)
    except CircuitError as exc:
        problems.extend(exc.diagnostics)
    try:
        start, stop, points, spacing = check_range(circuit, start, stop, points, spacing)
    except CircuitError as exc:
        problems.extend(exc.diagnostics)
    if problems:                          # every problem of probes and range in one pass
        raise CircuitError(problems)
    swept, own = zero_own_frequency_sources(circuit)
    warnings = []
    if own:
        warnings.append(f"{', '.join(own)} run at their own frequency and are zeroed "
                        "during the sweep")
    spectra = [name for name, e in circuit.elements.items() if e.spectrum]
    if spectra:
        warnings.append(f"the spectrum components of {', '.join(spectra[:6])} are left out "
                        "during the sweep (the sweep drives the fundamental)")
    frequencies = grid(start, stop, points, spacing)
    engine = SweepEngine(swept, probes)
    response = engine.response(frequencies)
    if response.singular:
        shown = ", ".join(f"{frequencies[k]:g} Hz" for k in response.singular[:6])
        warnings.append(f"the circuit is singular at {len(response.singular)} "
                        f"frequenc{'y' if len(response.singular) == 1 else 'ies'} "
                        f"({shown}): those points are null")
    for text, bad in response.zero_denominator.items():
        if bad:
            warnings.append(f"the denominator of {text} is zero at {len(bad)} point(s) "
                            f"from {frequencies[bad[0]]:g} Hz: those points are null")
    from .resonance import find_resonances
    resonances, more = find_resonances(engine, probes, response, circuit.frequency or None)
    warnings.extend(more)
    return {"title": circuit.title, "frequency_hz": circuit.frequency or None,
            "frequencies_hz": frequencies.tolist(),
            "range": {"from_hz": start, "to_hz": stop, "points": points,
                      "spacing": spacing},
            "probes": {p.text: {"unit": p.unit, "ratio": p.is_ratio, "meaning": describe(p),
                                **_phasors(response.values[p.text])}
                       for p in probes},
            "resonances": resonances,
            "singular_hz": [float(frequencies[k]) for k in response.singular],
            "warnings": warnings}
