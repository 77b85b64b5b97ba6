"""Which elements the sheet draws: a default set that stays readable, or the reader's own.

A sheet of a 2,000-element circuit keeps every table row, but a waveform for every
element would be thousands of pictures. The default is each source and each reactive
element (the ones whose waveforms tell something: energy handed back each cycle),
capped; the sheet states which were chosen and how to choose others.
"""

from __future__ import annotations

from ..errors import CircuitError, Diagnostic
from ..model import CONTROLLED_KINDS, SOURCE_KINDS
from ..results import UNITY_Q_FRACTION

__all__ = ["DEFAULT_PHASORS", "DEFAULT_WAVEFORMS", "MAX_PHASORS", "MAX_WAVEFORMS",
           "candidates", "choose", "is_source"]

#: Waveform pictures by default: about four printed pages.
DEFAULT_WAVEFORMS = 12
#: Elements on the default phasor diagram: the drawing's four colour pairs and a few
#: more before labels crowd each other.
DEFAULT_PHASORS = 6
#: Largest chosen sets: the page's picker allows 12 on one diagram; 48 waveforms is
#: about 16 printed pages, beyond which a sheet stops being read.
MAX_PHASORS = 12
MAX_WAVEFORMS = 48

_REACTIVE_KINDS = ("capacitor", "inductor")
_MAYBE_REACTIVE = ("impedance", "admittance")


def is_source(el: dict) -> bool:
    """Independent or controlled source."""
    return el.get("kind") in SOURCE_KINDS or el.get("kind") in CONTROLLED_KINDS


def _is_reactive(el: dict) -> bool:
    kind = el.get("kind")
    if kind in _REACTIVE_KINDS:
        return True
    if kind in _MAYBE_REACTIVE:
        # An impedance with a reactive part stores energy like an L or a C does.
        q, s = abs(el.get("q_var") or 0.0), abs(el.get("s_va") or 0.0)
        return s > 0 and q > UNITY_Q_FRACTION * s
    return False


def candidates(result: dict) -> list[str]:
    """Sources (independent, then controlled), then reactive elements, in circuit order."""
    elements = result.get("elements", {})
    independent = [n for n, e in elements.items() if e.get("kind") in SOURCE_KINDS]
    controlled = [n for n, e in elements.items() if e.get("kind") in CONTROLLED_KINDS]
    reactive = [n for n, e in elements.items() if _is_reactive(e)]
    return independent + controlled + reactive


def _checked(result: dict, names, limit: int, what: str) -> list[str]:
    """``names`` without repeats, each an element of ``result``, at most ``limit``."""
    picked = list(dict.fromkeys(names))
    problems = []
    if not picked:
        problems.append(Diagnostic(f"no element was named for the sheet's {what}",
                                   "name at least one element, or leave the choice out "
                                   "for the default set"))
    if len(picked) > limit:
        problems.append(Diagnostic(f"{len(picked)} elements were asked for the sheet's {what}, "
                                   f"more than its limit of {limit}", "pick fewer elements"))
    for name in picked:
        if name not in result.get("elements", {}):
            problems.append(Diagnostic(f"the circuit has no element named '{name}'",
                                       "use a name from the branch table"))
    if problems:
        raise CircuitError(problems)
    return picked


def choose(result: dict, names=None, *, default: int, limit: int, what: str,
           cap: int | None = None) -> dict:
    """The elements to draw and a sentence saying how they were chosen.

    Parameters
    ----------
    result : dict
        A solved-circuit contract dict.
    names : sequence of str, optional
        The reader's choice; ``None`` takes the default set. Unknown names, an empty
        choice or more than ``limit`` names raise ``CircuitError``.
    default : int
        How many of `candidates` the default set keeps.
    what : str
        ``"waveforms"`` or ``"phasor diagram"``, for messages.
    cap : int, optional
        A reader's choice longer than this keeps its first ``cap`` names (one diagram
        holds fewer elements than a list of waveforms does).

    Returns
    -------
    dict
        ``{"names": [...], "chosen_by": "reader" or "default", "candidates": int,
        "left_out": int, "cap": int}``: how many could be drawn, how many were not,
        and the most that are.

    >>> r = {"elements": {"V1": {"kind": "voltage"}, "R1": {"kind": "resistor"},
    ...                   "C1": {"kind": "capacitor"}}}
    >>> choose(r, default=12, limit=48, what="waveforms")["names"]
    ['V1', 'C1']
    """
    if names is not None:
        picked = _checked(result, names, limit, what)
        kept = picked[:cap] if cap is not None else picked
        return {"names": kept, "chosen_by": "reader", "candidates": len(picked),
                "left_out": len(picked) - len(kept), "cap": cap or limit}
    pool = candidates(result)
    if not pool:
        # Resistors only: the first element still shows what the sheet can draw.
        pool = list(result.get("elements", {}))[:1]
    picked = pool[:default]
    return {"names": picked, "chosen_by": "default", "candidates": len(pool),
            "left_out": len(pool) - len(picked), "cap": default}
