"""Element values with toleranced named values scaled: the named value itself is scaled
and every expression using it is read again by the language's own evaluator
(studies.md, "Tolerance").

A ``Revaluer`` reads the circuit's directives and named values once, keeps the lines of
the elements and couplings that use a toleranced named value, and re-reads only those
lines for each set of scale factors. Where an element's value is a product of powers of
the scaled named values (``Cbank``, ``(2*Cbank)``, ``(1/(2*pi*f*Xc))``), the exponents
are found once and every draw is one array expression (``arrays``); any other
expression is read again draw by draw.

>>> from phasorbench.workflow import read_circuit
>>> c = read_circuit("frequency 50 Hz\\nCb = 100 uF tol 10%\\nV1: voltage a -> 0 1\\n"
...                  "C1: capacitor a -> 0 (2*Cb)")
>>> r = Revaluer(c)
>>> round(r.values({"Cb": 1.1})[0]["C1"].real * 1e6, 9)
220.0
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import CircuitError, Diagnostic
from ..model import Circuit, Coupling
from .elements import ElementReader
from .expressions import LanguageError, Quantity
from .parser import CircuitParser, _Poisoned

#: Probe points of the power-law test (exact binary scales, then a check point).
_PROBES = (0.5, 2.0)
_CHECK = 1.3
_AGREE = 1e-12


class _Rereader(CircuitParser):
    """The parser, with each scaled named value multiplied by its factor when read."""

    scales: dict[str, float] = {}

    def evaluate_assignment(self, name: str) -> Quantity:
        quantity = super().evaluate_assignment(name)
        scale = self.scales.get(name)
        if scale is not None and scale != 1.0:
            quantity = Quantity(quantity.value * scale, quantity.unit)
            self.values[name] = quantity
        return quantity


class Revaluer:
    """Values of the users of ``circuit.value_tolerances``'s named values, re-read."""

    def __init__(self, circuit: Circuit, names=None):
        self.circuit = circuit
        self.names = tuple(names if names is not None else circuit.value_tolerances)
        parser = _Rereader(circuit.text, circuit.filename)
        parser.scales = {}
        lines = parser.classify()
        parser.element_names = {l.match.group(1) if l.kind == "simple" else l.tokens[0].text
                                for l in lines if l.kind in ("element", "simple")}
        for line in lines:
            if line.kind == "directive":
                parser.directive(line)
        for name in list(parser.assignments):
            if name not in parser.values and name not in parser.failed_values:
                try:
                    parser.evaluate_assignment(name)
                except _Poisoned:
                    pass
        self.parser = parser
        self.base = dict(parser.values)
        self.defined_at = dict(parser.defined_at)
        users = {u for name in self.names for u in circuit.value_users.get(name, ())}
        owners = set(users)
        for group in circuit.groups.values():
            if users & set(group.elements):
                owners.add(group.name)
        self.lines = []
        for line in lines:
            if line.kind == "simple":
                continue
            if line.kind == "element" and line.tokens[0].text in owners:
                self.lines.append(line)
        self.users = [u for u in list(circuit.elements) + list(circuit.couplings)
                      if u in users]
        # Every named value that must be read again when a name is scaled.
        above: dict[str, set[str]] = {name: set() for name in parser.assignments}
        for user, used in parser.uses.items():
            for u in used:
                above.setdefault(u, set()).add(user)
        self.affected = {}
        for name in self.names:
            seen, todo = {name}, [name]
            while todo:
                for up in above.get(todo.pop(), ()):
                    if up not in seen and not up.startswith("\0"):
                        seen.add(up)
                        todo.append(up)
            self.affected[name] = seen
        self._laws = None

    def values(self, scales: dict[str, float]) -> tuple[dict[str, complex],
                                                        dict[str, Coupling]]:
        """(element values, couplings) of the users with ``scales`` applied."""
        parser = self.parser
        stale = set().union(*(self.affected[n] for n in scales)) if scales else set()
        parser.values = {k: v for k, v in self.base.items() if k not in stale}
        parser.failed_values = set()
        parser.scales = dict(scales)
        parser.defined_at = dict(self.defined_at)
        before = len(parser.diagnostics)
        scratch = parser.empty()
        reader = ElementReader(parser, scratch)
        for line in self.lines:
            try:
                reader.read(line)
            except (LanguageError, _Poisoned) as exc:
                message = getattr(exc, "message", "a named value cannot be read")
                raise CircuitError([Diagnostic(
                    "with " + ", ".join(f"{n} × {s:.6g}" for n, s in scales.items()) +
                    f": {message}", "the tolerance box reaches values the line cannot "
                    "take: narrow the tolerance", line.number, None)]) from None
        if len(parser.diagnostics) > before:
            d = parser.diagnostics[before]
            del parser.diagnostics[before:]
            raise CircuitError([d])
        elements = {u: scratch.elements[u].value for u in self.users
                    if u in scratch.elements}
        couplings = {u: scratch.couplings[u] for u in self.users if u in scratch.couplings}
        return elements, couplings

    def _values_flat(self, scales: dict[str, float]) -> dict[str, complex]:
        elements, couplings = self.values(scales)
        out = dict(elements)
        for name, c in couplings.items():
            out[name] = complex(c.k if c.given == "k" else c.m)
        return out

    def laws(self):
        """Per user, ``(nominal, {name: exponent})`` when its value is a product of powers
        of the scaled names, else None (read again draw by draw)."""
        if self._laws is not None:
            return self._laws
        nominal = self._values_flat({})
        laws = {}
        probes = {name: [self._values_flat({name: s}) for s in _PROBES + (_CHECK,)]
                  for name in self.names}
        joint = self._values_flat({name: _CHECK for name in self.names})
        for user in nominal:
            v0 = nominal[user]
            law = {}
            ok = v0 != 0
            for name in self.names:
                if not ok:
                    break
                low, high, check = (p[user] for p in probes[name])
                if low == v0 and high == v0:
                    continue
                ratio = high / low
                if ratio.imag != 0 or ratio.real <= 0:
                    ok = False
                    break
                exponent = math.log(ratio.real) / math.log(_PROBES[1] / _PROBES[0])
                if abs(exponent * 2 - round(exponent * 2)) < 1e-9:
                    exponent = round(exponent * 2) / 2     # whole and half powers exact
                if abs(check - v0 * _CHECK ** exponent) > _AGREE * abs(v0) * 4:
                    ok = False
                    break
                law[name] = exponent
            if ok:
                guess = v0 * math.prod(_CHECK ** a for a in law.values())
                ok = abs(joint[user] - guess) <= _AGREE * abs(v0) * 4 * max(1, len(law))
            laws[user] = (v0, law) if ok else None
        self._laws = laws
        return laws

    def arrays(self, scales: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
        """Every user's value for every draw: ``scales`` holds one array per name (all
        of one length); a coupling's entry is its k (given by k) or its M."""
        size = len(next(iter(scales.values()))) if scales else 0
        out = {}
        slow = []
        for user, law in self.laws().items():
            if law is None:
                slow.append(user)
                continue
            v0, exponents = law
            value = np.full(size, v0, dtype=complex)
            for name, a in exponents.items():
                value = value * scales[name] ** a
            out[user] = value
        if slow:
            for user in slow:
                out[user] = np.empty(size, dtype=complex)
            for k in range(size):
                got = self._values_flat({n: float(s[k]) for n, s in scales.items()})
                for user in slow:
                    out[user][k] = got[user]
        return out
