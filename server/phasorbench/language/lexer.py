"""Splitting one line of circuit text into tokens that remember their columns.

Every later stage reports errors by pointing at a token, so each token keeps its
start and end column and whether it touches the token before it (``4.7k`` is the
number ``4.7`` glued to the word ``k``; ``4.7 k`` is not glued). The degree sign is a
word of its own, so a unit may follow it directly (``10∠36.87°Ω``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

# One pattern for the whole line: finditer over it is the fastest way to tokenise in
# pure Python, and the alternatives are tried in this order.
_TOKEN = re.compile(
    r"""
    (?P<space>\s+)
  | (?P<comment>\#.*)
  | (?P<arrow>->|→)
  | (?P<number>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)
  | (?P<word>j(?:[0-9]+\.?[0-9]*|\.[0-9]+)[eE][+-]?[0-9]+(?:[^\W\d][\w.]*)?|[^\W\d][\w.]*|[µΩ][\w.]*|°)
  | (?P<digits>\d[\w.]*)
  | (?P<punct>[:=,@∠%()+\-*/^])
  | (?P<other>.)
    """,
    re.VERBOSE,
)


@dataclass(frozen=True, slots=True)
class Token:
    """A piece of a line: ``kind`` is number, word, arrow, punct or other."""

    kind: str
    text: str
    start: int      # 0-based column of the first character
    end: int        # 0-based column after the last character
    glued: bool     # touches the previous token (no space between)

    @property
    def column(self) -> int:
        """1-based column, as messages print it."""
        return self.start + 1


def tokenize(line: str) -> tuple[list[Token], str | None]:
    """Split ``line`` into tokens; return them and the comment text (or None).

    >>> [t.text for t in tokenize("R1: resistor a->b 4.7k  # load")[0]]
    ['R1', ':', 'resistor', 'a', '->', 'b', '4.7', 'k']
    """
    tokens: list[Token] = []
    comment = None
    previous_end = -1
    for match in _TOKEN.finditer(line):
        kind = match.lastgroup
        if kind == "space":
            continue
        if kind == "comment":
            comment = match.group()[1:].strip()
            break
        start, end = match.span()
        tokens.append(Token(kind, match.group(), start, end, start == previous_end))
        previous_end = end
    return tokens, comment
