"""The sheet's frequency-response section (sheet/sweep.py) and its worked check
(studies/sweepcheck.py): settings, the plot, the resonance table, the probe definitions,
the check against the single-frequency solve, and the resonance cautions.

Outside references, named beside each check: check-values.md C5 (series RLC), C6
(parallel RLC) and C7 (RC low-pass); the textbook resonance f0 = 1/(2π√(LC)),
Q = (1/R)√(L/C) and bandwidth f0/Q; the textbook series and parallel impedances
R + jωL + 1/(jωC) and 1/(1/R + 1/(jωL) + jωC); scipy.signal.freqs on the analytic H(s).
"""

from __future__ import annotations

import html as markup
import math
import re

import numpy as np
import pytest
from scipy import signal

from phasorbench.errors import CircuitError
from phasorbench.presentation.cautions import SWEEP_CAUTIONS
from phasorbench.sheet import render_context, sheet_context
from phasorbench.sheet.sweep import sweep_section
from phasorbench.studies.sweep import run_sweep
from phasorbench.studies.sweepcheck import check_point, pick_point
from phasorbench.workflow import read_circuit

#: check-values C5: R = 2 Ω, L = 1 mH, C = 0.4 µF: f0 = 7957.75 Hz, Q = 25.
RLC = """title Series RLC
frequency 50 Hz
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""
#: check-values C6: R = 8 kΩ ∥ L = 0.2 mH ∥ C = 8 µF: f0 = 3978.87 Hz, Q = 1600.
PARALLEL = """frequency 4 kHz
sweep 3.5 kHz to 4.5 kHz, 201 points linear
Is: current 0 -> n 10 mA
R1: resistor n -> 0 8 kohm
L1: inductor n -> 0 0.2 mH
C1: capacitor n -> 0 8 uF
"""
#: check-values C7: R = 1 kΩ, C = 159.155 nF, fc = 1 kHz.
RC = """frequency 1 kHz
Vs: voltage in -> 0 1 V
R1: resistor in -> out 1 kohm
C1: capacitor out -> 0 159.155 nF
"""


def _text(html: str) -> str:
    return markup.unescape(re.sub(r"<[^>]+>", " ", html)).replace("\u00a0", " ")


def _html(text, ask):
    section = sweep_section(text, "<test>", ask)
    return render_context(sheet_context(text, "<test>", sweep=section)), section


def test_the_section_has_settings_plot_resonances_probes_check_and_cautions():
    html, section = _html(RLC, {"probes": ["I(R1)"], "from": 1e3, "to": 50e3,
                                "points": 301})
    assert '<section id="sweep"' in html and 'href="#sweep"' in html
    words = _text(html.split('<section id="sweep"')[1].split("</section>")[0])
    # settings
    assert "1 kHz to 50 kHz" in words and "301, log spacing" in words and "as asked for" in words
    # the plot: the one drawing of presentation/drawing/response.py, inline, one scale
    assert html.count('class="pb-response"') == 1
    assert html.count('class="pb-mag"') == 1           # the sheet carries the scale it shows
    assert "http:" not in html and "https:" not in html   # no address (common practice)
    # the resonance table: textbook f0 = 1/(2π√(LC)), Q = (1/R)√(L/C), bandwidth f0/Q
    f0 = 1 / (2 * math.pi * math.sqrt(1e-3 * 0.4e-6))
    q = math.sqrt(1e-3 / 0.4e-6) / 2
    assert round(f0, 2) == 7957.75 and q == pytest.approx(25)     # check-values C5
    (row,) = section["resonances"]
    assert row["frequency_hz"] == pytest.approx(f0, rel=1e-6)
    assert row["cells"][2] == "peak" and row["cells"][6] == "25"
    assert row["cells"][7] == f"{f0 / q:.4g} Hz"                 # 318.3 Hz
    assert "7.95775 kHz" in words
    # the probe definitions
    assert "current of R1, from its first terminal to its second" in words
    # the worked check: both values and their relative difference
    assert "single-frequency solve" in words and "relative difference" in words
    # the cautions, from presentation/cautions.py
    for title, _ in SWEEP_CAUTIONS:
        assert title in words
    assert "Harmonic resonance" in [t for t, _ in SWEEP_CAUTIONS]


def test_the_check_matches_the_textbook_series_impedance():
    circuit = read_circuit(RLC)
    result = run_sweep(circuit, ["I(R1)"], start=1e3, stop=50e3, points=301)
    check = check_point(circuit, result)
    f = check["frequency_hz"]
    # the grid point nearest the analysis frequency (50 Hz): the range's first point
    assert check["index"] == 0 and f == 1e3
    w = 2 * math.pi * f
    expected = 20 / (2 + 1j * w * 1e-3 + 1 / (1j * w * 0.4e-6))   # I = V / (R + jωL + 1/jωC)
    single = complex(check["single"]["re"], check["single"]["im"])
    swept = complex(check["sweep"]["re"], check["sweep"]["im"])
    assert abs(single - expected) <= 1e-12 * abs(expected)       # textbook series RLC
    # issue 13: the sweep at one frequency equals the single solve to 1e-12
    assert check["relative"] <= 1e-12 and abs(swept - single) <= 1e-12 * abs(single)
    row = sweep_section(RLC, "<test>", {"probes": ["I(R1)"], "from": 1e3, "to": 50e3,
                                        "points": 301})["check"]
    assert row["ok"] and row["sweep"] == row["single"]
    assert row["point"] == "grid point 1 of 301" and row["frequency"] == "1 kHz"


def test_an_impedance_probe_is_checked_with_a_test_current():
    circuit = read_circuit(PARALLEL)
    result = run_sweep(circuit, ["Z(n)"])
    check = check_point(circuit, result)
    # nearest the analysis frequency 4 kHz on the line's linear grid: 3.5 kHz + 100 × 5 Hz
    assert check["frequency_hz"] == pytest.approx(4000.0, rel=1e-12)
    w = 2 * math.pi * check["frequency_hz"]
    z = 1 / (1 / 8e3 + 1 / (1j * w * 0.2e-3) + 1j * w * 8e-6)     # textbook parallel RLC
    single = complex(check["single"]["re"], check["single"]["im"])
    assert abs(single - z) <= 1e-9 * abs(z) and check["relative"] <= 1e-9
    # check-values C6: f0 = 3978.87 Hz, Q = ω0RC = 1600, Z(f0) = R = 8 kΩ
    (peak,) = result["resonances"]
    assert peak["frequency_hz"] == pytest.approx(3978.87, rel=1e-6)
    assert peak["q"] == pytest.approx(1600, rel=1e-4)
    assert peak["value"]["mag"] == pytest.approx(8000, rel=1e-6)


def test_the_default_range_is_the_circuits_sweep_line():
    html, section = _html(PARALLEL, {"probes": ["Z(n)"]})
    settings = {s["term"]: s["value"] for s in section["settings"]}
    # circuit-language.md: the sweep line is the default range
    assert settings["range from"] == "the circuit's sweep line (line 2)"
    assert settings["range"] == "3.5 kHz to 4.5 kHz"
    assert settings["points"].startswith("201, linear spacing")


def test_a_ratio_probe_check_and_plot_in_decibels():
    circuit = read_circuit(RC)
    result = run_sweep(circuit, ["V(out)/V(in)"], start=100, stop=10e3, points=3)
    check = check_point(circuit, result)
    # scipy.signal.freqs on H(s) = 1 / (sRC + 1) at the checked point (check-values C7)
    h = signal.freqs([1], [1e3 * 159.155e-9, 1], worN=[2 * np.pi * check["frequency_hz"]])[1][0]
    single = complex(check["single"]["re"], check["single"]["im"])
    assert check["frequency_hz"] == 1e3 and abs(single - h) <= 1e-9 * abs(h)
    assert check["single"]["mag"] == pytest.approx(0.707107, rel=1e-6)   # C7 at fc
    html, _ = _html(RC, {"probes": ["V(out)/V(in)"], "from": 100, "to": 10e3, "points": 3})
    # a ratio of like quantities draws in dB (studies.md)
    assert 'data-magnitude="db"' in html


def test_an_undefined_probe_point_is_skipped_by_the_check():
    # studies.md: a zero denominator is null at that point; the check takes another
    circuit = read_circuit(RC)
    result = run_sweep(circuit, ["V(out)"], start=100, stop=10e3, points=3)
    result["probes"]["V(out)"]["mag"][1] = None
    assert pick_point(result, "V(out)") in (0, 2)


def test_sources_with_their_own_frequency_are_zeroed_in_the_check_too():
    text = RC + "Ih: current 0 -> out 1 mA freq 250 Hz\n"
    circuit = read_circuit(text)
    result = run_sweep(circuit, ["V(out)"], start=100, stop=10e3, points=3)
    check = check_point(circuit, result)
    # studies.md: a source with its own freq is zeroed during the sweep; the single
    # solve of the same circuit at 1 kHz then is the RC divider alone (check-values C7)
    assert check["single"]["mag"] == pytest.approx(0.707107, rel=1e-6)
    assert check["relative"] <= 1e-12


def test_bad_input_raises_with_every_problem():
    with pytest.raises(CircuitError) as caught:
        sweep_section(RLC, "<test>", {"probes": ["I(R2)", "V(q)"], "from": 10, "to": 5})
    messages = [d.message for d in caught.value.diagnostics]
    # studies.md: unknown element and node, and FROM < TO, all in one pass
    assert len(messages) == 3 and any("below TO" in m for m in messages)
    assert sweep_section(RLC, "<test>", None) is None


def test_a_bank_resonance_order_and_its_warning_c19():
    # check-values C19: 1000 kVA, 5.75 % on 480 V, 60 Hz: X_L = 0.013248 Ω; a 300 kvar
    # bank: X_C = 0.768 Ω; h = √(S_sc/Q_c) = 7.61387 (456.832 Hz). A load resistor in
    # parallel leaves the parallel resonance at 1/(2π√(LC)) (textbook parallel RLC).
    w = 2 * math.pi * 60
    text = (f"frequency 60 Hz\nsweep 60 Hz to 3 kHz, 300 points\n"
            f"Vs: voltage src -> 0 277 V\nLt: inductor src -> bus {0.013248 / w!r} H\n"
            f"Cb: capacitor bus -> 0 {1 / (w * 0.768)!r} F\nRl: resistor bus -> 0 2.3 ohm\n")
    html, section = _html(text, {"probes": ["Z(bus)"]})
    (row,) = section["resonances"]
    assert row["frequency_hz"] == pytest.approx(456.832, rel=1e-6)          # C19
    assert row["cells"][2] == "peak (parallel resonance)" and row["cells"][4] == "7.61"
    # studies.md: a Z resonance within ±10 % of an odd order is a warning (the 7th here)
    assert any("within 10 % of the 7th harmonic" in w for w in section["warnings"])
    assert "7th harmonic" in _text(html)
