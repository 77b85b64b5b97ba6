"""The circuit model: what a parsed circuit is, independent of how it was written.

The language module builds a ``Circuit``; the checks, the solver and every later
tool read it. Values are already in SI units and source amplitudes already in the
circuit's own amplitude convention (``rms`` or ``peak``), so nothing downstream
needs to know about prefixes, units or per-source ``rms``/``peak`` options.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import chain

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
    frequency: float | None = None
    group: str | None = None

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
    warnings: list = field(default_factory=list)      # Diagnostics found while reading
    #: Nodes held at 0 V besides ground: one per part with no conductive path to ground.
    references: tuple[str, ...] = ()
    text: str = ""
    filename: str = "<circuit>"

    def nodes(self) -> list[str]:
        """Every node that an element terminal touches, ground first, in order of appearance."""
        seen = dict.fromkeys((GROUND,))
        seen.update(dict.fromkeys(chain.from_iterable(
            e.nodes for e in self.elements.values())))
        return list(seen)
