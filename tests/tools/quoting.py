"""Comparing with values quoted to a number of significant figures.

check-values.md quotes its numbers to 6 significant figures; a result agrees with one
when it rounds to exactly the quoted figures (stricter than a loose tolerance, and
fair to the rounding of the quote).
"""

from __future__ import annotations


def figures(value: float, n: int = 6) -> float:
    """``value`` rounded to ``n`` significant figures."""
    return float(f"{value:.{n}g}")
