"""The sheet's tolerance section: the study run as the command line or the page asked
for it, its strings and pictures (``presentation/studies/tolerance.py``), and each worst
case re-solved on the circuit rebuilt at its part values, as a check."""

from __future__ import annotations

__all__ = ["tolerance_section"]


def tolerance_section(text: str, filename: str, ask: dict | None) -> dict | None:
    """The context of ``templates/_sheet_tolerance.html`` (None when not asked for).

    ``ask`` holds what ``POST /api/tolerance`` takes: ``probes``, ``runs``, ``seed``,
    ``worst_case``, ``limits``. Bad input raises ``CircuitError``.
    """
    if not ask:
        return None
    from ..presentation.cautions import TOLERANCE_NOTE
    from ..presentation.studies.tolerance import check_rows, view
    from ..studies.tolerance import check_worst_case, run_tolerance
    from ..workflow import read_circuit
    circuit = read_circuit(text, filename)
    result = run_tolerance(circuit, ask.get("probes") or [], ask.get("runs"),
                           ask.get("seed"), bool(ask.get("worst_case")),
                           ask.get("limits") or ())
    section = view(result)
    section["seed"] = result["seed"]
    section["checks"] = check_rows(check_worst_case(circuit, result), result)
    section["caution"] = TOLERANCE_NOTE
    return section
