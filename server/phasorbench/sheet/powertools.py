"""The power tools a sheet may carry: a power-factor correction and a port equivalent.

The command line's ``--correct``/``--port`` and the API's ``correct``/``port`` fields
ask for them; this module reads the circuit once and runs the tools of
``phasorbench.tools`` on it, so both shells put the same results on the sheet.
"""

from __future__ import annotations

__all__ = ["run_power_tools"]


def run_power_tools(text: str, filename: str = "<circuit>", *, correct: dict | None = None,
                    port=None) -> dict:
    """``{"correction": dict or None, "port": dict or None}`` for ``text``.

    Parameters
    ----------
    correct : dict, optional
        What ``POST /api/correct`` takes: ``source``, ``target`` and optionally ``at``
        (a node or a list of nodes), ``across`` (two nodes), ``bank``, ``neutral``,
        ``leading``, ``rated_voltage``; without a place, the capacitor goes across the
        source.
    port : (a, b), optional
        The port's two nodes for the Thevenin and Norton equivalents.

    Bad input (an unknown source or node, an unreachable target) raises ``CircuitError``.
    """
    out = {"correction": None, "port": None}
    if correct is None and port is None:
        return out
    from ..tools import correct_power_factor, correction_place, port_equivalent
    from ..workflow import read_circuit

    circuit = read_circuit(text, filename)
    if correct is not None:
        # The place as the page's correction panel gives it (one rule, in answers.py).
        at = correction_place(correct.get("at"), correct.get("across"))
        out["correction"] = correct_power_factor(
            circuit, correct["source"], correct["target"], at=at,
            leading=bool(correct.get("leading")), rated_voltage=correct.get("rated_voltage"),
            bank=correct.get("bank"), neutral=correct.get("neutral"),
            ratings=correct.get("ratings_kvar"))
    if port is not None:
        a, b = port
        out["port"] = port_equivalent(circuit, a, b)
    return out
