"""``POST /api/sheet`` through the real app: a download, errors as ``/api/solve`` has them."""

from __future__ import annotations

import logging
import re

import pytest

from phasorbench.cli import main
from phasorbench.web import sheet_routes

from .conftest import RC_BENCH, ROOT, STAMP, element_text, ladder, visible_text

BAD = "frequency 50 Hz\nV1: voltage a -> 0 230 V\nR1: resistor a -> 0 5 uH\n"


def test_answers_html_as_an_attachment_named_by_the_title(api):
    r = api.post("/api/sheet", json={"netlist": RC_BENCH})
    assert r.status_code == 200
    assert r.headers["content-type"] == "text/html; charset=utf-8"
    # RFC 6266, 4.1: attachment with a quoted file name.
    assert r.headers["content-disposition"] == 'attachment; filename="rc-bench-sheet.html"'
    assert r.headers["x-content-type-options"] == "nosniff"
    assert element_text(r.text, "pre", "source") == RC_BENCH
    untitled = api.post("/api/sheet", json={"netlist": RC_BENCH.replace("title RC bench\n", "")})
    assert untitled.headers["content-disposition"] == 'attachment; filename="circuit-sheet.html"'


def test_cli_and_api_give_the_same_sheet(api, tmp_path, capsys):
    cases = [("bakery-feeder", None), ("plant-three-phase", ["Rn", "Motors.a"]),
             ("pump-station-transformer", None)]
    for name, elements in cases:
        path = ROOT / "samples" / f"{name}.circuit"
        out = tmp_path / f"{name}.html"
        chosen = [arg for e in elements or [] for arg in ("--element", e)]
        assert main(["sheet", str(path), "-o", str(out), *chosen]) == 0
        capsys.readouterr()
        body = {"netlist": path.read_text(encoding="utf-8")}
        if elements:
            body["elements"] = elements
        served = api.post("/api/sheet", json=body)
        assert served.status_code == 200
        # Identical apart from the moment each was made (issue 4, tests).
        assert STAMP.sub("", served.text) == STAMP.sub("", out.read_text(encoding="utf-8")), name
        assert len(STAMP.findall(served.text)) == 1


def test_circuit_errors_are_422_like_solve(api):
    # results-contract.md, errors: 422 with {"errors": [...]}
    sheet = api.post("/api/sheet", json={"netlist": BAD})
    solve = api.post("/api/solve", json={"netlist": BAD})
    assert sheet.status_code == solve.status_code == 422
    assert sheet.headers["content-type"].startswith("application/json")
    assert sheet.json() == solve.json()
    (error,) = sheet.json()["errors"]
    assert (error["line"], error["column"]) == (3, 21)


def test_chosen_elements(api):
    # common practice, no source: an unknown name is the client's error (RFC 9110, 15.5.21: 422)
    r = api.post("/api/sheet", json={"netlist": RC_BENCH, "elements": ["R1"]})
    assert r.status_code == 200 and "Elements chosen for this sheet: R1." in r.text
    r = api.post("/api/sheet", json={"netlist": RC_BENCH, "elements": ["R9"]})
    assert r.status_code == 422
    assert r.json()["errors"][0]["message"] == "the circuit has no element named 'R9'"


def test_malformed_body_gets_the_error_shape(api):
    # results-contract.md, errors: one error shape for every bad request
    r = api.post("/api/sheet", json={"circuit": RC_BENCH})
    assert r.status_code == 422 and r.json()["errors"][0]["message"].startswith("request body:")


def test_size_limit_as_solve(make_api):
    # web/settings.py MAX_ELEMENTS: the same limit and message as /api/solve
    small = make_api(max_elements=50)
    text = ladder(60)
    sheet = small.post("/api/sheet", json={"netlist": text})
    assert sheet.status_code == 422
    assert sheet.json() == small.post("/api/solve", json={"netlist": text}).json()


def test_guards_apply(api):
    # A page of another site may not make the server work (Fetch standard, Origin header).
    r = api.post("/api/sheet", json={"netlist": RC_BENCH},
                 headers={"Origin": "https://elsewhere.example"})
    assert r.status_code == 403


def test_internal_error_is_500_without_details(api, monkeypatch, caplog):
    def broken(*args):
        raise KeyError("secret detail")
    monkeypatch.setattr(sheet_routes, "sheet_answer", broken)
    with caplog.at_level(logging.ERROR, logger="phasorbench.web"):
        r = api.post("/api/sheet", json={"netlist": RC_BENCH})
    assert r.status_code == 500
    assert "secret detail" not in r.text
    assert r.json()["errors"][0]["message"].startswith("internal error")
    assert "secret detail" in caplog.text                  # logged for the operator


def test_route_is_in_the_api_schema(api):
    # OpenAPI 3.1, Paths Object: every route is listed
    paths = api.get("/openapi.json").json()["paths"]
    assert "post" in paths["/api/sheet"]


def test_power_tools_same_as_the_command_line(api, tmp_path, capsys):
    from tests.cli.test_sheet import MOTOR
    path = tmp_path / "motor.circuit"
    path.write_text(MOTOR, encoding="utf-8")
    out = tmp_path / "motor.html"
    assert main(["sheet", str(path), "-o", str(out), "--correct", "V1", "0.95",
                 "--port", "a", "0"]) == 0
    capsys.readouterr()
    served = api.post("/api/sheet", json={"netlist": MOTOR, "correct": {"source": "V1",
                                                                        "target": 0.95},
                                          "port": {"a": "a", "b": "0"}})
    assert served.status_code == 200
    assert STAMP.sub("", served.text) == STAMP.sub("", out.read_text(encoding="utf-8"))
    assert "310.438 µF" in served.text                  # check-values C14
    wrong = api.post("/api/sheet", json={"netlist": MOTOR, "port": {"a": "a"}})
    assert wrong.status_code == 422
    unknown = api.post("/api/sheet", json={"netlist": MOTOR, "port": {"a": "a", "b": "zz"}})
    assert unknown.status_code == 422 and "zz" in unknown.json()["errors"][0]["message"]


def test_bank_correction_reads_as_the_page_panel(api):
    text = (ROOT / "samples" / "plant-three-phase.circuit").read_text(encoding="utf-8")
    ask = {"source": "Mains", "target": 0.99, "bank": "delta", "at": ["a", "b", "c"]}
    panel = api.post("/api/correct", json={"netlist": text, **ask})
    sheet = api.post("/api/sheet", json={"netlist": text, "correct": ask})
    assert panel.status_code == sheet.status_code == 200
    shown = visible_text(sheet.text)
    # The page and the sheet read the same (common practice, no source: one display).
    for fact in panel.json()["display"]["facts"]:
        assert " ".join(f"{fact['term']} {fact['value']}".split()) in shown
    # A delta bank is three units, one across each pair of lines.
    assert sheet.text.count("<caption>Capacitors</caption>") == 1
    for unit in panel.json()["display"]["capacitors"]:
        assert unit["name"] in shown
    assert len(panel.json()["display"]["capacitors"]) == 3


RLC_SWEPT = """title Series RLC
frequency 50 Hz
sweep 1 kHz to 50 kHz, 101 points
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""


def test_sweep_section_as_the_command_line_writes_it(api, tmp_path, capsys):
    # common practice, no source: one sheet for one request, by either door
    path = tmp_path / "rlc.circuit"
    path.write_text(RLC_SWEPT, encoding="utf-8")
    out = tmp_path / "s.html"
    assert main(["sheet", str(path), "--sweep", "I(R1)", "--from", "2k", "--to", "20k",
                 "--points", "51", "-o", str(out)]) == 0
    capsys.readouterr()
    r = api.post("/api/sheet", json={"netlist": RLC_SWEPT, "sweep": {
        "probes": ["I(R1)"], "from": 2000.0, "to": 20000.0, "points": 51}})
    assert r.status_code == 200
    assert STAMP.sub("", r.text) == STAMP.sub("", out.read_text(encoding="utf-8"))
    # check-values C5: f0 = 7957.75 Hz, Q = 25
    assert "7.95775 kHz" in r.text and ">25<" in r.text


def test_sweep_section_bad_input_is_422_in_the_error_shape(api):
    r = api.post("/api/sheet", json={"netlist": RLC_SWEPT, "sweep": {"probes": ["V(cc)"]}})
    # studies.md: HTTP 422 with the language's error shape, the column in the probe
    assert r.status_code == 422
    (error,) = r.json()["errors"]
    assert error["column"] == 3 and "did you mean 'c'" in error["hint"]
    r = api.post("/api/sheet", json={"netlist": RLC_SWEPT, "sweep": {"probes": []}})
    assert r.status_code == 422 and "errors" in r.json()
    big = "frequency 50 Hz\nVs: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\n" for k in range(60))
    r = api.post("/api/sheet", json={"netlist": big, "sweep": {"probes": ["V(n5)"],
                                                               "points": 100000}})
    # common practice, no source: the sweep's work bound holds for the sheet too
    assert r.status_code == 422 and "points × unknowns" in r.json()["errors"][0]["message"]


# Invented: a 120 V, 60 Hz supply through 30 Ω into a 40 Ω reactance. Ohm's law (any
# circuits textbook): |I| = 120/50 = 2.4 A RMS, V(b) = 96 V RMS, P = 172.8 W,
# Q = 230.4 var.
KILN = ("title Kiln blower\nfrequency 60 Hz\nV1: voltage a -> 0 120 V\n"
        "R1: resistor a -> b 30 ohm\nZ1: impedance b -> 0 j40 ohm\n")
_PREFIX = {"m": 1e-3, "k": 1e3, "": 1.0}


def _cells(html: str, name: str) -> dict:
    """The branch-table cells of element ``name``, by column key, as text."""
    row = re.search(rf'<tr><th scope="row"><a href="#L\d+">{name}</a></th>(.*?)</tr>',
                    html).group(1)
    return {key: re.sub(r"<[^>]+>", " ", text).split("  ")[0].strip()
            for key, text in re.findall(r'<td class="c-(\w+)">(.*?)</td>', row)}


def _magnitude(cell: str) -> float:
    """``"3.394 A ∠−53.13°"`` → 3.394 (engineering prefixes m and k)."""
    number, prefix = re.match(r"([0-9.]+)\s([mk]?)[AV]", cell).groups()   # a no-break space
    return float(number) * _PREFIX[prefix]


def test_show_peak_sheet_reads_magnitudes_as_peak_and_says_so(api):
    rms = api.post("/api/sheet", json={"netlist": KILN})
    peak = api.post("/api/sheet", json={"netlist": KILN, "show": "peak"})
    assert rms.status_code == peak.status_code == 200
    # Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 11, effective or RMS
    # value (chapter from memory): a sinusoid's peak is √2 × its RMS value; the sheet
    # writes 4 significant digits, so the cells agree to their last digit
    for name, v_rms in (("V1", 120.0), ("R1", 72.0), ("Z1", 96.0)):
        a, b = _cells(rms.text, name), _cells(peak.text, name)
        assert _magnitude(b["voltage"]) == pytest.approx(v_rms * 2 ** 0.5, rel=5e-4)
        assert _magnitude(b["current"]) == pytest.approx(2.4 * 2 ** 0.5, rel=5e-4)
        assert _magnitude(a["current"]) == pytest.approx(2.4, rel=5e-4)     # Ohm's law
        # P, Q, |S|, PF, Z and the angles are the same either way (S = V·I* for RMS
        # phasors, ½·V·I* for peak ones: Alexander & Sadiku, ch. 11, complex power)
        for key in ("p", "q", "s", "pf", "impedance_rect", "impedance_polar"):
            assert a[key] == b[key], (name, key)
        assert a["current"].split("∠")[1] == b["current"].split("∠")[1]
    text = visible_text(peak.text)
    # the sheet says what it shows and what the input's convention is (the page's words)
    assert "shown as peak phasors; input in RMS" in text
    assert ("Shown as peak values; the circuit's amplitudes line gives its source values "
            "as RMS") in text
    assert "magnitudes peak (input in RMS)" in text
    assert "magnitudes RMS." in visible_text(rms.text) and "input in" not in visible_text(rms.text)
    # the input is listed as it was written, and the waveforms (instantaneous values,
    # x(t) = √2·|X|·cos(ωt + θ) for RMS phasors, |X|·cos for peak ones) are the same
    assert element_text(peak.text, "pre", "source") == KILN
    captions = re.findall(r"<figcaption>(.*?)</figcaption>", rms.text, re.S)
    assert any("peaks v = " in c for c in captions)
    assert captions == re.findall(r"<figcaption>(.*?)</figcaption>", peak.text, re.S)


def test_show_of_the_circuits_own_convention_changes_nothing(api):
    # common practice, no source: asking for the convention the circuit already has is
    # the sheet without the field
    plain = api.post("/api/sheet", json={"netlist": KILN})
    same = api.post("/api/sheet", json={"netlist": KILN, "show": "rms"})
    assert STAMP.sub("", plain.text) == STAMP.sub("", same.text)
    bad = api.post("/api/sheet", json={"netlist": KILN, "show": "mean"})
    # results-contract.md: 422 with {"errors": [...]} for a body the route does not take
    assert bad.status_code == 422 and bad.json()["errors"] and "Traceback" not in bad.text
