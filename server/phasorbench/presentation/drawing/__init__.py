"""SVG pictures drawn once for the page (served by the API) and the sheet (inlined).

Each picture is a self-contained ``<svg>`` string: no external references, no script,
no ids (two pictures on one page cannot clash), colours as presentation attributes so
it prints as it shows. Every number on a picture goes through `phasorbench.formatting`.
"""

from .phasors import phasor_diagram_svg
from .waveforms import waveform_svg

__all__ = ["phasor_diagram_svg", "waveform_svg"]
