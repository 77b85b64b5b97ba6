"""What every command shares: reading the circuit source, exit codes, diagnostics, JSON."""

from __future__ import annotations

import json
import os
import stat
import sys

from ..errors import Diagnostic, format_diagnostic, source_lines

__all__ = ["add_show_option",
           "print_study_diagnostics", "EXIT_OK", "EXIT_INTERNAL", "EXIT_INPUT", "InputFileError", "read_source",
           "load_source", "print_diagnostics", "print_warnings", "dump_json", "write_json"]

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT = 0, 1, 2


def add_show_option(parser) -> None:
    """``--show rms|peak``: the page's RMS / peak switch (the API's ``show``) for the
    commands that print or write a solved circuit's magnitudes (``solve``, ``sheet``)."""
    from ..presentation.amplitudes import SHOWN
    parser.add_argument("--show", choices=SHOWN, metavar="rms|peak",
                        help="read voltage and current magnitudes as rms or peak values "
                             "(default: as the circuit's amplitudes line says; powers and "
                             "angles are the same either way)")


class InputFileError(Exception):
    """The circuit file could not be read (missing, not text)."""


#: Largest circuit source read, in bytes. The parser takes at most 400,000 lines
#: (``parser.MAX_LINES``); 64 MB is over 150 bytes for each of them, so no circuit the
#: parser accepts is cut, while ``/dev/zero`` or a runaway pipe ends with a message
#: instead of filling the memory.
MAX_SOURCE_BYTES = 64 * 1024 * 1024


def _too_large(name: str) -> InputFileError:
    return InputFileError(f"{name}: error: larger than {MAX_SOURCE_BYTES // (1024 * 1024)} MB, "
                          "the most a circuit file may hold; check that this is the right "
                          "file")


def _read_capped(handle, name: str) -> bytes:
    data = handle.read(MAX_SOURCE_BYTES + 1)
    if len(data) > MAX_SOURCE_BYTES:
        raise _too_large(name)
    return data


def _open_regular(path: str):
    """Open ``path`` for reading only if it is a regular file.

    The file is opened without blocking (a FIFO with no writer would otherwise hang
    here) and checked on the open handle, so what is read is what was checked.
    """
    fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    try:
        mode = os.fstat(fd).st_mode
        if stat.S_ISDIR(mode):
            raise InputFileError(f"{path}: error: is a folder, not a circuit file")
        if not stat.S_ISREG(mode):
            what = ("a FIFO (named pipe)" if stat.S_ISFIFO(mode) else
                    "a device" if stat.S_ISCHR(mode) or stat.S_ISBLK(mode) else
                    "a socket" if stat.S_ISSOCK(mode) else "not a regular file")
            raise InputFileError(f"{path}: error: is {what}, not a circuit file; to read "
                                 "from a pipe, give - and send the circuit to standard input")
        if hasattr(os, "O_NONBLOCK"):
            os.set_blocking(fd, True)
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def read_source(path: str) -> tuple[str, str]:
    """Return (text, display name) of a circuit file, or of standard input for ``-``.

    Only regular files are read (standard input may be anything), at most
    ``MAX_SOURCE_BYTES``.
    """
    if path == "-":
        name = "<stdin>"
        data = _read_capped(sys.stdin.buffer, name)
    else:
        name = path
        try:
            with _open_regular(path) as handle:
                data = _read_capped(handle, name)
        except FileNotFoundError:
            raise InputFileError(f"{name}: error: no such file") from None
        except IsADirectoryError:
            raise InputFileError(f"{name}: error: is a folder, not a circuit file") from None
        except OSError as exc:
            raise InputFileError(f"{name}: error: cannot read it ({exc.strerror})") from None
    try:
        if data[:2] in (b"\xff\xfe", b"\xfe\xff"):     # an editor's UTF-16, marked
            text = data.decode("utf-16")
        else:
            text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        column = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        # circuit-language.md: a file that is not text is an error of no line; the
        # message still says where the unreadable byte is.
        raise InputFileError(f"{name}: error: not UTF-8 text (byte 0x{data[exc.start]:02x} "
                             f"at line {line}, column {column} cannot be read); save the "
                             "circuit as UTF-8 text") from None
    return text, name


def load_source(args) -> tuple[str, str]:
    """Read the command's FILE and keep the text on ``args`` for error messages."""
    text, name = read_source(args.file)
    args.source_text, args.source_name = text, name
    return text, name


def print_diagnostics(diagnostics: list[Diagnostic], name: str, text: str) -> None:
    lines = source_lines(text) if text is not None else None     # split once, not per error
    for d in diagnostics:
        print(format_diagnostic(d, name, lines=lines), file=sys.stderr)


#: The option whose own text a study's diagnostic points into.
_OPTION_OF = {"probe": "--probe", "limit": "--limit"}


def print_study_diagnostics(diagnostics: list[Diagnostic], name: str, text: str) -> None:
    """A study's problems: those of a probe or a limit with a caret under the option's
    own text (``--probe:COL: error:``), the rest as the circuit's diagnostics."""
    import re
    for d in diagnostics:
        own = re.match(r"(probe|limit) '(.*?)': ", d.message)
        if own and d.column and d.line is None:
            print(f"{_OPTION_OF[own.group(1)]}:{d.column}: error: {d.message}",
                  file=sys.stderr)
            print("  " + own.group(2), file=sys.stderr)
            print("  " + " " * (d.column - 1) + "^" * max(1, d.length), file=sys.stderr)
            if d.hint:
                print(f"  hint: {d.hint}", file=sys.stderr)
        else:
            print_diagnostics([d], name, text)


def dump_json(data) -> str:
    """JSON with no NaN or infinity (refused rather than written)."""
    return json.dumps(data, ensure_ascii=False, allow_nan=False)


def write_json(data) -> None:
    """Write a contract dict as one line of JSON to standard output, as bytes.

    The contract holds finite numbers only (``results.contract`` refuses a power that
    overflows), so the fast encoder ``jsonout.dumps`` writes it.
    """
    from ..jsonout import dumps

    body = dumps(data) + b"\n"
    out = sys.stdout
    buffer = getattr(out, "buffer", None)
    if buffer is None:
        out.write(body.decode("utf-8"))
        return
    out.flush()                      # keep the order of anything written as text before
    buffer.write(body)
    buffer.flush()


def print_warnings(warnings: list[dict], name: str, text: str) -> None:
    """Print a result's ``warnings`` (contract dicts) as ``FILE:LINE:COL: warning:`` lines."""
    lines = source_lines(text) if text is not None else None
    for w in warnings:
        d = Diagnostic(w["message"], w.get("hint", ""), w.get("line"), w.get("column"), 1,
                       "warning")
        print(format_diagnostic(d, name, lines=lines), file=sys.stderr)
