"""The sympy side of the formula study: symbolic MNA, exact determinants, readable forms.

Built from the parsed ``Circuit`` with sympy's own constructors (``Symbol``, ``Rational``,
``Matrix``): no user text ever reaches sympy's parser. Every element value is a symbol
named as the element, or as the named value it is written as; values not kept symbolic
enter as exact rationals of the float's shortest repr (``4.7 kohm`` is 4700 exactly).

A probe is a linear form ``c·x`` of the MNA unknowns ``A·x = b``; it is solved without
fractions as ``c·x = -det([[A, b], [c, 0]]) / det(A)`` with every row first scaled to
polynomials, the determinants taken by sympy's fraction-free elimination over the
polynomial ring. A ratio of two probes on the same matrix needs no ``det(A)`` at all.

Imported only by the worker process of ``formula.py`` (through ``symbolic_result.py``)
and by tests: ``phasorbench solve`` never pays for sympy.
"""

from __future__ import annotations

from fractions import Fraction

import sympy as sp
from sympy.polys.matrices import DomainMatrix

from ..model import GROUND, Circuit
from .probes import Current, Impedance, Probe, Voltage

#: The complex frequency (s = jω).
S = sp.Symbol("s")
#: Significant digits of a value taken as exact: the text's own digits, without the
#: binary round-off of evaluating it (100 nF evaluates to 1.0000000000000001e-07).
EXACT_DIGITS = 15


class FormulaTooLarge(Exception):
    """The formula grew past ``max_terms`` terms (the size limit)."""

    def __init__(self, terms: int, limit: int):
        super().__init__(f"{terms} terms")
        self.terms, self.limit = terms, limit


class FormulaProblem(Exception):
    """A property of the circuit or probe that makes the formula undefined."""

    def __init__(self, message: str, hint: str):
        super().__init__(message)
        self.message, self.hint = message, hint


def exact(x: float) -> sp.Rational:
    """The exact rational of a value as written: 4700.0 → 4700, 1.0000000000000001e-07
    (100 nF) → 1/10000000; the float rounded to ``EXACT_DIGITS`` significant digits."""
    f = Fraction(format(float(x), f".{EXACT_DIGITS}g"))
    return sp.Rational(f.numerator, f.denominator)


def exact_complex(z: complex) -> sp.Expr:
    z = complex(z)
    return exact(z.real) + sp.I * exact(z.imag) if z.imag else exact(z.real)


#: Kinds whose symbol is a positive real number (the others may be complex or signed).
_POSITIVE = ("resistor", "capacitor", "inductor")


def make_symbols(entries: list[dict]) -> dict[str, sp.Symbol]:
    """One sympy symbol per entry of ``formula.symbol_table`` (names as the circuit's)."""
    out = {}
    for entry in entries:
        name = entry["name"]
        printed = name + "_" if name in ("s", "j") else name
        if entry["kind"] in _POSITIVE:
            out[name] = sp.Symbol(printed, positive=True)
        elif entry["kind"] in ("coupling", "transformer"):
            out[name] = sp.Symbol(printed, real=True)
        else:
            out[name] = sp.Symbol(printed)
    return out


class SymbolicMNA:
    """``A·x = b`` with sympy entries; ``values`` maps each element (and coupling) name
    to its symbol or its exact value."""

    def __init__(self, circuit: Circuit, values: dict[str, sp.Expr], probe: Probe):
        self.circuit = circuit
        self.values = values
        refs = {GROUND, *circuit.references}
        self.nodes = [n for n in circuit.nodes() if n not in refs]
        self.node = {n: k for k, n in enumerate(self.nodes)}
        probed = {p.element.name for p in probe.parts() if isinstance(p, Current)}
        sensed = {e.sense_element for e in circuit.elements.values() if e.sense_element}
        coupled = {n for c in circuit.couplings.values() for n in c.inductors}
        self.branch = {}
        for e in circuit.elements.values():
            if (e.kind in ("voltage", "vcvs", "ccvs", "transformer") or e.name in sensed
                    or e.name in coupled or (e.name in probed and e.kind in
                                             ("resistor", "capacitor", "inductor",
                                              "impedance", "admittance"))
                    or (e.kind in ("resistor", "impedance") and e.value == 0)):
                self.branch[e.name] = len(self.nodes) + len(self.branch)
        self.size = len(self.nodes) + len(self.branch)
        self.A: dict[tuple[int, int], sp.Expr] = {}
        self.b: dict[int, sp.Expr] = {}
        for e in circuit.elements.values():
            self._stamp(e)
        for c in circuit.couplings.values():
            m = S * values[c.name]
            first, second = (self.branch[n] for n in c.inductors)
            self._add(first, second, -m)
            self._add(second, first, -m)

    def index(self, node: str) -> int:
        return self.node.get(node, -1)

    def _add(self, i: int, j: int, value) -> None:
        if i >= 0 and j >= 0:
            self.A[(i, j)] = self.A.get((i, j), 0) + value

    def _rhs(self, i: int, value) -> None:
        if i >= 0:
            self.b[i] = self.b.get(i, 0) + value

    def _admittance(self, e) -> sp.Expr:
        v = self.values[e.name]
        return {"resistor": lambda: 1 / v, "impedance": lambda: 1 / v,
                "capacitor": lambda: S * v, "inductor": lambda: 1 / (S * v),
                "admittance": lambda: v}[e.kind]()

    def _stamp(self, e) -> None:
        v = self.values[e.name]
        col = self.branch.get(e.name)
        if e.kind == "transformer":
            p1, n1, p2, n2 = (self.index(x) for x in e.nodes)
            for node, sign in ((p1, 1), (n1, -1), (p2, -v), (n2, v)):
                self._add(node, col, sign)
                self._add(col, node, sign)
            return
        p, n = self.index(e.nodes[0]), self.index(e.nodes[1])
        kind = e.kind
        if col is None:
            if kind == "current":
                self._rhs(p, -v)
                self._rhs(n, v)
            elif kind == "vccs":
                c, d = (self.index(x) for x in e.sense_nodes)
                for row, sign in ((p, 1), (n, -1)):
                    self._add(row, c, sign * v)
                    self._add(row, d, -sign * v)
            elif kind == "cccs":
                s_col = self.branch[e.sense_element]
                self._add(p, s_col, v)
                self._add(n, s_col, -v)
            else:
                y = self._admittance(e)
                self._add(p, p, y)
                self._add(n, n, y)
                self._add(p, n, -y)
                self._add(n, p, -y)
            return
        self._add(p, col, 1)
        self._add(n, col, -1)
        if kind == "admittance":
            self._add(col, col, 1)
            self._add(col, p, -v)
            self._add(col, n, v)
            return
        if kind == "current":
            self._add(col, col, 1)
            self.b[col] = v
            return
        if kind == "vccs":
            c, d = (self.index(x) for x in e.sense_nodes)
            self._add(col, col, 1)
            self._add(col, c, -v)
            self._add(col, d, v)
            return
        if kind == "cccs":
            self._add(col, col, 1)
            self._add(col, self.branch[e.sense_element], -v)
            return
        self._add(col, p, 1)
        self._add(col, n, -1)
        if kind == "voltage":
            self.b[col] = v
        elif kind == "vcvs":
            c, d = (self.index(x) for x in e.sense_nodes)
            self._add(col, c, -v)
            self._add(col, d, v)
        elif kind == "ccvs":
            self._add(col, self.branch[e.sense_element], -v)
        elif kind in ("resistor", "impedance"):
            self._add(col, col, -v)
        elif kind == "capacitor":
            self._add(col, col, -1 / (S * v))
        elif kind == "inductor":
            self._add(col, col, -S * v)

    # -- probes as linear forms ---------------------------------------------------------

    def selector(self, part) -> tuple[dict[int, sp.Expr], dict[int, sp.Expr] | None,
                                      sp.Expr | None]:
        """``(c, b, constant)``: the probe is ``c·x`` of the system with right-hand side
        ``b`` (None: the circuit's own), or the ``constant`` (a current source's current)."""
        if isinstance(part, (Voltage, Impedance)):
            a = self.index(part.a.node)
            z = self.index(part.b.node if part.b is not None else GROUND)
            c = {}
            if a >= 0:
                c[a] = c.get(a, 0) + 1
            if z >= 0:
                c[z] = c.get(z, 0) - 1
            if isinstance(part, Voltage):
                return c, None, None
            test = {}
            if a >= 0:
                test[a] = 1
            if z >= 0:
                test[z] = -1              # 1 A pushed into a, drawn from b
            return c, test, None
        e = self.circuit.elements[part.element.name]
        v = self.values[e.name]
        if e.name in self.branch:
            return {self.branch[e.name]: 1}, None, None
        if e.kind == "current":
            return {}, None, v
        if e.kind == "vccs":
            c_, d_ = (self.index(x) for x in e.sense_nodes)
            c = {}
            if c_ >= 0:
                c[c_] = v
            if d_ >= 0:
                c[d_] = c.get(d_, 0) - v
            return c, None, None
        return {self.branch[e.sense_element]: v}, None, None          # cccs

    def matrix(self) -> tuple[sp.Matrix, list[sp.Expr]]:
        """A with every row scaled to polynomials, and the row scales."""
        rows = [[0] * self.size for _ in range(self.size)]
        for (i, j), value in self.A.items():
            rows[i][j] = value
        scales = []
        for i, row in enumerate(rows):
            scale = _lcm_of_denominators(row)
            scales.append(scale)
            rows[i] = [sp.cancel(x * scale) for x in row]
        return rows, scales


def _lcm_of_denominators(entries) -> sp.Expr:
    scale = sp.Integer(1)
    for x in entries:
        if x != 0:
            scale = sp.lcm(scale, sp.denom(sp.together(x)))
    return scale


def _det(rows) -> sp.Expr:
    if not rows:
        return sp.Integer(1)
    matrix = DomainMatrix.from_Matrix(sp.Matrix(rows))
    return sp.expand(matrix.domain.to_sympy(matrix.det()))


def probe_fraction(mna: SymbolicMNA, probe: Probe) -> tuple[sp.Expr, sp.Expr]:
    """Numerator and denominator polynomials of ``probe`` (not yet cancelled)."""
    rows, scales = mna.matrix()
    own_b = [sp.cancel(mna.b.get(i, 0) * scales[i]) for i in range(mna.size)]
    parts = []
    for part in probe.parts():
        c, test, constant = mna.selector(part)
        if constant is not None:
            parts.append(("constant", constant))
            continue
        b = own_b if test is None else [sp.cancel(test.get(i, 0) * scales[i])
                                        for i in range(mna.size)]
        c_scale = _lcm_of_denominators(list(c.values()))
        c_row = [sp.cancel(c.get(i, 0) * c_scale) for i in range(mna.size)]
        bordered = [row + [b[i]] for i, row in enumerate(rows)] + [c_row + [0]]
        parts.append(("form", (-_det(bordered), c_scale)))
    det_a = None

    def full(kind_value):
        nonlocal det_a
        kind, value = kind_value
        if kind == "constant":
            return value, sp.Integer(1)
        if det_a is None:
            det_a = _det(rows)
            if det_a == 0:
                raise FormulaProblem("the circuit equations are singular for every value "
                                     "of the symbols", "the circuit has no unique "
                                     "solution: check it with 'phasorbench check'")
        numerator, c_scale = value
        return numerator, c_scale * det_a

    if len(parts) == 2 and parts[0][0] == parts[1][0] == "form":
        (nx, dx), (ny, dy) = parts[0][1], parts[1][1]
        return nx * dy, ny * dx
    if len(parts) == 1:
        return full(parts[0])
    nx, dx = full(parts[0])
    ny, dy = full(parts[1])
    return nx * dy, dx * ny


def readable(numerator: sp.Expr, denominator: sp.Expr) -> tuple[sp.Expr, sp.Expr]:
    """Common factors cancelled, both collected in descending powers of ``s`` with
    factored coefficients, the denominator's leading coefficient made positive."""
    if sp.expand(denominator) == 0:
        raise FormulaProblem("the probe's denominator is zero for every value of the "
                             "symbols", "divide by a quantity that is not always 0")
    ratio = sp.cancel(sp.together(numerator / denominator))
    num, den = sp.fraction(ratio)
    num, den = sp.expand(num), sp.expand(den)
    lead = sp.Poly(den, S).LC() if den.has(S) else den
    first = sp.Add.make_args(sp.expand(lead))[0]
    if first.could_extract_minus_sign():
        num, den = -num, -den
    return num, den


def count_terms(expr: sp.Expr) -> int:
    return len(sp.Add.make_args(sp.expand(expr)))
