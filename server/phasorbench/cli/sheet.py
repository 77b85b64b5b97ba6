"""The ``phasorbench sheet`` command: write the solved sheet of a circuit file.

``phasorbench sheet FILE -o OUT.html`` (``-`` reads standard input; no ``-o``, or
``-o -``, writes the sheet to standard output). Exit status and error text are those
of ``solve``: 0 written, 2 the input is wrong (``FILE:LINE:COL: error: ...``, nothing
written), 1 an internal failure. ``cli.py`` finds this module and registers it.
"""

from __future__ import annotations

import argparse
import sys

from ..errors import CircuitError, Diagnostic
from .common import (EXIT_INPUT, EXIT_OK, add_show_option, load_source, print_study_diagnostics,
                     print_warnings)
from .output import frequency_argument, voltage_argument, write_output
from .tools import add_correction_options


__all__ = ["add_sheet_command", "command_sheet"]


def add_sheet_command(commands) -> None:
    """Register ``sheet`` on the command line's sub-command set."""
    sheet = commands.add_parser(
        "sheet", help="write a self-contained HTML sheet of the solved circuit",
        description="Solve a circuit and write its solved sheet: one HTML file holding the "
                    "input and its SHA-256, the conventions, every node and branch, the "
                    "power balance, the diagrams, the warnings and the safety cautions.")
    sheet.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    sheet.add_argument("-o", "--output", metavar="OUT.html", default="-",
                       help="where to write the sheet (default: standard output); a new "
                            "file, or an existing regular file it replaces whole. A "
                            "symbolic link, a FIFO, a device or a folder at that path is "
                            "refused (links are not followed)")
    sheet.add_argument("--element", action="append", metavar="NAME", dest="elements",
                       help="draw this element's waveform and phasors (repeat for more); "
                            "default: each source and reactive element, capped")
    add_show_option(sheet)
    sheet.add_argument("--correct", nargs=2, metavar=("SOURCE", "PF"),
                       help="add a power-factor correction: the shunt capacitor that "
                            "brings SOURCE to PF (lagging unless --leading), across the "
                            "source unless placed with --correct-at or --correct-across")
    add_correction_options(sheet, place="correct-")
    sheet.add_argument("--port", nargs=2, metavar=("A", "B"),
                       help="add the Thevenin and Norton equivalents seen from nodes A and B")
    sheet.add_argument("--tolerance", action="append", metavar="P", dest="tol_probes",
                       help="add a tolerance study of probe P (repeatable; the study of "
                            "phasorbench tolerance)")
    sheet.add_argument("--tolerance-limit", action="append", metavar='"P MIN..MAX"',
                       dest="tol_limits", help="a limit of the tolerance study (repeatable)")
    sheet.add_argument("--formula", metavar="P", dest="formula_probe",
                       help="add the exact formula of probe P (the study of phasorbench formula)")
    sheet.add_argument("--keep", nargs="+", action="extend", metavar="NAME",
                       dest="formula_keep", help="symbols the formula keeps (default: all)")
    sheet.add_argument("--solve-for", metavar="NAME", dest="formula_solve_for",
                       help="solve the formula's numerator = 0 for this element")
    sheet.add_argument("--runs", type=int, metavar="N", help="runs of the tolerance study")
    sheet.add_argument("--seed", type=int, metavar="S", help="seed of the tolerance study")
    sheet.add_argument("--worst-case", action="store_true",
                       help="add the worst case to the tolerance study")
    sheet.add_argument("--harmonics", action="store_true",
                       help="add the harmonic study (phasorbench harmonics)")
    sheet.add_argument("--pcc", metavar="NODE", help="the harmonic study's PCC")
    sheet.add_argument("--nominal", type=voltage_argument, metavar="VOLTS",
                       help="the PCC's nominal voltage (the IEEE 519 row)")
    sheet.add_argument("--rated", nargs=2, action="append", metavar=("ELEMENT", "VOLTS"),
                       help="a capacitor's rated rms voltage, for its IEEE 18 duty")
    sheet.add_argument("--sweep", action="append", metavar="P", dest="sweep_probes",
                       help="add the frequency response of probe P (repeatable; the study "
                            "of phasorbench sweep)")
    sheet.add_argument("--from", dest="sweep_from", type=frequency_argument, metavar="F",
                       help="lowest frequency of the sweep (default: the circuit's sweep "
                            "line, else two decades below frequency)")
    sheet.add_argument("--to", dest="sweep_to", type=frequency_argument, metavar="F",
                       help="highest frequency of the sweep")
    sheet.add_argument("--points", dest="sweep_points", type=int, metavar="N",
                       help="points of the sweep (2 to 100,000; default 200)")
    spacing = sheet.add_mutually_exclusive_group()
    spacing.add_argument("--log", dest="sweep_spacing", action="store_const", const="log",
                         help="log spacing of the sweep (the default)")
    spacing.add_argument("--linear", dest="sweep_spacing", action="store_const",
                         const="linear", help="linear spacing of the sweep")
    sheet.set_defaults(run=command_sheet)


def command_sheet(args) -> int:
    from ..sheet import render_context, sheet_context
    from ..sheet.powertools import run_power_tools
    from ..sheet.formula import formula_section
    from ..sheet.tolerance import tolerance_section
    from ..presentation.amplitudes import shown_as
    from ..workflow import solve_text
    text, name = load_source(args)
    result = shown_as(solve_text(text, name), args.show)
    correct = None
    placed = (args.correct_at is not None or args.correct_across or args.bank or
              args.neutral or args.leading or args.rated_voltage is not None or
              args.ratings is not None)
    if args.correct:
        from .tools import correction_at, rated_voltage
        correct = {"source": args.correct[0], "target": args.correct[1],
                   "at": correction_at(args.correct_at, args.correct_across),
                   "bank": args.bank, "neutral": args.neutral, "leading": args.leading,
                   "rated_voltage": rated_voltage(args.rated_voltage),
                   "ratings_kvar": args.ratings}
    elif placed:
        print("sheet: error: --correct-at, --correct-across, --bank, --neutral, --leading, "
              "--rated-voltage and --ratings place or size a correction: give --correct "
              "SOURCE PF too",
              file=sys.stderr)
        return EXIT_INPUT
    tools = run_power_tools(text, name, correct=correct, port=args.port)
    ask = None
    if args.tol_probes or args.tol_limits:
        ask = {"probes": args.tol_probes or [], "limits": args.tol_limits or [],
               "runs": args.runs, "seed": args.seed, "worst_case": args.worst_case}
    try:
        tolerance = tolerance_section(text, name, ask)
    except CircuitError as exc:
        print_study_diagnostics(exc.diagnostics, name, text)
        return EXIT_INPUT
    formula_ask = ({"probe": args.formula_probe, "keep": args.formula_keep,
                    "solve_for": args.formula_solve_for} if args.formula_probe else None)
    try:
        formula = formula_section(text, name, formula_ask)
    except CircuitError as exc:
        print_study_diagnostics(exc.diagnostics, name, text)
        return EXIT_INPUT
    sweep_asked = (args.sweep_from is not None or args.sweep_to is not None or
                   args.sweep_points is not None or args.sweep_spacing is not None)
    if sweep_asked and not args.sweep_probes:
        print("sheet: error: --from, --to, --points, --log and --linear set the sweep: "
              "give --sweep PROBE too", file=sys.stderr)
        return EXIT_INPUT
    sweep = None
    if args.sweep_probes:
        from ..sheet.sweep import sweep_section
        try:
            sweep = sweep_section(text, name, {
                "probes": args.sweep_probes, "from": args.sweep_from, "to": args.sweep_to,
                "points": args.sweep_points, "spacing": args.sweep_spacing})
        except CircuitError as exc:
            print_study_diagnostics(exc.diagnostics, name, text)
            return EXIT_INPUT
    harmonics = None
    if args.harmonics or args.pcc or args.rated:
        from ..sheet.harmonics import harmonics_section
        try:
            rated = {e: voltage_argument(v) for e, v in args.rated or []}
        except argparse.ArgumentTypeError as exc:
            raise CircuitError([Diagnostic(f"--rated: {exc}", "e.g. --rated Cb 480")]) from None
        harmonics = harmonics_section(text, name, {"pcc": args.pcc, "nominal": args.nominal,
                                                   "rated": rated})
    html = render_context(sheet_context(text, name, result=result,
                                        waveform_elements=args.elements,
                                        phasor_elements=args.elements, **tools,
                                        tolerance=tolerance, formula=formula,
                                        harmonics=harmonics, sweep=sweep))
    failed = write_output(args.output, html, "sheet", prefix="sheet")
    if failed is not None:
        return failed
    # Warnings as ``solve`` prints them (the sheet lists them too).
    print_warnings(result["warnings"], name, text)
    return EXIT_OK
