"""The sheet's tolerance section (sheet/tolerance.py, _sheet_tolerance.html): settings and
seed, tables, pictures and the worst case re-solved, from the command line and the API."""

from __future__ import annotations

import re

from phasorbench.cli import main
from phasorbench.sheet import render_context, sheet_context
from phasorbench.sheet.tolerance import tolerance_section


DIVIDER = """frequency 50 Hz
V1: voltage in -> 0 10 V
R1: resistor in -> out 1 kohm tol 2%
R2: resistor out -> 0 4 kohm tol 2%
"""


def test_section_checks_the_worst_case():
    section = tolerance_section(DIVIDER, "<t>", {"probes": ["V(out)"], "runs": 300,
                                                 "worst_case": True})
    assert section["seed"] == 1 and section["settings"].startswith("300 runs")
    (low, high) = sorted(section["checks"], key=lambda c: c["sense"] != "min")
    # divider at the corners (formula): 10·4·0.98/(1.02 + 4·0.98) = 7.93522 V
    assert low["reported"].startswith("7.935222") and low["ok"]
    assert all(c["ok"] for c in section["checks"])
    html = render_context(sheet_context(DIVIDER, "<t>", tolerance=section))
    assert 'id="tolerance"' in html and html.count('class="pb-histogram"') == 2
    assert "Check: each worst case re-solved" in html


def test_command_line_sheet_with_a_study(tmp_path, capsys):
    path = tmp_path / "d.circuit"
    path.write_text(DIVIDER, encoding="utf-8")
    out = tmp_path / "s.html"
    assert main(["sheet", str(path), "-o", str(out), "--tolerance", "V(out)",
                 "--tolerance-limit", "V(out) 7.9..8.1", "--runs", "400", "--seed", "5",
                 "--worst-case"]) == 0
    html = out.read_text(encoding="utf-8")
    assert "400 runs at 50 Hz, seed 5" in html and "yield" in html
    # the divider's sensitivity to R2 (formula): R1/(R1+R2) = 0.2
    assert re.search(r"R2</th><td class=\"num\">\+0\.2000", html)
    assert main(["sheet", str(path), "--tolerance", "V(ou)"]) == 2
    assert "did you mean 'out'" in capsys.readouterr().err


def test_api_sheet_with_a_study(api):
    r = api.post("/api/sheet", json={"netlist": DIVIDER, "tolerance": {
        "probes": ["V(out)"], "runs": 200}})
    assert r.status_code == 200 and "200 runs at 50 Hz, seed 1" in r.text
    r = api.post("/api/sheet", json={"netlist": DIVIDER, "tolerance": {
        "probes": ["V(out)"], "runs": 1}})
    assert r.status_code == 422                  # studies.md: bad input is HTTP 422
    assert "runs must be a whole number" in r.json()["errors"][0]["message"]
