"""Tests of the ``phasorbench`` command (cli.py) and its terminal table (terminal.py).

The behaviour is the results contract's (results-contract.md: exit 2 and
``FILE:LINE:COL: error:`` lines on stderr with no traceback for input errors; the JSON
contract with no NaN or infinity) and the core issue's (exit 0 solved / 2 input error /
1 internal error, ``-`` reads standard input, the header states the frequency and the
RMS/peak convention).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from phasorbench import cli

GOOD = ("title Bench check\nfrequency 60 Hz\nVgrid: voltage a -> 0 240 V\n"
        "Rline: resistor a -> b 0.15 ohm\nLline: inductor b -> c 0.4 mH\n"
        "Zmotor: impedance c -> 0 8.2 + j5.1 ohm\nCcorr: capacitor c -> 0 150 uF\n")
BAD = ("frequency 60 Hz\nVgrid: voltage a -> 0 240 V\nRline: resistor a -> b 0.15 ohm\n"
       "Ccorr: capacitor b -> 0 150 uH\nRx: resistr b -> 0 1\n")
BAD_COLUMN = BAD.splitlines()[3].index("150 uH") + 1        # the column of '150 uH' (25)


def refuse_constant(name):
    raise ValueError(f"JSON holds {name}")      # results-contract.md: never NaN or infinity


def run_main(capsys, *argv):
    status = cli.main(list(argv))
    out, err = capsys.readouterr()
    return status, out, err


@pytest.fixture
def circuit_file(tmp_path):
    def write(text: str, name: str = "feeder.circuit", data: bytes | None = None):
        path = tmp_path / name
        path.write_bytes(data if data is not None else text.encode("utf-8"))
        return str(path)
    return write


# --- exit 0 -----------------------------------------------------------------------------

def test_solve_prints_the_table_and_exits_0(capsys, circuit_file):
    status, out, err = run_main(capsys, "solve", circuit_file(GOOD))
    assert status == 0 and err == ""
    # the core issue: the header states the frequency and the RMS/peak convention
    header = out.splitlines()[:3]
    assert header[0] == "Bench check"
    assert "frequency 60 Hz" in header[1] and "RMS" in header[1]
    assert "passive sign" in header[1]          # circuit-language.md: passive sign rule
    assert "power balance" in header[2]
    for name in ("Vgrid", "Rline", "Lline", "Zmotor", "Ccorr"):     # every element
        assert any(line.startswith(name + " ") for line in out.splitlines())
    for node in ("a", "b", "c"):
        assert any(line.split()[:1] == [node] for line in out.splitlines())


SAMPLES = sorted((Path(__file__).resolve().parents[2] / "samples").glob("*.circuit"))


@pytest.mark.parametrize("sample", SAMPLES, ids=[p.stem for p in SAMPLES])
def test_every_sample_solves_and_lists_every_element(capsys, sample):
    from phasorbench.workflow import read_circuit
    status, out, _ = run_main(capsys, "solve", str(sample))
    assert status == 0
    names = {line.split()[0] for line in out.splitlines() if line.strip()}
    circuit = read_circuit(sample.read_text(encoding="utf-8"))
    assert set(circuit.elements) <= names          # the core issue: every element
    assert set(circuit.groups) <= names            # and every three-phase block


def test_table_rows_of_transformers_and_three_phase_groups(capsys, circuit_file):
    text = ("frequency 50 Hz\nG: voltage3 a b c -> 0 400 V line\n"
            "Bank: load3 delta a b c 30 ohm\nT1: transformer a -> 0, s -> 0 ratio 10:1\n"
            "Rs: resistor s -> 0 8 ohm\n")
    status, out, _ = run_main(capsys, "solve", circuit_file(text))
    assert status == 0
    lines = out.splitlines()
    secondary = [line for line in lines if line.strip().startswith("secondary")]
    assert len(secondary) == 1 and "s → 0" in secondary[0]
    [bank] = [line for line in lines if line.startswith("Bank ")]
    # formula: a resistive bank takes no reactive power; round-off shows as 0, and
    # P = 3·400²/30 = 16 kW
    assert " 0 var " in bank and "16 kW" in bank and "load3 delta" in bank


def test_peak_circuits_say_so_in_the_header(capsys, circuit_file):
    status, out, _ = run_main(capsys, "solve",
                              circuit_file(GOOD.replace("frequency", "amplitudes peak\nfrequency")))
    assert status == 0
    assert "peak" in out.splitlines()[1] and "½" in out.splitlines()[1]   # S = ½·V·I*


# Invented: 120 V, 60 Hz through 30 Ω into a 40 Ω reactance; Ohm's law (any circuits
# textbook): |I| = 2.4 A RMS, V(b) = 96 V RMS, P = 172.8 W, Q = 230.4 var.
KILN = ("title Kiln blower\nfrequency 60 Hz\nV1: voltage a -> 0 120 V\n"
        "R1: resistor a -> b 30 ohm\nZ1: impedance b -> 0 j40 ohm\n")


def _csv(out):
    import csv
    import io
    rows = list(csv.reader(io.StringIO(out, newline="")))
    return {r[0]: dict(zip(rows[0], r)) for r in rows[1:]}


def test_show_reads_the_table_json_and_terminal_as_peak(capsys, circuit_file):
    path = circuit_file(KILN)
    status, out, _ = run_main(capsys, "solve", path, "--table", "branches", "--show", "peak")
    assert status == 0
    rms, peak = _csv(run_main(capsys, "solve", path, "--table", "branches")[1]), _csv(out)
    # Alexander & Sadiku, Fundamentals of Electric Circuits, ch. 11, effective or RMS
    # value (chapter from memory): a sinusoid's peak is √2 × its RMS value
    assert float(peak["R1"]["|I| peak (A)"]) == pytest.approx(2.4 * 2 ** 0.5, rel=1e-12)
    assert float(peak["Z1"]["|V| peak (V)"]) == pytest.approx(96 * 2 ** 0.5, rel=1e-12)
    assert float(rms["R1"]["|I| RMS (A)"]) == pytest.approx(2.4, rel=1e-12)      # Ohm's law
    # powers and angles are the same either way (S = V·I* for RMS, ½·V·I* for peak
    # phasors: Alexander & Sadiku, ch. 11, complex power)
    for key in ("P (W)", "Q (var)", "|S| (VA)", "∠I (°)"):
        assert peak["R1"][key] == rms["R1"][key]
    status, out, _ = run_main(capsys, "solve", path, "--json", "--show", "peak")
    contract = json.loads(out)
    # the API's shown answer: amplitudes as shown, the input's convention kept
    assert (contract["amplitudes"], contract["amplitudes_input"]) == ("peak", "rms")
    assert contract["elements"]["R1"]["p_w"] == pytest.approx(172.8, rel=1e-12)   # I²R
    status, out, _ = run_main(capsys, "solve", path, "--show", "peak")
    assert "shown as peak phasors" in out.splitlines()[1] and "input in RMS" in out.splitlines()[1]
    assert "169.7 V ∠0.00°" in out                  # 120·√2 (Alexander & Sadiku, above)


def test_show_takes_rms_or_peak_only(capsys, circuit_file):
    # common practice, no source: argparse refuses a choice it does not offer, exit 2
    with pytest.raises(SystemExit) as done:
        cli.main(["solve", circuit_file(KILN), "--show", "average"])
    assert done.value.code == 2 and "rms" in capsys.readouterr().err


def test_json_output_is_the_contract_without_nan(capsys, circuit_file):
    status, out, err = run_main(capsys, "solve", circuit_file(GOOD), "--json")
    assert status == 0 and err == ""
    data = json.loads(out, parse_constant=refuse_constant)
    # results-contract.md: the stable top-level fields
    for key in ("title", "frequency_hz", "amplitudes", "nodes", "elements", "balance",
                "warnings"):
        assert key in data
    assert data["frequency_hz"] == 60.0 and data["amplitudes"] == "rms"
    assert set(data["elements"]) == {"Vgrid", "Rline", "Lline", "Zmotor", "Ccorr"}
    assert "0" in data["nodes"]


def test_json_refuses_non_finite_numbers():
    # results-contract.md: JSON never carries NaN or infinity (refused, not written)
    with pytest.raises(ValueError):
        cli.dump_json({"x": float("inf")})
    assert json.loads(cli.dump_json({"x": 1.5, "µ": "Ω"})) == {"x": 1.5, "µ": "Ω"}


def test_check_validates_without_solving(capsys, circuit_file, monkeypatch):
    import phasorbench.solver as solver

    def never(*args, **kwargs):
        raise AssertionError("check must not solve")

    monkeypatch.setattr(solver, "solve", never)
    path = circuit_file(GOOD)
    status, out, err = run_main(capsys, "check", path)      # the core issue: validate only
    assert status == 0 and err == ""
    assert out.strip() == f"{path}: ok: 5 elements, 4 nodes, 60 Hz, amplitudes rms"


def test_warnings_go_to_stderr_with_their_place(capsys, circuit_file):
    text = GOOD + "Rx: resistor c -> c3 1 ohm\n"
    path = circuit_file(text)
    for command in ("solve", "check"):
        status, out, err = run_main(capsys, command, path)
        assert status == 0
        # circuit-language.md: FILE:LINE:COL: warning: node 'c3' is reached by one terminal
        assert err.splitlines()[0] == (f"{path}:8:1: warning: node 'c3' is reached by one "
                                       "terminal only (Rx): no current can flow in Rx; a "
                                       "misspelt node?")


# --- exit 2 ------------------------------------------------------------------------------

def test_input_errors_exit_2_with_caret_and_no_traceback(capsys, circuit_file):
    path = circuit_file(BAD)
    status, out, err = run_main(capsys, "solve", path)
    assert status == 2 and out == ""
    lines = err.splitlines()
    # results-contract.md / circuit-language.md: FILE:LINE:COL: error: message, the source
    # line, a caret under the span, a hint; every error of the file
    assert lines[0] == (f"{path}:4:{BAD_COLUMN}: error: a capacitor takes farads (F); "
                        "'150 uH' is in henries")
    assert lines[1] == "  Ccorr: capacitor b -> 0 150 uH"
    assert lines[2] == "  " + " " * (BAD_COLUMN - 1) + "^" * 6
    assert lines[3].startswith("  hint: ")
    assert lines[4] == f"{path}:5:5: error: 'resistr' is not an element kind"
    assert "Traceback" not in err


def test_structure_errors_exit_2(capsys, circuit_file):
    path = circuit_file("frequency 50\nV1: voltage a -> 0 1\nV2: voltage a -> 0 2\n")
    for command in ("solve", "check"):
        status, _, err = run_main(capsys, command, path)
        assert status == 2
        assert err.startswith(f"{path}:3:1: error: voltage sources V1, V2 form a loop")


def test_error_of_no_line(capsys, circuit_file):
    path = circuit_file("V1: voltage a -> 0 1\nR1: resistor a -> 0 1\n")
    status, _, err = run_main(capsys, "solve", path)
    # circuit-language.md: an error that belongs to no line is written FILE: error: ...
    assert status == 2
    assert err.splitlines()[0] == f"{path}: error: no analysis frequency: add a 'frequency' line"


@pytest.mark.parametrize("data, message", [
    (b"frequency 50 \xff\xfe\n",
     "error: not UTF-8 text (byte 0xff at line 1, column 14 cannot be read)"),
    (b"frequency 50\nV1: voltage a -> 0 1\x00\n", "error: the file is not text"),
    (b"", "error: the circuit is empty"),
])
def test_files_that_are_not_circuits(capsys, circuit_file, data, message):
    path = circuit_file("", data=data)
    status, out, err = run_main(capsys, "solve", path)
    assert status == 2 and out == ""
    assert err.startswith(f"{path}: {message}")          # circuit-language.md: FILE: error:


def test_missing_file_and_folder(capsys, tmp_path):
    # results-contract.md: input problems exit 2 with a FILE: error: line
    missing = str(tmp_path / "nope.circuit")
    status, _, err = run_main(capsys, "solve", missing)
    assert status == 2 and err.strip() == f"{missing}: error: no such file"
    status, _, err = run_main(capsys, "check", str(tmp_path))
    assert status == 2 and "is a folder" in err


def test_a_byte_order_mark_is_not_part_of_the_text(capsys, circuit_file):
    # common practice, no source: editors may save UTF-8 with a BOM
    status, _, _ = run_main(capsys, "check", circuit_file("", data=b"\xef\xbb\xbf" +
                                                          GOOD.encode()))
    assert status == 0


def test_no_command_prints_help_and_exits_2(capsys):
    # common practice, no source: a usage error is the user's to fix (exit 2)
    status, _, err = run_main(capsys)
    assert status == 2 and "solve" in err and "check" in err


# --- exit 1 -----------------------------------------------------------------------------

def test_internal_failure_exits_1_without_traceback(capsys, circuit_file, monkeypatch):
    import phasorbench.solver as solver

    def broken(circuit):
        raise RuntimeError("matrix gremlin")

    monkeypatch.setattr(solver, "solve", broken)       # the core issue: 1 internal error
    monkeypatch.delenv("PHASORBENCH_DEBUG", raising=False)
    status, out, err = run_main(capsys, "solve", circuit_file(GOOD))
    assert status == 1 and out == ""
    assert err.strip() == ("phasorbench: internal error: RuntimeError: matrix gremlin (set "
                           "PHASORBENCH_DEBUG=1 for details and please report it)")
    monkeypatch.setenv("PHASORBENCH_DEBUG", "1")
    status, _, err = run_main(capsys, "solve", circuit_file(GOOD))
    assert status == 1 and "Traceback" in err            # only when asked for


# --- the real console script -------------------------------------------------------------

def run_module(*args, input_text: str | None = None):
    return subprocess.run([sys.executable, "-m", "phasorbench", *args], input=input_text,
                          capture_output=True, text=True, encoding="utf-8", timeout=120)


def test_module_reads_stdin_and_prints_json():
    # the core issue: '-' reads standard input; results-contract.md: --json
    done = run_module("solve", "-", "--json", input_text=GOOD)
    assert done.returncode == 0, done.stderr
    data = json.loads(done.stdout, parse_constant=refuse_constant)
    assert data["title"] == "Bench check"
    # formula: Vgrid is the ideal 240 V source at node a
    assert data["nodes"]["a"]["mag"] == pytest.approx(240.0)


def test_module_exit_codes_and_stderr(tmp_path):
    # results-contract.md: exit 2, FILE:LINE:COL: error: on stderr, no traceback
    bad = tmp_path / "bad.circuit"
    bad.write_text(BAD, encoding="utf-8")
    done = run_module("solve", str(bad))
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr.startswith(f"{bad}:4:{BAD_COLUMN}: error: a capacitor takes farads")
    assert "Traceback" not in done.stderr
    done = run_module("check", "-", input_text=BAD)
    assert done.returncode == 2
    assert done.stderr.startswith(f"<stdin>:4:{BAD_COLUMN}: error:")


def test_module_with_a_non_utf8_file(tmp_path):
    # circuit-language.md: a file that is not text is an error of no line
    path = tmp_path / "latin1.circuit"
    path.write_bytes(b"frequency 50 Hz\nC1: capacitor a -> 0 150 \xb5F\n")   # latin-1 µ
    done = run_module("solve", str(path))
    assert done.returncode == 2
    assert done.stderr.startswith(f"{path}: error: not UTF-8 text")
    assert "Traceback" not in done.stderr


def test_terminal_table_shows_rms_totals_for_several_frequencies():
    # IEEE Std 1459-2010 (clause from memory): meter readings add the harmonics' powers
    import subprocess
    import sys
    text = ("frequency 50 Hz\nV1: voltage a -> 0 230 V\nV5: voltage b -> a 11.5 V freq 250 Hz\n"
            "R: resistor b -> 0 10 ohm\n")
    done = subprocess.run([sys.executable, "-m", "phasorbench", "solve", "-"], input=text,
                          capture_output=True, text=True, check=True)
    assert "RMS totals over every frequency" in done.stdout
    # formula: V rms of R = √(230² + 11.5²) = 230.3 V
    row = next(line for line in done.stdout.splitlines()[::-1] if line.startswith("R "))
    assert "230.3 V" in row


def test_a_huge_line_is_shown_as_a_window_around_the_caret():
    # circuit-language.md: the source line and a caret under the span; a 200 kB line
    # must not be echoed whole
    from phasorbench.errors import Diagnostic, format_diagnostic
    line = "R1: resistor a -> b " + "1" * 200_000 + "q"
    d = Diagnostic("bad number", "fix it", line=1, column=len(line), length=1)
    text = format_diagnostic(d, "f.circuit", line)
    shown, caret = text.splitlines()[1:3]
    assert len(shown) < 400
    assert shown[caret.index("^")] == "q"


def test_utf16_with_a_byte_order_mark_is_read(tmp_path):
    # common practice, no source: editors on some systems save "Unicode" as UTF-16 + BOM
    path = tmp_path / "wide.circuit"
    path.write_bytes("frequency 50\nV: voltage a -> 0 1\nR: resistor a -> 0 5\n".encode("utf-16"))
    done = run_module("check", str(path))
    assert done.returncode == 0 and "ok: 2 elements" in done.stdout


@pytest.mark.parametrize("command", ["solve", "check"])
def test_json_on_bad_input_is_the_apis_error_shape_on_stdout(capsys, circuit_file, command):
    # results-contract.md: errors are {"errors": [{"line", "column", "message", "hint"}]}
    # (the API's 422 body); the text lines still go to stderr and the exit status is 2
    status, out, err = run_main(capsys, command, "--json", circuit_file(BAD))
    assert status == 2
    body = json.loads(out)
    places = [(e["line"], e["column"]) for e in body["errors"]]
    assert (4, BAD_COLUMN) in places and any(line == 5 for line, _ in places)
    assert all(e["message"] and "hint" in e for e in body["errors"])
    assert ":4:" in err and "error:" in err


def test_json_on_a_missing_file_is_still_json(capsys, tmp_path):
    # results-contract.md: an error of no line has line and column null
    status, out, err = run_main(capsys, "solve", "--json", str(tmp_path / "none.circuit"))
    assert status == 2
    body = json.loads(out)
    assert body["errors"][0]["line"] is None and "no such file" in body["errors"][0]["message"]


def test_check_json_counts_a_good_circuit(capsys, circuit_file):
    # the GOOD circuit has five elements and nodes 0, a, b, c (circuit-language.md: 0 is a node)
    status, out, _ = run_main(capsys, "check", "--json", circuit_file(GOOD))
    body = json.loads(out)
    assert status == 0 and body["ok"] is True and body["errors"] == []
    assert body["elements"] == 5 and body["frequency_hz"] == 60.0
