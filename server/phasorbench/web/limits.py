"""Size limits checked before a circuit reaches the solver.

The element count is the parser's own (``language.parser.count_elements``), so every
line the parser reads as an element counts, however it is spaced. A cheap upper
bound comes first: a text with too few colons for the limit is let through without
reading its lines twice.
"""

from __future__ import annotations

from ..errors import CircuitError, Diagnostic
from ..language.parser import count_elements


def element_bound(text: str) -> int:
    """At least the number of elements, counted cheaply: every element line has a ':',
    and a block (voltage3, load3) stands for three elements."""
    lower = text.lower()
    return text.count(":") + 2 * (lower.count("voltage3") + lower.count("load3"))


def check_size(text: str, max_elements: int) -> None:
    """Raise ``CircuitError`` when ``text`` defines more than ``max_elements`` elements."""
    if element_bound(text) <= max_elements:
        return
    count = count_elements(text)
    if count > max_elements:
        raise CircuitError([Diagnostic(
            message=(f"the circuit has {count:,} elements, more than this server's limit "
                     f"of {max_elements:,}"),
            hint=(f"start the server with a higher limit (phasorbench serve --max-elements "
                  f"{_rounded_up(count)}), solve it with the command line (phasorbench "
                  "solve FILE), or split it into smaller circuits"))])


def _rounded_up(count: int) -> int:
    """A limit a little above ``count``, in round thousands."""
    return -(-count * 11 // 10 // 1000) * 1000
