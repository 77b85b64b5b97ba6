"""The sheet's formula section: the study run as the command line or the page asked for
it, shown with the page's own rendering (``presentation/studies/formula.py``, MathML from
``presentation/mathforms.py``) and checked against the solved value at the analysis
frequency."""

from __future__ import annotations

__all__ = ["formula_section"]


def formula_section(text: str, filename: str, ask: dict | None) -> dict | None:
    """The context of ``templates/_sheet_formula.html`` (None when not asked for).

    ``ask`` holds what ``POST /api/formula`` takes: ``probe``, ``keep``, ``solve_for``.
    Bad input and the study's limits raise ``CircuitError``.
    """
    if not ask:
        return None
    from ..presentation.studies.formula import formula_display
    from ..studies.formula import run_formula
    from ..workflow import read_circuit
    circuit = read_circuit(text, filename)
    result = run_formula(circuit, ask.get("probe") or "", ask.get("keep"),
                         ask.get("solve_for"))
    return formula_display(result)
