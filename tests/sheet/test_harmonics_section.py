"""The sheet's harmonics section: the study's tables, pictures, sources and cautions."""

from __future__ import annotations

import html as markup
import re

from phasorbench.cli import main
from phasorbench.presentation.cautions import HARMONIC_CAUTIONS
from phasorbench.sheet import render_context, sheet_context
from phasorbench.sheet.harmonics import harmonics_section

# check-values C20 fail case on an ideal 60 Hz bus: 1.10 / 0.08 / 0.05 pu of 400 V
FAIL = ("frequency 60 Hz\nVs: voltage b -> 0 440 V spectrum 5: 7.2727272727 %, "
        "7: 4.5454545454 %\nCb: capacitor b -> 0 100 uF\n")


def _html(ask):
    section = harmonics_section(FAIL, "<test>", ask)
    return render_context(sheet_context(FAIL, "<test>", harmonics=section))


def test_the_section_carries_the_verdicts_sources_and_cautions():
    html = _html({"pcc": "b", "nominal": 400, "rated": {"Cb": 400}})
    assert '<section id="harmonics"' in html and 'href="#harmonics"' in html
    # check-values C20: rms voltage 110.404 % of rating > the IEEE 18-2002 110 % limit
    assert re.search(r"110\.4\s%\s✖\sover\s110\s%", html.replace("\u00a0", " "))
    # IEEE 519-2014 Table 1 ≤ 1 kV (check-values G.3): h5 = 7.27 % > 5 %
    assert "✖ FAIL" in html and "IEEE Std 519-2014, Table 1" in html
    assert "IEEE Std 1459-2010, clause 3.2" in html
    for title, _ in HARMONIC_CAUTIONS:
        assert title in markup.unescape(html)
    # two spectra and two waveforms, inline SVG (no outside files: common practice)
    assert html.count('class="pb-spectrum"') == 2 and html.count("every order added") == 1


def test_no_section_unless_asked_and_the_command_line_asks(tmp_path, capsys):
    assert harmonics_section(FAIL, "<test>", None) is None
    path = tmp_path / "c.circuit"
    path.write_text(FAIL, encoding="utf-8")
    out = tmp_path / "s.html"
    assert main(["sheet", str(path), "--pcc", "b", "--nominal", "400", "--rated", "Cb",
                 "400", "-o", str(out)]) == 0
    assert '<section id="harmonics"' in out.read_text(encoding="utf-8")
    assert main(["sheet", str(path), "--harmonics", "--pcc", "x", "-o", str(out)]) == 2
    err = capsys.readouterr().err
    # common practice, no source: every problem at once, no traceback
    assert "PCC 'x' is not a node" in err and "Traceback" not in err
