"""Worked checks a reviewer can redo by hand from the sheet's own tables.

A sheet is trusted when a reader can check it without the program: the power the
sources deliver equals what the other elements take, the currents at a node add to
zero (Kirchhoff's current law) and each row obeys V = Z·I. This module picks a node
and an element for those examples and states the numbers, all formatted by
`phasorbench.formatting`.
"""

from __future__ import annotations

import math

from ..presentation import formatting as fmt
from ..model import CONTROLLED_KINDS, GROUND, SOURCE_KINDS

__all__ = ["kcl_example", "ohm_example", "power_check"]

#: A worked KCL sum is written out term by term, so keep it short.
_MAX_TERMS = 8
_SOURCE_LIKE = SOURCE_KINDS + CONTROLLED_KINDS


def _complex(ph) -> complex:
    return complex(ph["re"], ph["im"]) if ph else 0j


def power_check(result: dict) -> dict:
    """P and Q the sources deliver against P and Q the other elements take.

    Returns ``{"delivered_p", "delivered_q", "taken_p", "taken_q", "residual_p",
    "residual_q"}`` as text, plus ``"values"`` with the raw numbers (W, var).
    """
    elements = result.get("elements", {}).values()
    dp = -sum(e["p_w"] for e in elements if e.get("kind") in _SOURCE_LIKE)
    dq = -sum(e["q_var"] for e in elements if e.get("kind") in _SOURCE_LIKE)
    tp = sum(e["p_w"] for e in elements if e.get("kind") not in _SOURCE_LIKE)
    tq = sum(e["q_var"] for e in elements if e.get("kind") not in _SOURCE_LIKE)
    balance = result.get("balance", {})
    values = {"delivered_p": dp, "delivered_q": dq, "taken_p": tp, "taken_q": tq,
              "residual_p": balance.get("p_w", tp - dp),
              "residual_q": balance.get("q_var", tq - dq)}
    units = {"p": "W", "q": "var"}
    text = {key: fmt.eng(value, units[key[-1]]) for key, value in values.items()}
    return {**text, "values": values}


def _terms(result: dict) -> dict[str, list[tuple[str, int, complex]]]:
    """Per node: (label, sign, current) of every terminal, + for current leaving it."""
    out: dict[str, list] = {}
    for name, el in result.get("elements", {}).items():
        ports = [(f"I({name})", el.get("from"), el.get("to"), _complex(el.get("current")))]
        sec = el.get("secondary")
        if isinstance(sec, dict):
            ports.append((f"I({name} secondary)", sec.get("from"), sec.get("to"),
                          _complex(sec.get("current"))))
        for label, a, b, i in ports:
            # The current flows from its 'from' node through the element to 'to':
            # it leaves 'from' and enters 'to'.
            out.setdefault(a, []).append((label, +1, i))
            out.setdefault(b, []).append((label, -1, i))
    return out


def kcl_example(result: dict) -> dict | None:
    """Kirchhoff's current law written out at one node; None when no node qualifies.

    The node is not ground and has 2 to 8 terminals (the most such, first in node
    order), so the sum fits on a line; a circuit with only larger nodes takes its
    smallest. Returns ``{"node", "terms": [{"sign", "label", "text"}], "sum",
    "largest", "relative", "values": {"sum": complex, "largest": float}}``.
    """
    terms = _terms(result)
    nodes = [n for n in result.get("nodes", {}) if n != GROUND and len(terms.get(n, ())) >= 2]
    if not nodes:
        return None
    fitting = [n for n in nodes if len(terms[n]) <= _MAX_TERMS]
    if fitting:
        node = max(fitting, key=lambda n: len(terms[n]))   # max keeps the first of ties
    else:
        node = min(nodes, key=lambda n: len(terms[n]))
    rows = terms[node]
    total = sum(sign * i for _, sign, i in rows)
    largest = max(abs(i) for _, _, i in rows)
    return {
        "node": node,
        "terms": [{"sign": "+" if sign > 0 else "−", "label": label,
                   "text": fmt.phasor(i, "A")} for label, sign, i in rows],
        "sum": fmt.eng(abs(total), "A", digits=2),
        "largest": fmt.eng(largest, "A"),
        "relative": fmt.plain(abs(total) / largest, digits=2) if largest > 0 else "0",
        "values": {"sum": total, "largest": largest},
    }


def ohm_example(result: dict) -> dict | None:
    """|V| = |Z|·|I| and ∠V = ∠Z + ∠I for one element with an impedance and a current.

    The first reactive one (Z not real: the angles then tell something), else the first.
    """
    usable = [(name, el) for name, el in result.get("elements", {}).items()
              if el.get("impedance") and el.get("voltage") and el.get("current")
              and el["current"].get("mag")]
    usable.sort(key=lambda item: abs(item[1]["impedance"]["im"]) == 0)   # stable: order kept
    for name, el in usable[:1]:
        z, i, v = el["impedance"], el["current"], el["voltage"]
        zc, ic = _complex(z), _complex(i)
        product = zc * ic
        return {
            "element": name,
            "z": fmt.phasor(z, "Ω"), "i": fmt.phasor(i, "A"), "v": fmt.phasor(v, "V"),
            "product": fmt.phasor(product, "V"),
            "angle_sum": fmt.degrees(math.degrees(math.atan2(zc.imag, zc.real))
                                     + math.degrees(math.atan2(ic.imag, ic.real))),
        }
    return None
