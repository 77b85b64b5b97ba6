"""Property tests on random connected R/L/C/Z networks with sources.

The invariants are theorems of circuit theory, not numbers of ours: Tellegen's theorem
(power balance), Kirchhoff's current law at every node, reciprocity of passive networks
and superposition of sources (any circuit-theory textbook, e.g. Desoer & Kuh, Basic
Circuit Theory, ch. on network theorems; from memory).
"""

from __future__ import annotations

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.helpers import node, solve

SETTINGS = settings(max_examples=60, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow])


@st.composite
def networks(draw, min_nodes=2, max_nodes=9):
    """A connected passive network on nodes 0..n-1 (0 is ground), as element lines."""
    n = draw(st.integers(min_nodes, max_nodes))
    edges = [(k, draw(st.integers(0, k - 1))) for k in range(1, n)]      # a spanning tree
    extra = draw(st.integers(0, n))
    for _ in range(extra):
        a, b = draw(st.integers(0, n - 1)), draw(st.integers(0, n - 1))
        if a != b:
            edges.append((a, b))
    lines = []
    for k, (a, b) in enumerate(edges):
        kind = draw(st.sampled_from(["resistor", "inductor", "capacitor", "impedance",
                                     "admittance"]))
        if kind == "resistor":
            value = f"{draw(st.floats(0.5, 2000)):.6g} ohm"
        elif kind == "inductor":
            value = f"{draw(st.floats(0.5, 900)):.6g} mH"
        elif kind == "capacitor":
            value = f"{draw(st.floats(0.5, 900)):.6g} uF"
        elif kind == "impedance":
            value = (f"{draw(st.floats(0.5, 500)):.6g} + "
                     f"j{draw(st.floats(-300, 300)):.6g} ohm")
        else:
            value = (f"{draw(st.floats(1e-3, 1)):.6g} + "
                     f"j{draw(st.floats(-0.5, 0.5)):.6g} S")
        lines.append(f"E{k}: {kind} {_n(a)} -> {_n(b)} {value}")
    return n, lines


def _n(k: int) -> str:
    return "0" if k == 0 else f"n{k}"


def _header(f: float) -> str:
    return f"frequency {f:.6g} Hz\n"


@SETTINGS
@given(networks(), st.floats(10, 5000), st.integers(1, 8), st.floats(-180, 180),
       st.floats(0.01, 5))
def test_power_balance_and_kcl(net, f, where, phase, amps):
    n, lines = net
    a = 1 + where % (n - 1)
    text = (_header(f) + "\n".join(lines) +
            f"\nVs: voltage {_n(a)} -> 0 230 V phase {phase:.4f} deg"
            f"\nIs: current 0 -> {_n(1 + (where * 7) % (n - 1))} {amps:.5g} A" + "\n")
    r = solve(text)
    total_s = sum(e["s_va"] for e in r["elements"].values())
    # Tellegen's theorem: the sum of complex power over all elements is zero
    assert abs(complex(r["balance"]["p_w"], r["balance"]["q_var"])) <= 1e-9 * total_s
    # Kirchhoff's current law at every node
    leaving = {name: 0j for name in r["nodes"]}
    scale = max(e["current"]["mag"] for e in r["elements"].values())
    for e in r["elements"].values():
        i = complex(e["current"]["re"], e["current"]["im"])
        leaving[e["from"]] += i
        leaving[e["to"]] -= i
    for name, residual in leaving.items():
        assert abs(residual) <= 1e-9 * scale, name


@SETTINGS
@given(networks(min_nodes=3), st.floats(10, 5000), st.data())
def test_reciprocity_of_passive_networks(net, f, data):
    n, lines = net
    i = data.draw(st.integers(1, n - 1))
    j = data.draw(st.integers(1, n - 1))
    body = _header(f) + "\n".join(lines) + "\n"
    forward = solve(body + f"Inj: current 0 -> {_n(i)} 1 A\n")
    backward = solve(body + f"Inj: current 0 -> {_n(j)} 1 A\n")
    # reciprocity: the transfer impedance Z_ji equals Z_ij in an RLC network
    zji, zij = node(forward, _n(j)), node(backward, _n(i))
    assert abs(zji - zij) <= 1e-9 * max(abs(zji), abs(zij), 1e-12)


@SETTINGS
@given(networks(min_nodes=3), st.floats(10, 5000), st.data())
def test_superposition_of_two_sources(net, f, data):
    n, lines = net
    a = data.draw(st.integers(1, n - 1))
    b = data.draw(st.integers(1, n - 1))
    body = _header(f) + "\n".join(lines) + "\n"
    v_src = f"Vs: voltage {_n(a)} -> 0 {{v}} V phase 20 deg\n"
    i_src = f"Is: current 0 -> {_n(b)} {{i}} A phase -70 deg\n"
    both = solve(body + v_src.format(v=120) + i_src.format(i=3))
    only_v = solve(body + v_src.format(v=120) + i_src.format(i=0))
    only_i = solve(body + v_src.format(v=0) + i_src.format(i=3))
    scale = max(ph["mag"] for ph in both["nodes"].values()) + 1e-12
    for name in both["nodes"]:
        summed = node(only_v, name) + node(only_i, name)
        assert abs(node(both, name) - summed) <= 1e-9 * scale, name
