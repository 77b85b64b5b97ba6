"""Reading element lines: ``NAME: KIND TERMINALS VALUE OPTIONS...``.

One method per shape of terminals (two-terminal, transformer, coupling, three-phase
blocks); values go through ``values.py``; options are read by one loop that knows
which kinds each option applies to. Three-phase blocks are expanded here into their
per-phase elements, so the solver never sees a block.
"""

from __future__ import annotations

import cmath
import difflib
import math
import re

from ..model import (CONTROLLED_KINDS, GROUND, Coupling, Element, Group)
from .expressions import LanguageError, TokenStream, decode_suffix, spelling_hint
from .spectrum import read_spectrum
from .values import expect_unit, parse_angle_radians, parse_value

#: Canonical unit each kind's value takes (None: a plain number).
KIND_UNITS = {
    "resistor": "ohm", "capacitor": "F", "inductor": "H", "impedance": "ohm",
    "admittance": "S", "voltage": "V", "current": "A", "vcvs": None, "vccs": "S",
    "ccvs": "ohm", "cccs": None, "voltage3": "V", "load3": "ohm",
}
ALL_KINDS = tuple(KIND_UNITS) + ("coupling", "transformer")

OPTION_KINDS = {
    "phase": ("voltage", "current", "voltage3"),
    "rms": ("voltage", "current", "voltage3"),
    "peak": ("voltage", "current", "voltage3"),
    "freq": ("voltage", "current", "voltage3"),
    "spectrum": ("voltage", "current", "voltage3"),
    "sense": CONTROLLED_KINDS,
    "tol": ("resistor", "inductor", "capacitor", "impedance", "admittance"),
    "line": ("voltage3",),
    "sequence": ("voltage3",),
}

_ROOT3 = math.sqrt(3.0)

#: The shape most lines of a big circuit have: NAME: KIND p -> n NUMBER[UNIT] [# comment].
SIMPLE_ELEMENT = re.compile(
    r"[ \t]*([A-Za-z][A-Za-z0-9_]*)[ \t]*:[ \t]*"
    r"(resistor|capacitor|inductor|impedance|admittance|voltage|current)[ \t]+"
    r"([A-Za-z0-9_.]+)[ \t]*->[ \t]*([A-Za-z0-9_.]+)[ \t]+"
    r"(-?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)[ \t]*([A-Za-zµΩ]*)[ \t]*(?:#.*)?")


def _canonical_node(text: str) -> str:
    return GROUND if text == "0" or text.lower() == "gnd" else text


DISTRIBUTIONS = ("uniform", "normal")


def read_tolerance(stream: TokenStream, line_text: str) -> tuple[float, str]:
    """``PCT[%] [uniform | normal]`` after the word ``tol``: (fraction, distribution)."""
    first = stream.peek()
    if first is None or stream.at("%"):
        raise stream.fail_here("tol needs a percentage", "e.g. tol 10%")
    q = parse_value(stream, "percentage")      # a named value is a value here too
    span = (first.start, stream.tokens[stream.pos - 1].end)
    expect_unit(q, None, "tolerance", span, line_text[span[0]:span[1]])
    if stream.at("%"):
        stream.take()
    if q.value.imag != 0 or not 0 <= q.value.real < 100:
        raise LanguageError("a tolerance must be between 0 % and 100 %", "e.g. tol 5%",
                            *span)
    law = "uniform"
    word = stream.peek()
    if word is not None and word.kind == "word":
        if word.text.lower() in DISTRIBUTIONS:
            law = stream.take().text.lower()
        else:
            close = difflib.get_close_matches(word.text.lower(), DISTRIBUTIONS, n=1,
                                              cutoff=0.6)
            if close or word.text.lower() in ("gauss", "gaussian", "flat", "rect"):
                meant = close[0] if close else ("normal" if word.text.lower()
                                                .startswith("gauss") else "uniform")
                raise LanguageError(f"'{word.text}' is not a distribution",
                                    f"did you mean '{meant}'? (tol PCT uniform, or tol "
                                    "PCT normal)", word.start, word.end)
    return q.value.real / 100.0, law


class ElementReader:
    def __init__(self, parser, circuit):
        self.parser = parser
        self.circuit = circuit
        self.source_frequencies: dict[str, float] = {}
        self.failed_lines = 0

    @staticmethod
    def is_kind(word: str) -> bool:
        return word.lower() in ALL_KINDS

    # -- shared pieces -------------------------------------------------------------

    def stream(self, tokens):
        return TokenStream(tokens, self.parser.lookup, self.parser.nesting)

    def node(self, stream: TokenStream, what: str = "node") -> str:
        """A node name, ground spelt "0"."""
        return _canonical_node(self.chunk(stream, what))

    def chunk(self, stream: TokenStream, what: str) -> str:
        """One token and every token glued to it (so '3a' or 'bus.1' read whole)."""
        token = stream.peek()
        if token is None or token.kind not in ("word", "number"):
            raise stream.fail_here(f"missing {what}", "terminals are written p -> n")
        text = stream.take().text
        while True:
            nxt = stream.peek()
            if nxt is None or not nxt.glued or nxt.kind not in ("word", "number"):
                break
            text += stream.take().text
        return text

    def arrow(self, stream: TokenStream) -> None:
        token = stream.peek()
        if token is None or token.kind != "arrow":
            raise stream.fail_here("expected '->' between the terminals",
                                   (spelling_hint(token.text) if token is not None else None)
                                   or "write the reference direction, e.g. a -> b")
        stream.take()

    def two_nodes(self, stream: TokenStream) -> tuple[str, str]:
        p = self.node(stream, "first terminal")
        self.arrow(stream)
        n = self.node(stream, "second terminal")
        return p, n

    def value(self, stream: TokenStream, kind: str, what: str = "value") -> complex:
        first = stream.peek()
        q = parse_value(stream, what)
        last = stream.tokens[stream.pos - 1]
        span = (first.start, last.end)
        expect_unit(q, KIND_UNITS[kind], kind, span, self.line.text[span[0]:span[1]])
        return q.value, span

    def bare_name(self, span) -> str | None:
        """The named value a value is, when it is that one name (units aside)."""
        words = [t for t in self.line.tokens if span[0] <= t.start and t.end <= span[1]]
        names = [t.text for t in words if t.kind == "word" and t.text in self.parser.values]
        if len(names) == 1 and (len(words) == 1 or (len(words) == 2 and words[0].text
                                                    == names[0])):
            return names[0]
        return None

    # -- the line ----------------------------------------------------------------------

    def read_simple(self, line) -> bool:
        """Read a line of the fast shape; False when the full reader must look at it."""
        match = line.match
        name, kind, p, n, number, suffix = match.groups()
        value = float(number)
        if suffix:
            decoded = decode_suffix(suffix)
            if decoded is None or decoded[2] or decoded[1] not in (None, KIND_UNITS[kind]):
                return False
            value *= decoded[0]
        if not math.isfinite(value) or (kind in ("capacitor", "inductor") and value <= 0):
            return False
        p = GROUND if p == "0" or p.lower() == "gnd" else p
        n = GROUND if n == "0" or n.lower() == "gnd" else n
        self.circuit.elements[name] = Element(name, kind, (p, n), complex(value), line.number)
        return True

    def read(self, line) -> None:
        self.line = line
        name_token, _colon, *rest = line.tokens
        name = name_token.text
        if not rest:
            self.failed_lines += 1
            raise LanguageError(f"element '{name}' has no kind",
                                "e.g. R1: resistor a -> b 10 ohm", _colon.start, _colon.end)
        kind_token = rest[0]
        kind = kind_token.text.lower()
        if kind not in ALL_KINDS:
            self.failed_lines += 1
            close = difflib.get_close_matches(kind, ALL_KINDS, n=1)
            hint = f"did you mean '{close[0]}'?" if close else "kinds: " + ", ".join(ALL_KINDS)
            raise LanguageError(f"'{kind_token.text}' is not an element kind", hint,
                                kind_token.start, kind_token.end)
        self.failed_lines += 1          # undone below when the line reads cleanly
        if len(rest) == 1:
            # Point past the kind: an empty stream has no column of its own.
            raise LanguageError(f"element '{name}' has no terminals",
                                "e.g. R1: resistor a -> b 10 ohm", kind_token.end,
                                kind_token.end + 1)
        stream = self.stream(rest[1:])
        if kind == "coupling":
            self.coupling(name, stream)
        elif kind == "transformer":
            self.transformer(name, stream)
        elif kind in ("voltage3", "load3"):
            self.three_phase(name, kind, stream)
        else:
            self.two_terminal(name, kind, stream)
        self.failed_lines -= 1

    def two_terminal(self, name: str, kind: str, stream: TokenStream) -> None:
        p, n = self.two_nodes(stream)
        value, span = self.value(stream, kind)
        options = self.options(stream, kind)
        self.check_passive_value(kind, value, span)
        element = Element(name, kind, (p, n), value, self.line.number)
        if kind in ("voltage", "current"):
            element.value = self.source_phasor(value, options, span)
            element.frequency = options.get("freq")
            element.spectrum = options.get("spectrum", ())
            if element.frequency is not None:
                self.source_frequencies[name] = element.frequency
        if kind in CONTROLLED_KINDS:
            if "sense" not in options:
                hint = ("e.g. sense in -> 0" if kind in ("vcvs", "vccs")
                        else "e.g. sense Rsense")
                raise LanguageError(f"{kind} '{name}' needs a 'sense' option (what controls "
                                    "it)", hint, self.line.tokens[0].start,
                                    self.line.tokens[-1].end)
            sense = options["sense"]
            if kind in ("vcvs", "vccs"):
                if isinstance(sense, str):
                    raise LanguageError(f"a {kind} senses a voltage: write 'sense c -> d'",
                                        "e.g. sense in -> 0", *options["sense_span"])
                element.sense_nodes = sense
            else:
                if not isinstance(sense, str):
                    raise LanguageError(f"a {kind} senses an element's current: write "
                                        "'sense ELEMENT'", "e.g. sense Rsense",
                                        *options["sense_span"])
                element.sense_element = sense
        if "tol" in options:
            element.tolerance, element.distribution = options["tol"]
        named = self.bare_name(span)
        if named is not None and self.parser.values[named].value == element.value:
            element.value_name = named
        self.circuit.elements[name] = element

    def check_passive_value(self, kind: str, value: complex, span) -> None:
        article = "an" if kind == "inductor" else "a"
        if kind in ("resistor", "capacitor", "inductor") and value.imag != 0:
            raise LanguageError(f"{article} {kind} value must be real; this one is complex",
                                "use 'impedance' for a complex value", *span)
        if kind in ("capacitor", "inductor") and not value.real > 0:
            raise LanguageError(f"{article} {kind} value must be greater than zero",
                                "a zero or negative value has no physical meaning here; "
                                "remove the element or fix the value", *span)

    def source_phasor(self, value: complex, options: dict, span) -> complex:
        amplitude = options.get("amplitude", self.parser.amplitudes)
        if amplitude != self.parser.amplitudes:
            value = value / math.sqrt(2) if amplitude == "peak" else value * math.sqrt(2)
        phasor = value * cmath.exp(1j * options.get("phase", 0.0))
        # A finite amplitude can still overflow here (1.5e308 V rms in a peak circuit).
        if not (math.isfinite(phasor.real) and math.isfinite(phasor.imag)):
            raise LanguageError("the value is not finite", "every value must be a finite "
                                "number", *span)
        return phasor

    # -- options -------------------------------------------------------------------------

    def options(self, stream: TokenStream, kind: str) -> dict:
        found: dict = {}
        while stream.peek() is not None:
            token = stream.take()
            word = token.text.lower()
            if token.kind != "word" or word not in OPTION_KINDS:
                close = difflib.get_close_matches(word, list(OPTION_KINDS), n=1)
                hint = (f"did you mean '{close[0]}'?" if close else
                        "options: " + ", ".join(o for o, k in OPTION_KINDS.items() if kind in k)
                        if any(kind in k for k in OPTION_KINDS.values()) else
                        f"a {kind} takes no options")
                hint = spelling_hint(token.text) or hint
                raise LanguageError(f"unexpected '{token.text}'", hint, token.start, token.end)
            if kind not in OPTION_KINDS[word]:
                article = "an" if kind[0] in "aeiou" else "a"
                raise LanguageError(f"'{word}' does not apply to {article} {kind}",
                                    f"'{word}' applies to: " + ", ".join(OPTION_KINDS[word]),
                                    token.start, token.end)
            key = "amplitude" if word in ("rms", "peak") else word
            if key in found:
                raise LanguageError(f"'{word}' is given twice", "keep one", token.start,
                                    token.end)
            if word in ("rms", "peak"):
                found[key] = word
            elif word == "line":
                found[key] = True
            elif word == "phase":
                found[key] = parse_angle_radians(stream)
            elif word == "freq":
                first = stream.peek()
                q = parse_value(stream, "frequency")
                span = (first.start, stream.tokens[stream.pos - 1].end)
                expect_unit(q, "Hz", "frequency", span, self.line.text[span[0]:span[1]])
                if q.value.imag != 0 or not q.value.real > 0:
                    raise LanguageError("freq must be a real number greater than zero",
                                        "e.g. freq 50 Hz", *span)
                found[key] = q.value.real
            elif word == "sense":
                first = stream.peek()
                raw = self.chunk(stream, "sensed element or nodes")
                if stream.peek() is not None and stream.peek().kind == "arrow":
                    stream.take()
                    found[key] = (_canonical_node(raw), self.node(stream, "second sensed node"))
                else:
                    found[key] = raw
                found["sense_span"] = (first.start, stream.tokens[stream.pos - 1].end)
            elif word == "tol":
                found[key] = self.tolerance(stream, token)
            elif word == "spectrum":
                found[key] = read_spectrum(stream, token, self.line.text)
            elif word == "sequence":
                seq = stream.peek()
                if seq is None or seq.text.lower() not in ("abc", "acb"):
                    raise stream.fail_here("sequence must be abc or acb", "e.g. sequence acb")
                found[key] = stream.take().text.lower()
        return found

    def tolerance(self, stream: TokenStream, option_token) -> tuple[float, str]:
        return read_tolerance(stream, self.line.text)

    # -- other shapes ----------------------------------------------------------------

    def transformer(self, name: str, stream: TokenStream) -> None:
        p1, n1 = self.two_nodes(stream)
        if not stream.at(","):
            raise stream.fail_here("a transformer has two windings: write p1 -> n1, p2 -> n2",
                                   "e.g. T1: transformer a -> 0, b -> 0 ratio 10:1")
        stream.take()
        p2, n2 = self.two_nodes(stream)
        token = stream.peek()
        if token is not None and token.kind == "word" and token.text.lower() == "ratio":
            stream.take()
        first = stream.peek()
        primary = parse_value(stream, "turns ratio")
        secondary = None
        if stream.at(":"):
            stream.take()
            secondary = parse_value(stream, "turns ratio")
        span = (first.start, stream.tokens[stream.pos - 1].end)
        for q in (primary, secondary):
            if q is not None:
                expect_unit(q, None, "turns ratio", span, self.line.text[span[0]:span[1]])
        if stream.peek() is not None:
            raise stream.fail_here(f"unexpected '{stream.peek().text}'",
                                   "a transformer line ends with its ratio, e.g. ratio 10:1")
        values = [primary.value] + ([secondary.value] if secondary else [])
        if any(v.imag != 0 or v.real == 0 for v in values):
            raise LanguageError("a turns ratio must be real and not zero", "e.g. ratio 10:1",
                                *span)
        ratio = values[0].real / (values[1].real if len(values) > 1 else 1.0)
        if not math.isfinite(ratio) or ratio == 0:
            raise LanguageError("this turns ratio is out of range (infinite or zero)",
                                "e.g. ratio 10:1", *span)
        self.circuit.elements[name] = Element(name, "transformer", (p1, n1, p2, n2),
                                              complex(ratio), self.line.number)

    def coupling(self, name: str, stream: TokenStream) -> None:
        inductors = []
        for which in ("first", "second"):
            token = stream.peek()
            if token is None or token.kind != "word":
                raise stream.fail_here(f"missing the {which} inductor's name",
                                       "e.g. K1: coupling L1 L2 k 0.95")
            inductors.append(stream.take().text)
        token = stream.peek()
        if token is None or token.text not in ("k", "K", "M", "m"):
            raise stream.fail_here("give the coupling as 'k VALUE' or 'M VALUE'",
                                   "e.g. k 0.95 or M 3 mH")
        stream.take()
        first = stream.peek()
        q = parse_value(stream, "coupling value")
        span = (first.start, stream.tokens[stream.pos - 1].end)
        raw = self.line.text[span[0]:span[1]]
        if stream.peek() is not None:
            raise stream.fail_here(f"unexpected '{stream.peek().text}'",
                                   "a coupling line ends with its k or M value")
        if q.value.imag != 0:
            raise LanguageError("a coupling value must be real", "e.g. k 0.95 or M 3 mH", *span)
        by_k = token.text in ("k", "K")
        expect_unit(q, None if by_k else "H", "coupling factor k" if by_k else "mutual "
                    "inductance M", span, raw)
        self.circuit.couplings[name] = Coupling(
            name, (inductors[0], inductors[1]), k=q.value.real if by_k else None,
            m=None if by_k else q.value.real, line=self.line.number,
            given="k" if by_k else "M")

    def three_phase(self, name: str, kind: str, stream: TokenStream) -> None:
        connection = "wye"
        if kind == "load3":
            token = stream.peek()
            if token is None or token.text.lower() not in ("wye", "delta"):
                raise stream.fail_here("a load3 block is 'wye' or 'delta'",
                                       "e.g. M1: load3 wye a b c -> n 8 + j6 ohm")
            connection = stream.take().text.lower()
        first_line = stream.peek()
        lines = tuple(self.node(stream, f"line {p}") for p in "abc")
        if len(set(lines)) < 3:
            raise LanguageError(f"the three line nodes of a {kind} block must differ "
                                f"({' '.join(lines)})", "write three different lines, e.g. "
                                "a b c", first_line.start, stream.tokens[stream.pos - 1].end)
        neutral = None
        if stream.peek() is not None and stream.peek().kind == "arrow":
            if connection == "delta":
                raise stream.fail_here("a delta block has no star point",
                                       "remove '-> n' or use wye")
            stream.take()
            neutral = self.node(stream, "star point")
        value, first_span = self.value(stream, kind)
        values = [value]
        while kind == "load3" and stream.at(","):
            stream.take()
            values.append(self.value(stream, kind)[0])
        if len(values) not in (1, 3):
            raise LanguageError("give one impedance (balanced) or three (one per phase)",
                                "e.g. 10 ohm, 8+j6 ohm, 6-j8 ohm", self.line.tokens[0].start,
                                self.line.tokens[-1].end)
        options = self.options(stream, kind)
        star = neutral if neutral is not None else f"{name}.n"
        group_nodes = star if connection == "wye" else None
        if kind == "voltage3":
            magnitude = values[0] / _ROOT3 if options.get("line") else values[0]
            base = self.source_phasor(magnitude, options, first_span)
            step = 1 if options.get("sequence", "abc") == "abc" else -1
            names = []
            for i, phase in enumerate("abc"):
                element_name = f"{name}.{phase}"
                shift = cmath.exp(-1j * math.radians(120.0) * i * step)
                element = Element(element_name, "voltage", (lines[i], star), base * shift,
                                  self.line.number, group=name,
                                  frequency=options.get("freq"),
                                  spectrum=options.get("spectrum", ()))
                if element.frequency is not None:
                    self.source_frequencies[element_name] = element.frequency
                self.circuit.elements[element_name] = element
                names.append(element_name)
        else:
            if any(v == 0 for v in values):
                raise LanguageError("a load3 impedance cannot be zero",
                                    "a short circuit is a line link, not a load; give "
                                    "each phase a non-zero impedance",
                                    self.line.tokens[0].start, self.line.tokens[-1].end)
            zs = values * 3 if len(values) == 1 else values
            if connection == "wye":
                pairs = [(f"{name}.{p}", (lines[i], star)) for i, p in enumerate("abc")]
            else:
                pairs = [(f"{name}.ab", (lines[0], lines[1])),
                         (f"{name}.bc", (lines[1], lines[2])),
                         (f"{name}.ca", (lines[2], lines[0]))]
            names = []
            for (element_name, nodes), z in zip(pairs, zs):
                self.circuit.elements[element_name] = Element(
                    element_name, "impedance", nodes, z, self.line.number, group=name)
                names.append(element_name)
        for element_name in names:
            if element_name in self.parser.defined_at:
                raise LanguageError(f"'{element_name}' is defined twice (first at line "
                                    f"{self.parser.defined_at[element_name]})",
                                    "rename the block or the element",
                                    self.line.tokens[0].start, self.line.tokens[0].end)
            self.parser.defined_at[element_name] = self.line.number
        rotation = options.get("sequence", "abc") if kind == "voltage3" else None
        self.circuit.groups[name] = Group(name, kind, connection, lines, group_nodes,
                                          tuple(names), self.line.number, rotation)

    def finish(self) -> None:
        """Nothing is pending after the last line; kept for symmetry with the parser."""
