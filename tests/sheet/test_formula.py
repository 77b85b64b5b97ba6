"""The sheet's formula section (sheet/formula.py, _sheet_formula.html): the formula as
MathML (the page's rendering), the balance, and the check against the solved value."""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET

from phasorbench.cli import main
from phasorbench.sheet import render_context, sheet_context
from phasorbench.sheet.formula import formula_section

from ..helpers import phasor

MATHML = "http://www.w3.org/1998/Math/MathML"
BRIDGE = """frequency 50 Hz
V1: voltage top -> 0 10 V
R1: resistor top -> l 1k
R2: resistor l -> 0 2k
R3: resistor top -> r 1.5k
R4: resistor r -> 0 3.1k
"""


def _maths(html):
    start = html.index('<section id="formula"')
    section = html[start:html.index("</section>", start)]
    blocks = [section[m:section.index("</math>", m) + 7]
              for m in range(len(section)) if section.startswith("<math", m)]
    return section, blocks


def test_section_states_the_formula_and_checks_it_against_the_solve():
    section = formula_section(BRIDGE, "<t>", {"probe": "V(l, r)", "solve_for": "R4"})
    html = render_context(sheet_context(BRIDGE, "<t>", formula=section))
    body, blocks = _maths(html)
    assert blocks and all(ET.fromstring(b).tag == f"{{{MATHML}}}math" for b in blocks)  # XML parser
    # divider difference at the text's values (formula): 10·(2/3 − 3.1/4.6) = −0.072464 V
    expected = 10 * (2000 / 3000 - 3100 / 4600)
    assert section["check_ok"]
    assert "-72.46 mV" in body.replace("−", "-")
    assert math.isclose(expected, -0.0724637681, rel_tol=1e-9)
    # Wheatstone balance R1·R4 = R2·R3 (textbook; from memory): R4 = 3 kΩ
    assert "3 kΩ" in body and 'href="#formula"' in html


def test_command_line_and_api_sheets_show_the_same_formula(api, tmp_path, capsys):
    path = tmp_path / "b.circuit"
    path.write_text(BRIDGE, encoding="utf-8")
    out = tmp_path / "s.html"
    assert main(["sheet", str(path), "-o", str(out), "--formula", "V(l, r)/V(top)",
                 "--keep", "R1", "R4"]) == 0
    cli_body, cli_blocks = _maths(out.read_text(encoding="utf-8"))
    r = api.post("/api/sheet", json={"netlist": BRIDGE, "formula": {
        "probe": "V(l, r)/V(top)", "keep": ["R1", "R4"]}})
    assert r.status_code == 200
    api_body, api_blocks = _maths(r.text)
    # one renderer (presentation/mathforms.py) for both: the same MathML
    assert cli_blocks[0] == api_blocks[0]
    # common practice, no source: a bad probe on the sheet's command line exits 2
    assert main(["sheet", str(path), "-o", str(out), "--formula", "V(q)"]) == 2
    assert "'q' is not a node" in capsys.readouterr().err
