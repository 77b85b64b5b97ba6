"""Power-engineering tools over the solver: exact power-factor correction and port
equivalents. Pure core (standard library, numpy, scipy); the command line reaches them
through ``phasorbench.tools_cli``.
"""

from .correction import correct_power_factor
from .port import port_equivalent

__all__ = ["correct_power_factor", "port_equivalent"]
