"""``phasorbench tolerance``: Monte Carlo, sensitivities, worst case and yield of probes
over the circuit's tolerances (studies.md, "Tolerance")."""

from __future__ import annotations

import sys

from ..errors import CircuitError, Diagnostic
from .output import write_output
from .common import EXIT_INPUT, EXIT_OK, dump_json, load_source, print_study_diagnostics

__all__ = ["add_tolerance_command", "command_tolerance"]


def add_tolerance_command(commands) -> None:
    tol = commands.add_parser("tolerance", help="spread, sensitivities, worst case and "
                              "yield of probes over the parts' tolerances")
    tol.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    tol.add_argument("--probe", action="append", default=[], metavar="P",
                     help="V(n), V(a, b), I(E), Z(a, b), Z(n) or a ratio X/Y; repeatable")
    tol.add_argument("--runs", type=int, metavar="N", help="Monte Carlo runs (default "
                     "10,000; 2 to 1,000,000)")
    tol.add_argument("--seed", type=int, metavar="S", help="seed of the draws (default 1)")
    tol.add_argument("--worst-case", action="store_true",
                     help="the worst case of |X| over the tolerance box")
    tol.add_argument("--limit", action="append", default=[], metavar='"P MIN..MAX"',
                     help="a limit on a probe's magnitude (repeatable): the yield")
    tol.add_argument("--scheduler", metavar="ADDRESS",
                     help="run the chunks on a Dask cluster (the 'cluster' extra)")
    tol.add_argument("--json", action="store_true", help="the study's JSON")
    tol.add_argument("-o", dest="output", metavar="OUT", help="write to OUT, not stdout")
    tol.set_defaults(run=command_tolerance)


def command_tolerance(args) -> int:
    from ..studies.tolerance import run_tolerance
    from ..workflow import read_circuit
    text, name = load_source(args)
    circuit = read_circuit(text, name)
    if not args.probe and not args.limit:
        print_study_diagnostics([Diagnostic("no probe given", "add --probe, e.g. --probe "
                                            "'V(out)'")], name, text)
        return EXIT_INPUT
    chunks = None
    try:
        if args.scheduler:
            from ..studies.cluster import cluster_chunks
            chunks = cluster_chunks(circuit, args.probe, args.limit, args.scheduler)
        result = run_tolerance(circuit, args.probe, args.runs, args.seed, args.worst_case,
                               args.limit, chunks=chunks)
    except CircuitError as exc:
        print_study_diagnostics(exc.diagnostics, name, text)
        return EXIT_INPUT
    body = dump_json(result) + "\n" if args.json else summary(result)
    failed = write_output(args.output, body)
    if failed is not None:
        return failed
    for warning in result["warnings"]:
        print(f"{name}: warning: {warning}", file=sys.stderr)
    return EXIT_OK


def summary(result: dict) -> str:
    from ..presentation.studies import tolerance as show
    out = [show.settings_line(result), ""]
    out.append("toleranced quantities:")
    for row in show.quantity_rows(result):
        out.append(f"  {row['name']:<14} {row['nominal']:>14}  {row['tol']:>9}  "
                   f"{row['law']:<18} {row['source']}")
    for text, probe in result["probes"].items():
        unit = f" ({probe['unit']})" if probe["unit"] else ""
        out += ["", f"{text}{unit}"]
        for row in show.statistic_rows(probe):
            out.append(f"  {row['label']:<28} {row['mag']:>16}  {row['deg']:>12}")
        out.append("  sensitivity          ∂ln|X|/∂ln p   ∂arg X/∂ln p")
        for row in show.sensitivity_rows(probe)[:12]:
            out.append(f"    {row['name']:<18} {row['mag']:>12}   {row['deg']:>12}")
        if probe["worst_case"]:
            out.append("  " + show.worst_line(probe))
            out.append(f"    {'part':<18} {'at max':>24} {'at min':>24}")
            for row in show.worst_rows(probe, result):
                out.append(f"    {row['name']:<18} {row['max']:>24} {row['min']:>24}")
        for limit in probe["limits"]:
            out.append("  limit " + show.limit_text(limit, probe["unit"]))
        if probe["yield"]:
            out.append("  " + show.yield_line(probe["yield"]))
    if result["yield"]:
        out += ["", "all limits: " + show.yield_line(result["yield"])]
    return "\n".join(out) + "\n"
