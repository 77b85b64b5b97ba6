"""The sweep's worked check: one grid point solved again by the single-frequency solver.

The sweep engine (``engine.py``) builds its matrices once and restamps values per
frequency; the check takes one grid point of a finished sweep and solves the circuit
there the ordinary way (``solver.solve``, the solve behind every result table), with
the circuit as the sweep sees it: sources with their own ``freq`` zeroed, spectra left
out, every other source at the grid frequency. A ``Z`` probe is solved with every
independent source zeroed and a 1 A test current pushed into its first node and drawn
from its second (studies.md, "Probes"). The two values and their relative difference
go on the sheet, so a reader sees the sweep agree with a solve they can redo.
"""

from __future__ import annotations

import math
from dataclasses import replace

from ..errors import CircuitError
from ..model import GROUND, SOURCE_KINDS, Element
from .engine import zero_own_frequency_sources
from .probes import Current, Impedance, Ratio, parse_probe

__all__ = ["check_point", "pick_point"]


def pick_point(result: dict, probe: str) -> int | None:
    """The grid point to check: the one nearest the analysis frequency (on a log scale)
    where ``probe`` is defined, or None when it is defined nowhere."""
    freqs = result["frequencies_hz"]
    mags = result["probes"][probe]["mag"]
    target = result.get("frequency_hz") or math.sqrt(freqs[0] * freqs[-1])
    usable = [k for k, m in enumerate(mags) if m is not None]
    if not usable:
        return None
    return min(usable, key=lambda k: (abs(math.log(freqs[k] / target)), k))


def _at(circuit, frequency: float):
    """The circuit as the sweep sees it, at ``frequency``."""
    swept, _ = zero_own_frequency_sources(circuit)
    elements = {name: replace(e, spectrum=()) if e.spectrum else e
                for name, e in swept.elements.items()}
    return replace(swept, frequency=frequency, elements=elements, warnings=[])


def _test_current(circuit, a: str, b: str):
    """Every independent source zeroed and a 1 A current pushed into ``a`` from ``b``."""
    name, k = "Itest", 1
    while f"{name}{k}" in circuit.elements:
        k += 1
    elements = {n: replace(e, value=0j) if e.kind in SOURCE_KINDS else e
                for n, e in circuit.elements.items()}
    # a current source b -> a pushes its current into a (circuit-language.md)
    elements[f"{name}{k}"] = Element(f"{name}{k}", "current", (b, a), 1.0 + 0j)
    return replace(circuit, elements=elements)


def _simple(part, circuit, solved: dict) -> complex:
    """One simple probe from the single-frequency solve (``solved`` keeps the solves)."""
    from ..solver import solve
    if isinstance(part, Current):
        key, a, b = ("as is",), None, None
    else:
        a = part.a.node
        b = part.b.node if part.b is not None else GROUND
        key = ("test", a, b) if isinstance(part, Impedance) else ("as is",)
    if key not in solved:
        solved[key] = solve(_test_current(circuit, a, b) if key[0] == "test" else circuit)
    solution = solved[key]
    if isinstance(part, Current):
        return complex(solution.current[solution.names.index(part.element.name)])
    voltages = solution.node_voltages
    return complex(voltages.get(a, 0j)) - complex(voltages.get(b, 0j))


def _phasor(value: complex | None) -> dict | None:
    if value is None or not (math.isfinite(value.real) and math.isfinite(value.imag)):
        return None
    return {"re": value.real, "im": value.imag, "mag": abs(value),
            "deg": math.degrees(math.atan2(value.imag, value.real))}


def check_point(circuit, result: dict, probe: str | None = None) -> dict | None:
    """The worked check of a sweep ``result`` of ``circuit``: for ``probe`` (default the
    first) at the grid point ``pick_point`` chooses, ``{"probe", "index",
    "frequency_hz", "sweep", "single", "relative"}`` with both values as phasor dicts;
    ``single`` None and ``problem`` set when the single solve fails there. None when
    the probe is undefined at every point."""
    probe = probe if probe is not None else next(iter(result["probes"]))
    k = pick_point(result, probe)
    if k is None:
        return None
    data = result["probes"][probe]
    swept = complex(data["re"][k], data["im"][k])
    frequency = result["frequencies_hz"][k]
    out = {"probe": probe, "index": k, "frequency_hz": frequency,
           "sweep": _phasor(swept), "single": None, "relative": None, "problem": None}
    expr = parse_probe(probe).expr
    at = _at(circuit, frequency)
    solved: dict = {}
    try:
        if isinstance(expr, Ratio):
            single = _simple(expr.numerator, at, solved) / _simple(expr.denominator, at,
                                                                    solved)
        else:
            single = _simple(expr, at, solved)
    except (CircuitError, ZeroDivisionError) as exc:
        out["problem"] = (exc.diagnostics[0].message if isinstance(exc, CircuitError)
                          and exc.diagnostics else "the single solve has no value there")
        return out
    out["single"] = _phasor(single)
    scale = max(abs(single), abs(swept))
    out["relative"] = abs(swept - single) / scale if scale > 0 else 0.0
    return out
