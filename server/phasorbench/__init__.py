"""phasorbench: AC circuits in sinusoidal steady state, solved exactly by nodal analysis."""

__version__ = "0.1.0"
