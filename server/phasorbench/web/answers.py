"""The jobs behind each API route: plain functions of text in, JSON-ready dict out.

They run in worker threads (see ``api.run_job``), call the core once, and add the
page's ``display`` strings, all made by ``formatting.py``, so the browser never
formats a number itself. Input problems raise ``CircuitError``.
"""

from __future__ import annotations

from .. import workflow
from ..presentation.drawing.phasors import phasor_diagram_svg, three_phase_svg
from ..presentation.drawing.waveforms import waveform_svg
from ..presentation.tables_out import table_text
from ..errors import CircuitError, Diagnostic, answer
from ..tools import correct_power_factor, correction_place, port_equivalent
from ..waveforms import sample_element
from ..presentation.amplitudes import shown_as
from ..presentation.display import group_detail, group_rows, solve_display, waveform_display
from ..presentation.rows import table_window
from ..presentation.tools_display import correction_display, port_display
from .limits import check_size, element_bound
from .settings import Settings
from .solved import SolvedCache

#: The name circuit texts from the page carry in diagnostics.
PAGE_FILENAME = "<workbench>"


def diagnostic_item(d: Diagnostic) -> dict:
    """The contract's error item, plus the caret width and severity the editor marks."""
    return answer([d])["errors" if d.severity != "warning" else "warnings"][0]


def diagnostics_answer(diagnostics) -> dict:
    """``{"errors": [...], "warnings": [...]}`` (``errors.answer``, one home)."""
    return answer(diagnostics)


def check_answer(text: str, settings: Settings) -> dict:
    """Every error and warning of ``text``; never raises for input problems."""
    try:
        check_size(text, settings.max_elements)
    except CircuitError as exc:
        return diagnostics_answer(exc.diagnostics)
    return diagnostics_answer(workflow.check_text(text, PAGE_FILENAME))


#: The last few solved texts, shared by every route of every app in this process: a
#: solve, its phasors, its waveform and its table windows read and solve the text once.
SOLVED = SolvedCache()

#: The contract's per-element and per-node maps, left out of the page's solve answer
#: (the page shows the display rows; the numbers behind them stay on the server).
_BULK_FIELDS = ("elements", "nodes", "node_digits")


def _solve(text: str) -> dict:
    return workflow.solve_text(text, PAGE_FILENAME)


def _solved(text: str, settings: Settings) -> dict:
    """The contract dict of ``text`` (shared: never change it), solved once per text."""
    check_size(text, settings.max_elements)
    return SOLVED.get(text, _solve, size=element_bound(text))


def _shown(text: str, settings: Settings, show: str | None) -> dict:
    """The solved result with its magnitudes as ``show`` says (the page's RMS / peak switch)."""
    return shown_as(_solved(text, settings), show)


def solve_answer(text: str, contract: bool, names: list[str], show: str | None,
                 settings: Settings) -> dict:
    """The contract dict of ``text`` with a ``display`` field of formatted strings.

    Without ``contract`` the per-element and per-node maps are left out: the answer the
    page reads, no bigger than what it shows. ``display.present`` lists the ``names``
    that are elements of the circuit (a big circuit's answer has only its first rows, so
    the page learns this way whether the element it shows is still there).
    """
    result = _shown(text, settings, show)
    if contract:
        answer = dict(result)
    else:
        answer = {k: v for k, v in result.items() if k not in _BULK_FIELDS}
    answer["display"] = solve_display(result)
    elements = result["elements"]
    answer["display"]["present"] = [n for n in dict.fromkeys(names) if n in elements]
    return answer


def rows_answer(text: str, window: dict, settings: Settings) -> dict:
    """One window of the branch or node table (``rows.table_window``) of ``text``.

    ``window`` holds ``table``, ``start``, ``count``, ``sort``, ``direction``, ``find``
    and ``expanded`` (the three-phase blocks shown open) as the request gave them.
    """
    result = _shown(text, settings, window.get("show"))
    return table_window(result, window["table"], window["start"], window["count"],
                        window.get("sort"), window.get("direction", 1), window.get("find", ""),
                        expanded=window.get("expanded") or (), block_rows=group_rows)


def table_answer(text: str, table: str, separator: str, show: str | None,
                 settings: Settings) -> str:
    """One of the tables as CSV or tab-separated text (``tables_out.table_text``), its
    magnitudes as ``show`` says (None: the circuit's own convention)."""
    return table_text(_shown(text, settings, show), table, separator)


def _picked(result: dict, names: list[str], settings: Settings) -> list[str]:
    """``names`` without repeats, each checked to be an element of ``result``."""
    picked = list(dict.fromkeys(names))
    problems = []
    if not picked:
        problems.append(Diagnostic("no element was named", "pick at least one element"))
    if len(picked) > settings.max_view_elements:
        problems.append(Diagnostic(
            f"{len(picked)} elements were asked for, more than the limit of "
            f"{settings.max_view_elements} per picture", "pick fewer elements"))
    for name in picked:
        if name not in result["elements"]:
            problems.append(Diagnostic(f"the circuit has no element named '{name}'",
                                       "use a name from the branch table"))
    if problems:
        raise CircuitError(problems)
    return picked


def waveforms_answer(text: str, names: list[str], size: dict, show: str | None,
                     settings: Settings) -> dict:
    """Samples of v(t), i(t), p(t) and their SVG for each named element.

    ``{"elements": {name: {"samples": {...}, "svg": "<svg ...>", "display": {...}}},
    "order": [names]}``; ``size`` may hold the picture's ``width`` and ``height`` in px.
    The instantaneous values are the same whichever way ``show`` reads the magnitudes.
    """
    result = _shown(text, settings, show)
    picked = _picked(result, names, settings)
    out = {}
    for name in picked:
        samples = sample_element(result, name)
        out[name] = {"samples": samples, "svg": waveform_svg(samples, **size),
                     "display": waveform_display(samples)}
    return {"elements": out, "order": picked}


def phasors_answer(text: str, names: list[str], size: dict, show: str | None,
                   settings: Settings) -> dict:
    """The phasor diagram SVG of the named elements: ``{"svg": "...", "elements": [...]}``.

    ``size`` may hold the picture's ``width`` and ``height`` in px; ``show`` the
    magnitudes' convention (None: the circuit's own).
    """
    result = _shown(text, settings, show)
    picked = _picked(result, names, settings)
    return {"svg": phasor_diagram_svg(result, picked, **size), "elements": picked}


def three_phase_answer(text: str, group: str, size: dict, show: str | None,
                       settings: Settings) -> dict:
    """The three-phase view of one block: ``{"group", "svg", "display"}``.

    ``display`` is ``display.group_detail`` (phase rows, line values, sequence values,
    totals); ``size`` may hold the picture's ``width`` and ``height`` in px.
    """
    result = _shown(text, settings, show)
    groups = result.get("groups") or {}
    if group not in groups:
        hint = ("blocks of this circuit: " + ", ".join(groups)) if groups else \
            "this circuit has no three-phase blocks (voltage3, load3)"
        raise CircuitError([Diagnostic(f"the circuit has no three-phase block named '{group}'",
                                       hint)])
    return {"group": group, "svg": three_phase_svg(result, group, **size),
            "display": group_detail(result, group)}


def _read(text: str, settings: Settings):
    check_size(text, settings.max_elements)
    return workflow.read_circuit(text, PAGE_FILENAME)


def correction_answer(text: str, ask: dict, settings: Settings) -> dict:
    """The exact power-factor correction ``ask`` describes, with its ``display`` strings.

    ``ask`` holds ``source``, ``target``, ``at``, ``across``, ``bank``, ``leading`` and
    ``rated_voltage`` as the request gave them. The answer is
    ``tools.correct_power_factor``'s dict plus ``display`` (``tools_display.correction_display``).
    """
    circuit = _read(text, settings)
    result = correct_power_factor(circuit, ask["source"], ask["target"],
                                  at=correction_place(ask.get("at"), ask.get("across")),
                                  leading=bool(ask.get("leading")),
                                  rated_voltage=ask.get("rated_voltage"), bank=ask.get("bank"),
                                  ratings=ask.get("ratings_kvar"))
    answer = dict(result)
    answer["display"] = correction_display(result)
    return answer


def port_answer(text: str, a: str, b: str, settings: Settings) -> dict:
    """Thevenin and Norton equivalents seen from nodes ``a`` and ``b``, with ``display``."""
    result = port_equivalent(_read(text, settings), a, b)
    answer = dict(result)
    answer["display"] = port_display(result)
    return answer
