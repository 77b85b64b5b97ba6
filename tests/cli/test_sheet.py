"""``phasorbench sheet FILE -o OUT.html``: same exits and error text as ``solve``."""

from __future__ import annotations

import html as markup
import json
import os
import subprocess
import sys

import pytest

from phasorbench.cli import main
from phasorbench.sheet import render_sheet

from tests.sheet.conftest import NOW, RC_BENCH, ROOT, STAMP, element_text

BAD = """\
frequency 50 Hz
V1: voltage  a -> 0   230 V
R1: resistor a -> 0   5 uH
C1: capacitor a -> 0  10 q
"""


def run(argv, capsys):
    status = main(argv)
    out = capsys.readouterr()
    return status, out.out, out.err


@pytest.fixture
def rc_file(tmp_path):
    path = tmp_path / "rc.circuit"
    path.write_text(RC_BENCH, encoding="utf-8")
    return path


def test_writes_the_sheet_of_the_file(rc_file, tmp_path, capsys):
    out = tmp_path / "rc.html"
    status, stdout, stderr = run(["sheet", str(rc_file), "-o", str(out)], capsys)
    assert (status, stdout, stderr) == (0, "", "")
    html = out.read_text(encoding="utf-8")
    # The same document render_sheet makes, apart from the moment it was made.
    assert STAMP.sub("", html) == STAMP.sub("", render_sheet(RC_BENCH, now=NOW))
    assert element_text(html, "pre", "source") == RC_BENCH
    # A new file gets the permissions any new file gets (the umask), not private ones.
    mask = os.umask(0)
    os.umask(mask)
    assert out.stat().st_mode & 0o777 == 0o666 & ~mask


def test_no_output_option_writes_to_standard_output(rc_file, capsys):
    # common practice, no source: no -o writes to standard output
    status, stdout, _ = run(["sheet", str(rc_file)], capsys)
    assert status == 0 and stdout.startswith("<!doctype html>") and "RC bench" in stdout


def test_standard_input_and_exit_status_in_a_real_process(tmp_path):
    # results-contract.md, errors: exit 2, FILE:LINE:COL, no traceback; "-" is standard
    # input (POSIX utility syntax guidelines, guideline 13).
    out = tmp_path / "stdin.html"
    done = subprocess.run([sys.executable, "-m", "phasorbench", "sheet", "-", "-o", str(out)],
                          input=RC_BENCH.encode(), capture_output=True, timeout=60, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert element_text(out.read_text(encoding="utf-8"), "pre", "source") == RC_BENCH
    bad = subprocess.run([sys.executable, "-m", "phasorbench", "sheet", "-"], input=BAD.encode(),
                         capture_output=True, timeout=60, cwd=tmp_path)
    assert bad.returncode == 2 and bad.stdout == b"" and b"Traceback" not in bad.stderr
    assert b"<stdin>:3:" in bad.stderr


def test_input_errors_exit_2_exactly_like_solve(tmp_path, capsys):
    path = tmp_path / "bad.circuit"
    path.write_text(BAD, encoding="utf-8")
    out = tmp_path / "bad.html"
    out.write_text("an older sheet", encoding="utf-8")
    solve = run(["solve", str(path)], capsys)
    sheet = run(["sheet", str(path), "-o", str(out)], capsys)
    assert solve[0] == sheet[0] == 2
    # Every error, as FILE:LINE:COL: error: with the line and a caret, word for word
    # the same as `solve` prints (results-contract.md, errors).
    assert sheet[2] == solve[2] and f"{path}:3:" in sheet[2] and f"{path}:4:" in sheet[2]
    assert out.read_text(encoding="utf-8") == "an older sheet"        # nothing written


def test_missing_file_exits_2_like_solve(tmp_path, capsys):
    # results-contract.md, errors: `FILE: error: ...` and exit 2
    missing = str(tmp_path / "none.circuit")
    assert run(["sheet", missing], capsys)[1:] == ("", f"{missing}: error: no such file\n")
    assert run(["solve", missing], capsys)[0] == 2


def test_unwritable_output_exits_2(rc_file, tmp_path, capsys):
    # common practice, no source: a bad output path is the user's to fix
    target = tmp_path / "no" / "such" / "folder" / "x.html"
    status, _, stderr = run(["sheet", str(rc_file), "-o", str(target)], capsys)
    assert status == 2 and stderr.startswith(f"{target}: error: cannot write the sheet")
    assert not target.parent.exists()


def test_warnings_go_to_stderr_like_solve(tmp_path, capsys):
    # results-contract.md: warnings at their line, on standard error
    sample = ROOT / "samples" / "pump-station-transformer.circuit"
    solve = run(["solve", str(sample)], capsys)
    sheet = run(["sheet", str(sample), "-o", str(tmp_path / "pump.html")], capsys)
    assert sheet[0] == 0 and sheet[2] == solve[2] and ":8:1: warning:" in sheet[2]


def test_chosen_elements_and_unknown_ones(rc_file, tmp_path, capsys):
    # common practice, no source: the reader's choice is drawn and stated
    out = tmp_path / "chosen.html"
    assert run(["sheet", str(rc_file), "-o", str(out), "--element", "R1",
                "--element", "V1"], capsys)[0] == 0
    html = out.read_text(encoding="utf-8")
    assert "Elements chosen for this sheet: R1, V1." in html
    assert html.count('class="pb-wave"') == 2
    status, _, stderr = run(["sheet", str(rc_file), "--element", "Rx"], capsys)
    assert status == 2 and "error: the circuit has no element named 'Rx'" in stderr


def test_internal_failure_exits_1_without_traceback(rc_file, monkeypatch, capsys):
    # cli.py's rule from DEVELOPERS.md: bad input never ends in a traceback; 1 is internal
    import phasorbench.sheet as sheet

    def broken(context):
        raise ZeroDivisionError("boom")
    monkeypatch.setattr(sheet, "render_context", broken)
    monkeypatch.delenv("PHASORBENCH_DEBUG", raising=False)
    status, stdout, stderr = run(["sheet", str(rc_file)], capsys)
    assert status == 1 and stdout == ""
    assert "internal error: ZeroDivisionError: boom" in stderr and "Traceback" not in stderr


MOTOR = """\
title Motor on 120 V
frequency 60 Hz
V1: voltage   a -> 0   120 V
Z1: impedance a -> 0   2.304 + j1.728 ohm
"""


def test_power_tools_on_the_sheet(tmp_path, capsys):
    path = tmp_path / "motor.circuit"
    path.write_text(MOTOR, encoding="utf-8")
    out = tmp_path / "motor.html"
    assert run(["sheet", str(path), "-o", str(out), "--correct", "V1", "0.95",
                "--port", "a", "0"], capsys)[0] == 0
    html = out.read_text(encoding="utf-8")
    # check-values C14: C = 310.438 µF (Alexander & Sadiku PFC example, book 310.5 µF).
    assert 'id="correction"' in html and "310.438 µF" in html and 'id="port"' in html
    # The standard ratings either side, re-solved: C14's P = 4 kW, Q = 3 kvar, so on this
    # ideal bus 2 kvar gives 4000/√(4000² + 1000²) = 0.9701 (textbook power triangle).
    assert "Standard bank ratings at 120 V" in html and "0.9701 lagging" in html
    with_list = tmp_path / "motor-list.html"
    assert run(["sheet", str(path), "-o", str(with_list), "--correct", "V1", "0.95",
                "--ratings", "1, 2.5"], capsys)[0] == 0
    # 2.5 kvar: 4000/√(4000² + 500²) = 0.9923 (same triangle)
    assert "0.9923 lagging" in with_list.read_text(encoding="utf-8")
    # A wrong source is the `correct` command's error, word for word, and exit 2.
    sheet = run(["sheet", str(path), "--correct", "V9", "0.95"], capsys)
    correct = run(["correct", str(path), "--source", "V9", "--target", "0.95"], capsys)
    assert sheet[0] == correct[0] == 2 and sheet[2] == correct[2]
    assert "'V9' is not an element" in sheet[2]


C16_PLANT = """\
title Plant bus
frequency 50 Hz
G: voltage3 A B C -> 0 400 V line
M: load3 wye A B C -> 0 0.9 + j0.793725393 ohm
"""

FEEDER = """\
title Feeder to a motor bus
frequency 60 Hz
V1: voltage a -> 0 120 V
Rl: resistor a -> b 0.08 ohm
Ll: inductor b -> c 0.3 mH
Z1: impedance c -> 0 2.304 + j1.728 ohm
"""


def test_sheet_places_the_correction_at_a_bus(tmp_path, capsys):
    # check-values C16: 100 kW at PF 0.75 on 400 V 50 Hz (|Z| = 1.2 Ω per phase,
    # 0.9 + j0.7937 Ω), to 0.95 lagging with a delta bank: C_Δ = 366.874 µF (formula)
    path = tmp_path / "plant.circuit"
    path.write_text(C16_PLANT, encoding="utf-8")
    out = tmp_path / "plant.html"
    assert run(["sheet", str(path), "-o", str(out), "--correct", "G", "0.95",
                "--correct-at", "A,B,C", "--bank", "delta"], capsys)[0] == 0
    assert "366.874 µF" in out.read_text(encoding="utf-8")


def test_sheet_correction_at_a_node_is_the_correct_commands(tmp_path, capsys):
    # common practice, no source: the sheet and the command carry one answer for one
    # request (the capacitor at bus c, behind a line, is not the one at the source)
    path = tmp_path / "feeder.circuit"
    path.write_text(FEEDER, encoding="utf-8")
    status, out, _ = run(["correct", str(path), "--source", "V1", "--target", "0.95",
                          "--at", "c", "--json"], capsys)
    at_bus = json.loads(out)
    status_src, out_src, _ = run(["correct", str(path), "--source", "V1", "--target", "0.95",
                                  "--json"], capsys)
    assert status == status_src == 0
    assert at_bus["capacitance_f"] != json.loads(out_src)["capacitance_f"]
    sheet = tmp_path / "feeder.html"
    assert run(["sheet", str(path), "-o", str(sheet), "--correct", "V1", "0.95",
                "--correct-at", "c"], capsys)[0] == 0
    from phasorbench.presentation.formatting import eng
    assert eng(at_bus["capacitance_f"], "F", 6) in sheet.read_text(encoding="utf-8")


def test_placement_flags_without_a_correction_are_refused(tmp_path, capsys):
    # common practice, no source: a flag that would be ignored is an input error
    path = tmp_path / "motor.circuit"
    path.write_text(MOTOR, encoding="utf-8")
    status, _, err = run(["sheet", str(path), "--correct-at", "a"], capsys)
    assert status == 2 and "--correct SOURCE PF" in err


# ---- -o writes regular files only (issue 9, item 8) --------------------------------

def _special(kind: str, tmp_path):
    path = tmp_path / f"out-{kind}"
    if kind == "fifo":
        os.mkfifo(path)
    elif kind == "symlink":
        (tmp_path / "target.html").write_text("keep me", encoding="utf-8")
        path.symlink_to(tmp_path / "target.html")
    elif kind == "folder":
        path.mkdir()
    return path


@pytest.mark.parametrize("kind, words", [("fifo", "FIFO"), ("symlink", "symbolic link"),
                                         ("folder", "folder")])
def test_output_that_is_not_a_regular_file_is_refused(kind, words, rc_file, tmp_path, capsys):
    # POSIX.1-2017, rename(): renaming over a FIFO or a link replaces that directory entry,
    # so a FIFO would silently become a plain file and a link lose its target; refused
    path = _special(kind, tmp_path)
    before = os.lstat(path)
    status, stdout, stderr = run(["sheet", str(rc_file), "-o", str(path)], capsys)
    assert status == 2 and words in stderr and "not written" in stderr
    after = os.lstat(path)
    assert (after.st_mode, after.st_ino) == (before.st_mode, before.st_ino)
    if kind == "symlink":
        assert (tmp_path / "target.html").read_text(encoding="utf-8") == "keep me"
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".sheet-")]


def test_a_device_node_is_refused_without_touching_it():
    # POSIX.1-2017, <sys/stat.h> S_ISCHR: /dev/null is a character device; only looked at
    from phasorbench.cli.output import refusal
    assert "device" in refusal(os.devnull)
    assert refusal(os.devnull + "-not-there") is None


def test_an_existing_regular_file_is_replaced_whole(rc_file, tmp_path, capsys):
    # common practice, no source: a regular file is what -o is for
    out = tmp_path / "old.html"
    out.write_text("old", encoding="utf-8")
    assert run(["sheet", str(rc_file), "-o", str(out)], capsys)[0] == 0
    assert out.read_text(encoding="utf-8").lower().startswith("<!doctype html>")


def test_help_says_links_are_refused(capsys):
    # common practice, no source: the issue asks --help to say what happens to a symlink
    with pytest.raises(SystemExit):
        main(["sheet", "--help"])
    assert "symbolic link" in capsys.readouterr().out


#: check-values C5: series RLC, f0 = 7957.75 Hz, Q = 25.
RLC_SWEPT = """title Series RLC
frequency 50 Hz
sweep 1 kHz to 50 kHz, 101 points
Vs: voltage a -> 0 20 V
R1: resistor a -> b 2 ohm
L1: inductor b -> c 1 mH
C1: capacitor c -> 0 0.4 uF
"""


def test_sweep_adds_the_frequency_response_section(tmp_path, capsys):
    path = tmp_path / "rlc.circuit"
    path.write_text(RLC_SWEPT, encoding="utf-8")
    out = tmp_path / "s.html"
    status, _, err = run(["sheet", str(path), "--sweep", "I(R1)", "--sweep", "V(c)",
                          "-o", str(out)], capsys)
    assert status == 0, err
    html = markup.unescape(out.read_text(encoding="utf-8"))
    assert '<section id="sweep"' in html and html.count('class="pb-curve"') == 2
    # the circuit's sweep line is the default range (circuit-language.md)
    assert "the circuit's sweep line (line 3)" in html and "101, log spacing" in html
    # check-values C5: the current peaks at f0 = 7957.75 Hz
    assert "7.95775 kHz" in html
    # the command line overrides it (studies.md)
    status, _, _ = run(["sheet", str(path), "--sweep", "I(R1)", "--from", "5k", "--to",
                        "10 kHz", "--points", "11", "--linear", "-o", str(out)], capsys)
    html = markup.unescape(out.read_text(encoding="utf-8"))
    assert status == 0 and "5 kHz to 10 kHz" in html and "11, linear spacing" in html
    assert "as asked for" in html


def test_sweep_bad_input_exits_2_with_a_caret(tmp_path, capsys):
    path = tmp_path / "rlc.circuit"
    path.write_text(RLC_SWEPT, encoding="utf-8")
    out = tmp_path / "s.html"
    status, _, err = run(["sheet", str(path), "--sweep", "I(R2)", "--from", "9k", "--to",
                          "3k", "-o", str(out)], capsys)
    # studies.md: column inside the probe, did-you-mean, every problem in one pass
    assert status == 2 and "--probe:3: error" in err and "did you mean 'R1'" in err
    assert "must be below TO" in err and "Traceback" not in err and not out.exists()
    status, _, err = run(["sheet", str(path), "--points", "10", "-o", str(out)], capsys)
    # common practice, no source: a sweep setting without a probe is refused, not ignored
    assert status == 2 and "give --sweep PROBE too" in err


def test_show_peak_sheet_is_the_apis(tmp_path, capsys):
    # the API's sheet with "show": "peak" (tests/sheet/test_sheet_api.py checks its
    # numbers: peak = √2 × RMS, Alexander & Sadiku, Fundamentals of Electric Circuits,
    # ch. 11, chapter from memory); the command line writes the same file
    from tests.sheet.test_sheet_api import KILN
    from tests.web.conftest import Api
    from tests.sheet.conftest import sheet_app
    path = tmp_path / "kiln.circuit"
    path.write_text(KILN, encoding="utf-8")
    out = tmp_path / "kiln.html"
    status, _, _ = run(["sheet", str(path), "-o", str(out), "--show", "peak"], capsys)
    assert status == 0
    written = out.read_text(encoding="utf-8")
    assert "shown as peak phasors; input in RMS" in written
    assert "169.7\u00a0V ∠0.00°" in written           # 120 V RMS × √2 (above)
    served = Api(sheet_app()).post("/api/sheet", json={"netlist": KILN, "show": "peak"})
    assert STAMP.sub("", served.text) == STAMP.sub("", written)
