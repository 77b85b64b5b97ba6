"""Output of the commands (cli/output.py): quantity arguments and -o paths."""

from __future__ import annotations

import argparse
import os

import pytest

from phasorbench.cli import main
from phasorbench.cli.output import frequency_argument, voltage_argument

RC = "frequency 50 Hz\nV1: voltage in -> 0 1 V\nR1: resistor in -> out 1k\nC1: capacitor out -> 0 159.155 nF\n"


@pytest.mark.parametrize("text, value", [("50", 50.0), ("2.5k", 2500.0), ("2.5 kHz", 2500.0),
                                         ("1e3 Hz", 1000.0), ("3 MHz", 3e6), (".5k", 500.0)])
def test_frequencies_read_with_si_prefixes(text, value):
    # SI Brochure (BIPM, 9th ed.), table 7: k = 10³, M = 10⁶
    assert frequency_argument(text) == pytest.approx(value, rel=1e-15)


@pytest.mark.parametrize("text, value", [("400", 400.0), ("13.8 kV", 13800.0), ("0.48kV", 480.0)])
def test_voltages_read_with_si_prefixes(text, value):
    # SI Brochure (BIPM, 9th ed.), table 7
    assert voltage_argument(text) == pytest.approx(value, rel=1e-15)


@pytest.mark.parametrize("text", ["", "1.2.3", "50 V", "k", "fifty"])
def test_not_a_quantity_is_refused(text):
    # common practice, no source: a frequency with the wrong unit or no number is an error
    with pytest.raises(argparse.ArgumentTypeError, match="is not a frequency"):
        frequency_argument(text)


def test_a_study_does_not_write_over_a_fifo(tmp_path, capsys):
    # POSIX.1-2017, rename(): renaming over a FIFO replaces the directory entry; the
    # study commands refuse it as the sheet does, and leave it a FIFO
    source = tmp_path / "rc.circuit"
    source.write_text(RC, encoding="utf-8")
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    status = main(["sweep", str(source), "--probe", "V(out)/V(in)", "-o", str(fifo)])
    err = capsys.readouterr().err
    assert status == 2 and "FIFO" in err and "not written" in err
    assert os.path.exists(fifo) and not os.path.isfile(fifo)


def test_a_study_writes_a_regular_file_whole(tmp_path, capsys):
    # common practice, no source: -o writes the same text the terminal would show
    source = tmp_path / "rc.circuit"
    source.write_text(RC, encoding="utf-8")
    out = tmp_path / "response.csv"
    assert main(["sweep", str(source), "--probe", "V(out)/V(in)", "--csv", "-o", str(out)]) == 0
    capsys.readouterr()
    assert main(["sweep", str(source), "--probe", "V(out)/V(in)", "--csv"]) == 0
    assert out.read_text(encoding="utf-8") == capsys.readouterr().out
