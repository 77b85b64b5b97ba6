"""The page's RMS / peak switch: a solved result's magnitudes read the other way.

The circuit's ``amplitudes`` line says what its source values mean, and the solve
answers in that convention (results contract). To show the answer the other way, every
voltage and current phasor is scaled by √2 (RMS → peak) or 1/√2 (peak → RMS); angles,
impedances and powers stay as they are (the power is the same physical quantity, only
its formula changes: V·I* for RMS phasors, ½·V·I* for peak ones). The result keeps the
input's convention in ``amplitudes_input``.
"""

from __future__ import annotations

import math

__all__ = ["SHOWN", "shown_as", "shown_word"]

#: What the switch offers.
SHOWN = ("rms", "peak")

#: Keys whose phasors are not voltages or currents (ratios of them): never scaled.
_UNSCALED = ("impedance", "admittance")


def shown_word(result: dict) -> str:
    """The page's word for the convention ``result``'s magnitudes are in: "RMS" or "peak"
    (table headings, the CSV's and the sheet's).

    >>> shown_word({"amplitudes": "peak"}), shown_word({})
    ('peak', 'RMS')
    """
    return "RMS" if result.get("amplitudes", "rms") == "rms" else "peak"


def _scaled(value, k: float):
    if isinstance(value, dict):
        if {"re", "im", "mag", "deg"} <= value.keys():
            out = dict(value)
            out.update(re=value["re"] * k, im=value["im"] * k, mag=value["mag"] * k)
            return out
        return {key: (v if any(word in str(key) for word in _UNSCALED) else _scaled(v, k))
                for key, v in value.items()}
    if isinstance(value, list):
        return [_scaled(v, k) for v in value]
    return value


def shown_as(result: dict, show: str | None) -> dict:
    """``result`` with its voltage and current magnitudes in ``show`` ("rms" or "peak").

    None, or the result's own convention, returns ``result`` itself (shared, unchanged);
    otherwise a new dict with ``amplitudes`` set to ``show`` and ``amplitudes_input`` to
    the circuit's own. Powers, power factors, angles and impedances are unchanged.

    >>> r = {"amplitudes": "rms", "nodes": {"a": {"re": 230.0, "im": 0.0, "mag": 230.0,
    ...      "deg": 0.0}}, "elements": {}}
    >>> round(shown_as(r, "peak")["nodes"]["a"]["mag"], 2)
    325.27
    """
    own = result.get("amplitudes", "rms")
    if show is None or show == own:
        return result
    if show not in SHOWN:
        raise ValueError(f"magnitudes are shown as rms or peak, not {show!r}")
    k = math.sqrt(2.0) if show == "peak" else 1.0 / math.sqrt(2.0)
    keep = ("balance", "references", "node_digits", "warnings", "title", "frequency_hz",
            "condition_estimate")
    out = {key: (value if key in keep else _scaled(value, k)) for key, value in result.items()}
    out["amplitudes"] = show
    out["amplitudes_input"] = own
    return out
