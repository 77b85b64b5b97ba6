"""The ``phasorbench`` command: a thin shell over ``workflow.py``.

Exit status: 0 solved (or valid), 2 the input is wrong (every error printed as
``FILE:LINE:COL: error: ...`` with the source line and a caret), 1 an internal failure.
No traceback reaches the user unless ``PHASORBENCH_DEBUG=1`` is set.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import traceback

from . import __version__
from .errors import CircuitError, Diagnostic, format_diagnostic, source_lines

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT = 0, 1, 2


class InputFileError(Exception):
    """The circuit file could not be read (missing, not text)."""


def read_source(path: str) -> tuple[str, str]:
    """Return (text, display name) of a circuit file, or of standard input for ``-``."""
    if path == "-":
        data = sys.stdin.buffer.read()
        name = "<stdin>"
    else:
        name = path
        try:
            with open(path, "rb") as handle:
                data = handle.read()
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


def dump_json(data) -> str:
    """JSON with no NaN or infinity (refused rather than written)."""
    return json.dumps(data, ensure_ascii=False, allow_nan=False)


def command_solve(args) -> int:
    from .workflow import solve_text
    text, name = load_source(args)
    result = solve_text(text, name)
    if args.json:
        sys.stdout.write(dump_json(result) + "\n")
    else:
        from .terminal import result_table
        sys.stdout.write(result_table(result))
    for w in result["warnings"]:
        d = Diagnostic(w["message"], w["hint"], w["line"], w["column"], 1, "warning")
        print(format_diagnostic(d, name, text), file=sys.stderr)
    return EXIT_OK


def command_check(args) -> int:
    from .workflow import read_circuit
    text, name = load_source(args)
    circuit = read_circuit(text, name)
    print_diagnostics(circuit.warnings, name, text)
    print(f"{name}: ok: {len(circuit.elements)} elements, {len(circuit.nodes())} nodes, "
          f"{circuit.frequency:g} Hz, amplitudes {circuit.amplitudes}")
    return EXIT_OK


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="phasorbench",
        description="Solve AC circuits in sinusoidal steady state (phasors, nodal analysis).")
    parser.add_argument("--version", action="version", version=f"phasorbench {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND")

    solve = commands.add_parser("solve", help="solve a circuit and print every node and branch")
    solve.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    solve.add_argument("--json", action="store_true", help="print the result contract as JSON")
    solve.set_defaults(run=command_solve)

    check = commands.add_parser("check", help="validate a circuit without solving it")
    check.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    check.set_defaults(run=command_check)

    for register in _extensions():
        register(commands)
    return parser


def _extensions():
    """Sub-commands that live beside the core (server, sheet, power tools)."""
    found = []
    try:
        from .web.serve import add_serve_command
        found.append(add_serve_command)
    except ImportError:
        pass
    try:
        from .sheet_cli import add_sheet_command
        found.append(add_sheet_command)
    except ImportError:
        pass
    try:
        from .tools_cli import add_tool_commands
        found.append(add_tool_commands)
    except ImportError:
        pass
    return found


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return EXIT_INPUT
    try:
        return args.run(args)
    except InputFileError as exc:
        print(str(exc), file=sys.stderr)
        return EXIT_INPUT
    except CircuitError as exc:
        name = getattr(args, "source_name", None) or getattr(args, "file", "<circuit>")
        print_diagnostics(exc.diagnostics, name, getattr(args, "source_text", None))
        return EXIT_INPUT
    except KeyboardInterrupt:
        return 130
    except Exception as exc:  # the one place an unexpected failure is turned into a message
        if os.environ.get("PHASORBENCH_DEBUG") == "1":
            traceback.print_exc()
        print(f"phasorbench: internal error: {type(exc).__name__}: {exc} (set "
              "PHASORBENCH_DEBUG=1 for details and please report it)", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    raise SystemExit(main())
