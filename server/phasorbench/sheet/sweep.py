"""The sheet's frequency-response section: the sweep as the command line or the page
asked for it, with the page's own strings and picture (``presentation/studies/sweep.py``,
``presentation/drawing/response.py``), the resonance cautions, and a worked check of one
grid point against the single-frequency solve (``studies/sweepcheck.py``)."""

from __future__ import annotations

__all__ = ["sweep_section"]

#: The picture's size on the sheet, px (it scales with the page through its viewBox).
WIDTH, HEIGHT = 760, 480


def sweep_section(text: str, filename: str, ask: dict | None) -> dict | None:
    """The context of ``templates/_sheet_sweep.html`` (None when not asked for).

    ``ask`` holds what ``POST /api/sweep`` takes: ``probes``, ``from``, ``to``,
    ``points``, ``spacing``, and the picture's ``magnitude`` scale (``auto``, ``db``,
    ``units``). What it leaves out comes from the circuit's ``sweep`` line, else the
    study's defaults. Bad input raises ``CircuitError``.
    """
    if ask is None:
        return None
    from ..presentation.cautions import SWEEP_CAUTIONS
    from ..presentation.drawing.response import response_svg
    from ..presentation.studies.sweep import sheet_view
    from ..studies.sweep import run_sweep
    from ..studies.sweepcheck import check_point
    from ..workflow import read_circuit
    from .context import _inline

    circuit = read_circuit(text, filename)
    start, stop = ask.get("from"), ask.get("to")
    result = run_sweep(circuit, ask.get("probes") or [], start, stop, ask.get("points"),
                       ask.get("spacing"))
    if start is not None or stop is not None:
        origin = {"kind": "asked"}
    elif circuit.sweep is not None:
        origin = {"kind": "line", "line": circuit.sweep.line}
    else:
        origin = {"kind": "default"}
    svg = _inline(response_svg(result, WIDTH, HEIGHT,
                               magnitude=ask.get("magnitude") or "auto", both=False))
    return sheet_view(result, check_point(circuit, result), origin, svg, SWEEP_CAUTIONS)
