"""The power tools through the JSON API: /api/correct, /api/port, /api/three-phase, and
the three-phase rows and tool choices of /api/solve's display.

Values are checked against check-values.md (sources named beside each check); the
display strings are formatting.py's, so each is also the page's text.
"""

from __future__ import annotations

import asyncio
import cmath
import json
import math
from concurrent.futures import ThreadPoolExecutor

import pytest

from ..tools.quoting import figures
from .conftest import ROOT, Api, make_app, template_context

SVG_NS = "{http://www.w3.org/2000/svg}"


class ThreadedApi(Api):
    """``conftest.Api`` with each request's event loop in a thread of its own.

    The browser tests' session-wide Playwright keeps an event loop running in the main
    thread once it has started, and ``asyncio.run`` refuses to start a second one there;
    a worker thread has no loop, so these tests pass in any order.
    """

    def request(self, method: str, url: str, **kw):
        with ThreadPoolExecutor(max_workers=1) as pool:
            return pool.submit(asyncio.run, self.arequest(method, url, **kw)).result()


@pytest.fixture
def api(bench_samples) -> ThreadedApi:
    return ThreadedApi(make_app(bench_samples))


def strict_json(response):
    """Parse a body refusing NaN and ±Infinity, which are not JSON (RFC 8259, section 6)."""
    def refuse(token):
        raise AssertionError(f"non-JSON number {token} in the body")
    return json.loads(response.text, parse_constant=refuse)


def load_impedance(p_w: float, pf: float, v: float, phases: int = 1) -> complex:
    """The impedance that takes p_w/phases at ``pf`` lagging from ``v`` (S = V²/Z*)."""
    s = p_w / phases * complex(1.0, math.tan(math.acos(pf)))
    return v * v / s.conjugate()


def z_text(z: complex) -> str:
    # 15 significant digits: the circuit reads back the same load to ~1e-15.
    re, im = f"{z.real:.15g}", f"{abs(z.imag):.15g}"
    return f"{re} + j{im} ohm" if z.imag >= 0 else f"{re} - j{im} ohm"


#: check-values C14: 4 kW at 0.8 lagging from 120 V RMS, 60 Hz.
C14 = f"""title Shop load (C14)
frequency 60 Hz
V1: voltage a -> 0 120 V
Zload: impedance a -> 0 {z_text(load_impedance(4000, 0.8, 120))}
"""

#: check-values C29: 120∠0° V → Z1 = 4+j3 → m; Z2 = −j10 m→0; Z3 = 2+j5 m → t.
C29 = """title Port network (C29)
frequency 50 Hz
Vs: voltage s -> 0 120 V
Z1: impedance s -> m 4 + j3 ohm
Z2: impedance m -> 0 -j10 ohm
Z3: impedance m -> t 2 + j5 ohm
"""

#: check-values C22: 400 V line, 50 Hz, Z_Y = 16 + j12 Ω per phase, four-wire.
C22 = """title Balanced wye (C22)
frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 16 + j12 ohm
"""

#: check-values C26: 230 V phase source, Z_a = 20, Z_b = 10+j10, Z_c = −j15 Ω, solid neutral.
C26 = """title Unbalanced four-wire wye (C26)
frequency 50 Hz
G: voltage3 A B C -> 0 230 V
U: load3 wye A B C -> 0 20 ohm, 10+j10 ohm, -j15 ohm
"""

#: check-values C24: 480 V line, 60 Hz, Z_Δ = 30 + j40 Ω; phase −30° puts V_ab at 0°.
C24 = """title Balanced delta (C24)
frequency 60 Hz
G: voltage3 A B C -> 0 480 V line phase -30 deg
D: load3 delta A B C 30 + j40 ohm
"""


def c16(connection: str) -> str:
    """check-values C16: 100 kW at 0.75 lagging on 400 V, 50 Hz, as a wye or delta load."""
    if connection == "wye":
        load = f"L: load3 wye A B C -> 0 {z_text(load_impedance(100e3, 0.75, 400 / math.sqrt(3), 3))}"
    else:
        load = f"L: load3 delta A B C {z_text(load_impedance(100e3, 0.75, 400, 3))}"
    return f"frequency 50 Hz\nG: voltage3 A B C -> 0 400 V line\n{load}\n"


def phasor_of(ph: dict) -> complex:
    return complex(ph["re"], ph["im"])


def fact(display: dict, key: str) -> dict:
    return next(f for f in display["facts"] if f["key"] == key)


# ---- POST /api/correct ---------------------------------------------------------------

def test_correct_answers_the_textbook_example_with_display_text(api):
    r = api.post("/api/correct", json={"netlist": C14, "source": "V1", "target": 0.95})
    assert r.status_code == 200
    body = strict_json(r)
    # check-values C14: Alexander & Sadiku, Fundamentals of Electric Circuits, PFC worked
    # example (no. from memory): C = 310.438 µF (book 310.5 µF), Qc = 1685.26 var,
    # line current 41.6667 → 35.0877 A.
    assert figures(body["capacitance_f"] * 1e6) == 310.438
    assert body["capacitance_f"] * 1e6 == pytest.approx(310.5, rel=5e-4)
    assert figures(body["q_var"]) == 1685.26
    assert figures(body["supply_before"]["current"]["mag"]) == 41.6667
    assert figures(body["supply_after"]["current"]["mag"]) == 35.0877
    assert body["pf_before"] == pytest.approx(0.8, abs=1e-12)
    assert body["pf_after"] == pytest.approx(0.95, abs=1e-9)   # issue 5: re-solved, to 1e-9
    # Nothing lies between source and capacitor: the ideal-bus formula is exact (issue 5).
    assert body["formula_capacitance_f"] == pytest.approx(body["capacitance_f"], rel=1e-9)

    d = body["display"]
    assert fact(d, "capacitance")["value"] == "310.438 µF (1 unit)"    # C14, 6 figures
    assert fact(d, "pf")["value"] == "0.8 lagging → 0.95 lagging (target 0.95 lagging)"
    assert fact(d, "supply_current")["value"].startswith("41.67 A")   # C14 at 4 figures
    assert "formula is exact" in fact(d, "difference")["value"]
    assert fact(d, "q")["value"].startswith("1.685 kvar")             # C14: 1685.26 var
    # The stored-charge caution carries this capacitor's own numbers: ½CV̂² with
    # V̂ = 120·√2 V (RC physics, formula) = 4.470 J.
    energy = 0.5 * body["capacitance_f"] * (120 * math.sqrt(2)) ** 2
    assert f"{energy:.3g} J" in fact(d, "stored_energy")["value"]
    assert d["cautions"][0]["title"].startswith("Stored charge")
    assert "NEC (NFPA 70) 460.6" in d["cautions"][0]["detail"]
    # The line to append names the capacitor, its nodes and its value in the language.
    assert d["lines"] == body["circuit_lines"]
    assert len(d["lines"]) == 1 and d["lines"][0].startswith("Cpf1: capacitor a -> 0 310.43")
    assert d["comment"].startswith("#")


def test_appending_the_suggested_line_reaches_the_target(api):
    body = strict_json(api.post("/api/correct", json={"netlist": C14, "source": "V1",
                                                      "target": 0.95}))
    corrected = C14 + "\n" + body["display"]["comment"] + "\n" + "\n".join(body["circuit_lines"]) + "\n"
    solved = strict_json(api.post("/api/solve", json={"netlist": corrected}))
    # issue 5 property: the re-solved circuit with the suggested capacitor is on target.
    assert solved["elements"]["V1"]["pf"] == pytest.approx(0.95, abs=1e-9)
    row = next(s for s in solved["display"]["summary"]["sources"] if s["name"] == "V1")
    assert row["text"]["pf"] == "0.95 lagging"
    assert "Cpf1" in solved["elements"]


@pytest.mark.parametrize("bank, want_uf", [("wye", 1100.62), ("delta", 366.874)])
def test_correct_sizes_a_three_phase_bank(api, bank, want_uf):
    # check-values C16 (formula): C_wye = 1100.62 µF, C_delta = 366.874 µF = C_wye/3,
    # Qc = 55.3233 kvar in all; line current 192.45 → 151.934 A.
    r = api.post("/api/correct", json={"netlist": c16("wye"), "source": "G", "target": 0.95,
                                       "bank": bank})
    assert r.status_code == 200
    body = strict_json(r)
    assert figures(body["capacitance_f"] * 1e6) == want_uf
    assert figures(body["q_var"] / 1e3) == 55.3233
    assert body["units"] == 3 and body["place"]["connection"] == bank
    for phase in "abc":
        assert figures(body["supply_after"]["current"][phase]["mag"]) == 151.934
    d = body["display"]
    assert fact(d, "capacitance")["value"].endswith(f"each (3 units, {bank} bank)")
    assert len(d["capacitors"]) == 3 and len(d["lines"]) == 3
    assert all(line.split(":")[0].startswith("Cpf1_") for line in d["lines"])


def test_correct_at_a_node_and_across_two_nodes(api):
    # At the load's own node through a line impedance the exact answer differs from the
    # ideal-bus estimate; placed 'at' a node it goes to ground, 'across' between two nodes.
    text = C14.replace("V1: voltage a -> 0 120 V", "V1: voltage s -> 0 120 V\n"
                                                   "Rline: resistor s -> a 0.05 ohm")
    at = strict_json(api.post("/api/correct", json={"netlist": text, "source": "V1",
                                                    "target": 0.95, "at": "a"}))
    across = strict_json(api.post("/api/correct", json={"netlist": text, "source": "V1",
                                                        "target": 0.95, "across": ["a", "0"]}))
    listed = strict_json(api.post("/api/correct", json={"netlist": text, "source": "V1",
                                                        "target": 0.95, "at": ["a"]}))
    assert at["place"]["nodes"] == ["a", "0"] == across["place"]["nodes"] == listed["place"]["nodes"]
    assert at["capacitance_f"] == pytest.approx(across["capacitance_f"], rel=1e-12)
    assert at["pf_after"] == pytest.approx(0.95, abs=1e-9)         # issue 5: exact target
    assert abs(at["formula_difference_rel"]) > 1e-6                 # the line matters here
    assert "line and transformer impedance" in fact(at["display"], "difference")["value"]


def test_correct_checks_the_rated_voltage_against_ieee_18(api):
    # IEEE Std 18-2002 continuous limits (check-values C20): 110 % rms voltage. A unit
    # rated 100 V on a 120 V bus runs at 120 % and must be flagged; rated 240 V passes.
    low = strict_json(api.post("/api/correct", json={"netlist": C14, "source": "V1",
                                                     "target": 0.95, "rated_voltage": 100}))
    high = strict_json(api.post("/api/correct", json={"netlist": C14, "source": "V1",
                                                      "target": 0.95, "rated_voltage": 240}))
    assert "voltage_rms" in low["ieee18"]["exceeded"] and high["ieee18"]["ok"]
    low_fact, high_fact = fact(low["display"], "ieee18"), fact(high["display"], "ieee18")
    assert low_fact["flag"] == "warn" and "EXCEEDS" in low_fact["value"]   # words, not colour only
    assert high_fact["flag"] == "ok" and "within" in high_fact["value"]
    assert "rms voltage 120 %" in low_fact["value"]                        # 120/100, formula
    assert any("IEEE Std 18-2002" in w["message"] for w in low["display"]["warnings"])


def test_correct_warns_near_a_characteristic_harmonic(api):
    # check-values C19 (IEEE 519 / 1036 application rule h = √(S_sc/Q_c), from memory):
    # a bank whose resonance with the supply falls near the 5th is a warning with words.
    # Supply reactance X and a load at 0.8 lagging sized so the bank tunes near h = 5:
    # X_C = 25·X_th, i.e. Q_c ≈ V²/(25·X_th).
    x_th = 0.02
    qc = 120 ** 2 / (25 * x_th)
    p = qc / (0.75 - math.tan(math.acos(0.95)))       # tanφ1 = 0.75 for 0.8 lagging
    text = (f"frequency 60 Hz\nV1: voltage s -> 0 120 V\nXs: impedance s -> a j{x_th!r} ohm\n"
            f"Zload: impedance a -> 0 {z_text(load_impedance(p, 0.8, 120))}\n")
    body = strict_json(api.post("/api/correct", json={"netlist": text, "source": "V1",
                                                      "target": 0.95, "at": "a"}))
    assert body["near_harmonic"] == 5
    res = fact(body["display"], "resonance")
    assert res["flag"] == "warn" and "5th harmonic" in res["value"] and "▲" in res["value"]
    assert any("harmonic" in w["message"] for w in body["display"]["warnings"])


@pytest.mark.parametrize("ask, words", [
    ({"source": "V9", "target": 0.95}, "'V9' is not an element or block"),
    ({"source": "Zload", "target": 0.95}, "not an independent source"),
    ({"source": "V1", "target": 1.5}, "at most 1"),
    ({"source": "V1", "target": 0.7, "at": "nowhere"}, "nowhere"),   # place first
    ({"source": "V1", "target": 0.95, "at": "nowhere"}, "nowhere"),
    ({"source": "V1", "target": 0.95, "at": "a", "across": ["a", "0"]}, "not both"),
    ({"source": "V1", "target": 0.95, "at": []}, "one node, two nodes or three"),
    ({"source": "V1", "target": 0.95, "rated_voltage": -5}, "rated voltage"),
    ({"source": "V1", "target": 0.95, "bank": "zigzag"}, "request body"),
    ({"source": "V1", "target": "high"}, "request body"),
    ({"target": 0.95}, "request body"),
])
def test_correct_input_problems_are_422_with_a_message(api, ask, words):
    r = api.post("/api/correct", json={"netlist": C14, **ask})
    assert r.status_code == 422
    body = strict_json(r)
    assert body["errors"] and words in " ".join(e["message"] for e in body["errors"])
    assert {"line", "column", "message", "hint"} <= body["errors"][0].keys()   # results-contract.md


def test_correct_reports_circuit_errors_at_their_line(api):
    broken = C14 + "C9: capacitor a -> 0 10 uH\n"
    r = api.post("/api/correct", json={"netlist": broken, "source": "V1", "target": 0.95})
    assert r.status_code == 422
    errors = strict_json(r)["errors"]
    assert [e["line"] for e in errors] == [len(C14.splitlines()) + 1]   # the added line, from 1


def test_correct_a_leading_source_says_why(api):
    leading = "frequency 50 Hz\nV1: voltage a -> 0 230 V\nR1: resistor a -> 0 100 ohm\n" \
              "C1: capacitor a -> 0 50 uF\n"
    body = strict_json(api.post("/api/correct", json={"netlist": leading, "source": "V1",
                                                      "target": 0.95}))
    assert "leading" in body["errors"][0]["message"]        # issue 5: clear message, no answer


@pytest.mark.parametrize("target, leading", [(0.7, False), (0.8, False)])
def test_correct_a_source_at_or_above_its_target_is_a_200_answer(api, target, leading):
    # check-values C14: 4 kW at 0.8 lagging, 120 V: Q = P·tan(acos 0.8) = 3 kvar (power
    # triangle), I = |S|/V = 5000/120 = 41.6667 A; 0.8 meets a 0.8 target already.
    r = api.post("/api/correct", json={"netlist": C14, "source": "V1", "target": target,
                                       "leading": leading})
    assert r.status_code == 200
    body = strict_json(r)
    assert body["needed"] is False and body["capacitance_f"] == 0.0
    assert body["pf_before"] == pytest.approx(0.8, abs=1e-12)                 # C14
    assert body["supply_before"]["p_w"] == pytest.approx(4000, rel=1e-12)     # C14
    assert body["supply_before"]["q_var"] == pytest.approx(
        4000 * math.tan(math.acos(0.8)), rel=1e-9)                           # Q = P·tanφ
    assert figures(body["supply_before"]["current"]["mag"]) == 41.6667       # C14
    assert body["standard_sizes"] is None and body["circuit_lines"] == []
    d = body["display"]
    assert d["heading"] == "V1: no correction needed" and d["lines"] == []
    assert d["standard"] is None and d["capacitors"] == []
    assert fact(d, "supply")["value"] == "4 kW + 3 kvar"                      # C14
    assert "no capacitor is needed" in fact(d, "reason")["value"]


def test_correct_unity_source_with_a_leading_target_is_a_200_answer(api):
    # Ohm's law: 230 V across 50 Ω takes P = V²/R = 1058 W at unity (common practice,
    # no source); unity is above any target, leading ones too.
    unity = "frequency 50 Hz\nV1: voltage a -> 0 230 V\nR1: resistor a -> 0 50 ohm\n"
    r = api.post("/api/correct", json={"netlist": unity, "source": "V1", "target": 0.9,
                                       "leading": True})
    assert r.status_code == 200
    body = strict_json(r)
    assert body["needed"] is False and body["target_sense"] == "leading"
    assert body["supply_before"]["p_w"] == pytest.approx(230 ** 2 / 50, rel=1e-12)   # V²/R
    assert body["pf_sense_before"] == "unity"


# ---- POST /api/port ------------------------------------------------------------------

def test_port_gives_the_thevenin_and_norton_equivalents(api):
    r = api.post("/api/port", json={"netlist": C29, "a": "t", "b": "0"})
    assert r.status_code == 200
    body = strict_json(r)
    # check-values C29 (formula): V_th = 148.842 V∠-29.7449°, Z_th = 8.15385 + j5.76923 Ω,
    # I_N = 14.9014 A∠-65.0261°.
    assert figures(body["thevenin_v"]["mag"]) == 148.842
    assert figures(body["thevenin_v"]["deg"]) == -29.7449
    assert figures(body["thevenin_z"]["re"]) == 8.15385
    assert figures(body["thevenin_z"]["im"]) == 5.76923
    assert figures(body["norton_i"]["mag"]) == 14.9014
    assert figures(body["norton_i"]["deg"]) == -65.0261
    # check-values C30 (conjugate-match theorem): P_max = 679.245 W; R_L = 9.98845 Ω → 610.558 W.
    assert figures(body["max_power_w"]) == 679.245
    assert figures(body["resistive_load_ohm"]) == 9.98845
    assert figures(body["resistive_power_w"]) == 610.558
    d = body["display"]
    assert fact(d, "thevenin_v")["value"].startswith("148.8 V ∠-29.74°")
    assert fact(d, "thevenin_z")["value"] == "8.154 + j5.769 Ω = 9.988 Ω ∠35.28°"
    assert fact(d, "norton_i")["value"].startswith("14.9 A ∠-65.03°")
    assert "679.2 W" in fact(d, "matched")["value"]
    assert "610.6 W" in fact(d, "resistive")["value"]
    assert d["heading"].startswith("Port t → 0")


def test_port_across_an_ideal_source_explains_the_missing_values(api):
    # Z_th = 0 across an ideal voltage source (common practice, no source): no Norton.
    body = strict_json(api.post("/api/port", json={"netlist": C29, "a": "s", "b": "0"}))
    assert body["norton_i"] is None and body["equivalent"] == "ideal-voltage"
    assert body["display"]["notes"] and "Z_th = 0" in body["display"]["notes"][0]
    assert [f["key"] for f in body["display"]["facts"]] == ["thevenin_v", "thevenin_z"]


@pytest.mark.parametrize("body, words", [
    ({"a": "x", "b": "0"}, "'x' is not a node"),
    ({"a": "t", "b": "t"}, "same node"),
    ({"a": "t"}, "request body"),
])
def test_port_input_problems_are_422(api, body, words):
    r = api.post("/api/port", json={"netlist": C29, **body})
    assert r.status_code == 422
    assert words in strict_json(r)["errors"][0]["message"]


# ---- three-phase rows, choices and view ------------------------------------------------

def test_solve_display_has_block_rows_with_totals(api):
    body = strict_json(api.post("/api/solve", json={"netlist": C22}))
    rows = {r["name"]: r for r in body["display"]["groups"]}
    assert set(rows) == {"G", "M"}
    m = rows["M"]
    assert m["elements"] == ["M.a", "M.b", "M.c"]
    # check-values C22 (formula, standard three-phase relations): P = 6400 W,
    # Q = 4800 var, S = 8000 VA, PF 0.8 lagging, I_N = 0.
    assert m["values"]["p_w"] == pytest.approx(6400, rel=1e-9)
    assert m["values"]["q_var"] == pytest.approx(4800, rel=1e-9)
    assert m["values"]["s_va"] == pytest.approx(8000, rel=1e-9)
    assert m["text"]["p"] == "6.4 kW" and m["text"]["q"] == "4.8 kvar"
    assert m["text"]["s"] == "8 kVA" and m["text"]["pf"] == "0.8 lagging"
    assert body["groups"]["M"]["neutral_current"]["mag"] <= 1e-9       # C22: I_N abs ≤ 1e-9 A
    assert m["text"]["neutral"] == "0 A"                                 # round-off reads 0
    assert m["text"]["unbalance"] == "0 %"        # balanced: no unbalance (formula V₂ = 0)
    # a block has no one voltage or current: those cells stay empty, the second line
    # under its terminals says unbalance and neutral current
    assert m["text"]["voltage"] == m["text"]["current"] == ""
    assert m["sub"]["terminals"].replace("\u00a0", " ") == "V₂/V₁ 0 %\nI_N 0 A"
    # the supply block shows what it delivers, like its phases (positive when supplying)
    g = rows["G"]
    assert g["values"]["p_w"] == pytest.approx(6400, rel=1e-9) and g["sub"]["p"] == "delivered total"
    assert m["text"]["terminals"] == "A B C → 0" and m["sub"]["kind"] == "wye"
    # The block rows carry every branch column, so the table can place them as rows.
    columns = {c["key"] for c in body["display"]["element_columns"]}
    assert columns <= set(m["text"])
    # The summary's block table says the unbalance too.
    summary = {g["name"]: g for g in body["display"]["summary"]["groups"]}
    assert summary["M"]["text"]["unbalance"] == "0 %"


def test_solve_display_offers_the_sources_nodes_and_blocks(api):
    body = strict_json(api.post("/api/solve", json={"netlist": C22}))
    tools = body["display"]["tools"]
    # A voltage3 block is one source; its phases are not offered alone.
    assert [s["name"] for s in tools["sources"]] == ["G"]
    assert tools["sources"][0]["three_phase"] is True and tools["sources"][0]["lines"] == ["A", "B", "C"]
    assert tools["nodes"][0] == "0" and set(tools["nodes"]) == set(body["nodes"])
    assert [g["name"] for g in tools["groups"]] == ["G", "M"]
    single = strict_json(api.post("/api/solve", json={"netlist": C14}))["display"]["tools"]
    assert [(s["name"], s["three_phase"]) for s in single["sources"]] == [("V1", False)]
    assert single["groups"] == []


def test_three_phase_view_of_an_unbalanced_wye(api):
    r = api.post("/api/three-phase", json={"netlist": C26, "group": "U", "width": 420,
                                           "height": 420})
    assert r.status_code == 200
    body = strict_json(r)
    d = body["display"]
    seq = {s["name"].split()[0]: s for s in d["sequence"]}
    # check-values C26 (Fortescue 1918, formula): I0 = 7.04652 A∠-145.82°,
    # I1 = 7.77242 A∠9.46232°, I2 = 10.0278 A∠15.5063°; I_N = 21.1396 A∠-145.82° = 3·I0.
    assert seq["zero"]["current"] == "7.047 A ∠-145.82°"
    assert seq["positive"]["current"] == "7.772 A ∠9.46°"
    assert seq["negative"]["current"] == "10.03 A ∠15.51°"
    neutral = next(f for f in d["facts"] if f["term"] == "neutral current")
    assert neutral["value"] == "I_N = 21.14 A ∠-145.82°"
    # check-values C26: I_a = 11.5 A∠0°, I_b = 16.2635 A∠-165°, I_c = 15.3333 A∠-150°.
    assert [line["current"] for line in d["lines"]] == ["11.5 A ∠0.00°", "16.26 A ∠-165.00°",
                                                        "15.33 A ∠-150.00°"]
    assert [p["name"] for p in d["phases"]] == ["U.a", "U.b", "U.c"]

    import xml.etree.ElementTree as ET
    root = ET.fromstring(body["svg"])
    assert root.get("width") == "420"
    shafts = [e for e in root.iter(SVG_NS + "line") if e.get("data-group") == "U"]
    assert len(shafts) == 6
    currents = {e.get("data-phase"): float(e.get("data-deg")) for e in shafts
                if e.get("data-quantity") == "current"}
    assert currents["a"] == pytest.approx(0.0, abs=1e-6)                # C26
    assert currents["b"] == pytest.approx(-165.0, abs=1e-6)             # C26
    assert currents["c"] == pytest.approx(-150.0, abs=1e-6)             # C26


def test_three_phase_view_of_a_delta_uses_line_currents(api):
    body = strict_json(api.post("/api/three-phase", json={"netlist": C24, "group": "D"}))
    d = body["display"]
    # check-values C24 (formula): I_ab = 9.6 A∠-53.1301°, I_a = 16.6277 A∠-83.1301°
    # (= √3·I_ab shifted −30°); P = 8294.4 W, Q = 11059.2 var.
    assert d["phases"][0]["name"] == "D.ab" and d["phases"][0]["text"]["current"] == "9.6 A ∠-53.13°"
    assert d["lines"][0]["current"] == "16.63 A ∠-83.13°"
    assert d["lines"][0]["pair"] == "A–B" and d["lines"][0]["voltage"] == "480 V ∠0.00°"
    totals = {f["term"]: f["value"] for f in d["facts"]}
    assert totals["P total"] == "8.294 kW" and totals["Q total"] == "11.06 kvar"
    assert totals["neutral current"] == "no neutral (delta)"
    assert "branch voltages" in d["note"]


@pytest.mark.parametrize("netlist, group, words", [
    (C22, "Nope", "no three-phase block named 'Nope'"),
    (C14, "M", "no three-phase block named 'M'"),
])
def test_three_phase_view_of_an_unknown_block_is_422(api, netlist, group, words):
    r = api.post("/api/three-phase", json={"netlist": netlist, "group": group})
    assert r.status_code == 422
    body = strict_json(r)
    assert words in body["errors"][0]["message"]
    assert body["errors"][0]["hint"]


def test_the_plant_sample_solves_with_block_rows():
    # The real three-phase sample: every block is a row whose phases are its elements,
    # and the block totals add up its phases (IEEE 1459: total P, Q sum over phases).
    from phasorbench.presentation.display import group_rows
    from phasorbench.workflow import solve_text

    result = solve_text((ROOT / "samples" / "plant-three-phase.circuit").read_text())
    for row in group_rows(result):
        members = [result["elements"][n] for n in row["elements"]]
        # a supply block's row shows the delivered totals: the passive ones negated
        sign = -1.0 if result["groups"][row["name"]]["kind"] == "voltage3" else 1.0
        assert row["values"]["p_w"] == pytest.approx(sign * sum(e["p_w"] for e in members),
                                                     rel=1e-9)
        assert row["values"]["q_var"] == pytest.approx(sign * sum(e["q_var"] for e in members),
                                                       abs=1e-9 * row["values"]["s_va"])


def test_new_routes_are_in_the_api_reference(api):
    schema = strict_json(api.get("/openapi.json"))
    assert {"/api/correct", "/api/port", "/api/three-phase"} <= set(schema["paths"])
    with ThreadPoolExecutor(max_workers=1) as pool:      # see ThreadedApi
        _, context = pool.submit(template_context, api.app, "/docs").result()
    listed = {op["path"] for op in context["operations"]}
    assert {"/api/correct", "/api/port", "/api/three-phase"} <= listed
    models = {m["name"]: m for m in context["models"]}
    fields = {f["name"] for f in models["CorrectionBody"]["fields"]}
    assert {"netlist", "source", "target", "at", "across", "bank", "leading",
            "rated_voltage"} <= fields


def test_tool_answers_are_strict_json(api):
    # No NaN or infinity anywhere (issue 3 guard): the open port has an infinite Z_th.
    text = C29 + "Vx: voltage x -> y 1 V\nRx: resistor y -> x 1 ohm\n"
    for path, body in (("/api/port", {"netlist": text, "a": "t", "b": "x"}),
                       ("/api/correct", {"netlist": C14, "source": "V1", "target": 0.95}),
                       ("/api/three-phase", {"netlist": C22, "group": "M"})):
        r = api.post(path, json=body)
        assert r.status_code == 200, (path, r.text)
        strict_json(r)


def test_polar_check_of_the_thevenin_voltage_against_a_nodal_solve(api):
    # The open-circuit definition (common practice, no source): V_th = V(t) of the circuit
    # as it is; the port answer must agree with the solve answer of the same text.
    port = strict_json(api.post("/api/port", json={"netlist": C29, "a": "t", "b": "0"}))
    solved = strict_json(api.post("/api/solve", json={"netlist": C29}))
    assert abs(phasor_of(port["thevenin_v"]) - phasor_of(solved["nodes"]["t"])) < 1e-9
    assert cmath.phase(phasor_of(port["norton_i"])) == pytest.approx(
        math.radians(-65.0261), abs=1e-6)                                # C29
