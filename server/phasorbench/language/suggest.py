"""Did-you-mean hints against the names of one circuit, in bounded time.

A search of every name for every miss is quadratic: thousands of misses against
thousands of names took minutes. Here the names are indexed once by their character
pairs; a miss is compared (``difflib``) with the few names sharing the most pairs, each
pair's list is read only up to a bound, and one index answers at most ``BUDGET``
searches (after that the caller's plain hint is used).
"""

from __future__ import annotations

import difflib
from collections import Counter, defaultdict

#: Searches one index answers; later misses get the plain hint.
BUDGET = 50
#: Names compared with difflib per search, and names read per character pair.
SHORTLIST, POSTINGS = 12, 400
#: Only this many characters of a word are looked at.
WORD = 40


def _pairs(word: str) -> set[str]:
    padded = f"^{word.lower()[:WORD]}$"
    return {padded[i:i + 2] for i in range(len(padded) - 1)}


class NameIndex:
    """The names a hint may suggest, indexed by character pairs.

    >>> NameIndex(["Rload", "Cpf", "Vgrid"]).closest("Rlaod")
    'Rload'
    """

    def __init__(self, names, budget: int = BUDGET):
        self.names = list(names)
        self.budget = budget
        self._index: dict[str, list[str]] | None = None
        self._folded: dict[str, str] = {}

    def _build(self) -> None:
        self._index = defaultdict(list)
        for name in self.names:
            self._folded.setdefault(name.lower(), name)
            for pair in _pairs(name):
                posting = self._index[pair]
                if len(posting) < POSTINGS:
                    posting.append(name)

    def closest(self, word: str) -> str | None:
        """The most similar name (difflib's ratio ≥ 0.6), or None; bounded work."""
        if self.budget <= 0 or not self.names:
            return None
        self.budget -= 1
        if self._index is None:
            self._build()
        same = self._folded.get(word.lower())
        if same is not None and same != word:
            return same
        shared = Counter()
        for pair in _pairs(word):
            shared.update(self._index.get(pair, ()))
        shortlist = [name for name, _ in shared.most_common(SHORTLIST)]
        close = difflib.get_close_matches(word[:WORD], shortlist, n=1)
        return close[0] if close else None
