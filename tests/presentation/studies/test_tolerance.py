"""The tolerance study's strings and rows (presentation/studies/tolerance.py) from a
real study's JSON."""

from phasorbench.presentation.studies.tolerance import (quantity_rows, sensitivity_rows,
                                                        statistic_rows, view, yield_line)
from phasorbench.studies.tolerance import run_tolerance
from phasorbench.workflow import read_circuit

BANK = """frequency 50 Hz
Cb = 100 uF tol 10%
V1: voltage a -> 0 100 V
R1: resistor a -> b 1 ohm tol 5% normal
C1: capacitor b -> 0 Cb
"""


def _result():
    return run_tolerance(read_circuit(BANK), ["I(R1)"], runs=400, worst_case=True,
                         limits=["I(R1) 2..4"])


def test_rows_and_lines():
    r = _result()
    rows = {q["name"]: q for q in quantity_rows(r)}
    # SI prefixes (formatting.py): 100 µF, 1 Ω; the laws as studies.md states them
    assert rows["Cb"]["nominal"] == "100 µF" and rows["Cb"]["tol"] == "±10 %"
    assert rows["R1"]["law"] == "normal, σ = tol/3"
    stats = statistic_rows(r["probes"]["I(R1)"])
    assert [s["label"] for s in stats][:5] == ["nominal", "mean", "standard deviation",
                                               "minimum", "maximum"]
    # series RC (formula): |I| = V/|R − j/(ωC)| = 100/√(1 + 31.83²) = 3.14004 A
    assert stats[0]["mag"].startswith("3.14004")
    assert sensitivity_rows(r["probes"]["I(R1)"])[0]["name"] == "Cb"
    assert yield_line(r["yield"]).startswith("yield ")


def test_view_carries_the_pictures():
    v = view(_result())
    (p,) = v["probes"]
    assert p["mag_svg"].startswith("<svg") and p["sens_svg"].startswith("<svg")
    assert v["settings"].startswith("400 runs at 50 Hz, seed 1")
