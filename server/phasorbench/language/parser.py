"""Reading a whole circuit text into the circuit model, reporting every error in one pass.

Three passes over the lines: directives and named values first (so a value or the
``amplitudes`` directive may be written anywhere in the file), then element lines
(``elements.py`` reads each one), then file-level checks (a missing frequency, no
elements). Every problem becomes a ``Diagnostic``; nothing raises past this module
except ``CircuitSyntaxError`` holding all of them.
"""

from __future__ import annotations

import dataclasses
import difflib
import re

from ..errors import CircuitSyntaxError, Diagnostic, source_lines
from ..model import Circuit
from .elements import SIMPLE_ELEMENT, ElementReader, read_tolerance
from .expressions import LanguageError, Quantity, TokenStream
from .lexer import Token, tokenize
from .lookalikes import foreign_digits_hint, name_hint, node_warnings
from .suggest import NameIndex
from .sweeprange import read_sweep
from .values import expect_unit, parse_value

NAME_PATTERN = re.compile(r"[A-Za-z][A-Za-z0-9_]*")
#: A named value spelt like this would be read as an imaginary number (j5 is 5j) where used.
IMAGINARY_NAME = re.compile(r"j\d")
DIRECTIVES = ("title", "frequency", "sweep", "amplitudes")
#: A file larger than this many lines is refused before any work (a guard for pasted junk).
MAX_LINES = 400_000


class _Poisoned(Exception):
    """A line uses a named value whose own definition failed: already reported there."""


class _Line:
    __slots__ = ("number", "text", "tokens", "kind", "match")

    def __init__(self, number: int, text: str, tokens: list[Token], kind: str):
        self.number, self.text, self.tokens, self.kind = number, text, tokens, kind
        self.match = None

    def tokenize(self) -> None:
        """Tokens for a line first taken by the fast path (only when it needs them)."""
        if self.tokens is None:
            self.tokens = tokenize(self.text)[0]


class CircuitParser:
    def __init__(self, text: str, filename: str):
        self.text = text
        self.filename = filename
        self.diagnostics: list[Diagnostic] = []
        self.assignments: dict[str, _Line] = {}
        self.values: dict[str, Quantity] = {}
        self.failed_values: set[str] = set()
        self.evaluating: list[str] = []
        #: Nesting depth shared by every expression stream (see TokenStream).
        self.nesting = [0]
        self.defined_at: dict[str, int] = {}
        self.title: str | None = None
        self.frequency: float | None = None
        self.amplitudes = "rms"
        self.sweep = None
        self.directive_lines: dict[str, int] = {}
        #: Element lines dropped for a bad name: the file has elements, just not readable.
        self.unread_elements = 0
        #: Did-you-mean over the named values, built at the first miss.
        self.value_names: NameIndex | None = None
        #: Named values with a ``tol``: name -> (fraction, distribution, line).
        self.value_tolerances: dict[str, tuple[float, str, int]] = {}
        #: The named values each named value or element line uses directly.
        self.uses: dict[str, set[str]] = {}
        self.recording: list[set[str]] = []

    # -- diagnostics ------------------------------------------------------------------

    def error(self, line: int | None, message: str, hint: str = "", start: int = 0,
              end: int | None = None, severity: str = "error") -> None:
        column = None if line is None else start + 1
        length = 1 if end is None else max(1, end - start)
        self.diagnostics.append(Diagnostic(message, hint, line, column, length, severity))

    def language_error(self, line: _Line, exc: LanguageError) -> None:
        self.error(line.number, exc.message, exc.hint, exc.start, exc.end)
        for more in exc.more:
            self.error(line.number, more.message, more.hint, more.start, more.end)

    # -- named values -------------------------------------------------------------------

    def lookup(self, token: Token) -> Quantity:
        name = token.text
        if self.recording:
            self.recording[-1].add(name)
        if name in self.values:
            return self.values[name]
        if name in self.failed_values:
            raise _Poisoned(name)
        if name in self.assignments:
            if name in self.evaluating:
                chain = " -> ".join(self.evaluating[self.evaluating.index(name):] + [name])
                raise LanguageError(f"named value '{name}' is defined in terms of itself "
                                    f"({chain})", "break the circle", token.start, token.end)
            return self.evaluate_assignment(name)
        if name in self.element_names:
            raise LanguageError(f"'{name}' is an element, not a named value",
                                "use a named value (NAME = VALUE) here", token.start, token.end)
        if self.value_names is None:
            self.value_names = NameIndex(self.assignments)
        close = self.value_names.closest(name)
        hint = f"did you mean '{close}'?" if close else \
            "define it on its own line, e.g. Cpf = 150 uF (or check the spelling)"
        raise LanguageError(f"'{name}' is not a number, a unit or a named value", hint,
                            token.start, token.end)

    def evaluate_assignment(self, name: str) -> Quantity:
        line = self.assignments[name]
        self.evaluating.append(name)
        self.recording.append(self.uses.setdefault(name, set()))
        try:
            stream = TokenStream(line.tokens[2:], self.lookup, self.nesting)
            quantity = parse_value(stream, "value")
            word = stream.peek()
            if word is not None and word.kind == "word" and word.text.lower() == "tol":
                stream.take()
                self.recording.append(set())      # a tolerance's own value is no use
                try:
                    fraction, law = read_tolerance(stream, line.text)
                finally:
                    self.recording.pop()
                self.value_tolerances[name] = (fraction, law, line.number)
            if stream.peek() is not None:
                tok = stream.peek()
                raise LanguageError(f"unexpected '{tok.text}' after the value",
                                    "a named value line is NAME = VALUE", tok.start, tok.end)
        except LanguageError as exc:
            # The innermost named value being read owns the error's columns: report it on
            # its own line (once), and let every value built on it fail quietly.
            self.language_error(line, exc)
            self.failed_values.add(name)
            raise _Poisoned(name) from None
        except _Poisoned:
            self.failed_values.add(name)
            raise
        finally:
            self.evaluating.pop()
            self.recording.pop()
        self.values[name] = quantity
        return quantity

    # -- the passes -----------------------------------------------------------------

    def classify(self) -> list[_Line]:
        lines = []
        simple = SIMPLE_ELEMENT.fullmatch
        for number, raw in enumerate(source_lines(self.text), start=1):
            if number == 1 and raw.startswith("\ufeff"):
                # A byte-order mark opens many files saved on Windows: read as a space
                # (columns stay those of the text as given), as the command line does.
                raw = " " + raw[1:]
            match = simple(raw)
            if match is not None:
                # The common shape 'NAME: KIND p -> n NUMBER[UNIT]' skips the tokenizer;
                # ElementReader.read_simple falls back to the full reader on any doubt.
                line = _Line(number, raw, None, "simple")
                line.match = match
                start, end = match.span(1)
                if self.check_name(line, Token("word", match.group(1), start, end, False)):
                    lines.append(line)
                else:
                    self.unread_elements += 1
                continue
            tokens, _comment = tokenize(raw)
            if not tokens:
                continue
            if self.bad_first_word(number, raw, tokens):
                continue
            first = tokens[0]
            second = tokens[1] if len(tokens) > 1 else None
            if second is not None and second.kind == "punct" and second.text == ":":
                kind = "element"
            elif second is not None and second.kind == "punct" and second.text == "=":
                kind = "assignment"
            else:
                kind = "directive"
            line = _Line(number, raw, tokens, kind)
            if kind in ("element", "assignment"):
                if not self.check_name(line, first):
                    if kind == "element":
                        self.unread_elements += 1
                    continue
                if kind == "assignment":
                    if IMAGINARY_NAME.match(first.text):
                        self.error(number, f"'{first.text}' reads as an imaginary number and "
                                   "cannot be a named value", "choose a name that does not "
                                   "start with j and a digit", first.start, first.end)
                        continue
                    self.assignments[first.text] = line
            lines.append(line)
        return lines

    def bad_first_word(self, number: int, raw: str, tokens: list[Token]) -> bool:
        """Report a line whose first word ends in ':' or '=' but is no valid name ('R-1:').

        The tokenizer splits such a word ('R', '-', '1'); read as one word, the line is an
        element or an assignment with a misspelt name, not an unknown directive.
        """
        for i, token in enumerate(tokens[1:], start=1):
            if not token.glued and not (token.kind == "punct" and token.text in ":="):
                return False
            if token.kind == "punct" and token.text in ":=":
                if i == 1:
                    return False
                start, end = tokens[0].start, tokens[i - 1].end
                self.error(number, f"'{raw[start:end]}' is not a valid name",
                           "a name is letters, digits and _, starting with a letter",
                           start, end)
                if token.text == ":":
                    self.unread_elements += 1
                return True
        return False

    def check_name(self, line: _Line, token: Token) -> bool:
        name = token.text
        if not NAME_PATTERN.fullmatch(name):
            self.error(line.number, f"'{name}' is not a valid name",
                       name_hint(name) or foreign_digits_hint(name) or
                       "a name is letters, digits and _, starting with a letter",
                       token.start, token.end)
            return False
        if name.lower() in ("j", "pi", "sqrt"):
            self.error(line.number, f"'{name}' is a reserved word and cannot be a name",
                       "choose another name", token.start, token.end)
            return False
        if name in self.defined_at:
            self.error(line.number, f"'{name}' is defined twice (first at line "
                       f"{self.defined_at[name]})", "rename one of them", token.start, token.end)
            return False
        self.defined_at[name] = line.number
        return True

    def directive(self, line: _Line) -> None:
        first = line.tokens[0]
        word = first.text.lower()
        rest = line.tokens[1:]
        if word in self.directive_lines and word in DIRECTIVES:
            self.error(line.number, f"'{word}' is given twice (first at line "
                       f"{self.directive_lines[word]})", "keep one", first.start, first.end)
            return
        if word == "title":
            self.directive_lines[word] = line.number
            if rest:
                self.title = line.text[rest[0].start:rest[-1].end].strip()
            else:
                self.error(line.number, "title needs a text", "e.g. title Workshop feeder",
                           first.start, first.end)
        elif word == "frequency":
            self.directive_lines[word] = line.number
            self.frequency = self.read_frequency(line, rest, first)
        elif word == "sweep":
            self.directive_lines[word] = line.number
            sweep, problems = read_sweep(rest, first, line.text, self.lookup, self.nesting,
                                         quiet=(_Poisoned,))
            for problem in problems:
                self.language_error(line, problem)
            if sweep is not None:
                self.sweep = dataclasses.replace(sweep, line=line.number)
        elif word == "amplitudes":
            self.directive_lines[word] = line.number
            if len(rest) == 1 and rest[0].text.lower() in ("rms", "peak"):
                self.amplitudes = rest[0].text.lower()
            else:
                at = rest[0] if rest else first
                self.error(line.number, "amplitudes must be 'rms' or 'peak'",
                           "e.g. amplitudes rms", at.start, at.end)
        else:
            self.unknown_directive(line, first)

    def read_frequency(self, line: _Line, rest: list[Token], first: Token) -> float | None:
        try:
            stream = TokenStream(rest, self.lookup, self.nesting)
            q = parse_value(stream, "frequency")
            if stream.peek() is not None:
                tok = stream.peek()
                raise LanguageError(f"unexpected '{tok.text}' after the frequency",
                                    "e.g. frequency 60 Hz", tok.start, tok.end)
            span = (rest[0].start, rest[-1].end)
            expect_unit(q, "Hz", "frequency", span, line.text[span[0]:span[1]])
            if abs(q.value.imag) > 0 or not q.value.real > 0:
                raise LanguageError("the frequency must be a real number greater than zero",
                                    "e.g. frequency 50 Hz", *span)
            return q.value.real
        except LanguageError as exc:
            self.language_error(line, exc)
        except _Poisoned:
            pass
        return None

    def unknown_directive(self, line: _Line, first: Token) -> None:
        word = first.text
        if len(line.tokens) > 1 and line.tokens[1].kind == "word" and \
                ElementReader.is_kind(line.tokens[1].text):
            self.error(line.number, f"'{word}' looks like an element but has no ':' after "
                       "its name", f"write '{word}: {line.tokens[1].text} ...'",
                       first.start, first.end)
            return
        close = difflib.get_close_matches(word.lower(), DIRECTIVES, n=1)
        hint = (f"did you mean '{close[0]}'?" if close else
                "a line is a directive (title, frequency, sweep, amplitudes), a named value "
                "(NAME = VALUE) or an element (NAME: KIND ...)")
        self.error(line.number, f"'{word}' is not a directive", hint, first.start, first.end)

    def run(self) -> tuple[Circuit, list[Diagnostic]]:
        if "\x00" in self.text:
            self.error(None, "the file is not text (it holds NUL bytes)",
                       "give a .circuit text file")
            return self.empty(), self.diagnostics
        if self.text.count("\n") > MAX_LINES:
            self.error(None, f"the file has more than {MAX_LINES} lines",
                       "split the circuit or check that this is the right file")
            return self.empty(), self.diagnostics
        lines = self.classify()
        self.element_names = {l.match.group(1) if l.kind == "simple" else l.tokens[0].text
                              for l in lines if l.kind in ("element", "simple")}
        for line in lines:
            if line.kind == "directive":
                self.directive(line)
        for name in list(self.assignments):
            if name not in self.values and name not in self.failed_values:
                try:
                    self.evaluate_assignment(name)
                except _Poisoned:
                    pass
        circuit = self.empty()
        reader = ElementReader(self, circuit)
        for line in lines:
            if line.kind == "simple":
                if reader.read_simple(line):
                    continue
                line.tokenize()
                line.kind = "element"
            if line.kind == "element":
                self.recording.append(self.uses.setdefault(
                    "\0" + line.tokens[0].text, set()))
                try:
                    reader.read(line)
                except LanguageError as exc:
                    self.language_error(line, exc)
                except _Poisoned:
                    pass
                finally:
                    self.recording.pop()
        reader.finish()
        self.file_checks(circuit, reader)
        self.lookalike_nodes(circuit)
        circuit.values = {k: q.value for k, q in self.values.items()}
        circuit.value_tolerances = {k: v for k, v in self.value_tolerances.items()
                                    if v[0] > 0}
        circuit.value_users = self.users_of(circuit, circuit.value_tolerances)
        return circuit, self.diagnostics

    def users_of(self, circuit: Circuit, names) -> dict[str, tuple[str, ...]]:
        """The elements and couplings whose value uses each of ``names``, through any
        chain of named values (element lines are keyed "\\0NAME" in ``uses``)."""
        if not names:
            return {}
        reach: dict[str, set[str]] = {}

        def closure(key: str, seen: set[str]) -> set[str]:
            if key in reach:
                return reach[key]
            out: set[str] = set()
            for used in self.uses.get(key, ()):
                if used not in seen:
                    out |= {used} | closure(used, seen | {used})
            reach[key] = out
            return out
        found: dict[str, list[str]] = {name: [] for name in names}
        for key in self.uses:
            if not key.startswith("\0"):
                continue
            line_name = key[1:]
            used = closure(key, set()) & set(names)
            if not used:
                continue
            group = circuit.groups.get(line_name)
            members = group.elements if group is not None else (line_name,)
            for name in used:
                found[name].extend(m for m in members
                                   if m in circuit.elements or m in circuit.couplings)
        return {name: tuple(users) for name, users in found.items()}

    def lookalike_nodes(self, circuit: Circuit) -> None:
        """Warn of node names with letters that pass for Latin ones (``lookalikes.py``)."""
        odd = {}
        for element in circuit.elements.values():
            for node in element.nodes:
                if not node.isascii() and node not in odd:
                    odd[node] = element.line
        if not odd:
            return
        lines = source_lines(self.text)
        nodes_at = {n: (line, lines[line - 1] if line and line <= len(lines) else "")
                    for n, line in odd.items()}
        for element in circuit.elements.values():
            for node in element.nodes:
                nodes_at.setdefault(node, (None, ""))
        self.diagnostics.extend(node_warnings(nodes_at))

    def empty(self) -> Circuit:
        return Circuit(title=self.title, frequency=self.frequency or 0.0,
                       amplitudes=self.amplitudes, text=self.text, filename=self.filename,
                       sweep=self.sweep)

    def file_checks(self, circuit: Circuit, reader: ElementReader) -> None:
        if not self.text.strip():
            self.error(None, "the circuit is empty", "write at least a frequency, a source "
                       "and a load, e.g.  frequency 50 Hz / V1: voltage a -> 0 230 V / "
                       "R1: resistor a -> 0 10 ohm")
            return
        unread = reader.failed_lines + self.unread_elements
        if not circuit.elements and not unread:
            self.error(None, "the circuit has no elements (nothing to solve)",
                       "add elements as NAME: KIND p -> n VALUE")
        freqs = reader.source_frequencies
        if self.frequency is None and "frequency" not in self.directive_lines:
            every_source = all(e.frequency is not None for e in circuit.elements.values()
                               if e.kind in ("voltage", "current"))
            if freqs and every_source:
                # Several source frequencies are solved one by one and added
                # (superposition.py); the lowest is the analysis frequency.
                circuit.frequency = min(freqs.values())
            elif circuit.elements or unread:
                self.error(None, "no analysis frequency: add a 'frequency' line",
                           "e.g. frequency 50 Hz (or give every source its own freq)")
        elif self.frequency is not None:
            circuit.frequency = self.frequency


#: Three-phase block kinds stand for three elements each.
BLOCK_KINDS = frozenset({"voltage3", "load3"})


def count_elements(text: str) -> int:
    """Elements ``text`` defines, counted as the parser reads its lines.

    Every line the parser takes for an element counts, however it is spaced
    (``R1:resistor``, ``R1 : resistor``, a tab before the colon), and so does an
    element line it drops for a bad or repeated name; a three-phase block counts three.

    >>> count_elements("V1 : voltage a -> 0 1\\nR1:resistor a -> 0 1\\nG: load3 wye a b c -> n 1")
    5
    """
    parser = CircuitParser(text, "<count>")
    count = 0
    for line in parser.classify():
        if line.kind == "simple":
            count += 1
        elif line.kind == "element":
            kind = line.tokens[2].text.lower() if len(line.tokens) > 2 else ""
            count += 3 if kind in BLOCK_KINDS else 1
    return count + parser.unread_elements     # lines dropped for a bad name, counted in classify


def parse_circuit(text: str, filename: str = "<circuit>", *, strict: bool = True):
    """Read circuit text into a ``Circuit``.

    With ``strict`` (the default) any error raises ``CircuitSyntaxError`` holding every
    diagnostic; otherwise ``(circuit, diagnostics)`` is returned as far as it could be read.

    >>> c = parse_circuit("frequency 60 Hz\\nR1: resistor a -> 0 4.7k")
    >>> c.elements["R1"].value
    (4700+0j)
    """
    parser = CircuitParser(text, filename)
    circuit, diagnostics = parser.run()
    circuit.warnings = [d for d in diagnostics if d.severity == "warning"]
    if not strict:
        return circuit, diagnostics
    if any(d.severity == "error" for d in diagnostics):
        raise CircuitSyntaxError(sorted(diagnostics, key=_order))
    return circuit


def _order(d: Diagnostic):
    return (d.line is not None, d.line or 0, d.column or 0)
