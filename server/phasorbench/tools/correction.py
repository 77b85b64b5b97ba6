"""Exact power-factor correction: the smallest shunt capacitor that meets a target.

The textbook sizing ``Qc = P(tanφ1 − tanφ2)``, ``C = Qc/(ωV²)`` assumes the capacitor
sits on an ideal bus. In a real plant a line or a transformer lies between the supply
and the capacitor, the voltage there moves when the capacitor goes in, and the
capacitor's own current changes the losses; the formula is then only an estimate.
Here the answer is exact for the circuit as drawn.

Why it can be exact with so few solves: the circuit is linear, so seen from the place
where the capacitor goes (a port, or the two or three ports of a three-phase bank) it is
fully described by the port's Thevenin equivalent and by how the source's current
depends on the current drawn there (``_network.port_model``: one solve as it is, one per
port with the sources at zero). A capacitor bank of susceptance ``B`` per unit draws
``I = jB·M·V``; for one port the source's complex power is then a bilinear (Möbius)
function of ``B``, and "power factor = target" is a quadratic in ``B`` solved in closed
form; for a three-phase bank the same exact model is searched by a bracketed root find
to full precision. The result is then verified by solving the corrected circuit.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
from scipy.optimize import brentq

from ..checks import conductive_parts
from ..errors import CircuitError, Diagnostic
from ..superposition import analysis_frequency_only
from ..model import SOURCE_KINDS, Circuit, Element
from ..presentation.formatting import eng, power_factor
from ..results import contract
from ..solver import solve
from ._correction_report import ieee18_every_order, not_needed, report
from ._network import (canonical_node, derived, fresh_name, input_error,
                       port_model)
from .standard_sizes import parse_ratings, standard_sizes

__all__ = ["correct_power_factor"]

#: How far past the ideal-bus estimate the bracketed search looks, and how finely: a
#: place far from the source can need several times the estimate, and a root closer
#: than 1/32 of the estimate to another one is not a practical answer anyway.
SEARCH_SPAN, SEARCH_STEPS = 64.0, 2048

#: Real power at or below this share of |S| counts as none (round-off of a solve).
_NO_POWER = 1e-12

_FLOATING_WYE = np.array([[2.0, -1.0], [-1.0, 2.0]]) / 3.0
_DELTA = np.array([[2.0, -1.0], [-1.0, 2.0]])


def correct_power_factor(circuit: Circuit, source: str, target_pf: float, at=None,
                         leading: bool = False, rated_voltage: float | None = None, *,
                         bank: str | None = None, neutral: str | None = None,
                         rated_frequency: float | None = None, method: str = "auto",
                         ratings=None) -> dict:
    """Size the smallest shunt capacitance that brings ``source`` to ``target_pf``.

    Parameters
    ----------
    circuit : Circuit
        A circuit read by ``workflow.read_circuit``; it is not changed.
    source : str
        An independent ``voltage`` or ``current`` source, or a ``voltage3`` block (its
        power factor is then |P|/|P + jQ| of the three phases together).
    target_pf : float
        In (0, 1]; lagging unless ``leading``.
    at : None, str, (a, b) or (a, b, c)
        Where the capacitor goes: None, across the source's terminals (for a
        ``voltage3`` block: its lines, a wye bank then to its star point); a node, from
        there to ground; two nodes, across them; three line nodes, a three-phase bank.
    leading : bool
        Aim at a leading target instead.
    rated_voltage : float, optional
        Rated rms voltage of each capacitor unit: its duty is checked against the
        continuous limits of IEEE Std 18-2002 and excesses become warnings.
    bank : {"wye", "delta"}, optional
        Connection of a three-phase bank (default wye). A wye bank's star is ``neutral``
        when given, the source's star when ``at`` is None, otherwise a star of its own.
    rated_frequency : float, optional
        Rated frequency of the units for that check (default: the circuit's).
    method : {"auto", "closed-form", "bracketed"}
        ``auto`` takes the closed form for one port and the root find for a bank.
    ratings : sequence of kvar, or text, optional
        Standard bank ratings (all units together, at the rated voltage) for
        ``standard_sizes``: the next one below and above the exact answer, each
        re-solved (default ``standard_sizes.DEFAULT_RATINGS_KVAR``).

    Returns
    -------
    dict
        The fields are listed in ``_correction_report.report``; the main ones are
        ``capacitance_f`` (per unit), ``q_var`` (reactive power the capacitors supply,
        positive), ``pf_before``, ``pf_after`` (from the re-solved circuit),
        ``formula_capacitance_f``, ``voltage_before``/``voltage_after``,
        ``capacitor_current``, ``harmonic_order``, ``circuit_lines``, ``cautions`` and
        ``standard_sizes`` (`standard_sizes.standard_sizes`). ``needed`` is True there;
        when the source already meets the target (it runs at unity, or lagging at or
        above a lagging target) no capacitor is needed and the answer is the normal
        result of `_correction_report.not_needed`: ``needed`` False, ``reason``, the
        power factor and supply as they are, the same keys with no capacitor in them.

    Raises
    ------
    CircuitError
        Unknown source or node, a source that is not a source, a target outside (0, 1],
        a place with no voltage, or a target a shunt capacitor cannot reach (a source
        running leading with a lagging target, more leading than a leading target, or
        delivering no real power).

    Notes
    -----
    *Exact answer.* The power factor seen by the source is that of the summed complex
    power of its element(s) in the corrected circuit; the capacitance returned is the
    smallest positive one that puts it on the target, and ``pf_after`` comes from
    solving the corrected circuit, not from the model.

    *Ideal-bus estimate.* ``formula_capacitance_f`` is the textbook sizing with the
    source's P and power factor and the voltage at the place before correction:
    ``Qc = P(tanφ1 − tanφ2)``, ``C = Qc/(n·ω·V²)`` for n units (V per unit: across it,
    line-to-line for delta, line-to-star for wye). It equals the exact answer when
    nothing lies between source and capacitor.

    *Resonance estimate.* The network behind the capacitor is its Thevenin impedance at
    the fundamental (loads included, as they are in the circuit), its reactance X_th
    taken as an inductance that scales with the harmonic order h, the capacitor's
    reactance X_C as falling with 1/h; they resonate in parallel at
    ``h = √(X_C/X_th)``, which is the rule ``h = √(S_sc/Q_c)`` with S_sc = V²/X_th and
    Q_c = V²/X_C. For a bank the same is done per mode: ``h = 1/√(B·μ)`` for each
    positive eigenvalue μ of ``X_th·M``. It neglects damping and frequency-dependent
    loads; real networks differ by about ±10 %, so a result within 10 % of the 3rd,
    5th, 7th, 11th or 13th harmonic is a warning.

    Examples
    --------
    >>> from phasorbench.workflow import read_circuit
    >>> c = read_circuit("frequency 60 Hz\\nV1: voltage a -> 0 120 V\\n"
    ...                  "Z1: impedance a -> 0 2.304 + j1.728 ohm")
    >>> r = correct_power_factor(c, "V1", 0.95)
    >>> round(r["capacitance_f"] * 1e6, 3), round(r["pf_after"], 12)
    (310.438, 0.95)
    """
    every_order, (circuit, one_frequency) = circuit, analysis_frequency_only(circuit)
    sources, line, group = _source(circuit, source)
    target = _target(target_pf)
    ratings = parse_ratings(ratings)
    for value, what in ((rated_voltage, "rated voltage"), (rated_frequency, "rated frequency")):
        if value is not None and not (isinstance(value, (int, float)) and
                                      math.isfinite(value) and value > 0):
            raise input_error(f"the {what} must be a positive number, not {value!r}",
                              "e.g. a rated voltage of 480 V")
    place = _place(circuit, source, group, at, bank, neutral)
    if method not in ("auto", "closed-form", "bracketed"):
        raise ValueError(f"method must be auto, closed-form or bracketed, not {method!r}")
    if method == "closed-form" and len(place["ports"]) != 1:
        raise ValueError("the closed form covers one port; use the bracketed method")

    model, base = port_model(circuit, place["ports"], sources)
    omega = model.omega
    m_matrix = place["m"]
    s_load0 = -model.source_power(np.zeros_like(m_matrix, dtype=complex))
    sense = -1.0 if leading else 1.0
    theta = sense * math.acos(target) if target < 1 else 0.0
    reason = _reachable(source, line, s_load0, theta, target, leading)

    legs_before = _leg_voltages(base, place)
    largest = max(abs(v) for v in base.node_voltages.values())
    if min(abs(v) for v in legs_before) <= _NO_POWER * largest:    # round-off of nothing
        raise input_error(f"there is no voltage at {place['description']}: a capacitor there "
                          "supplies nothing", "choose a place the source energises", line)
    if reason is not None:
        result = not_needed(circuit=circuit, source=source, group=group, place=place,
                            target=target, leading=leading, before=contract(base),
                            model=model, reason=reason)
        if one_frequency is not None:
            result["warnings"].append(one_frequency.as_dict())
        return result
    mean_square = float(np.mean([abs(v) ** 2 for v in legs_before]))
    tan1 = s_load0.imag / s_load0.real
    tan2 = math.tan(theta)
    formula_q = s_load0.real * (tan1 - tan2)
    units = len(place["legs"])
    formula_c = formula_q / (units * model.half * omega * mean_square)

    w = cmath.exp(-1j * theta)
    b_guess = omega * formula_c
    if method == "closed-form" or (method == "auto" and len(place["ports"]) == 1):
        b, used = _closed_form(model, w, b_guess), "closed form (bilinear in the susceptance)"
    else:
        b, used = _bracketed(model, m_matrix, w, b_guess), "bracketed root find (Brent)"
    if b is None:
        raise input_error(f"no shunt capacitance at {place['description']} brings {source} to "
                          f"{target:g} {'leading' if leading else 'lagging'}",
                          "the network between the source and this place limits what a "
                          "capacitor here can do; try a place nearer the source", line)
    capacitance = b / omega

    names = _capacitor_names(circuit, place)
    added = tuple(Element(name, "capacitor", leg, capacitance + 0j)
                  for name, leg in zip(names, place["legs"]))
    corrected = derived(circuit, add=added)
    before, after = contract(base), contract(solve(corrected))
    result = report(
        circuit=circuit, source=source, sources=sources, group=group, place=place,
        target=target, leading=leading, method=used, capacitance=capacitance, names=names,
        before=before, after=after, legs_before=legs_before, model=model,
        formula=(formula_c, formula_q), susceptance=b, rated_voltage=rated_voltage,
        rated_frequency=rated_frequency)
    # The re-solve is the proof: a root of the model that does not reproduce the target
    # (a capacitor that only resonates with the load, say) is no answer.
    wanted = "leading" if leading else "lagging"
    missed = abs(result["pf_error"]) > _VERIFY_TOLERANCE or (
        target < 1 and result["pf_sense_after"] not in (wanted, "unity"))
    if missed:
        raise input_error(
            f"no shunt capacitance at {place['description']} brings {source} to {target:g} "
            f"{wanted}: re-solving with the best candidate ({capacitance * 1e6:.6g} µF) gives "
            f"{result['pf_after']:.4g} {result['pf_sense_after']}",
            "a capacitor at this place cannot supply the reactive power the source sees "
            "(it resonates with the load instead); try a place nearer the source, or the "
            "leading target", line)
    rms = 1.0 if circuit.amplitudes == "rms" else 1.0 / math.sqrt(2.0)
    result["standard_sizes"] = standard_sizes(
        circuit, source=source, group=group, legs=place["legs"], names=names,
        capacitance=capacitance, operating_v=math.sqrt(mean_square) * rms,
        rated_voltage=rated_voltage, rated_frequency=rated_frequency, target=target,
        leading=leading, ratings=ratings)
    if one_frequency is not None:
        result["warnings"].append(one_frequency.as_dict())
        if rated_voltage is not None:
            # The bank's duty is a question of every order the circuit carries (IEEE 18:
            # rms and peak over all harmonics), not of the fundamental alone.
            result["ieee18"] = ieee18_every_order(
                derived(every_order, add=added), names, capacitance, float(rated_voltage),
                rated_frequency or circuit.frequency, result["warnings"])
    return result


#: How close the re-solved power factor must come to the target to count as reached.
_VERIFY_TOLERANCE = 1e-6


# --- inputs --------------------------------------------------------------------------


def _source(circuit: Circuit, source: str):
    """(source element names, the line to point at, the voltage3 block or None)."""
    if source in circuit.groups:
        group = circuit.groups[source]
        if group.kind != "voltage3":
            raise input_error(f"'{source}' is a {group.kind} block, not a source block",
                              "give a voltage or current source, or a voltage3 block",
                              group.line)
        return tuple(group.elements), group.line, group
    element = circuit.elements.get(source)
    if element is None:
        import difflib
        close = difflib.get_close_matches(source, list(circuit.elements) +
                                          list(circuit.groups), n=1)
        known = [e.name for e in circuit.elements.values() if e.kind in SOURCE_KINDS
                 and e.group is None] + [g.name for g in circuit.groups.values()
                                         if g.kind == "voltage3"]
        hint = f"did you mean '{close[0]}'?" if close else \
            "sources of this circuit: " + (", ".join(known[:12]) or "none")
        raise input_error(f"'{source}' is not an element or block of this circuit", hint)
    if element.kind not in SOURCE_KINDS:
        article = "an" if element.kind[0] in "aeiou" else "a"
        raise input_error(f"'{source}' is {article} {element.kind}, not an independent source",
                          "give a voltage or current source, or a voltage3 block",
                          element.line)
    return (source,), element.line, None


def _target(target_pf) -> float:
    try:
        target = float(target_pf)
    except (TypeError, ValueError):
        raise input_error(f"the target power factor '{target_pf}' is not a number",
                          "e.g. a target of 0.95") from None
    if not (math.isfinite(target) and 0.0 < target <= 1.0):
        raise input_error(f"the target power factor must be above 0 and at most 1, not "
                          f"{target:g}" if math.isfinite(target) else
                          "the target power factor must be a finite number",
                          "a power factor is |P|/|S|, e.g. 0.95")
    return target


def _place(circuit: Circuit, source: str, group, at, bank, neutral) -> dict:
    """Where the capacitors go: their terminals (legs), the ports and ``I = jB·M·V``."""
    default_star = None
    if at is None:
        if group is not None:
            nodes = tuple(group.lines)
            # Across the block's terminals: a wye bank goes from each line to its star.
            default_star = group.neutral if group.neutral is not None else f"{group.name}.n"
        else:
            nodes = circuit.elements[source].nodes[:2]
    elif isinstance(at, str):
        nodes = (at, "0")
    else:
        nodes = tuple(at)
    if len(nodes) not in (2, 3):
        raise input_error(f"a correction place is one node, two nodes or three line nodes, "
                          f"not {len(nodes)}", "a node (bus), two nodes across (a b) or three lines (a,b,c)")
    nodes = tuple(canonical_node(circuit, n, "correction node") for n in nodes)
    if len(set(nodes)) != len(nodes):
        raise input_error(f"the correction place repeats a node ({', '.join(nodes)})",
                          "give distinct nodes")
    parts = conductive_parts(circuit)
    if len({parts[n] for n in nodes}) != 1:
        raise input_error(f"no conductive path joins {', '.join(nodes[:-1])} and {nodes[-1]}: "
                          "a capacitor there carries no current",
                          "choose nodes of one connected part")
    if len(nodes) == 2:
        if bank is not None or neutral is not None:
            raise input_error("a bank connection (wye/delta, a star node) applies to a "
                              "three-phase place", "give three line nodes, e.g. a,b,c")
        a, b = nodes
        return {"connection": "single", "nodes": list(nodes), "star": None,
                "floating": False, "legs": [(a, b)], "ports": [(a, b)],
                "m": np.eye(1), "description": f"{a} → {b}"}
    bank = bank or "wye"
    if bank not in ("wye", "delta"):
        raise input_error(f"a bank is wye or delta, not '{bank}'", "e.g. a delta bank")
    a, b, c = nodes
    text = ", ".join(nodes)
    if bank == "delta":
        if neutral is not None:
            raise input_error("a delta bank has no star point", "give no star point, or use wye")
        return {"connection": "delta", "nodes": list(nodes), "star": None, "floating": False,
                "legs": [(a, b), (b, c), (c, a)], "ports": [(a, c), (b, c)], "m": _DELTA,
                "description": f"lines {text} (delta bank)"}
    neutral = neutral if neutral is not None else default_star
    if neutral is not None:
        star = canonical_node(circuit, neutral, "star node")
        if star in nodes or parts[star] != parts[a]:
            raise input_error(f"the bank's star node '{star}' must be another node of the "
                              "same part as its lines", "e.g. the star point n")
        return {"connection": "wye", "nodes": list(nodes), "star": star, "floating": False,
                "legs": [(a, star), (b, star), (c, star)],
                "ports": [(a, star), (b, star), (c, star)], "m": np.eye(3),
                "description": f"lines {text} (wye bank, star to {star})"}
    return {"connection": "wye", "nodes": list(nodes), "star": None, "floating": True,
            "legs": [(a, None), (b, None), (c, None)], "ports": [(a, c), (b, c)],
            "m": _FLOATING_WYE, "description": f"lines {text} (wye bank, own star point)"}


def _capacitor_names(circuit: Circuit, place: dict) -> list[str]:
    base = fresh_name(circuit, "Cpf")
    if place["connection"] == "single":
        return [base]
    if place["connection"] == "delta":
        return [f"{base}_ab", f"{base}_bc", f"{base}_ca"]
    if place["floating"]:
        star, nodes = f"{base}.n", set(circuit.nodes())
        while star in nodes:
            star += "_"
        place["star"] = star
        place["legs"] = [(line, star) for line, _ in place["legs"]]
    return [f"{base}_a", f"{base}_b", f"{base}_c"]


#: A power factor this close to the target is on it: the round-off of the solve and of
#: the circuit's values as written (a load sized for 0.8 reads back as 0.7999999999999999).
_ON_TARGET = 1e-9


def _reachable(source: str, line, s_load: complex, theta: float, target: float,
               leading: bool) -> str | None:
    """None when a shunt capacitor is needed and can help; the reason, in one sentence
    with the numbers, when none is needed (unity, or lagging at or above a lagging
    target); an input error, saying why, for a target a shunt capacitor cannot reach."""
    p, q = s_load.real, s_load.imag
    s = abs(s_load)
    wanted = power_factor(target, "leading" if leading else "lagging") if target < 1 \
        else "unity"
    if s == 0 or p <= _NO_POWER * s:
        raise input_error(f"source {source} delivers no real power (P = {p:.6g} W): no "
                          "capacitor brings its power factor to a target",
                          "check the source name and that it feeds a load", line)
    now_pf = p / s
    if abs(q) <= 1e-9 * s:
        return (f"{source} already runs at unity power factor (P = {eng(p, 'W')}, Q = 0 "
                f"within round-off), which meets any target, {wanted} included: there is no "
                "reactive power to cancel, so no capacitor is needed.")
    phi = math.atan2(q, p)
    now = power_factor(now_pf, "lagging" if q > 0 else "leading", digits=6)
    if abs(now_pf - target) <= _ON_TARGET and (target == 1 or (q < 0) == leading):
        return (f"{source} already runs at {now} (P = {eng(p, 'W')}, Q = {eng(q, 'var')}), on "
                f"the target {wanted}: no capacitor is needed.")
    if phi <= theta:
        if q < 0 and not leading:
            raise input_error(f"source {source} already runs at {now}: a shunt capacitor only "
                              "makes it lead more", "aim at a leading target, or add a "
                              "shunt reactor or remove capacitance instead", line)
        if q < 0:
            raise input_error(f"source {source} already runs at {now}, more leading than the "
                              f"target {wanted}: more capacitance lowers it further",
                              "remove capacitance instead", line)
        return (f"{source} already runs at {now} (P = {eng(p, 'W')}, Q = {eng(q, 'var')}), at "
                f"or above the target {wanted}: no capacitor is needed.")
    return None


# --- the exact susceptance ------------------------------------------------------------


def _closed_form(model, w: complex, b_guess: float) -> float | None:
    """Smallest B > 0 with the source's power on the target ray, from a quadratic.

    With ``u = jBV/D``, ``D = 1 + jBZ`` the current drawn by the capacitor, the source's
    power is ``S0 + α·u* + β·u + γ·|u|²``. Multiplying by ``|D|² = 1 − 2BX + B²|Z|²``
    (real, positive) leaves ``w·S·|D|² = c0 + c1·B + c2·B²``; the target ray is
    ``Im(...) = 0`` with ``Re(...) < 0`` (the source feeds the load).
    """
    v, z, h = complex(model.v_oc[0]), complex(model.z[0, 0]), model.half
    v0, i0, kv, ki = model.v0, model.i0, model.kv[:, 0], model.ki[:, 0]
    s0 = complex(h * np.sum(v0 * np.conj(i0)))
    alpha = complex(h * np.sum(v0 * np.conj(ki)))
    beta = complex(h * np.sum(kv * np.conj(i0)))
    gamma = complex(h * np.sum(kv * np.conj(ki)))
    c0 = w * s0
    c1 = w * (-2 * z.imag * s0 - 1j * alpha * v.conjugate() + 1j * beta * v)
    c2 = w * (abs(z) ** 2 * s0 + alpha * v.conjugate() * z + beta * v * z.conjugate()
              + gamma * abs(v) ** 2)
    a0, a1, a2 = c0.imag, c1.imag, c2.imag
    scale = max(abs(a1) * b_guess, abs(a0))
    if abs(a2) * b_guess ** 2 <= 1e-13 * scale:
        roots = [-a0 / a1] if a1 != 0 else []
    else:
        disc = a1 * a1 - 4 * a2 * a0
        if disc < 0:
            return None
        q = -0.5 * (a1 + math.copysign(math.sqrt(disc), a1))   # no cancellation
        roots = [q / a2] + ([a0 / q] if q != 0 else [])
    valid = [b for b in roots if b > 0 and (c0 + c1 * b + c2 * b * b).real < 0
             and 1 - 2 * b * z.imag + b * b * abs(z) ** 2 > 0]
    return min(valid) if valid else None


def _bracketed(model, m_matrix: np.ndarray, w: complex, b_guess: float) -> float | None:
    """First B > 0 where the load's power crosses the target ray, by Brent's method.

    ``g(B) = Im(w·S_load)/|S_load|`` is the sine of the angle above the target: positive
    at B = 0 (checked before), it falls as capacitance is added.
    """
    def ray(b: float) -> tuple[float, float]:
        s = -model.source_power(1j * b * m_matrix)
        t = w * s
        return t.imag / abs(s), t.real

    step = SEARCH_SPAN * b_guess / SEARCH_STEPS
    low, (g_low, _) = 0.0, ray(0.0)
    for k in range(1, SEARCH_STEPS + 1):
        high = k * step
        g_high, forward = ray(high)
        if g_low > 0 >= g_high and forward > 0:
            root = brentq(lambda b: ray(b)[0], low, high, xtol=1e-300, rtol=4 * np.finfo(float).eps,
                          maxiter=200)
            if abs(ray(root)[0]) < 1e-9:      # a crossing, not a jump across a pole
                return root
        low, g_low = high, g_high
    return None


def _leg_voltages(solution, place: dict) -> list[complex]:
    """Voltage each capacitor would see before it is connected (a tiny one draws nothing)."""
    v = solution.node_voltages
    if place["floating"]:
        lines = [v[n] for n in place["nodes"]]
        star = sum(lines) / 3                     # where a balanced star of its own settles
        return [x - star for x in lines]
    return [v[p] - v[n] for p, n in place["legs"]]


def correction_place(at, across):
    """The tool's ``at`` from the request's ``at`` (node or list) or ``across`` (two nodes)."""
    if at is not None and across is not None:
        raise CircuitError([Diagnostic("give the place as 'at' or as 'across', not both",
                                       "at: a node or three line nodes; across: two nodes")])
    if across is not None:
        return tuple(across)
    if isinstance(at, list):
        return at[0] if len(at) == 1 else tuple(at)
    return at or None
