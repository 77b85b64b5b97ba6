"""The power tools on the command line: ``phasorbench correct`` and ``phasorbench port``.

``cli.py`` finds ``add_tool_commands`` and registers both; they follow its rules: exit
0 when answered, 2 when the input is wrong (``FILE: error: ...``, no traceback), 1 for
an internal failure; ``--json`` prints the result dict with no NaN. Text output is
built from ``formatting.py`` only, so a number reads as it does on the page.
"""

from __future__ import annotations

import argparse
import sys
import textwrap

from .common import EXIT_OK, dump_json, load_source, print_warnings
from .output import voltage_argument
from ..errors import CircuitError, Diagnostic
from ..presentation.amplitudes import shown_word
from ..presentation.formatting import eng, phasor, power_factor, rect

__all__ = ["add_tool_commands"]

_FILE_HELP = "a .circuit file, or - for standard input"


def add_correction_options(parser, place: str = "") -> None:
    """Where a correction goes and how it is built: ``--at``/``--across`` (named
    ``--{place}at``/``--{place}across`` when ``place`` is given, as the sheet's
    ``--correct-at``), ``--bank``, ``--neutral``, ``--leading``, ``--rated-voltage``,
    ``--ratings``. One definition for ``correct`` and ``sheet``."""
    where = parser.add_mutually_exclusive_group()
    where.add_argument(f"--{place}at", dest=f"{place.replace('-', '_')}at", metavar="NODE|A,B,C",
                       help="a node (capacitor to ground) or three line nodes (a bank); "
                       "default: across the source's terminals")
    where.add_argument(f"--{place}across", dest=f"{place.replace('-', '_')}across", nargs=2,
                       metavar=("A", "B"), help="a capacitor across two nodes")
    parser.add_argument("--bank", choices=("wye", "delta"),
                        help="connection of a three-phase bank (default wye)")
    parser.add_argument("--neutral", metavar="NODE",
                        help="star node of a wye bank (default: the source's star when "
                        "placed at the source, else the bank's own star point)")
    parser.add_argument("--leading", action="store_true", help="aim at a leading target")
    parser.add_argument("--rated-voltage", metavar="V",
                        help="rated rms voltage of each capacitor unit: check its duty "
                        "against the continuous limits of IEEE Std 18-2002")
    parser.add_argument("--ratings", metavar="KVAR,...",
                        help="standard bank ratings in kvar at the rated voltage, e.g. "
                        "'5,7.5,10,12.5': the next one down and up from the exact answer, "
                        "each re-solved (default: common ratings from 0.25 to 5000 kvar)")


def add_tool_commands(commands) -> None:
    """Register ``correct`` and ``port`` on the command line's sub-command set."""
    correct = commands.add_parser(
        "correct", help="size the shunt capacitor that brings a source to a power factor",
        description="Find the smallest shunt capacitance that brings the power factor seen "
        "by a source to a target, exactly for the circuit as drawn, and check it by "
        "solving the corrected circuit.")
    correct.add_argument("file", metavar="FILE", help=_FILE_HELP)
    correct.add_argument("--source", required=True, metavar="NAME",
                         help="the voltage or current source, or voltage3 block")
    correct.add_argument("--target", required=True, metavar="PF",
                         help="target power factor in (0, 1], lagging unless --leading")
    add_correction_options(correct)
    correct.add_argument("--json", action="store_true", help="print the result as JSON")
    correct.set_defaults(run=command_correct)

    port = commands.add_parser(
        "port", help="Thevenin and Norton equivalents seen from two nodes",
        description="Thevenin and Norton equivalents of the circuit seen from nodes A and B, "
        "with the conjugate-matched load and the best resistive load.")
    port.add_argument("file", metavar="FILE", help=_FILE_HELP)
    port.add_argument("a", metavar="A", help="the port's first node")
    port.add_argument("b", metavar="B", help="the port's second node (0 for ground)")
    port.add_argument("--json", action="store_true", help="print the result as JSON")
    port.set_defaults(run=command_port)


def _input_error(message: str, hint: str = "") -> CircuitError:
    return CircuitError([Diagnostic(message, hint)])


def correction_at(at: str | None, across) -> str | tuple | None:
    """The bank's place from ``--at NODE|A,B,C`` or ``--across A B`` (None: at the
    source's terminals)."""
    if across:
        return tuple(across)
    if at is not None:
        parts = [p.strip() for p in at.split(",")]
        return parts[0] if len(parts) == 1 else tuple(parts)
    return None


def rated_voltage(text: str | None) -> float | None:
    """``--rated-voltage`` read as volts (``480``, ``0.48kV``); None when not given."""
    if text is None:
        return None
    try:
        return voltage_argument(text)
    except argparse.ArgumentTypeError:
        raise _input_error(f"--rated-voltage '{text}' is not a voltage",
                           "e.g. --rated-voltage 480 or 0.48kV") from None


def command_correct(args) -> int:
    from ..tools.correction import correct_power_factor
    from ..workflow import read_circuit

    text, name = load_source(args)
    circuit = read_circuit(text, name)
    at = correction_at(args.at, args.across)
    result = correct_power_factor(circuit, args.source, args.target, at=at,
                                  leading=args.leading,
                                  rated_voltage=rated_voltage(args.rated_voltage),
                                  bank=args.bank, neutral=args.neutral,
                                  ratings=args.ratings)
    sys.stdout.write(dump_json(result) + "\n" if args.json else correction_text(result))
    print_warnings(result.get("warnings", []), name, text)
    return EXIT_OK


def command_port(args) -> int:
    from ..tools.port import port_equivalent
    from ..workflow import read_circuit

    text, name = load_source(args)
    result = port_equivalent(read_circuit(text, name), args.a, args.b)
    sys.stdout.write(dump_json(result) + "\n" if args.json else port_text(result))
    print_warnings(result.get("warnings", []), name, text)
    return EXIT_OK


# --- text reports ------------------------------------------------------------------------


def _rows(pairs) -> list[str]:
    width = max(len(k) for k, _ in pairs)
    return [f"  {k.ljust(width)}  {v}" for k, v in pairs]


def _convention(result: dict) -> str:
    return f"{shown_word(result)} phasors"


def correction_text(r: dict) -> str:
    """The terminal report of ``correct_power_factor``'s result."""
    from ..presentation.tools_display import correction_display, supply_current, supply_power
    if r.get("needed") is False:
        return _not_needed_text(r, correction_display(r))
    before, after = r["supply_before"], r["supply_after"]
    units = r["units"]
    out = [f"Power-factor correction of {r['source']}: capacitor at {r['place']['description']}",
           f"frequency {eng(r['frequency_hz'], 'Hz')}   {_convention(r)}   method: {r['method']}",
           ""]
    each = " each" if units > 1 else ""
    diff = r["formula_difference_rel"]
    pairs = [
        ("capacitance", f"{eng(r['capacitance_f'], 'F', 6)}{each} ({units} unit"
                        f"{'s' if units > 1 else ''})"),
        ("reactive power", f"{eng(r['q_var'], 'var')} supplied at the voltage it sees"),
        ("power factor", f"{power_factor(r['pf_before'], r['pf_sense_before'])} → "
                         f"{power_factor(r['pf_after'], r['pf_sense_after'], 9)} "
                         f"(target {power_factor(r['target_pf'], r['target_sense'])})"),
        ("supply", f"{supply_power(before)} → {supply_power(after)}"),
        ("supply current", f"{supply_current(before['current'])} → "
                           f"{supply_current(after['current'])}"),
        ("ideal-bus formula", f"{eng(r['formula_capacitance_f'], 'F', 6)}{each} from "
                              f"Qc = P(tanφ1 − tanφ2) = {eng(r['formula_q_var'], 'var')} "
                              f"(exact differs by {100 * diff:+.3f} %)"),
    ]
    if units == 1:
        pairs += [("voltage there", f"{phasor(r['voltage_before'], 'V')} → "
                                    f"{phasor(r['voltage_after'], 'V')}"),
                  ("capacitor current", phasor(r["capacitor_current"], "A"))]
    else:
        for row in r["capacitors"]:
            pairs.append((f"{row['name']} ({row['from']} → {row['to']})",
                          f"{phasor(row['voltage_before'], 'V')} → "
                          f"{phasor(row['voltage_after'], 'V')}, {phasor(row['current'], 'A')}"))
        pairs.append(("bank line currents", ", ".join(
            f"{k} {phasor(v, 'A')}" for k, v in r["bank_line_current"].items())))
    if r["harmonic_order"] is not None:
        pairs.append(("resonance", f"h ≈ {r['harmonic_order']:.4g} "
                                   f"({eng(r['resonance_hz'], 'Hz')}) with the network behind "
                                   f"it: X_C {eng(r['capacitor_reactance_ohm'], 'Ω')}, "
                                   f"X_th {eng(r['network_reactance_ohm'], 'Ω')}"))
    else:
        pairs.append(("resonance", "none estimated (no inductive network behind this place)"))
    if r["ieee18"] is not None:
        check = r["ieee18"]
        duty = ", ".join(f"{k.replace('_', ' ')} {100 * v:.1f} %"
                         for k, v in check["duty"].items())
        state = "within limits" if check["ok"] else "EXCEEDS " + ", ".join(check["exceeded"])
        pairs.append((check["edition"], f"rated {eng(check['rated_voltage_v'], 'V')}: "
                                        f"{duty}; {state}"))
    d = r["discharge"]
    pairs.append(("stored energy", f"{eng(r['stored_energy_j'], 'J')} in all"))
    if d["resistor_max_ohm"] is not None:
        pairs.append(("discharge", f"≤ {eng(d['resistor_max_ohm'], 'Ω')} per unit "
                                   f"({d['clause']}: {eng(d['residual_v'], 'V')} within "
                                   f"{d['seconds'] / 60:g} min)"))
    out += _rows(pairs)
    out += ["", "Add to the circuit:"] + [f"  {line}" for line in r["circuit_lines"]]
    out += _standard_text(r)
    out += ["", "Cautions:"]
    for c in r["cautions"]:
        body = c["detail"] or c["text"]
        out.append(textwrap.fill(f"{c['title']}: {body}", width=92, initial_indent="  ",
                                 subsequent_indent="    "))
    out += [textwrap.fill(r["scope_note"], width=92, initial_indent="  ",
                          subsequent_indent="  ")]
    return "\n".join(out) + "\n"


def _not_needed_text(r: dict, shown: dict) -> str:
    """The terminal report when the source meets its target already: the page's facts."""
    out = [f"Power-factor correction of {shown['heading']}",
           f"frequency {eng(r['frequency_hz'], 'Hz')}   {_convention(r)}   place: "
           f"{r['place']['description']}", ""]
    out += _rows([(f["term"], f["value"]) for f in shown["facts"] if f["key"] != "reason"])
    out += ["", textwrap.fill(r["reason"], width=92, initial_indent="  ",
                              subsequent_indent="  "),
            "", textwrap.fill(r["scope_note"], width=92, initial_indent="  ",
                              subsequent_indent="  ")]
    return "\n".join(out) + "\n"


def _standard_text(r: dict) -> list[str]:
    """The standard ratings either side of the exact answer, each re-solved."""
    from ..presentation.tools_display import standard_sizes_display
    shown = standard_sizes_display(r)
    if shown is None:
        return []
    out = ["", shown["heading"] + ":"]
    out += _rows([(s["rating"], f"{s['capacitance']}, {s['q']} supplied, PF {s['pf']} "
                                f"{s['meets']}".rstrip()) for s in shown["rows"]])
    out.append(textwrap.fill(f"{shown['note']}.", width=92, initial_indent="  ",
                             subsequent_indent="  "))
    return out


def port_text(r: dict) -> str:
    """The terminal report of ``port_equivalent``'s result."""
    a, b = r["a"], r["b"]
    out = [f"Port {a} → {b}   frequency {eng(r['frequency_hz'], 'Hz')}   {_convention(r)}", ""]
    pairs = []
    if r["thevenin_v"] is not None:
        pairs.append(("Thevenin voltage", f"{phasor(r['thevenin_v'], 'V')}   "
                                          f"(open-circuit V({a}) − V({b}))"))
    if r["thevenin_z"] is not None:
        pairs.append(("Thevenin impedance", f"{rect(r['thevenin_z'], 'Ω')} = "
                                            f"{phasor(r['thevenin_z'], 'Ω')}"))
    if r["norton_i"] is not None:
        pairs.append(("Norton current", f"{phasor(r['norton_i'], 'A')}   ({a} → {b} through "
                                        "a short)"))
    if r["norton_y"] is not None:
        pairs.append(("Norton admittance", rect(r["norton_y"], "S")))
    if r["matched_load_z"] is not None:
        pairs.append(("matched load", f"{rect(r['matched_load_z'], 'Ω')} takes "
                                      f"{eng(r['max_power_w'], 'W')}, the most any load can"))
    if r["resistive_load_ohm"] is not None:
        pairs.append(("best resistor", f"{eng(r['resistive_load_ohm'], 'Ω')} takes "
                                       f"{eng(r['resistive_power_w'], 'W')}"))
    out += _rows(pairs) if pairs else []
    for note in r["notes"]:
        out.append(textwrap.fill(f"note: {note}", width=92, initial_indent="  ",
                                 subsequent_indent="    "))
    return "\n".join(out) + "\n"
