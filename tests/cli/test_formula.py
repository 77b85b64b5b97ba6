"""``phasorbench formula``: text and JSON answers, exit status 2 with every input error."""

from __future__ import annotations

import json

import sympy as sp

from phasorbench.cli import main

from ..helpers import formula_sympy

RC = ("frequency 1 kHz\nVin: voltage in -> 0 1 V\nR1: resistor in -> out 1 kohm\n"
      "C1: capacitor out -> 0 100 nF\n")


def _file(tmp_path, text=RC):
    path = tmp_path / "rc.circuit"
    path.write_text(text, encoding="utf-8")
    return str(path)


def test_json_holds_text_latex_mathml_and_the_tree(tmp_path, capsys):
    assert main(["formula", _file(tmp_path), "--probe", "V(out)/V(in)", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    s, R1, C1 = sp.symbols("s R1 C1")
    # textbook first-order low-pass 1/(1 + sRC) (from memory)
    assert sp.simplify(formula_sympy(out["formula"]["tree"]) - 1 / (1 + s * R1 * C1)) == 0
    assert out["formula"]["text"] == "V(out)/V(in) = 1/(C1*R1*s + 1)"
    assert out["formula"]["mathml"].startswith('<math xmlns="http://www.w3.org/1998/Math/MathML"')
    assert "\\frac" in out["formula"]["latex"]
    assert out["check"]["ok"]


def test_text_answer_with_keep_and_solve_for(tmp_path, capsys):
    bridge = ("frequency 50 Hz\nV1: voltage top -> 0 10 V\nR1: resistor top -> l 1k\n"
              "R2: resistor l -> 0 2k\nR3: resistor top -> r 1.5k\nR4: resistor r -> 0 3.1k\n")
    assert main(["formula", _file(tmp_path, bridge), "--probe", "V(l, r)",
                 "--keep", "R1", "R2", "R3", "R4", "--solve-for", "R4"]) == 0
    out = capsys.readouterr().out
    # Wheatstone balance R1·R4 = R2·R3 (textbook; from memory): R4 = 2k·1.5k/1k = 3 kΩ
    assert "R4 = R2*R3/R1" in out and "3 kΩ" in out
    assert "V1" in out and "value from the text" in out


def test_every_input_error_exits_2_with_the_probe_caret(tmp_path, capsys):
    status = main(["formula", _file(tmp_path), "--probe", "V(ot)", "--keep", "R9",
                   "--solve-for", "Q"])
    err = capsys.readouterr().err
    # studies.md: exit status 2, every problem in one pass, the caret inside the probe
    assert status == 2
    assert "--probe:3: error:" in err and "  V(ot)\n    ^^" in err
    assert "--keep 'R9'" in err and "--solve-for 'Q'" in err
    assert "Traceback" not in err


def test_time_limit_option_stops_the_work_and_bad_limits_are_refused(tmp_path, capsys):
    ladder = "frequency 50 Hz\nV1: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm\nC{k}: capacitor n{k + 1} -> 0 1 uF\n"
        f"L{k}: inductor n{k + 1} -> 0 1 mH\n" for k in range(7))
    path = _file(tmp_path, ladder)
    # common practice, no source: a bounded run says which limit it hit and how to stay under
    assert main(["formula", path, "--probe", "Z(n3, n7)", "--time-limit", "0.3"]) == 2
    err = capsys.readouterr().err
    assert "time limit" in err and "0.3 s" in err and "--keep R1 C1" in err
    for bad in ("0", "-1", "nan", "inf", "7200", "soon"):
        try:
            main(["formula", path, "--probe", "V(n1)", "--time-limit", bad])
        except SystemExit as stop:
            assert stop.code == 2
        else:
            raise AssertionError(f"--time-limit {bad} was taken")
        err = capsys.readouterr().err
        assert "--time-limit" in err and "Traceback" not in err
