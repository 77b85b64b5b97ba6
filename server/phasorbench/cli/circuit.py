"""``phasorbench solve`` and ``phasorbench check``: one circuit, at its frequency."""

from __future__ import annotations

import sys

from .common import (EXIT_OK, add_show_option, dump_json, load_source, print_diagnostics,
                     print_warnings, write_json)

__all__ = ["add_circuit_commands", "command_solve", "command_check"]


def add_circuit_commands(commands) -> None:
    """Register ``solve`` and ``check``."""
    solve = commands.add_parser("solve", help="solve a circuit and print every node and branch")
    solve.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    out = solve.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print the result contract as JSON")
    out.add_argument("--table", choices=("nodes", "branches", "three-phase"),
                     help="print one table as CSV for a spreadsheet (units in the headings)")
    solve.add_argument("--tsv", action="store_true",
                       help="with --table: tab-separated instead of comma-separated")
    add_show_option(solve)
    solve.set_defaults(run=command_solve)

    check = commands.add_parser("check", help="validate a circuit without solving it")
    check.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    check.add_argument("--json", action="store_true",
                       help="print the verdict as JSON: errors and warnings (the API's "
                            "shape), element and node counts")
    check.set_defaults(run=command_check)


def command_solve(args) -> int:
    from ..presentation.amplitudes import shown_as
    from ..workflow import solve_text
    text, name = load_source(args)
    result = shown_as(solve_text(text, name), args.show)
    if args.json:
        write_json(result)
    elif args.table:
        from ..presentation.tables_out import table_text
        sys.stdout.write(table_text(result, args.table, "\t" if args.tsv else ","))
    else:
        from .terminal import result_table
        sys.stdout.write(result_table(result))
    print_warnings(result["warnings"], name, text)
    return EXIT_OK


def command_check(args) -> int:
    from ..workflow import read_circuit
    text, name = load_source(args)
    circuit = read_circuit(text, name)
    print_diagnostics(circuit.warnings, name, text)
    if getattr(args, "json", False):
        from ..errors import answer
        verdict = {"ok": True, **answer(circuit.warnings),
                   "elements": len(circuit.elements), "nodes": len(circuit.nodes()),
                   "frequency_hz": circuit.frequency, "amplitudes": circuit.amplitudes}
        sys.stdout.write(dump_json(verdict) + "\n")
        return EXIT_OK
    print(f"{name}: ok: {len(circuit.elements)} elements, {len(circuit.nodes())} nodes, "
          f"{circuit.frequency:g} Hz, amplitudes {circuit.amplitudes}")
    return EXIT_OK
