"""Studies over one circuit (studies.md): probes, frequency response, and more to come."""
