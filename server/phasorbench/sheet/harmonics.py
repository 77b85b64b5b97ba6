"""The sheet's harmonics section: the harmonic study as the command line or the page
asked for it, with the page's own strings, tables and pictures
(``presentation/studies/harmonics.py``), so the sheet repeats no behaviour."""

from __future__ import annotations

__all__ = ["harmonics_section"]


def harmonics_section(text: str, filename: str, ask: dict | None) -> dict | None:
    """The context of ``templates/_sheet_harmonics.html`` (None when not asked for).

    ``ask`` holds what ``POST /api/harmonics`` takes: ``pcc``, ``nominal``, ``rated``
    (capacitor name → rated rms volts), ``node`` and ``element`` (the spectra drawn).
    Bad input raises ``CircuitError``.
    """
    if ask is None:
        return None
    from ..presentation.studies.harmonics import chosen, harmonics_display
    from ..studies.harmonics import element_waveforms, run_harmonics
    from ..workflow import read_circuit

    circuit = read_circuit(text, filename)
    result = run_harmonics(circuit, ask.get("pcc"), ask.get("nominal"), ask.get("rated"),
                           detail=[ask["element"]] if ask.get("element") else None)
    node, element = chosen(result, ask.get("node"), ask.get("element"))
    samples = (element_waveforms(result, element, samples_per_period=100)
               if element is not None else None)
    return harmonics_display(result, node, element, samples)
