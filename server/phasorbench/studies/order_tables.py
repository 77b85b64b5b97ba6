"""Per-order values of many rows (nodes, elements) kept as arrays, read as mappings.

The harmonic study's JSON (studies.md, "Harmonic spectra") gives every node, and the
elements with detail, an ``orders`` object: ``{"5": {"v": phasor, "pct": …}, …}``. On
a big circuit that is a million small dicts nobody reads in Python. Here each row's
``orders`` is a read-only ``Mapping`` over one shared block of arrays (rows × orders):

- reading one entry (``row["5"]["v"]["mag"]``) builds that entry's dict only, with the
  same floats the arrays hold (a ratio that is not finite reads as None);
- written as JSON (``jsonout.dumps``, through ``json_fragment``), a row is one
  ``%``-format of a fixed byte template over orjson's text of its numbers: the same
  bytes, to the last digit, as the dicts would give (orjson writes a numpy double and a
  Python float alike, a non-finite one as null).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import orjson

__all__ = ["OrderBlock", "RowOrders"]

#: A field's kind: a complex phasor (``{"re", "im", "mag", "deg"}``), a real value
#: (written as it is) or a ratio (None where it is not finite).
PHASOR, REAL, RATIO = "phasor", "real", "ratio"
_PARTS = ("re", "im", "mag", "deg")


class OrderBlock:
    """Rows × orders of named fields: ``fields`` is ``[(name, kind, array), …]``, each
    array of shape ``(rows, len(keys))`` (complex for a phasor, real otherwise)."""

    def __init__(self, keys: list[str], fields: list[tuple[str, str, np.ndarray]]):
        self.keys = list(keys)
        self.index = {key: k for k, key in enumerate(self.keys)}
        self.names = [name for name, _, _ in fields]
        self.kinds = [kind for _, kind, _ in fields]
        columns = []             # each (rows, orders) float64, in the order written
        for _, kind, values in fields:
            if kind == PHASOR:
                values = np.asarray(values, dtype=complex)
                columns += [values.real, values.imag, np.abs(values),
                            np.degrees(np.angle(values))]
            else:
                columns.append(np.asarray(values, dtype=float))
        self.columns = columns
        self.rows = columns[0].shape[0] if columns else 0
        self._numbers = None
        self._template = None

    def row(self, r: int) -> "RowOrders":
        return RowOrders(self, r)

    def entry(self, r: int, k: int) -> dict:
        """The dict of row ``r`` at order position ``k``."""
        out, c = {}, 0
        for name, kind in zip(self.names, self.kinds):
            if kind == PHASOR:
                out[name] = {part: float(self.columns[c + j][r, k])
                             for j, part in enumerate(_PARTS)}
                c += 4
            else:
                value = float(self.columns[c][r, k])
                out[name] = None if kind == RATIO and not np.isfinite(value) else value
                c += 1
        return out

    def fragment(self, r: int) -> bytes:
        """Row ``r``'s ``orders`` object as compact JSON bytes."""
        if self._numbers is None:
            # rows × (orders · numbers per order), in the order the template writes them
            self._numbers = np.ascontiguousarray(
                np.stack(self.columns, axis=2).reshape(self.rows, -1))
            self._template = self._build_template()
        text = orjson.dumps(self._numbers[r], option=orjson.OPT_SERIALIZE_NUMPY)
        return self._template % tuple(text[1:-1].split(b","))

    def _build_template(self) -> bytes:
        entry = []
        for name, kind in zip(self.names, self.kinds):
            if kind == PHASOR:
                entry.append(orjson.dumps(name) + b":{" + b",".join(
                    orjson.dumps(part) + b":%b" for part in _PARTS) + b"}")
            else:
                entry.append(orjson.dumps(name) + b":%b")
        body = b"{" + b",".join(entry) + b"}"
        return b"{" + b",".join(orjson.dumps(key).replace(b"%", b"%%") + b":" + body
                                for key in self.keys) + b"}"


class RowOrders(Mapping):
    """One row's ``orders``: order key → that order's dict, built when read."""

    __slots__ = ("_block", "_row")

    def __init__(self, block: OrderBlock, row: int):
        self._block, self._row = block, row

    def __getitem__(self, key):
        return self._block.entry(self._row, self._block.index[key])

    def __iter__(self):
        return iter(self._block.keys)

    def __len__(self):
        return len(self._block.keys)

    def __contains__(self, key):
        return key in self._block.index

    def json_fragment(self) -> bytes:
        """This mapping as JSON bytes (``jsonout.dumps`` writes it in place)."""
        return self._block.fragment(self._row)

    def __repr__(self):
        return f"RowOrders({dict(self)!r})"
