"""The data of a solved sheet: everything the template shows, as strings, built once.

The template only places what this module hands it, so a test can check the sheet's
content here without reading markup. Every number is formatted by
`phasorbench.formatting`, every picture drawn by `phasorbench.drawing`, the power
summary and balance verdict are the page's own (``presentation/display.py``), and the
cautions come from `phasorbench.cautions`: the sheet repeats no behaviour.
"""

from __future__ import annotations

import hashlib
import math
import re
from datetime import datetime, timezone

from .. import __version__
from ..presentation import formatting as fmt
from ..presentation.amplitudes import shown_word
from ..presentation.cautions import CAUTIONS, SCOPE_NOTE
from ..presentation.drawing.phasors import phasor_diagram_svg
from ..presentation.drawing.waveforms import waveform_svg
from ..waveforms import sample_element
from ..presentation.display import (balance_check, group_detail, group_rows, power_summary,
                           waveform_display)
from .choice import (DEFAULT_PHASORS, DEFAULT_WAVEFORMS, MAX_PHASORS, MAX_WAVEFORMS, choose,
                     is_source)
from .extras import tool_section
from .selfcheck import kcl_example, ohm_example, power_check

__all__ = ["WAVEFORM_SAMPLES_PER_PERIOD", "sheet_context", "sheet_filename", "source_lines"]

#: Samples per period on the sheet's waveforms: 100 keeps a cosine smooth at print
#: size (under 3 px a segment) at half the bytes of the page's 200.
WAVEFORM_SAMPLES_PER_PERIOD = 100
#: A line break as the circuit reader counts lines (errors.source_lines): LF, CRLF, CR.
_LINE = re.compile(r"[^\r\n]*(?:\r\n|\r|\n)|[^\r\n]+\Z")
_SVG_NAMESPACE = ' xmlns="http://www.w3.org/2000/svg"'
#: Mean power below −1e-9·|S| is power delivered; smaller is round-off of the solve.
_DELIVERS = 1e-9


def source_lines(text: str) -> list[dict]:
    """The input's lines, numbered from 1, each with its own line ending kept.

    Joining the ``text`` fields gives ``text`` back exactly, so the sheet's listing is
    the input verbatim (and copying it out gives a circuit that solves the same).
    """
    return [{"number": k, "text": m.group(0)}
            for k, m in enumerate(_LINE.finditer(text), start=1)]


def sheet_filename(title: str | None) -> str:
    """A download name from the circuit's title: ``"Bakery feeder" → "bakery-feeder-sheet.html"``.

    Only ASCII letters, digits and ``-`` survive (safe in every file system and in a
    ``Content-Disposition`` header); no title, or nothing left, gives ``circuit``.
    """
    slug = re.sub(r"[^a-z0-9]+", "-", (title or "").lower()).strip("-")[:60].strip("-")
    return f"{slug or 'circuit'}-sheet.html"


def _stamp(now: datetime | None) -> dict:
    """When the sheet was made, as ``{"iso", "text"}``; a naive ``now`` is local time."""
    if now is None:
        now = datetime.now(timezone.utc).astimezone()
    elif now.tzinfo is None:
        now = now.astimezone()
    offset = now.strftime("%z")
    zone = f"UTC{offset[:3]}:{offset[3:]}" if offset else "UTC"
    return {"iso": now.isoformat(timespec="seconds"),
            "text": now.strftime("%Y-%m-%d %H:%M:%S ") + zone}


def _inline(svg: str) -> str:
    """An SVG string for inlining in HTML: the namespace is implied there, so its URL goes
    (the sheet holds no address of any kind)."""
    return svg.replace(_SVG_NAMESPACE, "", 1)


def _input_word(result: dict) -> str | None:
    """The circuit's own convention, "RMS" or "peak", when the sheet shows the other
    (``amplitudes.shown_as``: the page's RMS / peak switch); else None."""
    own = result.get("amplitudes_input")
    if not own or own == result.get("amplitudes", "rms"):
        return None
    return shown_word({"amplitudes": own})


def _shown_note(result: dict) -> str:
    own = _input_word(result)
    if own is None:
        return ""
    return (f"Shown as {shown_word(result)} values; the circuit's amplitudes line gives its "
            f"source values as {own} (the input above, verbatim). Voltages and currents of "
            f"the tables, diagrams and checks are read as {shown_word(result)}; powers, "
            "angles and impedances are the same either way. The power tools' and studies' "
            f"sections, when present, keep the circuit's own {own} values. ")


def _assumptions(result: dict) -> list[dict]:
    f = float(result["frequency_hz"])
    rms = result.get("amplitudes", "rms") == "rms"
    items = [
        ("Analysis frequency",
         f"{fmt.eng(f, 'Hz')} (ω = 2πf = {fmt.eng(2 * math.pi * f, 'rad/s')}); sinusoidal "
         "steady state, every source at this one frequency."),
        ("Amplitudes", _shown_note(result) + (
         "Phasor magnitudes are RMS values; complex power S = V·I*; an instantaneous value "
         "is x(t) = √2·|X|·cos(ωt + θ)." if rms else
         "Phasor magnitudes are peak values; complex power S = ½·V·I*; an instantaneous "
         "value is x(t) = |X|·cos(ωt + θ).")),
        ("Angles",
         "In degrees, in (−180°, 180°], counter-clockwise from the positive real axis; the "
         "phase reference is a cosine at t = 0 (a source with phase 0°)."),
        ("Reference direction",
         "Each element is written p -> n (column ‘From → to’): its voltage is "
         "V(p) − V(n) and its current flows from p through the element to n."),
        ("Sign of power",
         "Passive sign convention: S = P + jQ is the power into the element; P, Q > 0 is "
         "taken, < 0 delivered, so a source feeding the circuit shows negative P. "
         "PF = |P|/|S|: a passive element is lagging when it takes reactive power (Q > 0); "
         "a source is quoted by the load it feeds (lagging when it delivers Q). The branch "
         "table and the phasor diagrams show a source (independent or controlled) as its "
         "supplier reads it: the current it delivers, out of its first terminal into the "
         "circuit, and the P and Q it delivers, positive when it supplies (marked "
         "“delivered”); the JSON keeps the passive sign and adds these as `delivered`."),
        ("Ground",
         "Node 0 (written 0 or gnd) is the reference at 0 V; node voltages are measured "
         "from it."),
    ]
    refs = result.get("references") or []
    if refs:
        items.append(("Isolated parts",
                      "These parts have no conductive path to ground, so one of their nodes "
                      "was taken as their own reference: " + ", ".join(refs) + ". Node "
                      "voltages there are relative to that node; currents and powers are exact."))
    else:
        items.append(("Isolated parts", "None: every node has a conductive path to ground."))
    kinds = {e.get("kind") for e in result.get("elements", {}).values()}
    if "transformer" in kinds:
        items.append(("Transformers",
                      "Ideal, ratio n: V1 = n·V2 and I1 = −I2/n. A transformer's row shows "
                      "the primary; the row below it the secondary; its P and Q are the sum "
                      "of both ports."))
    if result.get("groups"):
        rotations = sorted({g.get("rotation", "abc") for g in result["groups"].values()})
        items.append(("Sequence values",
                      "Fortescue's zero, positive and negative sequence, phase a the "
                      "reference, labelled for the declared rotation (" +
                      ", ".join(rotations) + "): positive is the set turning the way the "
                      "sources turn (a source with sequence acb is positive-sequence when "
                      "balanced); a load takes the rotation of the circuit's three-phase "
                      "sources (abc when there are none or they differ). The voltage "
                      "unbalance is |V₂|/|V₁| of the line voltages by the same labels."))
    if result.get("couplings"):
        items.append(("Coupled inductors",
                      "Mutual inductance M = k·√(L1·L2), the dotted end of each inductor is "
                      "its p terminal; see the table of couplings."))
    items.append(("Models",
                  "Ideal, linear elements: no saturation, no temperature or ageing, losses "
                  "only where modelled."))
    items.append(("Round-off",
                  f"A value below {fmt.plain(fmt.ROUND_OFF)} of the largest of its kind in "
                  "the circuit is round-off of the solve and is shown as 0."))
    items.append(("Trusted digits",
                  "Every solve is checked against the residual of each element's own "
                  "equation in extended precision (about 19 digits). Values are shown with "
                  f"{fmt.SHOWN_DIGITS} significant digits where the check trusts at least "
                  f"that many; fewer digits, marked {fmt.LIMITED}, where it trusts fewer."))
    cond = result.get("condition_estimate")
    if cond is not None:
        items.append(("Numerical condition",
                      f"Estimated condition number of the solved equations: {fmt.plain(cond, 3)} "
                      f"(about {max(0, round(math.log10(max(cond, 1.0))))} of the 16 digits of "
                      "double precision may be lost)."))
    return [{"term": t, "text": x} for t, x in items]


def _element_rows(result: dict) -> list[dict]:
    elements = result.get("elements", {})
    rows = []
    for row in fmt.element_rows(result):
        el = elements[row["name"]]
        sec = el.get("secondary") if isinstance(el.get("secondary"), dict) else None
        rows.append({**row, "line": el.get("line"),
                     "secondary_terminals": f"{sec['from']} → {sec['to']}" if sec else None})
    return rows


def _groups(result: dict) -> list[dict]:
    """Each three-phase block as the page's three-phase view lists it (one home)."""
    return [{"row": row, "detail": group_detail(result, row["name"])}
            for row in group_rows(result)]


def _couplings(result: dict) -> list[dict]:
    return [{"name": name, "inductors": " and ".join(c["inductors"]),
             "k": fmt.plain(c["k"]), "m": fmt.eng(c["m_h"], "H"), "line": c.get("line")}
            for name, c in (result.get("couplings") or {}).items()]


def _phasor_view(result: dict, names) -> dict:
    chosen = choose(result, names, default=DEFAULT_PHASORS, limit=MAX_WAVEFORMS,
                    what="phasor diagram", cap=MAX_PHASORS)
    if names is None:
        # The diagram annotates its first element's V–I angle: lead with an element
        # that is not a source (a source's passive-sign current points backwards).
        picked = chosen["names"]
        first = next((n for n in picked if not is_source(result["elements"][n])), None)
        if first is not None:
            chosen = {**chosen, "names": [first] + [n for n in picked if n != first]}
    return {**chosen, "svg": _inline(phasor_diagram_svg(result, chosen["names"]))}


def _waveform_view(result: dict, names) -> dict:
    chosen = choose(result, names, default=DEFAULT_WAVEFORMS, limit=MAX_WAVEFORMS,
                    what="waveforms")
    items = []
    for name in chosen["names"]:
        samples = sample_element(result, name, samples_per_period=WAVEFORM_SAMPLES_PER_PERIOD)
        # A source feeds the circuit (P < 0); an ideal L or C has P of round-off size,
        # either sign, and hands energy back instead.
        delivers = samples["p_avg"] < -_DELIVERS * samples["s_va"]
        items.append({"name": name, "kind": samples.get("kind"), "delivers": delivers,
                      "svg": _inline(waveform_svg(samples)),
                      "facts": waveform_display(samples)})
    return {**chosen, "pictures": items}


def sheet_context(text: str, filename: str = "<circuit>", *, result: dict | None = None,
                  now: datetime | None = None, waveform_elements=None, phasor_elements=None,
                  correction: dict | None = None, port: dict | None = None,
                  tolerance: dict | None = None, formula: dict | None = None,
                  harmonics: dict | None = None, sweep: dict | None = None) -> dict:
    """Everything the sheet shows, for ``templates/sheet.html``.

    Parameters
    ----------
    text : str
        The circuit text, shown verbatim and hashed (SHA-256 of its UTF-8 bytes).
    filename : str
        Name used in error messages when ``text`` is solved here.
    result : dict, optional
        The contract dict of ``text`` when already solved; solved here otherwise
        (``CircuitError`` for bad input).
    now : datetime, optional
        When the sheet is made (default: the current time, local zone).
    waveform_elements, phasor_elements : sequence of str, optional
        The elements to draw; None takes the default set (sources, then reactive
        elements, capped). Unknown names raise ``CircuitError``.
    correction, port : dict, optional
        Results of the power tools, shown as optional sections.
    tolerance : dict, optional
        The tolerance section (``sheet/tolerance.py``), shown when given.
    formula : dict, optional
        The formula section (``sheet/formula.py``), shown when given.
    harmonics : dict, optional
        The harmonics section (``sheet/harmonics.py``), shown when given.
    sweep : dict, optional
        The frequency-response section (``sheet/sweep.py``), shown when given.

    Returns
    -------
    dict
        Plain strings, lists and dicts; SVG pictures under ``svg`` keys (the only
        markup, made by `phasorbench.drawing`, which escapes every text it writes).
    """
    if result is None:
        from ..workflow import solve_text
        result = solve_text(text, filename)
    lines = source_lines(text)
    title = result.get("title")
    # The circuit's own warnings, which a tool's result repeats: listed once, above.
    known = [w["message"] for w in result.get("warnings", [])]
    own = _input_word(result)
    return {
        "title": title,
        "heading": title or "Untitled circuit",
        "filename": sheet_filename(title),
        "generated": _stamp(now),
        "version": __version__,
        "sha256": hashlib.sha256(text.encode("utf-8")).hexdigest(),
        "source": lines,
        "counts": {"lines": len(lines), "elements": len(result.get("elements", {})),
                   "nodes": len(result.get("nodes", {})),
                   "groups": len(result.get("groups") or {})},
        "frequency": fmt.eng(result["frequency_hz"], "Hz"),
        "amplitudes": shown_word(result),
        "amplitudes_input": own,
        # the tables' notes: "RMS", or "peak (input in RMS)" as the page's switch reads it
        "magnitudes": shown_word(result) + (f" (input in {own})" if own else ""),
        "assumptions": _assumptions(result),
        "node_columns": fmt.NODE_COLUMNS,
        "nodes": fmt.node_rows(result),
        "element_columns": fmt.ELEMENT_COLUMNS,
        "elements": _element_rows(result),
        "couplings": _couplings(result),
        "summary": power_summary(result),
        "balance": balance_check(result),
        "power": power_check(result),
        "groups": _groups(result),
        "phasors": _phasor_view(result, phasor_elements),
        "waveforms": _waveform_view(result, waveform_elements),
        "warnings": list(result.get("warnings", [])),
        "checks": {"kcl": kcl_example(result), "ohm": ohm_example(result)},
        "cautions": [{"title": t, "text": x} for t, x in CAUTIONS],
        "scope_note": SCOPE_NOTE,
        "correction": tool_section(correction, "correction", known),
        "port": tool_section(port, "port", known),
        "tolerance": tolerance,
        "formula": formula,
        "harmonics": harmonics,
        "sweep": sweep,
    }
