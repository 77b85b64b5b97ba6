"""The extended-precision check of accuracy.py over random circuits.

Property (Kirchhoff's current law, common practice, no source): at every node the
reported element currents sum to zero to within the digits each element states
(``digits``), or the result carries the lost-digits warning. Elements spread over 24
decades; half of the draws sit near the resonance of one of their L-C pairs.
"""

from __future__ import annotations

import math

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from phasorbench.errors import AnalysisError
from phasorbench.workflow import solve_text

KINDS = ("resistor", "inductor", "capacitor")
UNIT = {"resistor": "", "inductor": " H", "capacitor": " F"}


@st.composite
def circuits(draw):
    n = draw(st.integers(2, 6))
    nodes = [f"n{k}" for k in range(1, n + 1)]
    edges = []
    for k, node in enumerate(nodes):                 # a spanning tree from ground
        other = draw(st.sampled_from(["0"] + nodes[:k]))
        edges.append((node, other))
    for _ in range(draw(st.integers(0, 6))):          # and some extra branches
        a, b = draw(st.sampled_from(["0"] + nodes)), draw(st.sampled_from(["0"] + nodes))
        if a != b:
            edges.append((a, b))
    lines, values = [], {}
    for j, (a, b) in enumerate(edges):
        kind = draw(st.sampled_from(KINDS))
        value = 10.0 ** draw(st.floats(-12, 12))       # 24 decades
        lines.append(f"X{j}: {kind} {a} -> {b} {value!r}{UNIT[kind]}")
        values[f"X{j}"] = (kind, value)
    ls = [v for v in values.values() if v[0] == "inductor"]
    cs = [v for v in values.values() if v[0] == "capacitor"]
    if ls and cs and draw(st.booleans()):
        ind, cap = draw(st.sampled_from(ls))[1], draw(st.sampled_from(cs))[1]
        offset = draw(st.sampled_from([1, -1])) * 10.0 ** draw(st.floats(-12, -3))
        f = (1 + offset) / (2 * math.pi * math.sqrt(ind * cap))
    else:
        f = 10.0 ** draw(st.floats(0, 6))
    assume(1e-3 < f < 1e12)
    source = draw(st.sampled_from(["voltage", "current"]))
    lines.append(f"S1: {source} {nodes[0]} -> 0 1" if source == "voltage"
                 else f"S1: current 0 -> {nodes[0]} 1")
    return f"frequency {f!r} Hz\n" + "\n".join(lines)


def _fsum_complex(values):
    return complex(math.fsum(v.real for v in values), math.fsum(v.imag for v in values))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(circuits())
def test_kcl_holds_to_the_stated_digits_or_a_warning_says_so(text):
    try:
        r = solve_text(text)
    except AnalysisError:
        assume(False)                 # singular or out of range: said so, nothing to check
    warned = any("lost digits" in w["message"] for w in r["warnings"])
    elements = r["elements"]
    scale = max(e["current"]["mag"] for e in elements.values())
    at = {}
    for e in elements.values():
        i = complex(e["current"]["re"], e["current"]["im"])
        allowed = 10.0 ** -e["digits"] * max(abs(i), 1e-13 * scale) + 4e-16 * abs(i)
        at.setdefault(e["from"], []).append((i, allowed))
        at.setdefault(e["to"], []).append((-i, allowed))
    bad = []
    for node, terms in at.items():
        if node == "0" or node in r["references"]:
            continue
        residual = abs(_fsum_complex([t for t, _ in terms]))
        if residual > 2 * sum(a for _, a in terms) + 1e-300:
            bad.append((node, residual, sum(a for _, a in terms)))
    assert not bad or warned, (text, bad)
