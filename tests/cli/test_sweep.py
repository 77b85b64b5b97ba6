"""``phasorbench sweep``: JSON, CSV, text summary, exit status 2 with the probe caret."""

from __future__ import annotations

import json
import math

from phasorbench.cli import main

RC = """frequency 1 kHz
Vs: voltage in -> 0 1 V
R1: resistor in -> out 1 kohm
C1: capacitor out -> 0 159.155 nF
"""


def _file(tmp_path):
    path = tmp_path / "rc.circuit"
    path.write_text(RC, encoding="utf-8")
    return str(path)


def test_json_and_csv(tmp_path, capsys):
    path = _file(tmp_path)
    assert main(["sweep", path, "--probe", "V(out)/V(in)", "--from", "100", "--to",
                 "10 kHz", "--points", "3", "--json"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["frequencies_hz"] == [100.0, 1000.0, 10000.0]
    # check-values C7: |H| = 0.995037, 0.707107, 0.0995037; ∠ -5.71059°, -45°, -84.2894°
    mags = r["probes"]["V(out)/V(in)"]["mag"]
    assert [round(m, 6) for m in mags] == [0.995037, 0.707107, 0.099504]
    assert math.isclose(r["probes"]["V(out)/V(in)"]["deg"][1], -45, abs_tol=1e-3)  # C7
    out = tmp_path / "r.csv"
    assert main(["sweep", path, "--probe", "V(out)", "--points", "5", "--csv",
                 "-o", str(out)]) == 0
    lines = out.read_text().splitlines()
    assert len(lines) == 6 and lines[0].startswith('"frequency_hz"')  # common practice


def test_text_summary_and_bad_probe(tmp_path, capsys):
    path = _file(tmp_path)
    assert main(["sweep", path, "--probe", "V(out)"]) == 0
    assert "200 points log" in capsys.readouterr().out          # studies.md defaults
    assert main(["sweep", path, "--probe", "V(ouy)", "--from", "9", "--to", "3"]) == 2
    err = capsys.readouterr().err
    # studies.md: column inside the probe, did-you-mean, every problem in one pass
    assert "--probe:3: error" in err and "did you mean 'out'" in err
    assert "must be below TO" in err and "Traceback" not in err


def test_the_files_sweep_line_is_the_default(tmp_path, capsys):
    path = tmp_path / "rc.circuit"
    path.write_text(RC + "sweep 100 Hz to 10 kHz, 3 points\n", encoding="utf-8")
    assert main(["sweep", str(path), "--probe", "V(out)/V(in)", "--json"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["frequencies_hz"] == [100.0, 1000.0, 10000.0]     # studies.md: log, ends exact
    # check-values C7: |H| = 0.995037, 0.707107, 0.0995037
    assert [round(m, 6) for m in r["probes"]["V(out)/V(in)"]["mag"]] == \
        [0.995037, 0.707107, 0.099504]
    # studies.md: the command line overrides the directive
    assert main(["sweep", str(path), "--probe", "V(out)", "--from", "1k", "--to", "2k",
                 "--linear", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["frequencies_hz"] == [1000.0, 1500.0, 2000.0]


def test_a_bad_sweep_line_exits_2_with_its_caret(tmp_path, capsys):
    path = tmp_path / "rc.circuit"
    path.write_text(RC + "sweep 100 Hz to 10 kHz, 3 points logg\n", encoding="utf-8")
    assert main(["sweep", str(path), "--probe", "V(out)"]) == 2
    err = capsys.readouterr().err
    # circuit-language.md: FILE:LINE:COL, caret, hint; never a traceback
    assert "rc.circuit:5:34: error: 'logg' is not a spacing" in err
    assert "did you mean 'log'?" in err and "Traceback" not in err
