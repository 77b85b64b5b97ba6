"""The tolerance study (studies.md, "Tolerance"): Monte Carlo runs in seeded chunks,
statistics and histograms of each probe's magnitude and angle, adjoint sensitivities
ranked, the worst case over the tolerance box, and the yield inside limits with its
binomial (Clopper–Pearson) confidence interval.

>>> from phasorbench.workflow import read_circuit
>>> c = read_circuit("frequency 50 Hz\\nV1: voltage in -> 0 1\\n"
...                  "R1: resistor in -> out 1k tol 1%\\nR2: resistor out -> 0 1k")
>>> r = run_tolerance(c, ["V(out)"], runs=100)
>>> r["runs"], r["seed"], round(r["probes"]["V(out)"]["sensitivities"]["R1"]["mag"], 6)
(100, 1, -0.5)
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from scipy.stats import beta

from ..errors import CircuitError, Diagnostic
from ..language.expressions import decode_suffix
from .batch import Batch
from .engine import zero_own_frequency_sources
from .parameters import CHUNK_RUNS, chunk_count, draw_scales, quantities
from .probes import parse_probes

DEFAULT_RUNS = 10_000
DEFAULT_SEED = 1
MIN_RUNS = 2
MAX_RUNS = 1_000_000
HISTOGRAM_BINS = 40
PERCENTILES = (0.135, 2.275, 50.0, 97.725, 99.865)
#: Confidence of the yield's interval.
CONFIDENCE = 0.95


class Cancelled(Exception):
    """The caller's ``cancel()`` said stop between chunks."""


@dataclass(frozen=True)
class Limit:
    """``PROBE MIN..MAX`` on the probe's magnitude; ``text`` as given."""

    text: str
    probe: str
    low: float
    high: float


_NUMBER = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-zµΩ]*)\s*")
_LIMIT_HINT = "a limit is 'PROBE MIN..MAX' on the magnitude, e.g. \"V(out) 0.95..1.05\""


def parse_limits(texts) -> tuple[list[Limit], list[Diagnostic]]:
    """Every limit text read; problems point at columns inside the limit text."""
    limits, problems = [], []
    for text in texts or ():
        def bad(message, start=0, length=None, hint=_LIMIT_HINT):
            problems.append(Diagnostic(f"limit '{text}': {message}", hint, None, start + 1,
                                       length or max(1, len(text) - start)))
        if not isinstance(text, str) or ".." not in text:
            bad("no range MIN..MAX")
            continue
        dots = text.rindex("..")
        head, tail = text[:dots], text[dots + 2:]
        split = re.search(r"\)\s*([^)]*)$", head)
        if not split:
            bad("no probe before the range")
            continue
        probe = head[:split.start() + 1].strip()
        low_at = split.start(1)
        low = _number(split.group(1))
        high = _number(tail)
        if low is None:
            bad(f"'{split.group(1).strip()}' is not a number", low_at, max(1, dots - low_at))
        if high is None:
            bad(f"'{tail.strip()}' is not a number", dots + 2, max(1, len(tail)))
        if low is None or high is None:
            continue
        if low > high:
            bad(f"MIN ({low:g}) is above MAX ({high:g})", low_at, len(text) - low_at,
                "swap the two ends")
            continue
        limits.append(Limit(text, probe, low, high))
    return limits, problems


def _number(text: str) -> float | None:
    match = _NUMBER.fullmatch(text)
    if not match:
        return None
    value = float(match.group(1))
    if match.group(2):
        decoded = decode_suffix(match.group(2))
        if decoded is None or decoded[2]:
            return None
        value *= decoded[0]
    return value if math.isfinite(value) else None


def check_runs(runs, seed) -> tuple[int, int, list[Diagnostic]]:
    problems = []
    runs = DEFAULT_RUNS if runs is None else runs
    seed = DEFAULT_SEED if seed is None else seed
    if isinstance(runs, bool) or not isinstance(runs, int) or not MIN_RUNS <= runs <= MAX_RUNS:
        problems.append(Diagnostic(f"runs must be a whole number from {MIN_RUNS} to "
                                   f"{MAX_RUNS:,}", "for example 10000 runs"))
    if isinstance(seed, bool) or not isinstance(seed, int) or not 0 <= seed < 2 ** 63:
        problems.append(Diagnostic("the seed must be a whole number from 0 to 2^63 - 1",
                                   "for example seed 1"))
    return runs, seed, problems


def prepare(circuit, probe_texts, runs=None, seed=None, limits=()):
    """Every input checked in one pass: (batch, runs, seed, limits, warnings)."""
    problems = []
    runs, seed, more = check_runs(runs, seed)
    problems.extend(more)
    parsed_limits, more = parse_limits(limits)
    problems.extend(more)
    texts = list(probe_texts or []) + [l.probe for l in parsed_limits]
    probes = []
    try:
        probes = parse_probes(texts, circuit)
    except CircuitError as exc:
        problems.extend(exc.diagnostics)
    q = None
    try:
        q = quantities(circuit)
    except CircuitError as exc:
        problems.extend(exc.diagnostics)
    if problems:
        raise CircuitError(problems)
    swept, own = zero_own_frequency_sources(circuit)
    warnings = []
    if own:
        warnings.append(f"{', '.join(own)} run at their own frequency and are zeroed in "
                        "the tolerance study (it runs at the analysis frequency)")
    batch = Batch(swept, quantities(swept) if own else q, probes, circuit.frequency)
    return batch, runs, seed, parsed_limits, warnings


def monte_carlo(batch, runs, seed, progress=None, cancel=None, chunks=None):
    """Every run's probe values: ({probe: complex array}, bad mask). ``chunks`` (a
    callable taking the seed and the [(chunk, runs)] list, answering each chunk's
    (values, bad) in order) may run them elsewhere (a Dask cluster)."""
    total = chunk_count(runs)
    sizes = [min(CHUNK_RUNS, runs - k * CHUNK_RUNS) for k in range(total)]
    if chunks is not None:
        pieces = chunks(seed, list(enumerate(sizes)))
    else:
        pieces = []
        for k, size in enumerate(sizes):
            if cancel is not None and cancel():
                raise Cancelled()
            result = batch.run(draw_scales(batch.q, seed, k, size))
            pieces.append((result.values, result.bad))
            if progress is not None:
                progress(k + 1, total)
    values = {p.text: np.concatenate([v[p.text] for v, _ in pieces])
              for p in batch.probes}
    bad = np.concatenate([b for _, b in pieces])
    return values, bad


def statistics(values: np.ndarray) -> dict:
    """Mean, standard deviation, extremes, percentiles and a histogram."""
    counts, edges = np.histogram(values, bins=HISTOGRAM_BINS)
    return {"mean": float(np.mean(values)), "std": float(np.std(values, ddof=1)),
            "min": float(np.min(values)), "max": float(np.max(values)),
            "percentiles": {f"{p:g}": float(v) for p, v in
                            zip(PERCENTILES, np.percentile(values, PERCENTILES))},
            "histogram": {"edges": edges.tolist(), "counts": counts.tolist()}}


def interval(inside: int, runs: int, confidence: float = CONFIDENCE) -> tuple[float, float]:
    """Clopper–Pearson interval of a binomial fraction."""
    a = 1 - confidence
    low = 0.0 if inside == 0 else float(beta.ppf(a / 2, inside, runs - inside + 1))
    high = 1.0 if inside == runs else float(beta.ppf(1 - a / 2, inside + 1, runs - inside))
    return low, high


def _yield(inside: np.ndarray) -> dict:
    count, runs = int(inside.sum()), len(inside)
    low, high = interval(count, runs)
    return {"inside": count, "runs": runs, "fraction": count / runs if runs else None,
            "confidence": CONFIDENCE, "low": low, "high": high}


def _phasor(x: complex) -> dict:
    x = complex(x)
    return {"re": x.real, "im": x.imag, "mag": abs(x),
            "deg": math.degrees(math.atan2(x.imag, x.real))}


def run_tolerance(circuit, probe_texts, runs=None, seed=None, worst_case=False,
                  limits=(), progress=None, cancel=None, chunks=None) -> dict:
    """The tolerance study's JSON (studies.md)."""
    batch, runs, seed, limits, warnings = prepare(circuit, probe_texts, runs, seed, limits)
    nominal, sens = batch.point()
    values, bad = monte_carlo(batch, runs, seed, progress, cancel, chunks)
    good = ~bad
    if bad.any():
        warnings.append(f"{int(bad.sum()):,} of {runs:,} runs are singular or divide by "
                        "zero: they are left out of the statistics")
    if not good.any():
        raise CircuitError([Diagnostic("every run of the study is singular",
                                       "check the circuit solves at its nominal values")])
    q = batch.q
    probes = {}
    all_inside = good.copy()
    for probe in batch.probes:
        x, x0 = values[probe.text][good], complex(nominal[probe.text])
        deg0 = math.degrees(math.atan2(x0.imag, x0.real))
        with np.errstate(all="ignore"):
            turn = np.degrees(np.angle(x / x0)) if x0 != 0 else np.degrees(np.angle(x))
        entry = {"unit": probe.unit, "nominal": _phasor(x0),
                 "mag": statistics(np.abs(x)),
                 "deg": statistics(turn + (deg0 if x0 != 0 else 0.0)),
                 "sensitivities": _ranked(q, sens[probe.text]), "worst_case": None,
                 "limits": [], "yield": None}
        mine = [l for l in limits if l.probe == probe.text]
        if mine:
            mag_all = np.abs(values[probe.text])
            inside = good.copy()
            for l in mine:
                inside &= (mag_all >= l.low) & (mag_all <= l.high)
                entry["limits"].append({"text": l.text, "min": l.low, "max": l.high})
            all_inside &= inside
            entry["yield"] = _yield(inside[good])
        probes[probe.text] = entry
    if worst_case:
        from .worstcase import worst_case as find_worst
        for text, result in find_worst(batch, sens).items():
            probes[text]["worst_case"] = result
    return {"runs": runs, "seed": seed, "chunk_runs": CHUNK_RUNS,
            "frequency_hz": circuit.frequency,
            "quantities": [{"name": p.name, "source": p.source, "kind": _kind(q, p),
                            "tol_pct": p.fraction * 100, "distribution": p.law,
                            "nominal": _phasor(p.nominal), "line": p.line}
                           for p in q.params],
            "probes": probes,
            "yield": _yield(all_inside[good]) if limits else None,
            "warnings": warnings}


def _kind(q, p) -> str | None:
    """The element kind a quantity is a value of (a named value: its first user's)."""
    circuit = q.circuit
    names = [p.name] if p.source == "element" else circuit.value_users.get(p.name, ())
    for name in names:
        if name in circuit.elements:
            return circuit.elements[name].kind
    return None


def _ranked(q, dlog: np.ndarray) -> dict:
    """∂ln|X|/∂ln p and ∂arg X/∂ln p (degrees) per quantity, largest |·| first."""
    rows = [(p.name, float(d.real), float(math.degrees(d.imag)))
            for p, d in zip(q.params, dlog)]
    rows.sort(key=lambda r: (-abs(r[1]), -abs(r[2]), r[0]))
    return {name: {"mag": mag, "deg": deg} for name, mag, deg in rows}


def corner_circuit(q, scales) -> "Circuit":
    """The circuit with every moving part at the values of ``scales`` (one per quantity):
    what the sheet re-solves to check a worst case."""
    import dataclasses

    from .parameters import entities, value_matrix
    circuit = q.circuit
    values = dict(zip(entities(q), value_matrix(q, np.atleast_2d(scales))[0]))
    elements = dict(circuit.elements)
    for name in q.elements:
        elements[name] = dataclasses.replace(elements[name], value=complex(values[name]))
    couplings = dict(circuit.couplings)
    for name in q.couplings:
        c = couplings[name]
        m = float(values[name].real)
        l1, l2 = (elements[n].value.real for n in c.inductors)
        couplings[name] = dataclasses.replace(c, m=m, k=m / math.sqrt(l1 * l2))
    return dataclasses.replace(circuit, elements=elements, couplings=couplings)


def check_worst_case(circuit, result: dict) -> list[dict]:
    """Each worst case of ``result`` re-solved by the frequency-response engine on the
    circuit rebuilt with that point's part values: reported and re-solved |X|."""
    from .engine import sweep_response
    texts = [t for t, p in result["probes"].items() if p.get("worst_case")]
    if not texts:
        return []
    batch = prepare(circuit, texts, runs=MIN_RUNS)[0]
    swept, _ = zero_own_frequency_sources(circuit)
    out = []
    for probe in batch.probes:
        for sense, case in result["probes"][probe.text]["worst_case"]["mag"].items():
            if not case:
                continue
            scales = [case["scales"][p.name] for p in batch.q.params]
            rebuilt = corner_circuit(_over(batch.q, swept), scales)
            value = sweep_response(rebuilt, [probe], [circuit.frequency]).values[probe.text][0]
            again = abs(complex(value))
            out.append({"probe": probe.text, "sense": sense, "reported": case["value"],
                        "resolved": again, "relative": abs(again - case["value"]) /
                        max(abs(again), 1e-300)})
    return out


def _over(q, circuit):
    """``q`` over another copy of its circuit (own-frequency sources zeroed)."""
    import dataclasses
    return dataclasses.replace(q, circuit=circuit)
