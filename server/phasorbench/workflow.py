"""The facade every shell (command line, web app, sheet) calls: text in, results out.

It strings the core together — read, check, solve, derive — so no shell repeats the
sequence or handles a half-finished circuit.
"""

from __future__ import annotations

from .errors import CircuitError, Diagnostic, bounded
from .gcpause import held
from .model import Circuit


def read_circuit(text: str, filename: str = "<circuit>") -> Circuit:
    """Parse ``text`` and check its structure.

    Raises ``CircuitError`` holding every error (and the warnings found so far);
    on success the warnings are in ``circuit.warnings``.
    """
    from .checks import check_structure
    from .language.parser import parse_circuit

    try:
        with held():                      # bulk build: no collection passes over it
            circuit, diagnostics = parse_circuit(text, filename, strict=False)
            check_structure(circuit, diagnostics)
    except CircuitError as exc:
        exc.diagnostics = bounded(exc.diagnostics)
        raise
    circuit.warnings = bounded(circuit.warnings)
    return circuit


def check_text(text: str, filename: str = "<circuit>") -> list[Diagnostic]:
    """Every error and warning of ``text``, without solving; never raises for bad input."""
    try:
        circuit = read_circuit(text, filename)
    except CircuitError as exc:
        return exc.diagnostics
    return list(circuit.warnings)


def solve_text(text: str, filename: str = "<circuit>") -> dict:
    """Read, check and solve ``text``; return the contract dict (results-contract.md).

    >>> r = solve_text("frequency 50 Hz\\nV1: voltage a -> 0 10 V\\nR1: resistor a -> 0 5 ohm")
    >>> round(r["elements"]["R1"]["p_w"], 9)
    20.0
    """
    circuit = read_circuit(text, filename)
    return solve_circuit(circuit)


def solve_circuit(circuit: Circuit) -> dict:
    """The contract dict of an already read circuit.

    Sources at several frequencies are solved one frequency at a time and added
    (``superposition.py``); the top level then shows the analysis frequency.
    """
    from .results import contract
    from .solver import solve
    from .superposition import solve_superposed, source_frequencies

    with held():
        if len(source_frequencies(circuit)) > 1:
            return solve_superposed(circuit)
        return contract(solve(circuit))
