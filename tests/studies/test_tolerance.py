"""The tolerance study against outside references: closed-form statistics and
scipy.stats distributions, numerical integration (scipy.integrate), textbook
sensitivities, central finite differences, brute-force corners, Clopper–Pearson
intervals from scipy.stats.binomtest."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, stats

from phasorbench.errors import CircuitError
from phasorbench.studies.parameters import CHUNK_RUNS
from phasorbench.studies.tolerance import interval, monte_carlo, prepare, run_tolerance
from phasorbench.workflow import read_circuit, solve_text

DIVIDER = """frequency 50 Hz
V1: voltage in -> 0 10 V
R1: resistor in -> out 1 kohm tol {t1}% {law1}
R2: resistor out -> 0 3 kohm tol {t2}% {law2}
"""


def _divider(t1=1, t2=1, law1="uniform", law2="uniform"):
    return read_circuit(DIVIDER.format(t1=t1, t2=t2, law1=law1, law2=law2))


def test_divider_mean_and_spread_uniform():
    runs = 20_000
    r = run_tolerance(_divider(5, 5), ["V(out)/V(in)"], runs=runs)
    mag = r["probes"]["V(out)/V(in)"]["mag"]
    # scipy.integrate.dblquad: exact mean and variance of R2/(R1+R2) over the uniform box
    t = 0.05
    box = dict(a=1 - t, b=1 + t, gfun=1 - t, hfun=1 + t)

    def moment(k):
        return integrate.dblquad(lambda s2, s1: (3 * s2 / (s1 + 3 * s2)) ** k,
                                 **box)[0] / (2 * t) ** 2
    mean = moment(1)
    std = math.sqrt(moment(2) - mean ** 2)
    # Monte Carlo mean within its 3σ/√N band of the exact mean (common practice, no source)
    assert abs(mag["mean"] - mean) < 3 * std / math.sqrt(runs)
    # linearised ratio (textbook propagation of error): σ = H(1−H)·√2·t/√3
    h = 0.75
    assert math.isclose(mag["std"], h * (1 - h) * math.sqrt(2) * t / math.sqrt(3),
                        rel_tol=0.03)
    assert math.isclose(std, mag["std"], rel_tol=0.03)


def test_divider_normal_matches_the_linearised_normal():
    runs = 20_000
    r = run_tolerance(_divider(3, 3, "normal", "normal"), ["V(out)"], runs=runs)
    mag = r["probes"]["V(out)"]["mag"]
    # linearised: V = 7.5 V (1 + 0.25 (δ2 − δ1)), δ ~ N(0, (t/3)²) (studies.md: σ = tol/3)
    sigma = 7.5 * 0.25 * math.sqrt(2) * 0.01
    assert abs(mag["mean"] - 7.5) < 3 * sigma / math.sqrt(runs) + 7.5 * 2e-4
    assert math.isclose(mag["std"], sigma, rel_tol=0.03)
    # scipy.stats.norm: the ±3σ percentiles of the linearised normal
    for key, z in (("0.135", -3), ("99.865", 3)):
        assert math.isclose(mag["percentiles"][key], 7.5 + z * sigma, rel_tol=1e-3)


ADMITTANCE = """frequency 50 Hz
V1: voltage a -> 0 10 V
Y1: admittance a -> 0 2 m tol 6% {law}
"""


@pytest.mark.parametrize("law", ["uniform", "normal"])
def test_linear_probe_follows_the_exact_distribution(law):
    # I(Y1) = V·Y is linear in Y: |I| is exactly uniform on ±6 % / normal with σ = 2 %
    circuit = read_circuit(ADMITTANCE.format(law=law))
    batch, runs, seed, _, _ = prepare(circuit, ["I(Y1)"], runs=5000)
    values, bad = monte_carlo(batch, runs, seed)
    mag = np.abs(values["I(Y1)"])
    i0 = 0.02
    exact = (stats.uniform(loc=i0 * 0.94, scale=i0 * 0.12) if law == "uniform" else
             stats.norm(loc=i0, scale=i0 * 0.02))
    # scipy.stats.kstest against the exact law (a seeded draw: the p-value is fixed)
    assert stats.kstest(mag, exact.cdf).pvalue > 0.01
    assert not bad.any()


SHARED = """frequency 50 Hz
Cb = 100 uF tol 10%
V1: voltage a -> 0 100 V
C1: capacitor a -> 0 Cb
C2: capacitor a -> 0 Cb
"""


def test_named_value_is_one_draw_shared_by_its_users():
    circuit = read_circuit(SHARED)
    batch, runs, seed, _, _ = prepare(circuit, ["I(V1)", "I(C1)/I(C2)"], runs=4000)
    values, _ = monte_carlo(batch, runs, seed)
    # studies.md: one draw per run for every element using Cb, so I(C1) = I(C2) always
    assert np.allclose(values["I(C1)/I(C2)"], 1, rtol=1e-12)
    i0 = 2 * math.pi * 50 * 200e-6 * 100          # |I| = ωCV, C = 2 Cb
    # scipy.stats.uniform: |I(V1)| = ω·2Cb·V is exactly uniform on ±10 %
    assert stats.kstest(np.abs(values["I(V1)"]), stats.uniform(i0 * 0.9, i0 * 0.2).cdf
                        ).pvalue > 0.01


def test_seeded_chunks_give_the_same_draws():
    circuit = _divider(5, 5)
    batch, _, _, _, _ = prepare(circuit, ["V(out)"])
    first, _ = monte_carlo(batch, CHUNK_RUNS, 7)
    more, _ = monte_carlo(batch, CHUNK_RUNS + 500, 7)
    again, _ = monte_carlo(batch, CHUNK_RUNS + 500, 7)
    other, _ = monte_carlo(batch, CHUNK_RUNS, 8)
    # common practice, no source: per-chunk seeds from one SeedSequence
    assert np.array_equal(first["V(out)"], more["V(out)"][:CHUNK_RUNS])
    assert np.array_equal(more["V(out)"], again["V(out)"])
    assert not np.array_equal(first["V(out)"], other["V(out)"])
    r = run_tolerance(circuit, ["V(out)"], runs=100, seed=7)
    assert r["seed"] == 7 and r["runs"] == 100


def test_divider_sensitivities_textbook():
    r = run_tolerance(_divider(), ["V(out)"], runs=10)
    s = r["probes"]["V(out)"]["sensitivities"]
    # textbook: V = V1·R2/(R1+R2); ∂ln V/∂ln R1 = −R1/(R1+R2), ∂ln V/∂ln R2 = R1/(R1+R2)
    assert math.isclose(s["R1"]["mag"], -0.25, rel_tol=1e-9)
    assert math.isclose(s["R2"]["mag"], 0.25, rel_tol=1e-9)
    assert abs(s["R1"]["deg"]) < 1e-9


RC = """frequency {f} Hz
V1: voltage in -> 0 1 V
R1: resistor in -> out 1 kohm tol 5%
C1: capacitor out -> 0 {c} nF tol 5%
"""


def test_rc_corner_frequency_sensitivity_is_minus_one():
    c = 100.0
    fc = 1 / (2 * math.pi * 1e3 * c * 1e-9)
    r = run_tolerance(read_circuit(RC.format(f=fc, c=c)), ["V(out)/V(in)"], runs=10)
    s = r["probes"]["V(out)/V(in)"]["sensitivities"]
    # textbook: H = 1/(1 + jωRC); at ωRC = 1, ∂ln|H|/∂ln R = −1/2, ∂arg H/∂ln R = −1/2 rad
    for name in ("R1", "C1"):
        assert math.isclose(s[name]["mag"], -0.5, rel_tol=1e-9)
        assert math.isclose(s[name]["deg"], -math.degrees(0.5), rel_tol=1e-9)
    # corner frequency: S(fc, R) = −S(|H|, R) / S(|H|, ω), with S(|H|, ω) from two solves
    # by the single-frequency solver (central difference); textbook S = −1
    h = 1e-5
    mags = [abs(complex(*(solve_text(RC.format(f=fc * math.exp(k * h), c=c))
                          ["nodes"]["out"][x] for x in ("re", "im"))))
            for k in (1, -1)]
    s_omega = (math.log(mags[0]) - math.log(mags[1])) / (2 * h)
    assert math.isclose(-s["R1"]["mag"] / s_omega, -1.0, rel_tol=1e-6)


RLC = """frequency {f} Hz
V1: voltage a -> 0 1 V
R1: resistor a -> b 10 ohm
L1: inductor b -> c 10 mH tol 10%
C1: capacitor c -> 0 1 uF tol 10%
"""


def test_rlc_resonance_frequency_sensitivity_is_minus_half():
    f0 = 1 / (2 * math.pi * math.sqrt(10e-3 * 1e-6))
    r = run_tolerance(read_circuit(RLC.format(f=f0)), ["I(R1)"], runs=10)
    s = r["probes"]["I(R1)"]["sensitivities"]
    # S(f0, L) = −(∂arg I/∂ln L)/(∂arg I/∂ln ω); textbook f0 = 1/(2π√(LC)): S = −1/2
    h = 1e-5
    phases = []
    for k in (1, -1):
        current = solve_text(RLC.format(f=f0 * math.exp(k * h)))["elements"]["R1"]["current"]
        phases.append(math.degrees(math.atan2(current["im"], current["re"])))
    d_omega = (phases[0] - phases[1]) / (2 * h)
    for name in ("L1", "C1"):
        assert math.isclose(-s[name]["deg"] / d_omega, -0.5, rel_tol=1e-6)


RICH = """frequency 60 Hz
Lk = 20 mH tol 4%
Zl = (3 + j4) tol 5%
Is = 2 A tol 3%
V1: voltage a -> 0 120 V phase 10 deg
I1: current 0 -> d Is
R1: resistor a -> b 8 ohm tol 2% normal
L1: inductor b -> c Lk
L2: inductor d -> 0 (Lk/2) tol 1%
K1: coupling L1 L2 k 0.6
C1: capacitor c -> 0 220 uF tol 10%
Z1: impedance c -> d Zl
Y1: admittance d -> 0 (1/(2*Zl)) tol 2%
"""
RICH_PROBES = ["V(c)", "V(c, d)", "I(R1)", "I(C1)", "I(Y1)", "I(L2)", "Z(c)",
               "V(d)/V(a)", "I(I1)"]


def test_adjoint_sensitivities_match_central_differences():
    circuit = read_circuit(RICH)
    batch, *_ = prepare(circuit, RICH_PROBES)
    _, sens = batch.point()
    m = len(batch.q.params)
    h = 1e-6
    scales = np.ones((2 * m, m))
    for k in range(m):
        scales[2 * k, k], scales[2 * k + 1, k] = math.exp(h), math.exp(-h)
    values = batch.run(scales).values        # the batched solve: another path
    for text in RICH_PROBES:
        fd = (np.log(values[text][0::2]) - np.log(values[text][1::2])) / (2 * h)
        # central finite differences (common practice, no source), 1e-6 relative
        scale = max(1.0, float(np.abs(sens[text]).max()))
        assert np.allclose(sens[text], fd, rtol=1e-6, atol=1e-6 * scale), text


def _scaled_text(text: str, scales: dict[str, float]) -> str:
    """The circuit text with each toleranced element's plain-number value multiplied
    out and its tol removed, for an independent plain solve."""
    out = []
    for line in text.splitlines():
        name = line.split(":")[0].strip()
        if name in scales:
            head = line.split(" tol ")[0].split()
            line = " ".join(head[:-1] + [f"({head[-1]} * {scales[name]!r})"])
        out.append(line)
    return "\n".join(out) + "\n"


BANK = """frequency 50 Hz
V1: voltage a -> 0 400 V
R1: resistor a -> b 0.2 tol 5%
L1: inductor b -> c 3e-3 tol 10%
C1: capacitor c -> 0 600e-6 tol 10%
R2: resistor c -> 0 40 tol 1%
"""


def test_worst_case_corners_equal_brute_force():
    circuit = read_circuit(BANK)
    r = run_tolerance(circuit, ["V(c)"], runs=200, worst_case=True)
    wc = r["probes"]["V(c)"]["worst_case"]
    assert wc["method"] == "corners" and wc["corners_solved"] == 16
    # brute force: every corner solved by the single-frequency solver from its own text
    names = ["R1", "L1", "C1", "R2"]
    tols = {"R1": 0.05, "L1": 0.1, "C1": 0.1, "R2": 0.01}
    found = []
    for bits in range(16):
        scales = {n: 1 + tols[n] * (1 if bits >> k & 1 else -1) for k, n in enumerate(names)}
        v = solve_text(_scaled_text(BANK, scales))["nodes"]["c"]
        found.append(math.hypot(v["re"], v["im"]))
    for sense, best in (("max", max(found)), ("min", min(found))):
        case = wc["mag"][sense]
        if case["at"] == "corner":
            assert math.isclose(case["value"], best, rel_tol=1e-9)
        else:                    # a refined interior point can only be more extreme
            assert (case["value"] >= best) if sense == "max" else (case["value"] <= best)


def test_worst_case_finds_an_interior_resonance():
    f0 = 1 / (2 * math.pi * math.sqrt(10e-3 * 1e-6))
    r = run_tolerance(read_circuit(RLC.format(f=f0 * 1.02)), ["I(R1)"], runs=100,
                      worst_case=True)
    high = r["probes"]["I(R1)"]["worst_case"]["mag"]["max"]
    # textbook: a series RLC's current peaks at V/R where ωL = 1/(ωC), inside the box
    assert high["at"] == "interior"
    assert math.isclose(high["value"], 1 / 10, rel_tol=1e-6)
    s = high["scales"]
    assert math.isclose(s["L1"] * s["C1"], 1 / 1.02 ** 2, rel_tol=1e-5)


def test_corner_search_beyond_enumeration():
    lines = ["frequency 50 Hz", "V1: voltage n0 -> 0 100 V"]
    for k in range(20):
        lines.append(f"R{k}: resistor n{k} -> n{k + 1} {1 + k} ohm tol {1 + k % 5}%")
    lines.append("R99: resistor n20 -> 0 10 ohm")
    r = run_tolerance(read_circuit("\n".join(lines)), ["I(R99)"], runs=50, worst_case=True)
    wc = r["probes"]["I(R99)"]["worst_case"]
    assert wc["method"] == "corner search"
    total = sum(1 + k for k in range(20)) + 10
    low = sum((1 + k) * (1 - (1 + k % 5) / 100) for k in range(20)) + 10
    high = sum((1 + k) * (1 + (1 + k % 5) / 100) for k in range(20)) + 10
    # Ohm's law: the series current is extreme with every resistor at one end of its box
    assert math.isclose(wc["mag"]["max"]["value"], 100 / low, rel_tol=1e-9)
    assert math.isclose(wc["mag"]["min"]["value"], 100 / high, rel_tol=1e-9)
    assert total > 0


def test_yield_interval_is_clopper_pearson():
    r = run_tolerance(_divider(5, 5), ["V(out)"], runs=3000, limits=["V(out) 7.45..7.55"])
    y = r["yield"]
    # scipy.stats.binomtest(...).proportion_ci(method="exact") is Clopper–Pearson
    ci = stats.binomtest(y["inside"], y["runs"]).proportion_ci(0.95, method="exact")
    assert math.isclose(y["low"], ci.low, rel_tol=1e-9)
    assert math.isclose(y["high"], ci.high, rel_tol=1e-9)
    assert 0 < y["fraction"] < 1
    assert interval(0, 10)[0] == 0.0 and interval(10, 10)[1] == 1.0


def test_bad_input_every_problem_in_one_pass():
    circuit = _divider()
    with pytest.raises(CircuitError) as info:
        run_tolerance(circuit, ["V(ot)"], runs=1, limits=["V(out) 2..1", "V(out) 1"])
    messages = [d.message for d in info.value.diagnostics]
    # studies.md: bad input is every diagnostic at once, columns inside the option text
    assert any("runs must be" in m for m in messages)
    assert any("MIN (2) is above MAX (1)" in m for m in messages)
    assert any("no range MIN..MAX" in m for m in messages)
    probe = [d for d in info.value.diagnostics if "'ot'" in d.message][0]
    assert probe.column == 3 and "did you mean 'out'" in probe.hint
    with pytest.raises(CircuitError) as info:
        run_tolerance(circuit, ["V(out)"], runs=2_000_000)
    assert "1,000,000" in info.value.diagnostics[0].message


def test_no_toleranced_quantity_is_a_clear_error():
    circuit = read_circuit("frequency 50 Hz\nV1: voltage a -> 0 1\nR1: resistor a -> 0 5\n"
                           "Cx = 1 uF tol 5%")
    with pytest.raises(CircuitError) as info:
        run_tolerance(circuit, ["V(a)"])
    (d,) = info.value.diagnostics
    # common practice, no source: say why nothing can vary, not an empty result
    assert "no toleranced quantity" in d.message and "Cx" in d.hint
