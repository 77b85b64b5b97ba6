"""``phasorbench harmonics``: the harmonic study of a circuit (studies.md, "Harmonic spectra").

``phasorbench harmonics FILE [--pcc NODE --nominal VOLTS] [--rated ELEMENT VOLTS ...]
[--json]``: distortion per node, IEEE 1459 powers per element, IEEE 519 limits at the
PCC, IEEE 18 duty of each rated capacitor. The text tables are the page's and the
sheet's (``presentation/studies/harmonics.py``).
"""

from __future__ import annotations

import argparse
import sys
import textwrap

from .common import EXIT_OK, load_source
from .output import voltage_argument, write_output

__all__ = ["add_harmonics_command", "command_harmonics", "voltage_argument"]

def add_harmonics_command(commands) -> None:
    study = commands.add_parser(
        "harmonics", help="distortion, IEEE 1459 powers, IEEE 519 limits, capacitor duty")
    study.add_argument("file", metavar="FILE", help="a .circuit file, or - for standard input")
    study.add_argument("--pcc", metavar="NODE", help="the point of common coupling")
    study.add_argument("--nominal", type=voltage_argument, metavar="VOLTS",
                       help="the PCC's nominal (line-to-line) voltage: picks the IEEE 519 row")
    study.add_argument("--rated", nargs=2, action="append", metavar=("ELEMENT", "VOLTS"),
                       help="a capacitor's rated rms voltage, for its IEEE 18 duty; repeatable")
    study.add_argument("--no-scan", dest="scan", action="store_false",
                       help="skip the scan for each capacitor's resonance order")
    study.add_argument("--json", action="store_true", help="the study's JSON")
    study.add_argument("-o", dest="output", metavar="OUT", help="write to OUT, not stdout")
    study.set_defaults(run=command_harmonics)


def command_harmonics(args) -> int:
    from ..errors import CircuitError, Diagnostic
    from ..jsonout import dumps
    from ..studies.harmonics import run_harmonics
    from ..workflow import read_circuit
    text, name = load_source(args)
    rated, problems = {}, []
    for element, volts in args.rated or []:
        try:
            rated[element] = voltage_argument(volts)
        except argparse.ArgumentTypeError as exc:
            problems.append(Diagnostic(f"--rated {element}: {exc}", "e.g. --rated Cb 480"))
    if problems:
        raise CircuitError(problems)
    circuit = read_circuit(text, name)
    result = run_harmonics(circuit, args.pcc, args.nominal, rated, scan=args.scan)
    # the one fast encoder: it writes the per-order tables from their arrays
    body = dumps(result).decode("utf-8") + "\n" if args.json else summary(result)
    failed = write_output(args.output, body)
    if failed is not None:
        return failed
    for warning in result["warnings"]:
        print(f"{name}: warning: {warning}", file=sys.stderr)
    return EXIT_OK


def summary(result: dict) -> str:
    """The study as text: the page's facts and tables, then the cautions."""
    from ..presentation.studies.harmonics import harmonics_display
    from .terminal import _table
    d = harmonics_display(result)
    out = [d["heading"], ""]
    out += [f"{f['term']}: {f['value']}" for f in d["facts"]]
    for table in d["tables"]:
        out += ["", table["caption"]]
        out += _table(table["headings"], table["rows"], set(range(1, len(table["headings"]))))
        if table["note"]:
            out.append(f"({table['note']})")
    out += ["", "Sources: " + " ".join(d["sources"]), ""]
    for caution in d["cautions"]:
        out.append(f"CAUTION — {caution['title']}")
        out.append(textwrap.fill(caution["text"], 88, initial_indent="  ",
                                 subsequent_indent="  "))
    out.append(textwrap.fill(d["scope_note"], 88))
    return "\n".join(out) + "\n"
