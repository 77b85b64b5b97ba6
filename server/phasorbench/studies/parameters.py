"""The toleranced quantities of a circuit, their draws and the element values they give
(studies.md, "Tolerance").

A quantity is an element with its own ``tol`` or a named value with one (one batch:
every element using it shares the draw). Each draw is a scale factor per quantity:
``uniform`` within ±tol, ``normal`` with σ = tol/3 (not truncated). Draws come in
chunks of ``CHUNK_RUNS``; chunk ``k`` uses the ``k``-th child of one
``numpy.random.SeedSequence(seed)``, and every chunk draws one matrix of uniforms
turned into either law by its inverse distribution function, so the numbers do not
depend on where or in which order the chunks run.

>>> from phasorbench.workflow import read_circuit
>>> c = read_circuit("frequency 50 Hz\\nV1: voltage a -> 0 1\\nR1: resistor a -> 0 5 tol 2%")
>>> q = quantities(c)
>>> [(p.name, p.fraction, p.law) for p in q.params]
[('R1', 0.02, 'uniform')]
>>> float(draw_scales(q, 1, 0, 3).min()) >= 0.98
True
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.special import ndtri

from ..errors import CircuitError, Diagnostic
from ..language.revalue import Revaluer
from ..model import Circuit

#: Runs per chunk: fixed by the study, never by the machine that runs it.
CHUNK_RUNS = 2_000
#: Kinds whose value may follow a toleranced quantity (what the batched engine restamps).
VARIABLE_KINDS = ("resistor", "impedance", "capacitor", "inductor", "admittance",
                  "voltage", "current")
_TINY = 2.0 ** -54


@dataclass(frozen=True)
class Param:
    """One toleranced quantity: an element's own ``tol`` or a named value's."""

    name: str
    source: str            # "element" or "value"
    fraction: float
    law: str               # "uniform" or "normal"
    nominal: complex
    line: int | None


@dataclass
class Quantities:
    """The quantities, the elements and couplings that move with them, and how."""

    circuit: Circuit
    params: list[Param]
    #: every element whose value moves, in circuit order
    elements: list[str]
    #: couplings whose M moves (with an inductor given by k, or by a named value)
    couplings: list[str]
    revaluer: Revaluer | None = None
    index: dict[str, int] = field(default_factory=dict)

    def bounds(self) -> tuple[np.ndarray, np.ndarray]:
        """The tolerance box in scale factors: (low, high) per quantity."""
        f = np.array([p.fraction for p in self.params])
        return 1 - f, 1 + f


def quantities(circuit: Circuit) -> Quantities:
    """Every toleranced quantity of ``circuit``; a clear error when there is none, or when
    one reaches an element the study cannot vary."""
    params = []
    for name, (fraction, law, line) in circuit.value_tolerances.items():
        if circuit.value_users.get(name):
            params.append(Param(name, "value", fraction, law, circuit.values[name], line))
    for e in circuit.elements.values():
        if e.tolerance:
            params.append(Param(e.name, "element", e.tolerance, e.distribution or "uniform",
                                e.value, e.line))
    if not params:
        unused = [n for n in circuit.value_tolerances if not circuit.value_users.get(n)]
        hint = (f"the named value{'s' if len(unused) > 1 else ''} {', '.join(unused)} "
                "with a tol is used by no element" if unused else
                "add a tolerance to a part, e.g. 'R1: resistor a -> b 4.7 kohm tol 1%', or "
                "to a named value, e.g. 'Cbank = 180 uF tol 10%'")
        raise CircuitError([Diagnostic("the circuit has no toleranced quantity: nothing "
                                       "can vary", hint)])
    moved = {p.name for p in params if p.source == "element"}
    for p in params:
        if p.source == "value":
            moved |= set(circuit.value_users[p.name])
    problems = []
    for name in sorted(moved & set(circuit.elements)):
        e = circuit.elements[name]
        if e.kind not in VARIABLE_KINDS:
            problems.append(Diagnostic(
                f"{e.kind} '{name}' uses a toleranced named value: a tolerance study "
                "varies passives and independent sources only", "give this element a "
                "value of its own, or move the tolerance onto the parts", e.line, None))
    if problems:
        raise CircuitError(problems)
    elements = [n for n in circuit.elements if n in moved]
    inductors = set(elements)
    couplings = [c.name for c in circuit.couplings.values()
                 if c.name in moved or (c.given == "k" and inductors & set(c.inductors))]
    revaluer = Revaluer(circuit, [p.name for p in params if p.source == "value"]) \
        if any(p.source == "value" for p in params) else None
    return Quantities(circuit, params, elements, couplings, revaluer,
                      {p.name: k for k, p in enumerate(params)})


def chunk_count(runs: int) -> int:
    return math.ceil(runs / CHUNK_RUNS)


def draw_scales(q: Quantities, seed: int, chunk: int, runs: int) -> np.ndarray:
    """The scale factors of chunk ``chunk`` (``runs`` rows, one column per quantity)."""
    child = np.random.SeedSequence(seed, spawn_key=(chunk,))   # = SeedSequence(seed)
    u = np.random.default_rng(child).random((runs, len(q.params)))  # .spawn(…)[chunk]
    laws = q.__dict__.get("_laws")
    if laws is None:
        fraction = np.array([p.fraction for p in q.params])
        normal = np.flatnonzero([p.law == "normal" for p in q.params])
        laws = q.__dict__["_laws"] = (fraction, normal, fraction[normal] / 3)
    fraction, normal, sigma = laws
    scales = 2 * u                  # 1 + fraction·(2u − 1), in place, step by step
    scales -= 1
    scales *= fraction
    scales += 1
    if len(normal):
        z = ndtri(np.clip(u[:, normal], _TINY, 1 - _TINY))
        z *= sigma
        z += 1
        scales[:, normal] = z       # 1 + (fraction/3)·z
    return scales


def entities(q: Quantities) -> list[str]:
    """The moving elements, then the moving couplings: the columns of ``value_matrix``."""
    return list(q.elements) + list(q.couplings)


def value_matrix(q: Quantities, scales: np.ndarray) -> np.ndarray:
    """Every moving element's value and every moving coupling's M (columns, in
    ``entities`` order) for every row of ``scales`` (rows: draws; columns: quantities)."""
    circuit = q.circuit
    rows = scales.shape[0]
    plan = q.__dict__.get("_plan")
    if plan is None:
        names = q.elements
        nominal = np.array([circuit.elements[n].value for n in names], dtype=complex)
        own = [(j, q.index[n]) for j, n in enumerate(names)
               if n in q.index and q.params[q.index[n]].source == "element"]
        plan = q.__dict__["_plan"] = (nominal, np.array([j for j, _ in own], dtype=int),
                                      np.array([k for _, k in own], dtype=int),
                                      {n: j for j, n in enumerate(names)})
    nominal, own_cols, own_params, column = plan
    out = np.empty((rows, len(q.elements) + len(q.couplings)), dtype=complex)
    every = len(own_cols) == len(nominal) and q.revaluer is None
    if every:                # every element its own tolerance: one product, no gather
        np.multiply(nominal, scales[:, own_params], out=out[:, :len(nominal)])
    else:
        out[:, :len(nominal)] = nominal
    named = {}
    if q.revaluer is not None:
        named = q.revaluer.arrays({p.name: scales[:, k] for k, p in enumerate(q.params)
                                   if p.source == "value"})
        for name, value in named.items():
            if name in column:
                out[:, column[name]] = value
    if len(own_cols) and not every:
        out[:, own_cols] *= scales[:, own_params]
    for offset, name in enumerate(q.couplings):
        c = circuit.couplings[name]
        own = named.get(name)
        j = len(nominal) + offset
        if c.given == "M":
            out[:, j] = own if own is not None else complex(c.m)
            continue
        k = own.real if own is not None else c.k
        l1, l2 = (out[:, column[n]].real if n in column else
                  circuit.elements[n].value.real for n in c.inductors)
        out[:, j] = k * np.sqrt(l1) * np.sqrt(l2)
    return out


def element_values(q: Quantities, scales: np.ndarray) -> dict[str, np.ndarray]:
    """``value_matrix`` as one array per element or coupling name."""
    matrix = value_matrix(q, scales)
    return {name: matrix[:, j] for j, name in enumerate(entities(q))}


#: Step in ln(scale) of the central difference that gives dv/dln q (error ~ step²).
_STEP = 1e-5


def value_derivatives(q: Quantities, at: np.ndarray | None = None) -> np.ndarray:
    """d value / d ln(scale) of every moving element and coupling (rows, ``entities``
    order) to every quantity (columns),
    at the scales ``at`` (default: nominal), by a central difference in ln(scale)."""
    m = len(q.params)
    base = np.ones(m) if at is None else np.asarray(at, dtype=float)
    scales = np.tile(base, (2 * m, 1))
    for k in range(m):
        scales[2 * k, k] *= math.exp(_STEP)
        scales[2 * k + 1, k] *= math.exp(-_STEP)
    values = value_matrix(q, scales)
    return (values[0::2] - values[1::2]).T / (2 * _STEP)        # entity × quantity
