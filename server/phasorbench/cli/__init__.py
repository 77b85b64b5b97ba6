"""The ``phasorbench`` command line: one module per command family, one shared helper.

- ``common.py``: reading the source (a file or ``-``), exit codes, diagnostics, JSON.
- ``output.py``: where output goes (``-o``), quantity arguments (``2.5 kHz``).
- ``circuit.py``: ``solve`` and ``check``; ``terminal.py`` draws their tables.
- ``tools.py``: ``correct`` and ``port``.
- ``sheet.py``: ``sheet``.
- ``sweep.py``: ``sweep`` (frequency response).
- ``tolerance.py``: ``tolerance`` (Monte Carlo, sensitivities, worst case, yield).
- ``formula.py``: ``formula`` (exact formulas in s, sympy in a worker process).
- ``harmonics.py``: ``harmonics`` (the harmonic study).
- ``serve.py``: ``serve`` (the web server is imported only when it runs).

Exit status: 0 solved (or valid), 2 the input is wrong (every error printed as
``FILE:LINE:COL: error: ...`` with the source line and a caret), 1 an internal failure.
No traceback reaches the user unless ``PHASORBENCH_DEBUG=1`` is set.
"""

from __future__ import annotations

import argparse
import os
import sys
import traceback

from .. import __version__
from ..blas import pin_before_import
from ..errors import NUMERIC_RANGE_ERRORS, CircuitError, Diagnostic, answer, out_of_range
from .common import (EXIT_INPUT, EXIT_INTERNAL, EXIT_OK, InputFileError, dump_json, load_source,
                     print_diagnostics, read_source)

__all__ = ["main", "build_parser", "EXIT_OK", "EXIT_INTERNAL", "EXIT_INPUT", "dump_json",
           "load_source", "read_source"]


def build_parser() -> argparse.ArgumentParser:
    """Every sub-command, registered by its own module."""
    from .circuit import add_circuit_commands
    from .formula import add_formula_command
    from .harmonics import add_harmonics_command
    from .serve import add_serve_command
    from .sheet import add_sheet_command
    from .sweep import add_sweep_command
    from .tolerance import add_tolerance_command
    from .tools import add_tool_commands

    parser = argparse.ArgumentParser(
        prog="phasorbench",
        description="Solve AC circuits in sinusoidal steady state (phasors, nodal analysis).")
    parser.add_argument("--version", action="version", version=f"phasorbench {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND")
    for register in (add_circuit_commands, add_serve_command, add_sheet_command,
                     add_tool_commands, add_sweep_command, add_tolerance_command,
                     add_formula_command, add_harmonics_command):
        register(commands)
    return parser


def main(argv: list[str] | None = None) -> int:
    pin_before_import()          # one BLAS thread per solve (see blas.py)
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return EXIT_INPUT
    try:
        return args.run(args)
    except InputFileError as exc:
        print(str(exc), file=sys.stderr)
        _json_errors(args, [Diagnostic(str(exc).split(": error: ", 1)[-1],
                                       "check the file's path and that it is UTF-8 text")])
        return EXIT_INPUT
    except CircuitError as exc:
        name = getattr(args, "source_name", None) or getattr(args, "file", "<circuit>")
        print_diagnostics(exc.diagnostics, name, getattr(args, "source_text", None))
        _json_errors(args, exc.diagnostics)
        return EXIT_INPUT
    except NUMERIC_RANGE_ERRORS as exc:
        if os.environ.get("PHASORBENCH_DEBUG") == "1":
            traceback.print_exc()
        name = getattr(args, "source_name", None) or getattr(args, "file", "<circuit>")
        problem = out_of_range(exc).diagnostics
        print_diagnostics(problem, name, None)
        _json_errors(args, problem)
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


def _json_errors(args, diagnostics) -> None:
    """A command asked for ``--json`` answers bad input on stdout too, in the API's
    422 shape, so a script reading stdout always gets JSON (the text still goes to
    stderr, the exit status is still 2)."""
    if getattr(args, "json", False):
        sys.stdout.write(dump_json(answer(diagnostics)) + "\n")
