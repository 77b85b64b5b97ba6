"""An independent answer for a phasorbench ``Circuit``, computed by lcapy.

The reference tests need a second solver that shares no code with phasorbench:
lcapy builds its own equations symbolically from its own component models. This
module translates a ``Circuit`` (server/phasorbench/model.py) into an lcapy circuit,
solves it in a forked child process and hands back node voltages and element currents
as complex numbers in phasorbench's conventions. It is the only place in the project
where lcapy's input format is written.

Conventions bridged here (each one checked against hand formulas in
test_against_lcapy.py, because a wrong bridge would give a silent wrong answer):

* amplitudes: lcapy's AC sources take the peak amplitude and the phase in radians,
  and lcapy answers with peak phasors of a cosine; an ``rms`` circuit is scaled by
  sqrt(2) on the way in and back out;
* directions: lcapy's current source and VCCS push their value *into* their first
  node, phasorbench's ``a -> b`` pushes it into ``b``, so those two are written with
  their output nodes swapped; lcapy's CCCS and CCVS read their control current
  through a named voltage source, so every sensed element gets a zero-volt source in
  series; lcapy reports no current for a VCCS or CCCS, so those get one too;
* coupling: lcapy's coupling takes k (M = k*sqrt(L1*L2), dots on first nodes), so a
  coupling given by M is converted to k;
* a circuit of resistors only is solved by lcapy in the time domain, where
  ``.phasor()`` loses the sine part: ``_phasor_of`` samples the time function instead;
* a part with no conductive path to ground (a transformer secondary, say) leaves
  lcapy's equations singular and lcapy then returns garbage without an error, so each
  such part is tied to ground at one of its nodes by a resistor that carries no
  current; voltages there are relative to that node (see ``ReferenceSolution.reference``).
"""

from __future__ import annotations

import cmath
import math
import multiprocessing
import traceback
import warnings
from dataclasses import dataclass, field

from phasorbench.model import GROUND, Circuit

#: Seconds one lcapy solve may take before the child is killed. Small circuits take
#: well under a second; a runaway symbolic solve can run for many minutes and lcapy's
#: bare ``except:`` swallows signal-based timeouts, hence a process and a hard limit.
SOLVE_TIMEOUT_S = 60.0

#: Value of the resistor tying a floating part to ground: any value works, since the
#: tie is the part's only connection to the rest and so carries no current.
_TIE_OHM = "1"


@dataclass
class ReferenceSolution:
    """lcapy's answer in phasorbench's conventions (amplitudes as in the circuit).

    ``nodes`` maps every node (ground ``"0"`` included) to its voltage phasor;
    ``currents`` maps every element to its current from its first node through it to
    its second (a transformer's primary); ``secondary_currents`` holds each
    transformer's secondary current, from ``p2`` through the winding to ``n2``.
    ``reference`` maps every node to the node its voltage is measured from: ``"0"``
    for the part connected to ground, the tied node for a floating part.
    """

    nodes: dict[str, complex]
    currents: dict[str, complex]
    secondary_currents: dict[str, complex] = field(default_factory=dict)
    reference: dict[str, str] = field(default_factory=dict)

    def voltage(self, p: str, n: str) -> complex:
        """``V(p) - V(n)``."""
        return self.nodes[p] - self.nodes[n]


def load_lcapy():
    """Import lcapy (once; later calls are free) so forked children inherit it."""
    import lcapy

    return lcapy


def solve_with_lcapy(circuit: Circuit, timeout: float = SOLVE_TIMEOUT_S) -> ReferenceSolution:
    """Solve ``circuit`` with lcapy in a forked child and return its answer.

    Raises ``NotImplementedError`` for what the translation does not cover (several
    frequencies), ``TimeoutError`` when lcapy takes longer than ``timeout`` seconds and
    ``RuntimeError`` carrying lcapy's traceback when lcapy fails.
    """
    plan = _translate(circuit)
    raw = _run_in_child(plan, timeout)
    scale = math.sqrt(2.0) if circuit.amplitudes == "rms" else 1.0
    nodes = {name: raw[key] / scale for name, key in plan.node_queries.items()}
    currents = {name: raw[key] / scale for name, key in plan.current_queries.items()}
    secondary = {name: raw[key] / scale for name, key in plan.secondary_queries.items()}
    return ReferenceSolution(nodes, currents, secondary, plan.reference)


# --- translation -------------------------------------------------------------------


@dataclass
class _Plan:
    """What the child builds and asks: lcapy lines and named queries."""

    omega: float
    lines: list[str] = field(default_factory=list)
    # query key -> ("V", lcapy node) or ("I", lcapy component)
    queries: dict[str, tuple[str, str]] = field(default_factory=dict)
    node_queries: dict[str, str] = field(default_factory=dict)
    current_queries: dict[str, str] = field(default_factory=dict)
    secondary_queries: dict[str, str] = field(default_factory=dict)
    reference: dict[str, str] = field(default_factory=dict)


class _Names:
    """Fresh lcapy names: numbered nodes (0 is ground) and numbered components.

    Phasorbench names may hold '.' or clash with lcapy's letter prefixes, so nothing
    of theirs is passed through.
    """

    def __init__(self) -> None:
        self.nodes = {GROUND: "0"}
        self._count = 0

    def node(self, name: str) -> str:
        if name not in self.nodes:
            self.nodes[name] = str(len(self.nodes))
        return self.nodes[name]

    def internal_node(self) -> str:
        return self.node(f"\0internal{len(self.nodes)}")

    def component(self, letter: str) -> str:
        self._count += 1
        return f"{letter}{self._count}"


_PASSIVE_LETTER = {"resistor": "R", "capacitor": "C", "inductor": "L", "impedance": "Z", "admittance": "Y"}


def _number(value: complex) -> str:
    """A value lcapy reads exactly: a float literal, or a braced complex expression."""
    value = complex(value)
    if value.imag == 0.0:
        return repr(value.real)
    return "{(%r)+(%r)*j}" % (value.real, value.imag)


def _real(value: complex, what: str) -> str:
    value = complex(value)
    if value.imag != 0.0:
        raise ValueError(f"{what} must be real, got {value!r}")
    return repr(value.real)


def part_references(circuit: Circuit) -> dict[str, str]:
    """Each node's part reference: "0", or the first node of a part without ground.

    Parts are joined by conduction only: two-terminal elements join their terminals,
    a transformer joins each winding's pair; sense terminals and couplings join nothing.
    """
    parent = {node: node for node in circuit.nodes()}

    def find(node: str) -> str:
        while parent[node] != node:
            parent[node] = parent[parent[node]]
            node = parent[node]
        return node

    def join(a: str, b: str) -> None:
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[rb] = ra

    for element in circuit.elements.values():
        pairs = [element.nodes[0:2], element.nodes[2:4]] if element.kind == "transformer" else [element.nodes]
        for a, b in pairs:
            join(a, b)
    first_of_root: dict[str, str] = {}
    for node in circuit.nodes():  # ground first, then order of appearance
        first_of_root.setdefault(find(node), node)
    ground_root = find(GROUND)
    return {node: GROUND if find(node) == ground_root else first_of_root[find(node)]
            for node in circuit.nodes()}


def _translate(circuit: Circuit) -> _Plan:
    omega = 2.0 * math.pi * circuit.frequency
    for element in circuit.elements.values():
        if element.frequency is not None and element.frequency != circuit.frequency:
            raise NotImplementedError(f"{element.name}: the oracle handles one frequency only")
    plan = _Plan(omega=omega)
    names = _Names()
    scale = math.sqrt(2.0) if circuit.amplitudes == "rms" else 1.0
    sensed = {e.sense_element for e in circuit.elements.values() if e.sense_element}
    sense_source: dict[str, str] = {}   # phasorbench element -> lcapy zero-volt source
    inductor_name: dict[str, str] = {}
    deferred: list[tuple[object, str, str]] = []  # ccvs/cccs, written once all senses exist

    def add(line: str) -> None:
        plan.lines.append(line)

    def ask_current(element_name: str, component: str) -> None:
        key = f"I:{element_name}"
        plan.queries[key] = ("I", component)
        plan.current_queries[element_name] = key

    def ac(amplitude: complex) -> str:
        amplitude = complex(amplitude) * scale
        return f"ac {abs(amplitude)!r} {cmath.phase(amplitude)!r} {omega!r}"

    for element in circuit.elements.values():
        if element.kind == "transformer":
            p1, n1, p2, n2 = (names.node(x) for x in element.nodes)
            tf = names.component("TF")
            x = names.internal_node()
            vs = names.component("V")
            # lcapy: V(p1, n1) = ratio * V(p2, x); the 0 V source reads the secondary current.
            add(f"{tf} {p1} {n1} {p2} {x} {_real(element.value, element.name)}")
            add(f"{vs} {x} {n2} 0")
            ask_current(element.name, tf)
            key = f"I2:{element.name}"
            plan.queries[key] = ("I", vs)
            plan.secondary_queries[element.name] = key
            continue

        p, n = (names.node(x) for x in element.nodes)
        kind = element.kind
        # Elements whose current lcapy cannot report, or that a controlled source senses,
        # sit in series with a 0 V source x -> n, which reads the current p -> n.
        needs_sense = element.name in sensed or kind in ("vccs", "cccs", "current")
        end = n
        if needs_sense:
            end = names.internal_node()
            vs = names.component("V")
            sense_source[element.name] = vs

        if kind in ("resistor", "capacitor", "inductor", "impedance", "admittance"):
            letter = _PASSIVE_LETTER[kind]
            cpt = names.component(letter)
            value = _real(element.value, element.name) if letter in "RCL" else _number(element.value)
            add(f"{cpt} {p} {end} {value}")
            if kind == "inductor":
                inductor_name[element.name] = cpt
        elif kind == "voltage":
            cpt = names.component("V")
            add(f"{cpt} {p} {end} {ac(element.value)}")
        elif kind == "current":
            cpt = names.component("I")
            add(f"{cpt} {end} {p} {ac(element.value)}")   # lcapy pushes into its first node
        elif kind == "vcvs":
            cpt = names.component("E")
            c, d = (names.node(x) for x in element.sense_nodes)
            add(f"{cpt} {p} {end} {c} {d} {_number(element.value)}")
        elif kind == "vccs":
            cpt = names.component("G")
            c, d = (names.node(x) for x in element.sense_nodes)
            add(f"{cpt} {end} {p} {c} {d} {_number(element.value)}")  # pushes into first node
        elif kind in ("ccvs", "cccs"):
            cpt = names.component("H" if kind == "ccvs" else "F")
            deferred.append((element, cpt, f"{p} {end}"))
        else:
            raise NotImplementedError(f"{element.name}: kind {kind!r} is not translated")

        if needs_sense:
            add(f"{sense_source[element.name]} {end} {n} 0")
            ask_current(element.name, sense_source[element.name])
        else:
            ask_current(element.name, cpt)

    for element, cpt, terminals in deferred:
        # lcapy's H and F: V(p, n) = gain * I and I(p -> n) = gain * I, I read + to -.
        add(f"{cpt} {terminals} {sense_source[element.sense_element]} {_number(element.value)}")

    for coupling in circuit.couplings.values():
        first, second = coupling.inductors
        if coupling.k is not None:
            k = float(coupling.k)
        else:
            l1 = complex(circuit.elements[first].value).real
            l2 = complex(circuit.elements[second].value).real
            k = float(coupling.m) / math.sqrt(l1 * l2)
        add(f"{names.component('K')} {inductor_name[first]} {inductor_name[second]} {k!r}")

    plan.reference = part_references(circuit)
    for node, ref in plan.reference.items():
        if node == ref and ref != GROUND:
            add(f"{names.component('R')} {names.node(node)} 0 {_TIE_OHM}")

    for node in circuit.nodes():
        key = f"V:{node}"
        plan.queries[key] = ("V", names.node(node))
        plan.node_queries[node] = key
    return plan


# --- solving in a child process ----------------------------------------------------


def _phasor_of(expr, omega: float) -> complex:
    """The peak phasor (cosine reference) of an lcapy voltage or current.

    lcapy keys a superposition by domain. When the only key is the angular frequency
    the phasor is read directly; otherwise (a resistor-only circuit is solved in the
    time domain, where ``.phasor()`` drops the sine part) the time function is sampled:
    x(t) = Re(X e^{jwt}) gives X = x(0) - j x(T/4).
    """
    keys = list(expr.keys())
    if not keys:  # lcapy's exact zero has no domain at all
        return 0j
    if len(keys) == 1 and keys[0] not in ("t", "dc", "s", "n"):
        return complex(expr.phasor().evaluate())
    x = expr.time()
    quarter = math.pi / (2.0 * omega)
    return complex(x(0).evaluate()) - 1j * complex(x(quarter).evaluate())


def _solve_in_child(plan: _Plan, conn) -> None:
    try:
        lcapy = load_lcapy()
        # lcapy's default solver ("DM") works in sympy's raw-expression domain once
        # complex admittances appear, misses zero pivots and returns garbage without an
        # error (seen with a tied floating transformer secondary); Gaussian elimination
        # with sympy's exact zero test is right there and also much faster.
        lcapy.rcParams["sympy.solver"] = "GE"
        # With that solver lcapy warns "This may take a while" from 10 unknowns up: a
        # progress notice, not a fault, but the test run turns warnings into errors.
        warnings.filterwarnings("ignore", message=r"\s*This may take a while", category=UserWarning)
        cct = lcapy.Circuit()
        for line in plan.lines:
            cct.add(line)
        out = {}
        for key, (what, name) in plan.queries.items():
            if what == "V":
                out[key] = 0j if name == "0" else _phasor_of(cct[name].V, plan.omega)
            else:
                out[key] = _phasor_of(cct[name].I, plan.omega)
        conn.send(("ok", out))
    except BaseException:  # report everything to the parent, which raises it
        conn.send(("error", traceback.format_exc() + "\nlcapy lines:\n" + "\n".join(plan.lines)))
    finally:
        conn.close()


def _run_in_child(plan: _Plan, timeout: float) -> dict[str, complex]:
    load_lcapy()  # imported before the fork, so each child starts with lcapy loaded
    context = multiprocessing.get_context("fork")
    receiver, sender = context.Pipe(duplex=False)
    child = context.Process(target=_solve_in_child, args=(plan, sender), daemon=True)
    child.start()
    sender.close()
    try:
        if not receiver.poll(timeout):
            raise TimeoutError(f"lcapy took longer than {timeout} s on:\n" + "\n".join(plan.lines))
        status, payload = receiver.recv()
    except EOFError:
        raise RuntimeError("the lcapy child process died without an answer") from None
    finally:
        receiver.close()
        child.join(2.0)
        if child.is_alive():
            child.kill()
            child.join()
    if status != "ok":
        raise RuntimeError(payload)
    return payload


# --- symbolic formulas --------------------------------------------------------------


def formula_with_lcapy(circuit: Circuit, query: tuple, timeout: float = SOLVE_TIMEOUT_S):
    """lcapy's own symbolic answer (a sympy expression in ``s`` and the element names)
    for the formula study's probes, every element value a symbol named as the element.

    ``query`` is ``("transfer", (in_p, in_n), (out_p, out_n))`` — V(out)/V(in) with the
    voltage source across the input pair driving (lcapy applies its own input there, so
    that source is left out) — or ``("impedance", a, b)`` — Z(a, b) with every
    independent source zeroed (voltage sources written as 0 V, current sources left out).
    Covers resistors, capacitors, inductors, impedances, VCVS and VCCS.
    """
    lines = []
    names = _Names()
    driven = None
    if query[0] == "transfer":
        driven = tuple(query[1])
    for element in circuit.elements.values():
        kind = element.kind
        p, n = element.nodes[0], element.nodes[1]
        if kind == "voltage":
            if driven is not None and {p, n} == set(driven):
                continue
            lines.append(f"{names.component('V')} {names.node(p)} {names.node(n)} 0")
        elif kind == "current":
            continue
        elif kind in ("resistor", "capacitor", "inductor", "impedance"):
            letter = _PASSIVE_LETTER[kind]
            lines.append(f"{names.component(letter)} {names.node(p)} {names.node(n)} "
                         f"{element.name}")
        elif kind == "vcvs":
            c, d = (names.node(x) for x in element.sense_nodes)
            lines.append(f"{names.component('E')} {names.node(p)} {names.node(n)} {c} {d} "
                         f"{element.name}")
        elif kind == "vccs":          # lcapy pushes into its first node: nodes swapped
            c, d = (names.node(x) for x in element.sense_nodes)
            lines.append(f"{names.component('G')} {names.node(n)} {names.node(p)} {c} {d} "
                         f"{element.name}")
        else:
            raise NotImplementedError(f"{element.name}: kind {kind!r} is not translated")
    if circuit.couplings:
        raise NotImplementedError("couplings are not translated for formulas")
    if query[0] == "transfer":
        ask = ("transfer", [names.node(x) for x in (*query[1], *query[2])])
    else:
        ask = ("impedance", [names.node(query[1]), names.node(query[2])])
    return _child_answer(_formula_in_child, (lines, ask), lines, timeout)


def _formula_in_child(lines, ask, conn) -> None:
    try:
        lcapy = load_lcapy()
        lcapy.rcParams["sympy.solver"] = "GE"       # see _solve_in_child
        warnings.filterwarnings("ignore", message=r"\s*This may take a while", category=UserWarning)
        cct = lcapy.Circuit()
        for line in lines:
            cct.add(line)
        kind, nodes = ask
        expr = cct.transfer(*nodes) if kind == "transfer" else cct.impedance(*nodes)
        conn.send(("ok", expr.sympy))
    except BaseException:
        conn.send(("error", traceback.format_exc() + "\nlcapy lines:\n" + "\n".join(lines)))
    finally:
        conn.close()


# --- frequency responses --------------------------------------------------------------


def response_with_lcapy(circuit: Circuit, query: tuple, timeout: float = SOLVE_TIMEOUT_S):
    """lcapy's transfer function or impedance of ``circuit`` with its element values as
    numbers: a sympy expression in ``s`` alone, solved once, to be evaluated at any
    frequency (the sweep's reference).

    ``query`` is ``("transfer", (in_p, in_n), (out_p, out_n))`` — V(out)/V(in) with lcapy
    applying its own input across the pair, so the voltage source there is left out — or
    ``("impedance", a, b)``. Every other independent source is zeroed (voltage sources
    written as 0 V, current sources left out), as the sweep's ``Z`` probes zero them.
    Covers every passive kind, the four controlled sources (a sensed element gets a 0 V
    source in series, read by lcapy's H and F), couplings (k, or M converted to k) and
    ideal transformers (a floating part tied to ground as in ``_translate``).
    """
    names = _Names()
    lines: list[str] = []
    driven = tuple(query[1]) if query[0] == "transfer" else None
    sensed = {e.sense_element for e in circuit.elements.values() if e.sense_element}
    sense_source: dict[str, str] = {}
    inductor_name: dict[str, str] = {}
    deferred = []
    for element in circuit.elements.values():
        kind = element.kind
        if element.frequency is not None and element.frequency != circuit.frequency:
            raise NotImplementedError(f"{element.name}: own frequency")
        if kind == "transformer":
            if element.name in sensed:
                raise NotImplementedError(f"{element.name}: a sensed transformer")
            p1, n1, p2, n2 = (names.node(x) for x in element.nodes)
            lines.append(f"{names.component('TF')} {p1} {n1} {p2} {n2} "
                         f"{_real(element.value, element.name)}")
            continue
        p, n = element.nodes[0], element.nodes[1]
        if kind == "voltage" and driven is not None and {p, n} == set(driven):
            if element.name in sensed:
                raise NotImplementedError(f"{element.name}: the driven source is sensed")
            continue
        if kind == "current":
            if element.name in sensed:
                raise NotImplementedError(f"{element.name}: a sensed current source")
            continue                                  # zeroed: an open circuit
        p, n = names.node(p), names.node(n)
        end = n
        if element.name in sensed:
            end = names.internal_node()
            sense_source[element.name] = names.component("V")
        if kind in _PASSIVE_LETTER:
            letter = _PASSIVE_LETTER[kind]
            cpt = names.component(letter)
            value = _real(element.value, element.name) if letter in "RCL" \
                else _number(element.value)
            lines.append(f"{cpt} {p} {end} {value}")
            if kind == "inductor":
                inductor_name[element.name] = cpt
        elif kind == "voltage":
            lines.append(f"{names.component('V')} {p} {end} 0")
        elif kind == "vcvs":
            c, d = (names.node(x) for x in element.sense_nodes)
            lines.append(f"{names.component('E')} {p} {end} {c} {d} {_number(element.value)}")
        elif kind == "vccs":                          # lcapy pushes into its first node
            c, d = (names.node(x) for x in element.sense_nodes)
            lines.append(f"{names.component('G')} {end} {p} {c} {d} {_number(element.value)}")
        elif kind in ("ccvs", "cccs"):
            deferred.append((element, "H" if kind == "ccvs" else "F", p, end))
        else:
            raise NotImplementedError(f"{element.name}: kind {kind!r} is not translated")
        if element.name in sense_source:
            lines.append(f"{sense_source[element.name]} {end} {n} 0")
    for element, letter, p, end in deferred:
        # lcapy's H and F: V(p, n) = gain·I and I(p -> n) = gain·I, I read + to − of
        # the sense source (as in _translate, held to hand formulas there)
        lines.append(f"{names.component(letter)} {p} {end} "
                     f"{sense_source[element.sense_element]} {_number(element.value)}")
    for coupling in circuit.couplings.values():
        first, second = coupling.inductors
        if coupling.k is not None:
            k = float(coupling.k)
        else:
            l1 = complex(circuit.elements[first].value).real
            l2 = complex(circuit.elements[second].value).real
            k = float(coupling.m) / math.sqrt(l1 * l2)
        lines.append(f"{names.component('K')} {inductor_name[first]} "
                     f"{inductor_name[second]} {k!r}")
    for node, ref in part_references(circuit).items():
        if node == ref and ref != GROUND:
            lines.append(f"{names.component('R')} {names.node(node)} 0 {_TIE_OHM}")
    if query[0] == "transfer":
        ask = ("transfer", [names.node(x) for x in (*query[1], *query[2])])
    else:
        ask = ("impedance", [names.node(query[1]), names.node(query[2])])
    return _child_answer(_formula_in_child, (lines, ask), lines, timeout)


def _child_answer(target, args, lines, timeout):
    """``target(*args, conn)`` run in a forked child with a hard ``timeout``."""
    load_lcapy()
    context = multiprocessing.get_context("fork")
    receiver, sender = context.Pipe(duplex=False)
    child = context.Process(target=target, args=(*args, sender), daemon=True)
    child.start()
    sender.close()
    try:
        if not receiver.poll(timeout):
            raise TimeoutError(f"lcapy took longer than {timeout} s on:\n" + "\n".join(lines))
        status, payload = receiver.recv()
    except EOFError:
        raise RuntimeError("the lcapy child process died without an answer") from None
    finally:
        receiver.close()
        child.join(2.0)
        if child.is_alive():
            child.kill()
            child.join()
    if status != "ok":
        raise RuntimeError(payload)
    return payload
