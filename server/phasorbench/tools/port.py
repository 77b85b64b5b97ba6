"""What the rest of the network looks like from two terminals: Thevenin and Norton.

"What does the supply look like from this terminal" is answered exactly by solves of
the circuit itself, not by a formula: the open-circuit solve gives the Thevenin
voltage, and one more solve with every independent source set to zero and a 1 A test
current drawn from A back into B gives the Thevenin impedance (controlled sources stay
in, as they must). The Norton current follows as V_th/Z_th. From the equivalent come
the two classic loads: the conjugate match, which takes the most power any load can,
and the best plain resistor, R = |Z_th|.
"""

from __future__ import annotations

from ..checks import conductive_parts
from ..superposition import analysis_frequency_only
from ..model import Circuit
from ..results import phasor_dict
from ._network import canonical_node, input_error, port_model, voltage_joined

__all__ = ["port_equivalent"]


def port_equivalent(circuit: Circuit, a: str, b: str) -> dict:
    """Thevenin and Norton equivalents of ``circuit`` seen from nodes ``a`` and ``b``.

    Parameters
    ----------
    circuit : Circuit
        A circuit read by ``workflow.read_circuit`` (it is not changed).
    a, b : str
        The port's nodes; ``"0"`` or ``"gnd"`` is ground.

    Returns
    -------
    dict
        ``a``, ``b``, ``frequency_hz``, ``amplitudes``, ``equivalent`` (``"finite"``,
        ``"ideal-voltage"`` when ideal sources fix V(a) − V(b) so Z_th = 0, or
        ``"no-path"`` when no conductive path joins a and b so Z_th is infinite);
        phasor dicts (``{re, im, mag, deg}``, magnitudes in the circuit's amplitude
        convention) or None: ``thevenin_v`` (open-circuit V(a) − V(b)), ``thevenin_z``,
        ``norton_i`` (current from a to b through a short), ``norton_y`` (1/Z_th);
        ``matched_load_z`` (Z_th*) and ``max_power_w`` (|V_th|²/(4·R_th), halved for
        peak amplitudes), ``resistive_load_ohm`` (|Z_th|) and ``resistive_power_w``;
        ``notes`` (why a value is None) and ``warnings`` (the circuit's own).

    Raises
    ------
    CircuitError
        An unknown node, or a and b the same node.

    Examples
    --------
    >>> from phasorbench.workflow import read_circuit
    >>> c = read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 10\\nR1: resistor a -> b 4\\n"
    ...                  "R2: resistor b -> 0 4")
    >>> r = port_equivalent(c, "b", "0")
    >>> round(r["thevenin_v"]["re"], 12), round(r["thevenin_z"]["re"], 12)
    (5.0, 2.0)
    """
    circuit, one_frequency = analysis_frequency_only(circuit)
    a = canonical_node(circuit, a, "port node")
    b = canonical_node(circuit, b, "port node")
    if a == b:
        raise input_error(f"the port's two nodes are the same node '{a}'",
                          "give two different nodes, e.g. port FILE out 0")
    half = 0.5 if circuit.amplitudes == "peak" else 1.0
    out = {
        "a": a, "b": b, "frequency_hz": circuit.frequency, "amplitudes": circuit.amplitudes,
        "equivalent": "finite", "thevenin_v": None, "thevenin_z": None, "norton_i": None,
        "norton_y": None, "matched_load_z": None, "max_power_w": None,
        "resistive_load_ohm": None, "resistive_power_w": None, "notes": [],
        "warnings": [d.as_dict() for d in circuit.warnings],
    }
    notes = out["notes"]
    if one_frequency is not None:
        out["warnings"].append(one_frequency.as_dict())

    parts = conductive_parts(circuit)
    if parts[a] != parts[b]:
        # Two parts with separate references: V(a) − V(b) means nothing, and a load
        # across them has no return path, so it carries no current at all.
        out["equivalent"] = "no-path"
        out["norton_i"] = phasor_dict(0j)
        out["norton_y"] = phasor_dict(0j)
        notes.append(f"no conductive path joins {a} and {b}: the port is an open circuit "
                     "(Z_th infinite), so there is no Thevenin equivalent and no load "
                     "there takes any current or power")
        return out

    model, _ = port_model(circuit, [(a, b)], [])
    v_th = complex(model.v_oc[0])
    z_th = complex(model.z[0, 0])
    if voltage_joined(circuit, a, b) or z_th == 0:
        z_th = 0j       # ideal sources fix the port voltage: round-off is not an impedance
        out["equivalent"] = "ideal-voltage"
    out["thevenin_v"] = phasor_dict(v_th)
    out["thevenin_z"] = phasor_dict(z_th)
    if z_th == 0:
        notes.append(f"ideal sources (directly or through ideal transformers) fix V({a}) − "
                     f"V({b}): Z_th = 0, so the "
                     "short-circuit current, the Norton equivalent and the matched load are "
                     "undefined (any load gets the full Thevenin voltage)")
        return out
    out["norton_i"] = phasor_dict(v_th / z_th)
    out["norton_y"] = phasor_dict(1 / z_th)

    r_th = z_th.real
    if r_th > 0:
        out["matched_load_z"] = phasor_dict(z_th.conjugate())
        out["max_power_w"] = half * abs(v_th) ** 2 / (4 * r_th)
    else:
        notes.append(f"R_th = {r_th:.6g} Ω is not positive: the conjugate match takes "
                     "unbounded power (or the port delivers power into any passive load), "
                     "so there is no maximum")
    if r_th >= 0:
        r_best = abs(z_th)
        out["resistive_load_ohm"] = r_best
        out["resistive_power_w"] = half * abs(v_th) ** 2 * r_best / abs(z_th + r_best) ** 2
    return out

