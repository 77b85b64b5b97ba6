"""Power-engineering tools over the solver: exact power-factor correction and port
equivalents. Pure core (standard library, numpy, scipy); the command line reaches them
through ``phasorbench.cli.tools``.
"""

from .correction import correct_power_factor, correction_place
from .port import port_equivalent

__all__ = ["correct_power_factor", "correction_place", "port_equivalent"]
