"""Reading a circuit source: regular files only, a cap on size (issue 9, item 11)."""

from __future__ import annotations

import os
import threading

import pytest

from phasorbench.cli import common, main

OK = "frequency 50 Hz\nV1: voltage a -> 0 1 V\nR1: resistor a -> 0 1 ohm\n"


def test_a_fifo_is_refused_without_waiting_for_a_writer(tmp_path, capsys):
    # POSIX.1-2017, open(): O_NONBLOCK on a FIFO opens at once even with no writer, so the
    # check cannot hang; the message points to standard input for pipes
    fifo = tmp_path / "pipe.circuit"
    os.mkfifo(fifo)
    done = []
    worker = threading.Thread(target=lambda: done.append(main(["check", str(fifo)])), daemon=True)
    worker.start()
    worker.join(30)          # a hang would leave the thread alive: that is the failure
    assert done == [2]
    assert "FIFO" in capsys.readouterr().err


def test_a_device_is_refused(capsys):
    # POSIX.1-2017, <sys/stat.h>: /dev/zero is a character device (it never ends)
    assert main(["check", "/dev/zero"]) == 2
    assert "device" in capsys.readouterr().err


def test_standard_input_is_capped(monkeypatch, capsys):
    # common practice, no source: more than the cap from a pipe is an error, not a MemoryError
    class Endless:
        def read(self, n=-1):
            assert n > 0, "read without a limit"
            return b"#" * n
    monkeypatch.setattr(common.sys, "stdin", type("In", (), {"buffer": Endless()})())
    assert main(["check", "-"]) == 2
    assert "larger than 64 MB" in capsys.readouterr().err


def test_a_regular_file_and_standard_input_still_read(tmp_path, monkeypatch, capsys):
    # common practice, no source
    path = tmp_path / "ok.circuit"
    path.write_text(OK, encoding="utf-8")
    assert main(["check", str(path)]) == 0
    assert common.read_source(str(path))[0] == OK


@pytest.mark.filterwarnings("ignore::RuntimeWarning")
@pytest.mark.parametrize("value", ["1.7976931348623157e308 ohm", "1e-323 ohm"])
@pytest.mark.parametrize("command", ["solve", "sheet", "check"])
def test_extreme_values_exit_0_or_2(value, command, tmp_path, capsys):
    # IEEE 754-2019, section 3.3 (binary64 largest finite and a subnormal): exit 0 or 2,
    # never the internal-error exit 1 (issue 9, item 5)
    path = tmp_path / "x.circuit"
    path.write_text(f"frequency 50 Hz\nV1: voltage a -> 0 1e-323 V\nR1: resistor a -> 0 {value}\n",
                    encoding="utf-8")
    assert main([command, str(path)] + (["-o", str(tmp_path / "x.html")] if command == "sheet" else [])) in (0, 2)
    assert "internal error" not in capsys.readouterr().err
