"""``phasorbench sweep``: the frequency response of probes (studies.md)."""

from __future__ import annotations

import sys

from ..errors import CircuitError
from .common import EXIT_INPUT, EXIT_OK, dump_json, load_source, print_study_diagnostics
from .output import frequency_argument, write_output

__all__ = ["add_sweep_command", "command_sweep", "frequency_argument", "summary"]

def add_sweep_command(commands) -> None:
    sweep = commands.add_parser("sweep", help="frequency response of probes over a range")
    sweep.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    sweep.add_argument("--probe", action="append", required=True, metavar="P",
                       help="V(n), V(a, b), I(E), Z(a, b), Z(n) or a ratio X/Y; repeatable")
    sweep.add_argument("--from", dest="start", type=frequency_argument, metavar="F")
    sweep.add_argument("--to", dest="stop", type=frequency_argument, metavar="F")
    sweep.add_argument("--points", type=int, metavar="N")
    spacing = sweep.add_mutually_exclusive_group()
    spacing.add_argument("--log", dest="spacing", action="store_const", const="log")
    spacing.add_argument("--linear", dest="spacing", action="store_const", const="linear")
    out = sweep.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="the study's JSON")
    out.add_argument("--csv", action="store_true", help="one row per frequency")
    sweep.add_argument("-o", dest="output", metavar="OUT", help="write to OUT, not stdout")
    sweep.set_defaults(run=command_sweep)


def command_sweep(args) -> int:
    from ..studies.sweep import run_sweep
    from ..workflow import read_circuit
    text, name = load_source(args)
    circuit = read_circuit(text, name)
    try:
        result = run_sweep(circuit, args.probe, args.start, args.stop, args.points,
                           args.spacing)
    except CircuitError as exc:
        print_study_diagnostics(exc.diagnostics, name, text)
        return EXIT_INPUT
    if args.json:
        body = dump_json(result) + "\n"
    elif args.csv:
        from ..presentation.studies.sweep import csv_text
        body = csv_text(result)
    else:
        body = summary(result)
    failed = write_output(args.output, body)
    if failed is not None:
        return failed
    for warning in result["warnings"]:
        print(f"{name}: warning: {warning}", file=sys.stderr)
    return EXIT_OK


def summary(result: dict, rows: int = 12) -> str:
    from ..presentation.formatting import angle, eng, plain
    r = result["range"]
    out = [f"sweep {eng(r['from_hz'], 'Hz')} to {eng(r['to_hz'], 'Hz')}, "
           f"{r['points']} points {r['spacing']}", ""]
    out.append("resonances:" if result["resonances"] else "resonances: none in the range")
    for res in result["resonances"]:
        unit = result["probes"][res["probe"]]["unit"]
        order = f"  order {plain(res['harmonic_order'])}" if res["harmonic_order"] else ""
        q = f"  Q {plain(res['q'])}  bandwidth {eng(res['bandwidth_hz'], 'Hz')}" \
            if res["q"] else ""
        out.append(f"  {res['probe']:<16} {res['kind']:<4} "
                   f"{eng(res['frequency_hz'], 'Hz'):>12}  "
                   f"|{eng(res['value']['mag'], unit)}|{q}{order}")
    out.append("")
    freqs = result["frequencies_hz"]
    step = max(1, (len(freqs) - 1) // (rows - 1))
    picks = sorted(set(list(range(0, len(freqs), step)) + [len(freqs) - 1]))
    probes = list(result["probes"])
    out.append(f"{'frequency':>12}  " + "  ".join(f"{p:>24}" for p in probes))
    for k in picks:
        cells = []
        for p in probes:
            data = result["probes"][p]
            mag, deg = data["mag"][k], data["deg"][k]
            cells.append(f"{'null':>24}" if mag is None else
                         f"{eng(mag, data['unit']) + ' ' + angle(deg):>24}")
        out.append(f"{eng(freqs[k], 'Hz'):>12}  " + "  ".join(cells))
    return "\n".join(out) + "\n"
