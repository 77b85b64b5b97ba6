"""``phasorbench tolerance``: JSON, the text summary, exit status 2 with carets under
the probe and limit texts."""

from __future__ import annotations

import json
import math

from phasorbench.cli import main

DIVIDER = """frequency 50 Hz
V1: voltage in -> 0 12 V
R1: resistor in -> out 2 kohm tol 1%
R2: resistor out -> 0 2 kohm tol 1% normal
"""


def _file(tmp_path, text=DIVIDER):
    path = tmp_path / "d.circuit"
    path.write_text(text, encoding="utf-8")
    return str(path)


def test_json(tmp_path, capsys):
    assert main(["tolerance", _file(tmp_path), "--probe", "V(out)", "--runs", "500",
                 "--seed", "3", "--worst-case", "--limit", "V(out) 5.95..6.05", "--json"]) == 0
    r = json.loads(capsys.readouterr().out)
    assert r["runs"] == 500 and r["seed"] == 3
    probe = r["probes"]["V(out)"]
    # divider (formula): 12 V · R2/(R1+R2) = 6 V; ∂ln V/∂ln R2 = R1/(R1+R2) = 1/2
    assert math.isclose(probe["nominal"]["mag"], 6.0, rel_tol=1e-12)
    assert math.isclose(probe["sensitivities"]["R2"]["mag"], 0.5, rel_tol=1e-9)
    # divider at the corner R1 = 1.01·2k, R2 = 0.99·2k (formula): 12·0.99/2 = 5.94 V
    assert math.isclose(probe["worst_case"]["mag"]["min"]["value"], 12 * 0.99 / 2,
                        rel_tol=1e-9)
    assert 0 < r["yield"]["fraction"] <= 1


def test_text_summary(tmp_path, capsys):
    assert main(["tolerance", _file(tmp_path), "--probe", "V(out)", "--runs", "200"]) == 0
    out = capsys.readouterr().out
    # common practice, no source: the run settings and the seed are printed
    assert "200 runs at 50 Hz, seed 1" in out
    assert "∂ln|X|/∂ln p" in out and "R2" in out


def test_bad_input_has_carets_and_exit_2(tmp_path, capsys):
    code = main(["tolerance", _file(tmp_path), "--probe", "V(ot)", "--runs", "1",
                 "--limit", "V(out) 7..6"])
    err = capsys.readouterr().err
    assert code == 2                               # studies.md: exit status 2
    assert "--probe:3: error: probe 'V(ot)'" in err and "did you mean 'out'" in err
    assert "--limit:8: error: limit 'V(out) 7..6': MIN (7) is above MAX (6)" in err
    assert "runs must be a whole number from 2" in err
    assert "Traceback" not in err


def test_no_tolerance_is_a_clear_error(tmp_path, capsys):
    path = _file(tmp_path, "frequency 50 Hz\nV1: voltage a -> 0 1\nR1: resistor a -> 0 1\n")
    assert main(["tolerance", path, "--probe", "V(a)"]) == 2
    # common practice, no source: a clear message rather than an empty result
    assert "no toleranced quantity" in capsys.readouterr().err
