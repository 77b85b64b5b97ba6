"""Size limits checked before a circuit reaches the core.

Counting element lines is cheap and happens before parsing, so an oversized circuit
is refused with a clear message instead of tying up a worker thread.
"""

from __future__ import annotations

from ..errors import CircuitError, Diagnostic

#: Three-phase block kinds stand for three elements each.
_BLOCK_KINDS = frozenset({"voltage3", "load3"})


def count_elements(text: str) -> int:
    """Elements a circuit text defines: lines whose first word ends in ``:``.

    >>> count_elements("V1: voltage a -> 0 1\\nR1: resistor a -> 0 1  # x\\nf = 2")
    2
    """
    count = 0
    for raw in text.splitlines():
        words = raw.split("#", 1)[0].split()
        if not words or not words[0].endswith(":"):
            continue
        count += 3 if len(words) > 1 and words[1].lower() in _BLOCK_KINDS else 1
    return count


def check_size(text: str, max_elements: int) -> None:
    """Raise ``CircuitError`` when ``text`` defines more than ``max_elements`` elements."""
    count = count_elements(text)
    if count > max_elements:
        raise CircuitError([Diagnostic(
            message=(f"the circuit has {count} elements, more than this server's limit "
                     f"of {max_elements}"),
            hint=(f"start the server with a higher limit (phasorbench serve --max-elements "
                  f"{_rounded_up(count)}), solve it with the command line (phasorbench "
                  "solve FILE), or split it into smaller circuits"))])


def _rounded_up(count: int) -> int:
    """A limit a little above ``count``, in round thousands."""
    return -(-count * 11 // 10 // 1000) * 1000
