"""POST /api/sweep: the sweep JSON, 422 in the language's error shape, the work bound."""

from __future__ import annotations

import math

import pytest

from .test_tools_api import api  # noqa: F401  (the threaded client fixture)

RLC = """frequency 50 Hz
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""


def test_sweep_answers_the_study_json(api):  # noqa: F811
    r = api.post("/api/sweep", json={"netlist": RLC, "probes": ["I(R1)"], "from": 1000,
                                     "to": 50000, "points": 100})
    assert r.status_code == 200
    body = r.json()
    assert len(body["frequencies_hz"]) == 100 and body["frequencies_hz"][0] == 1000
    (peak,) = body["resonances"]
    # check-values C5: f0 = 7957.75 Hz, Q = 25
    assert math.isclose(peak["frequency_hz"], 7957.75, rel_tol=1e-6)
    assert math.isclose(peak["q"], 25, rel_tol=1e-5)


def test_bad_probe_and_range_answer_422_with_every_error(api):  # noqa: F811
    r = api.post("/api/sweep", json={"netlist": RLC, "probes": ["V(cc)"], "from": 10,
                                     "to": 5})
    assert r.status_code == 422                      # studies.md: HTTP 422, all in one pass
    errors = r.json()["errors"]
    assert len(errors) == 2
    (probe,) = [e for e in errors if e["column"] is not None]
    assert probe["column"] == 3 and "did you mean 'c'" in probe["hint"]


def test_work_bound_is_stated(api):  # noqa: F811
    r = api.post("/api/sweep", json={"netlist": RLC, "probes": ["V(c)"], "points": 1000})
    # common practice, no source: a bounded server says its limit (3 × 1,000 is fine)
    assert r.status_code == 200
    big = "frequency 50 Hz\nVs: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\n" for k in range(60))
    r = api.post("/api/sweep", json={"netlist": big, "probes": ["V(n5)"], "points": 100000})
    assert r.status_code == 422 and "points × unknowns" in r.json()["errors"][0]["message"]


def test_draw_adds_the_picture_and_the_page_strings(api):  # noqa: F811
    r = api.post("/api/sweep", json={"netlist": RLC, "probes": ["I(R1)"], "from": 1000,
                                     "to": 50000, "points": 100, "arrays": False,
                                     "draw": {"width": 700, "height": 420}})
    assert r.status_code == 200
    body = r.json()
    assert body["svg"].startswith("<svg") and 'width="700"' in body["svg"]
    assert "frequencies_hz" not in body and "mag" not in body["probes"]["I(R1)"]
    d = body["display"]
    (row,) = d["resonances"]
    # check-values C5: f0 = 7957.75 Hz, Q = 25, B = 2000 rad/s = 318.3 Hz
    assert row["cells"][3] == "7.95775 kHz" and row["cells"][6] == "25"
    assert row["cells"][7] == "318.3 Hz"
    assert len(d["readout"]["index"]) == 100 and d["readout"]["frequency"][0] == "1 kHz"


def test_csv_route_gives_every_point(api):  # noqa: F811
    r = api.post("/api/sweep/csv", json={"netlist": RLC, "probes": ["I(R1)"], "from": 1000,
                                         "to": 50000, "points": 100})
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/csv")
    assert "attachment" in r.headers["content-disposition"]
    lines = r.text.splitlines()
    assert len(lines) == 101                       # common practice: a header, a row a point
    r = api.post("/api/sweep/csv", json={"netlist": RLC, "probes": ["I(R9)"]})
    # studies.md: bad probes answer 422 in the language's error shape
    assert r.status_code == 422 and "R9" in r.json()["errors"][0]["message"]


BRIDGE = """frequency 50 Hz
V1: voltage top -> 0 10 V
R1: resistor top -> l 1k
R2: resistor l -> 0 2k
R3: resistor top -> r 1.5k
R4: resistor r -> 0 3.1k
"""


def test_formula_answers_the_study_json_with_display(api):  # noqa: F811
    r = api.post("/api/formula", json={"netlist": BRIDGE, "probe": "V(l, r)/V(top)",
                                       "solve_for": "R4"})
    assert r.status_code == 200
    body = r.json()
    (condition,) = body["solve_for"]["conditions"]
    # Wheatstone balance R1·R4 = R2·R3 (textbook; from memory)
    assert condition["solutions"][0]["text"] == "R4 = R2*R3/R1"
    assert body["display"]["mathml"] == body["formula"]["mathml"]
    assert body["check"]["ok"]


def test_formula_bad_input_answers_422_with_every_error(api):  # noqa: F811
    r = api.post("/api/formula", json={"netlist": BRIDGE, "probe": "V(l, rr)",
                                       "keep": ["R7"], "solve_for": "R9"})
    # studies.md: HTTP 422, all problems in one pass, the column inside the probe
    assert r.status_code == 422
    errors = r.json()["errors"]
    assert len(errors) == 3
    (probe,) = [e for e in errors if e["column"] is not None]
    assert probe["column"] == 6 and "did you mean 'r'" in probe["hint"]
    # common practice, no source: the page has fields, not flags — name them as it does
    words = " ".join(e["message"] + " " + (e["hint"] or "") for e in errors)
    assert "Keep 'R7'" in words and "Solve for 'R9'" in words and "--" not in words


def test_formula_time_limit_is_a_422_that_says_so(api):  # noqa: F811
    ladder = "frequency 50 Hz\nV1: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\nC{k}: capacitor n{k + 1} -> 0 1 uF\n"
        f"L{k}: inductor n{k + 1} -> 0 1 mH\nR{k}b: resistor n{k + 1} -> n0 3 ohm\n"
        for k in range(9))
    r = api.post("/api/formula", json={"netlist": ladder, "probe": "Z(n3, n8)"})
    # common practice, no source: a bounded server says which limit it hit
    assert r.status_code == 422
    assert r.json()["errors"][0]["message"].startswith(("time limit", "size limit"))
    assert "Keep: " in r.json()["errors"][0]["hint"] and "--keep" not in r.json()["errors"][0]["hint"]
HARMONIC = """frequency 50 Hz
Vs: voltage s -> 0 230 V
Rs: resistor s -> m 0.1 ohm
Ls: inductor m -> p 1 mH
Cb: capacitor p -> 0 400 uF
Drive: current p -> 0 100 A spectrum 5: 30 %, 7: 10 %
"""


def test_harmonics_answers_the_study_and_its_display(api):  # noqa: F811
    r = api.post("/api/harmonics", json={"netlist": HARMONIC, "pcc": "p", "nominal": 400,
                                         "rated": {"Cb": 240}, "element": "Cb"})
    assert r.status_code == 200
    body = r.json()
    assert body["orders"] == [1, 5, 7]
    # IEEE 1459-2010 3.2.4.2: SN² = S² − S1² for every element
    for e in body["elements"].values():
        w = e["ieee1459"]
        assert w["sn_va"] ** 2 == pytest.approx(w["s_va"] ** 2 - w["s1_va"] ** 2,
                                                rel=1e-9, abs=1e-9 * w["s_va"] ** 2)
    d = body["display"]
    assert d["element"] == "Cb" and d["node"] == "p"
    assert [s["key"] for s in d["spectra"]] == ["node", "element"]
    assert all(s["svg"].startswith("<svg") for s in d["spectra"])
    assert {t["key"] for t in d["tables"]} >= {"distortion", "pcc", "capacitors", "ieee1459"}


def test_harmonics_bad_input_is_422_with_every_error(api):  # noqa: F811
    r = api.post("/api/harmonics", json={"netlist": HARMONIC, "pcc": "q", "rated": {"Rs": 5}})
    assert r.status_code == 422                       # studies.md: HTTP 422, all in one pass
    messages = [e["message"] for e in r.json()["errors"]]
    assert len(messages) == 3
    bad = HARMONIC.replace("5: 30 %", "1: 30 %")
    r = api.post("/api/harmonics", json={"netlist": bad})
    assert r.status_code == 422
    (error,) = r.json()["errors"]
    column = bad.splitlines()[5].index("1: 30") + 1
    assert error["line"] == 6 and error["column"] == column and "not above 1" in error["message"]
    r = api.post("/api/harmonics", json={"netlist": HARMONIC, "rated": {"Cb": "high"}})
    assert r.status_code == 422                       # the framework's refusal, same shape


def test_the_circuits_sweep_line_is_the_default_range(api):  # noqa: F811
    text = RLC + "sweep 1 kHz to 50 kHz, 101 points\n"
    r = api.post("/api/sweep", json={"netlist": text, "probes": ["I(R1)"]})
    assert r.status_code == 200
    body = r.json()
    # studies.md: the directive's range when the request gives none
    assert body["range"] == {"from_hz": 1000.0, "to_hz": 50000.0, "points": 101,
                             "spacing": "log"}
    (peak,) = body["resonances"]
    assert math.isclose(peak["frequency_hz"], 7957.75, rel_tol=1e-6)   # check-values C5
    # studies.md: the API may override it
    r = api.post("/api/sweep", json={"netlist": text, "probes": ["I(R1)"], "points": 5,
                                     "spacing": "linear"})
    assert r.json()["frequencies_hz"] == [1000.0, 13250.0, 25500.0, 37750.0, 50000.0]


def test_a_bad_sweep_line_is_422_at_its_column(api):  # noqa: F811
    r = api.post("/api/sweep", json={"netlist": RLC + "sweep 5 kHz to 1 kHz, 1 points\n",
                                     "probes": ["I(R1)"]})
    assert r.status_code == 422
    # circuit-language.md / studies.md: FROM < TO and 2 ≤ points, both in one pass
    assert [(e["line"], e["column"]) for e in r.json()["errors"]] == [(6, 7), (6, 23)]


def test_the_work_bound_counts_the_sweep_lines_points(api):  # noqa: F811
    big = "frequency 50 Hz\nsweep 1 Hz to 1 kHz, 100000 points\nVs: voltage n0 -> 0 1 V\n" \
        + "".join(f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\n" for k in range(60))
    r = api.post("/api/sweep", json={"netlist": big, "probes": ["V(n5)"]})
    # common practice, no source: the bound holds whoever chose the points
    assert r.status_code == 422 and "100,000 points" in r.json()["errors"][0]["message"]
