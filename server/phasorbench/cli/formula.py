"""``phasorbench formula``: a probe as an exact expression in s (studies.md, "Formulas")."""

from __future__ import annotations

import sys

from ..errors import CircuitError
from .output import write_output
from .common import EXIT_INPUT, EXIT_OK, dump_json, load_source, print_study_diagnostics

__all__ = ["add_formula_command", "command_formula"]


def add_formula_command(commands) -> None:
    formula = commands.add_parser(
        "formula", help="a probe as an exact formula in s, with poles, zeros and balance")
    formula.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    formula.add_argument("--probe", required=True, metavar="P",
                         help="V(n), V(a, b), I(E), Z(a, b), Z(n) or a ratio X/Y")
    formula.add_argument("--keep", nargs="+", action="extend", metavar="NAME",
                         help="the elements or named values that stay symbols (default: "
                              "all); the others take their values from the text")
    formula.add_argument("--solve-for", metavar="NAME",
                         help="solve 'numerator = 0' for this element (a balance condition)")
    formula.add_argument("--time-limit", type=_seconds, default=None, metavar="S",
                         help="seconds the symbolic work may take before it is stopped "
                              "(default 20; at most 3600)")
    formula.add_argument("--json", action="store_true",
                         help="the study's JSON (text, LaTeX and MathML of each formula)")
    formula.add_argument("-o", dest="output", metavar="OUT", help="write to OUT, not stdout")
    formula.set_defaults(run=command_formula)


def _seconds(word: str) -> float:
    """A time limit in seconds: a finite number above 0 and at most an hour."""
    import argparse
    import math
    try:
        value = float(word)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{word}' is not a number of seconds") from None
    if not (math.isfinite(value) and 0 < value <= 3600):
        raise argparse.ArgumentTypeError(f"{word} s: give a time above 0 and at most 3600 s")
    return value


def command_formula(args) -> int:
    from ..presentation.studies.formula import summary_text
    from ..studies.formula import TIME_LIMIT_S, run_formula
    from ..workflow import read_circuit
    text, name = load_source(args)
    circuit = read_circuit(text, name)
    try:
        result = run_formula(circuit, args.probe, args.keep, args.solve_for,
                             time_limit=args.time_limit or TIME_LIMIT_S)
    except CircuitError as exc:
        print_study_diagnostics(exc.diagnostics, name, text)
        return EXIT_INPUT
    body = dump_json(result) + "\n" if args.json else summary_text(result)
    failed = write_output(args.output, body)
    if failed is not None:
        return failed
    for warning in result["warnings"]:
        print(f"{name}: warning: {warning}", file=sys.stderr)
    return EXIT_OK
