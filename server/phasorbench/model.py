"""The circuit model: what a parsed circuit is, independent of how it was written.

The language module builds a ``Circuit``; the checks, the solver and every later
tool read it. Values are already in SI units and source amplitudes already in the
circuit's own amplitude convention (``rms`` or ``peak``), so nothing downstream
needs to know about prefixes, units or per-source ``rms``/``peak`` options.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import chain
from operator import attrgetter, itemgetter

import numpy as np

GROUND = "0"

#: Kinds stamped as an admittance between two nodes.
PASSIVE_KINDS = ("resistor", "capacitor", "inductor", "impedance", "admittance")
#: Kinds whose branch fixes a voltage (they need a current unknown).
VOLTAGE_KINDS = ("voltage", "vcvs", "ccvs")
#: Kinds whose branch fixes a current.
CURRENT_KINDS = ("current", "vccs", "cccs")
SOURCE_KINDS = ("voltage", "current")
CONTROLLED_KINDS = ("vcvs", "vccs", "ccvs", "cccs")
TWO_TERMINAL_KINDS = PASSIVE_KINDS + VOLTAGE_KINDS + CURRENT_KINDS
ELEMENT_KINDS = TWO_TERMINAL_KINDS + ("transformer",)


@dataclass
class Element:
    """One branch element.

    ``nodes`` is ``(p, n)`` for two-terminal kinds and ``(p1, n1, p2, n2)`` for a
    transformer; ground is always spelt ``"0"``. ``value`` is in SI units:
    ohm (resistor, impedance), F, H, S (admittance), the source phasor in the
    circuit's amplitude convention (voltage, current), the gain (controlled
    sources) or the turns ratio n of ``n:1`` (transformer).
    """

    name: str
    kind: str
    nodes: tuple[str, ...]
    value: complex
    line: int | None = None
    sense_nodes: tuple[str, str] | None = None
    sense_element: str | None = None
    tolerance: float | None = None
    #: How ``tolerance`` is drawn: "uniform" (within ±tol) or "normal" (σ = tol/3).
    distribution: str | None = None
    frequency: float | None = None
    group: str | None = None
    #: The named value the element's value is, when written as that bare name
    #: (``Ccorr: capacitor c -> 0 Cpf``); the formula study gives both one symbol.
    value_name: str | None = None
    #: A source's harmonic spectrum (studies.md, "Harmonic spectra"): one
    #: ``(order, fraction, angle)`` per entry — the component at ``order`` × the source's
    #: frequency, ``fraction`` of its magnitude, at ``angle + order × (source phase)``
    #: (radians). Empty for a pure sinusoid.
    spectrum: tuple[tuple[float, float, float], ...] = ()

    @property
    def p(self) -> str:
        return self.nodes[0]

    @property
    def n(self) -> str:
        return self.nodes[1]


@dataclass
class Coupling:
    """Magnetic coupling of two inductors, given by ``k`` or by ``M`` (henries)."""

    name: str
    inductors: tuple[str, str]
    k: float | None = None
    m: float | None = None
    line: int | None = None
    #: How the line gave it: "k" (M follows the inductors) or "M" (M is kept).
    given: str = "k"


@dataclass
class Group:
    """A three-phase block: the names of its per-phase elements and how it was written."""

    name: str
    kind: str                     # "voltage3" or "load3"
    connection: str               # "wye" or "delta"
    lines: tuple[str, str, str]   # the line nodes a, b, c
    neutral: str | None           # the star point (None for delta)
    elements: tuple[str, ...]     # per-phase element names, phase order a, b, c
    line: int | None = None
    #: The declared phase rotation of a ``voltage3`` block ("abc" or "acb"); None for a
    #: load, which takes the rotation of the circuit's sources (see results.py).
    rotation: str | None = None


#: Points of a frequency sweep (studies.md, "Frequency response"): the default, and the
#: range a ``sweep`` line, the command line, the API and the page may ask for.
SWEEP_DEFAULT_POINTS = 200
SWEEP_MIN_POINTS = 2
SWEEP_MAX_POINTS = 100_000
#: Spacings of a sweep's grid, the first the default.
SWEEP_SPACINGS = ("log", "linear")


@dataclass(frozen=True)
class SweepRange:
    """The circuit's default frequency-response range, from its ``sweep`` line.

    ``start`` < ``stop`` in Hz, both finite and above zero; ``points`` and ``spacing``
    are None where the line leaves them to the defaults (200 points, log spacing).
    """

    start: float
    stop: float
    points: int | None = None
    spacing: str | None = None
    line: int | None = None


@dataclass
class Circuit:
    """A whole parsed circuit, ready for the structure checks and the solver."""

    title: str | None
    frequency: float
    amplitudes: str                                   # "rms" or "peak"
    elements: dict[str, Element] = field(default_factory=dict)
    couplings: dict[str, Coupling] = field(default_factory=dict)
    groups: dict[str, Group] = field(default_factory=dict)
    values: dict[str, complex] = field(default_factory=dict)
    #: Named values with a ``tol``: name -> (fraction, "uniform" | "normal", line).
    value_tolerances: dict[str, tuple[float, str, int]] = field(default_factory=dict)
    #: Elements and couplings whose value uses each toleranced named value (directly
    #: or through other named values), in order of appearance.
    value_users: dict[str, tuple[str, ...]] = field(default_factory=dict)
    warnings: list = field(default_factory=list)      # Diagnostics found while reading
    #: Nodes held at 0 V besides ground: one per part with no conductive path to ground.
    references: tuple[str, ...] = ()
    #: The ``sweep`` line's range (None: the file has none).
    sweep: SweepRange | None = None
    _table: "ElementTable | None" = field(default=None, init=False, repr=False,
                                          compare=False)

    def table(self) -> "ElementTable":
        """The elements as columns (built once; the checks and the solver both read it)."""
        key = (id(self.elements), len(self.elements))
        if self._table is None or self._table.key != key:
            self._table = ElementTable(self, key)
        return self._table
    text: str = ""
    filename: str = "<circuit>"

    def nodes(self) -> list[str]:
        """Every node that an element terminal touches, ground first, in order of appearance."""
        return list(self.table().node_names)


class ElementTable:
    """The circuit's elements as parallel columns, for array code over big circuits.

    Attribute access over tens of thousands of element objects is the slow part of
    Python code here, so it happens once: ``names``, ``kinds``, ``values`` (complex
    array), ``node_names`` (ground first, in order of appearance) with ``node_index``,
    and per branch — one per two-terminal element, two per transformer (one per
    winding) — ``owner`` (element position), ``p`` and ``n`` (node positions). The
    first ``len(elements)`` branches are the elements themselves, in order; transformers'
    second windings follow.
    """

    def __init__(self, circuit: "Circuit", key):
        self.key = key
        elements = list(circuit.elements.values())
        self.elements = elements
        self.names = tuple(circuit.elements)
        if elements:
            kinds, values, nodes = zip(*map(_COLUMNS, elements))
        else:
            kinds, values, nodes = (), (), ()
        self.kinds = kinds
        self.values = np.array(values, dtype=complex)
        self.node_names = list(dict.fromkeys(chain((GROUND,), chain.from_iterable(nodes))))
        self.node_index = dict(zip(self.node_names, range(len(self.node_names))))
        get = self.node_index.__getitem__
        count = len(elements)
        p = np.fromiter(map(get, map(_FIRST, nodes)), np.int64, count)
        n = np.fromiter(map(get, map(_SECOND, nodes)), np.int64, count)
        owner = np.arange(count, dtype=np.int64)
        windings = [k for k, kind in enumerate(kinds) if kind == "transformer"]
        if windings:
            p = np.concatenate([p, [get(nodes[k][2]) for k in windings]])
            n = np.concatenate([n, [get(nodes[k][3]) for k in windings]])
            owner = np.concatenate([owner, windings])
        self.p, self.n, self.owner = p, n, owner


_COLUMNS = attrgetter("kind", "value", "nodes")
_FIRST = itemgetter(0)
_SECOND = itemgetter(1)
