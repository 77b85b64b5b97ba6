"""``phasorbench correct`` and ``phasorbench port``: exit status, JSON, text, errors.

The command line's rules (cli.py): 0 answered, 2 bad input printed as ``FILE: error: ...``
with no traceback, ``--json`` strict JSON with no NaN.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from phasorbench.cli import main

from tests.tools.quoting import figures

C14 = """title C14
frequency 60 Hz
Vs: voltage a -> 0 120 V
Zload: impedance a -> 0 2.304 + j1.728 ohm
"""

FEEDER = """frequency 50 Hz
Vs: voltage s -> 0 230 V
Rl: resistor s -> x 0.2 ohm
Ll: inductor x -> bus 1.5 mH
Zm: impedance bus -> 0 6 + j5 ohm
"""

C29 = """frequency 50 Hz
Vs: voltage s -> 0 120 V
Z1: impedance s -> m 4 + j3 ohm
Z2: impedance m -> 0 -j10 ohm
Z3: impedance m -> t 2 + j5 ohm
"""

THREE_PHASE = """frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
Ra: resistor A -> a 0.05 ohm
Rb: resistor B -> b 0.05 ohm
Rc: resistor C -> c 0.05 ohm
M: load3 wye a b c -> 0 3.2 + j2.4 ohm
"""


def _strict_json(text: str):
    def refuse(constant):
        raise AssertionError(f"JSON carries {constant}")
    return json.loads(text, parse_constant=refuse)


@pytest.fixture
def write(tmp_path):
    def _write(text: str, name: str = "c.circuit") -> str:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return str(path)
    return _write


def test_correct_json(write, capsys):
    # check-values C14 (Alexander & Sadiku PFC example): 310.438 µF.
    status = main(["correct", write(C14), "--source", "Vs", "--target", "0.95", "--json"])
    out = capsys.readouterr()
    assert status == 0
    r = _strict_json(out.out)
    assert figures(r["capacitance_f"] * 1e6) == 310.438                   # C14
    assert r["pf_after"] == pytest.approx(0.95, abs=1e-12)
    assert r["circuit_lines"] == ["Cpf1: capacitor a -> 0 310.437533629 uF"]
    assert r["harmonic_order"] is None           # ideal source: no network behind it


def test_correct_text_report(write, capsys):
    status = main(["correct", write(FEEDER), "--source", "Vs", "--target", "0.95",
                   "--at", "bus", "--rated-voltage", "240 V"])
    out = capsys.readouterr()
    assert status == 0
    assert "Cpf1: capacitor bus -> 0 " in out.out
    assert "0.95 lagging" in out.out and "µF" in out.out
    assert "IEEE Std 18-2002" in out.out and "within limits" in out.out
    assert "460.6" in out.out                                             # section H
    # The resonance near the 7th is a warning on stderr, in the FILE: warning: form.
    assert ": warning: the capacitor and the network behind it resonate" in out.err


def test_correct_lists_the_standard_ratings_either_side(write, capsys):
    status = main(["correct", write(C14), "--source", "Vs", "--target", "0.95",
                   "--ratings", "1.5, 2, 2.5"])
    out = capsys.readouterr()
    assert status == 0
    # check-values C14: P = 4 kW, Q = 3 kvar, exact Qc = 1685 var; with a bank of Qc the
    # ideal bus leaves PF = P/√(P² + (Q − Qc)²): 1.5 kvar 0.9363, 2 kvar 0.9701
    # (textbook power triangle)
    assert "next rating down: 1.5 kvar" in out.out and "0.9363 lagging" in out.out
    assert "next rating up: 2 kvar" in out.out and "0.9701 lagging" in out.out
    status = main(["correct", write(C14), "--source", "Vs", "--target", "0.95", "--json",
                   "--ratings", "2"])
    sizes = _strict_json(capsys.readouterr().out)["standard_sizes"]
    assert sizes["below"] is None and sizes["above"]["rating_kvar"] == 2.0
    # a bad list: the error's shape, exit 2 (common practice, no source)
    assert main(["correct", write(C14), "--source", "Vs", "--target", "0.95",
                 "--ratings", "2, big"]) == 2
    assert "'big'" in capsys.readouterr().err


def test_correct_across_two_nodes_and_a_leading_target(write, capsys):
    status = main(["correct", write(FEEDER), "--source", "Vs", "--target", "0.9",
                   "--across", "bus", "0", "--leading", "--json"])
    r = _strict_json(capsys.readouterr().out)
    assert status == 0
    assert r["pf_sense_after"] == "leading" and r["place"]["nodes"] == ["bus", "0"]


@pytest.mark.parametrize("bank, lines", [("wye", 3), ("delta", 3)])
def test_correct_three_phase_bank(write, capsys, bank, lines):
    status = main(["correct", write(THREE_PHASE), "--source", "G", "--target", "0.97",
                   "--at", "a,b,c", "--bank", bank, "--json"])
    r = _strict_json(capsys.readouterr().out)
    assert status == 0
    assert len(r["circuit_lines"]) == lines and r["place"]["connection"] == bank
    assert r["pf_after"] == pytest.approx(0.97, abs=1e-12)


def test_correct_three_phase_text_lists_every_unit(write, capsys):
    assert main(["correct", write(THREE_PHASE), "--source", "G", "--target", "0.97",
                 "--at", "a,b,c", "--bank", "delta"]) == 0
    out = capsys.readouterr().out
    for name in ("Cpf1_ab", "Cpf1_bc", "Cpf1_ca"):
        assert name in out
    assert "bank line currents" in out


def test_correct_needs_nothing_above_the_target_json(write, capsys):
    # check-values C14's load (4 kW, 0.8 lagging, 120 V 60 Hz) asked for 0.7: P = 4 kW,
    # Q = P·tan(acos 0.8) = 3 kvar (power triangle), I = S/V = 5000/120 = 41.6667 A.
    status = main(["correct", write(C14), "--source", "Vs", "--target", "0.7", "--json"])
    out = capsys.readouterr()
    assert status == 0 and out.err == ""
    r = _strict_json(out.out)
    assert r["needed"] is False and r["capacitance_f"] == 0.0 and r["circuit_lines"] == []
    assert r["pf_before"] == pytest.approx(0.8, abs=1e-12)                        # C14
    assert r["supply_before"]["q_var"] == pytest.approx(
        4000 * math.tan(math.acos(0.8)), rel=1e-12)                                # Q = P·tanφ
    assert figures(r["supply_before"]["current"]["mag"]) == 41.6667               # C14


def test_correct_needs_nothing_text(write, capsys):
    # C14's load again: 0.8 lagging, 4 kW + 3 kvar (check-values C14).
    status = main(["correct", write(C14), "--source", "Vs", "--target", "0.7"])
    out = capsys.readouterr().out
    assert status == 0
    assert out.startswith("Power-factor correction of Vs: no correction needed\n")
    assert "0.8 lagging now; target 0.7 lagging" in out                           # C14
    assert "4 kW + 3 kvar" in out and "41.67 A" in out                            # C14
    assert "no capacitor is needed" in out and "Add to the circuit" not in out
    assert "Local electrical codes" in out                                        # scope note


def test_correct_a_leading_source_is_still_an_input_error(write, capsys):
    # common practice, no source: a shunt capacitor cannot make a leading source lag.
    leading = "frequency 50 Hz\nVs: voltage a -> 0 230 V\nZ: impedance a -> 0 6 - j5 ohm\n"
    path = write(leading)
    assert main(["correct", path, "--source", "Vs", "--target", "0.95"]) == 2
    err = capsys.readouterr().err
    assert "only makes it lead more" in err and "reactor" in err and "Traceback" not in err


@pytest.mark.parametrize("args, words", [
    (["--target", "1.2"], "at most 1"),
    (["--target", "0.7", "--at", "bsu"], "did you mean 'bus'"),   # place first
    (["--target", "0.95", "--source", "Zm"], "not an independent source"),
    (["--target", "0.95", "--at", "bsu"], "did you mean 'bus'"),
    (["--target", "0.95", "--rated-voltage", "4x"], "is not a voltage"),
    (["--target", "abc"], "not a number"),
])
def test_correct_input_errors_exit_2(write, capsys, args, words):
    path = write(FEEDER)
    argv = ["correct", path, "--source", "Vs"] + args
    if "--source" in args:
        argv = ["correct", path] + args
    status = main(argv)
    err = capsys.readouterr().err
    assert status == 2
    assert words in err
    assert "Traceback" not in err
    assert err.startswith(path + ":")                  # FILE: error: or FILE:LINE:COL: error:


def test_port_json_and_text(write, capsys):
    # check-values C29/C30.
    path = write(C29)
    assert main(["port", path, "t", "0", "--json"]) == 0
    r = _strict_json(capsys.readouterr().out)
    assert figures(r["thevenin_z"]["re"]) == 8.15385                      # C29
    assert figures(r["max_power_w"]) == 679.245                           # C30
    assert main(["port", path, "t", "0"]) == 0
    out = capsys.readouterr().out
    assert "148.8 V ∠-29.74°" in out                                      # C29, 4 figures
    assert "679.2 W" in out and "610.6 W" in out                          # C30


def test_port_json_has_null_not_nan_or_infinity(write, capsys):
    # An ideal source across the port: Z_th = 0, Norton undefined (null in JSON).
    assert main(["port", write(C29), "s", "0", "--json"]) == 0
    r = _strict_json(capsys.readouterr().out)
    assert r["norton_i"] is None and r["equivalent"] == "ideal-voltage"
    assert main(["port", write(C29), "s", "0"]) == 0
    assert "note:" in capsys.readouterr().out


def test_port_errors_exit_2(write, capsys):
    assert main(["port", write(C29), "t", "t"]) == 2
    assert "same node" in capsys.readouterr().err
    assert main(["port", str(Path(write(C29)).parent / "missing.circuit"), "t", "0"]) == 2
    assert "no such file" in capsys.readouterr().err


def test_the_installed_command_lists_the_tools():
    # The console script registers both commands through cli.tools (cli.build_parser).
    done = subprocess.run([sys.executable, "-m", "phasorbench", "--help"], capture_output=True,
                          text=True, timeout=60)
    assert done.returncode == 0
    assert "correct" in done.stdout and "port" in done.stdout


def test_json_numbers_are_finite(write, capsys):
    assert main(["correct", write(FEEDER), "--source", "Vs", "--target", "0.95", "--at",
                 "bus", "--json"]) == 0
    r = _strict_json(capsys.readouterr().out)

    def walk(x):
        if isinstance(x, dict):
            for v in x.values():
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)
        elif isinstance(x, float):
            assert math.isfinite(x)
    walk(r)
