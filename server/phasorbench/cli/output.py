"""Where a command's output goes: standard output, or a file written whole or not at
all, never over something that is not a regular file. One home for ``-o`` of
``sheet`` and of every study command (``sweep``, ``tolerance``, ``formula``,
``harmonics``), and for the quantity arguments they take (``2.5 kHz``, ``13.8 kV``)."""

from __future__ import annotations

import argparse
import os
import re
import stat
import sys
import tempfile

from .common import EXIT_INPUT

__all__ = ["OutputRefused", "refusal", "write_file", "write_output", "quantity_argument",
           "frequency_argument", "voltage_argument"]


class OutputRefused(Exception):
    """The ``-o`` path holds something the output must not replace."""


def refusal(path: str) -> str | None:
    """Why ``path`` must not be replaced by a command's output, or None when it may be.

    Output goes to a new file or replaces a regular file. Renaming over a FIFO, a
    device node or a socket would swap a special file for a plain one (another
    program's pipe, ``/dev/null``); over a symbolic link it would replace the link,
    not the file it points to, so links are refused too rather than followed.
    """
    try:
        info = os.lstat(path)
    except FileNotFoundError:
        return None
    except OSError as exc:
        return f"cannot look at it ({exc.strerror or exc})"
    mode = info.st_mode
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISLNK(mode):
        return ("is a symbolic link; output replaces regular files only (give the path "
                "of the file itself)")
    if stat.S_ISDIR(mode):
        return "is a folder; give a file name, e.g. OUT.html"
    what = ("a FIFO (named pipe)" if stat.S_ISFIFO(mode) else
            "a device" if stat.S_ISCHR(mode) or stat.S_ISBLK(mode) else
            "a socket" if stat.S_ISSOCK(mode) else "not a regular file")
    return f"is {what}; output replaces regular files only (use -o - for standard output)"


def write_file(path: str, text: str, prefix: str = "out") -> None:
    """Write ``text`` to ``path`` whole or not at all (a temporary file, then a rename);
    raises ``OutputRefused`` for a path `refusal` refuses, ``OSError`` otherwise."""
    reason = refusal(path)
    if reason is not None:
        raise OutputRefused(reason)
    folder = os.path.dirname(os.path.abspath(path))
    handle, temporary = tempfile.mkstemp(prefix=f".{prefix}-", dir=folder)
    try:
        # mkstemp makes the file private; the output gets the mode any new file would.
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(temporary, 0o666 & ~mask)
        with os.fdopen(handle, "w", encoding="utf-8", newline="") as out:
            out.write(text)
        os.replace(temporary, path)
    except BaseException:
        os.unlink(temporary)
        raise


def write_output(path: str | None, text: str, what: str = "output",
                 prefix: str = "out") -> int | None:
    """``text`` to standard output (``path`` None or ``-``) or to the file ``path``;
    None when written, ``EXIT_INPUT`` after saying why it was not."""
    if path in (None, "-"):
        sys.stdout.write(text)
        sys.stdout.flush()
        return None
    try:
        write_file(path, text, prefix)
    except OutputRefused as exc:
        print(f"{path}: error: not written: the path {exc}", file=sys.stderr)
        return EXIT_INPUT
    except OSError as exc:
        print(f"{path}: error: cannot write the {what} ({exc.strerror or exc})",
              file=sys.stderr)
        return EXIT_INPUT
    return None


_PREFIX = {"": 1.0, "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9}


def quantity_argument(unit: str, what: str, example: str):
    """An argparse type reading ``50``, ``2.5k`` or ``2.5 k<unit>`` as a number in
    ``unit`` (SI prefixes m, k, M, G)."""
    pattern = re.compile(r"\s*([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*([mkMG]?)\s*(?:"
                         + re.escape(unit) + r")?\s*")

    def parse(text: str) -> float:
        match = pattern.fullmatch(text)
        if not match:
            raise argparse.ArgumentTypeError(f"'{text}' is not a {what} (e.g. {example})")
        return float(match.group(1)) * _PREFIX[match.group(2)]

    parse.__name__ = what          # argparse names the type in its own messages
    return parse


#: ``50``, ``2.5k``, ``2.5 kHz``: a frequency in Hz.
frequency_argument = quantity_argument("Hz", "frequency", "50, 2.5 kHz")
#: ``400``, ``4.16k``, ``13.8 kV``: a voltage in volts.
voltage_argument = quantity_argument("V", "voltage", "400, 13.8 kV")
