"""Characters that look like the language's own but are not: other scripts' digits,
letters of another script that pass for Latin ones, names mixing scripts.

Only ASCII digits form numbers (``frequency ٥٠ Hz`` is an error whose hint gives the
ASCII digits). A node is any word, so ``а`` (Cyrillic) is a node apart from ``a``
(Latin): such names get a warning naming each look-alike character and its code point.
The look-alike letters are those of Unicode Technical Standard #39's confusables data
that map Cyrillic and Greek letters to single Latin ones (a subset, from memory), plus
every character whose compatibility form (NFKC) is ASCII: fullwidth and mathematical
letters and digits.
"""

from __future__ import annotations

import unicodedata

from ..errors import Diagnostic

#: Cyrillic and Greek letters drawn like a Latin letter (UTS #39 confusables, subset).
_LATIN_LOOKALIKES = {
    "а": "a", "в": "B", "е": "e", "к": "k", "м": "M", "н": "H", "о": "o", "р": "p",
    "с": "c", "т": "T", "у": "y", "х": "x", "ѕ": "s", "і": "i", "ј": "j", "һ": "h",
    "ԁ": "d", "ԛ": "q", "ԝ": "w", "А": "A", "В": "B", "Е": "E", "К": "K", "М": "M",
    "Н": "H", "О": "O", "Р": "P", "С": "C", "Т": "T", "Х": "X", "Ѕ": "S", "І": "I",
    "Ј": "J", "Α": "A", "Β": "B", "Ε": "E", "Ζ": "Z", "Η": "H", "Ι": "I", "Κ": "K",
    "Μ": "M", "Ν": "N", "Ο": "O", "Ρ": "P", "Τ": "T", "Υ": "Y", "Χ": "X", "ο": "o",
    "ν": "v", "ι": "i", "κ": "k", "ρ": "p", "τ": "t", "υ": "u", "χ": "x",
}


def _name(char: str) -> str:
    return unicodedata.name(char, f"U+{ord(char):04X}")


def _script(char: str) -> str:
    """The first word of a letter's Unicode name: LATIN, CYRILLIC, GREEK …"""
    return _name(char).split(" ")[0]


def ascii_lookalike(char: str) -> str | None:
    """The ASCII character ``char`` passes for, or None."""
    if char.isascii():
        return None
    if char in _LATIN_LOOKALIKES:
        return _LATIN_LOOKALIKES[char]
    folded = unicodedata.normalize("NFKC", char)
    return folded if len(folded) == 1 and folded.isascii() and folded.isalnum() else None


def foreign_digits_hint(word: str) -> str | None:
    """A hint for a word holding decimal digits other than ASCII 0-9, or None.

    >>> foreign_digits_hint("٥٠")
    "'٥٠' is written in ARABIC-INDIC digits: only the ASCII digits 0-9 form numbers; type '50'"
    """
    if not any(c.isdecimal() and not c.isascii() for c in word):
        return None
    scripts = sorted({_name(c).rsplit(" DIGIT", 1)[0] for c in word
                      if c.isdecimal() and not c.isascii()})
    typed = "".join(str(unicodedata.decimal(c)) if c.isdecimal() else c for c in word)
    return (f"'{word}' is written in {', '.join(scripts)} digits: only the ASCII digits "
            f"0-9 form numbers; type '{typed}'")


def name_hint(word: str) -> str | None:
    """A hint for a name that holds look-alike letters, or None."""
    found = [(c, ascii_lookalike(c)) for c in dict.fromkeys(word)]
    found = [(c, meant) for c, meant in found if meant is not None]
    if not found:
        return None
    said = "; ".join(f"'{c}' is {_name(c)} (U+{ord(c):04X}), not the Latin '{meant}'"
                     for c, meant in found)
    return f"{said}: type the name in plain Latin letters"


def node_warnings(nodes_at: dict[str, tuple[int | None, str]]) -> list[Diagnostic]:
    """Warnings for node names with look-alike letters or a mix of scripts.

    ``nodes_at`` maps each node name to (line, text of that line) of its first use.
    A node whose look-alikes spell another node of the circuit is said to be that one's
    double.
    """
    plain = {name for name in nodes_at if name.isascii()}
    out = []
    for name, (line, text) in nodes_at.items():
        if name.isascii():
            continue
        marks = [(c, ascii_lookalike(c)) for c in dict.fromkeys(name)]
        marks = [(c, meant) for c, meant in marks if meant is not None]
        scripts = sorted({_script(c) for c in name if c.isalpha()})
        if not marks and len(scripts) < 2:
            continue                 # one script, nothing passes for Latin: a real name
        parts = [f"'{c}' is {_name(c)} (U+{ord(c):04X})" for c, _ in marks]
        if len(scripts) > 1:
            parts.append("it mixes " + " and ".join(s.title() for s in scripts) + " letters")
        skeleton = "".join(ascii_lookalike(c) or c for c in name)
        twin = (f"; it is a different node from '{skeleton}', which this circuit also has"
                if skeleton in plain else "")
        column = text.find(name) + 1 if text and name in text else 1
        out.append(Diagnostic(
            f"node '{name}' only looks like plain Latin text: {', '.join(parts)}{twin}",
            f"retype it as '{skeleton}' if that is meant (nodes are told apart by every "
            "character)", line, column, len(name), "warning"))
    return out
