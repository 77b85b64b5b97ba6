"""Exact formulas of probes in ``s`` (studies.md, "Formulas"), bounded in size and time.

``run_formula(circuit, probe, keep, solve_for)`` checks its input here (the probe, the
``keep`` names, the ``solve_for`` element, the size of the system), then does the sympy
work (``symbolic.py``) in a worker process that is stopped at the time limit, and at
last checks the formula numerically: evaluated with every symbol at its value from the
text at s = j·2π·f, it must equal the numeric solve of the same probe.

Symbols: one per element value, named as the element, except that elements written as
one named value share that value's symbol (``Ccorr: capacitor c -> 0 Cpf`` gives
``Cpf``); a coupling's symbol is its mutual inductance M. Sources with their own
``freq`` are zeroed, as in the sweep (the formula is of the analysis-frequency network).

This module imports no sympy: only the worker does (``phasorbench solve`` never pays).
"""

from __future__ import annotations

import atexit
import cmath
import math
import os
import select
import subprocess
import sys
import threading
from pathlib import Path

from ..errors import CircuitError, Diagnostic
from ..model import Circuit
from ..presentation.formatting import eng
from .engine import sweep_response, zero_own_frequency_sources
from .formula_worker import read_frame, write_frame
from ..solver import solve
from .probes import Current, Impedance, _close, parse_probes

#: Largest system (unknowns) handed to the symbolic solve.
MAX_UNKNOWNS = 40
#: Most symbols kept at once.
MAX_SYMBOLS = 24
#: Largest formula (terms of the expanded numerator plus denominator).
MAX_TERMS = 2000
#: Seconds the symbolic work may take.
TIME_LIMIT_S = 20.0
#: The numeric check passes at this relative difference.
CHECK_RTOL = 1e-9

#: How the options are spelled in the messages: the command line's flags (the default),
#: or the page's fields (``keep`` and ``solve_for`` of the API's body).
COMMAND_LINE = {"keep": "--keep", "solve_for": "--solve-for", "example": "--keep R1 C1"}
PAGE = {"keep": "Keep", "solve_for": "Solve for", "example": "Keep: R1 C1"}


def _fewer(spelling: dict) -> str:
    return (f"keep fewer symbols, e.g. {spelling['example']} (the others take their "
            "values from the text)")


def symbol_table(circuit: Circuit) -> list[dict]:
    """Every symbol the circuit offers: ``name``, ``kind``, the ``elements`` it stands
    for and its value (``re``, ``im``) from the text."""
    table: dict[str, dict] = {}
    for e in circuit.elements.values():
        name = e.value_name or e.name
        entry = table.setdefault(name, {"name": name, "kind": e.kind, "elements": [],
                                        "re": e.value.real, "im": e.value.imag,
                                        "named_value": e.value_name is not None})
        entry["elements"].append(e.name)
    for c in circuit.couplings.values():
        table[c.name] = {"name": c.name, "kind": "coupling", "elements": [c.name],
                         "re": float(c.m), "im": 0.0, "named_value": False}
    return list(table.values())


def _unknowns(circuit: Circuit) -> int:
    nodes = len(circuit.nodes()) - 1 - len(circuit.references)
    branch = sum(e.kind in ("voltage", "vcvs", "ccvs", "transformer")
                 for e in circuit.elements.values())
    return nodes + branch + 2 * len(circuit.couplings)


def _keep_names(keep, entries: list[dict], solve_for: str | None,
                spelling: dict = COMMAND_LINE) -> tuple[list[str], list]:
    """The kept symbol names, and a diagnostic per unknown name in ``keep``."""
    by_element = {el: e["name"] for e in entries for el in e["elements"]}
    names = [e["name"] for e in entries]
    problems = []
    if keep is None:
        kept = list(names)
    else:
        kept = []
        for word in keep:
            if word in by_element:
                kept.append(by_element[word])
                continue
            if word in names:
                kept.append(word)
                continue
            close = _close(word, names + list(by_element))
            hint = (f"did you mean '{close[0]}'?" if close else "symbols of this circuit: "
                    + ", ".join(names[:12]) + (", …" if len(names) > 12 else ""))
            if word == "s":
                hint = "s (the complex frequency) is always kept"
            problems.append(Diagnostic(f"{spelling['keep']} '{word}': not an element or named value "
                                       "of this circuit", hint))
    if solve_for is not None:
        if solve_for not in by_element and solve_for not in names:
            close = _close(solve_for, list(by_element))
            problems.append(Diagnostic(
                f"{spelling['solve_for']} '{solve_for}': not an element of this circuit",
                f"did you mean '{close[0]}'?" if close else
                "name an element of the probe's numerator"))
        else:
            kept.append(by_element.get(solve_for, solve_for))
    return list(dict.fromkeys(kept)), problems


def run_formula(circuit: Circuit, probe_text: str, keep=None, solve_for: str | None = None,
                time_limit: float = TIME_LIMIT_S, max_terms: int = MAX_TERMS,
                spelling: dict = COMMAND_LINE) -> dict:
    """The formula JSON of studies.md; ``CircuitError`` for any input problem or limit.

    ``spelling`` names the options in the messages (``COMMAND_LINE`` or ``PAGE``)."""
    circuit, zeroed = zero_own_frequency_sources(circuit)
    problems = []
    try:
        probe = parse_probes([probe_text], circuit)[0]
    except CircuitError as exc:           # reported with the other options' problems
        problems.extend(exc.diagnostics)
    entries = [e for e in symbol_table(circuit)
               if not all(el in zeroed for el in e["elements"])]
    kept, wrong = _keep_names(keep, entries, solve_for, spelling)
    problems.extend(wrong)
    if problems:
        raise CircuitError(problems)
    unknowns = _unknowns(circuit)
    if unknowns > MAX_UNKNOWNS:
        raise CircuitError([Diagnostic(
            f"size limit: this circuit has {unknowns} unknowns, above the formula's limit "
            f"of {MAX_UNKNOWNS}", "a formula of a network this large is unreadable; ask "
            "for a smaller part of it, or use 'phasorbench sweep' for numbers")])
    if len(kept) > MAX_SYMBOLS:
        raise CircuitError([Diagnostic(
            f"size limit: {len(kept)} symbols would stay symbolic, above the limit of "
            f"{MAX_SYMBOLS}", _fewer(spelling))])
    symbol_of = {el: e["name"] for e in entries for el in e["elements"]}
    answer = _in_worker(circuit, probe, entries, kept,
                        symbol_of.get(solve_for, solve_for), time_limit, max_terms,
                        _fewer(spelling))
    solved = _solved_value(circuit, probe)
    at_f = complex(answer["value_at_frequency"]["re"], answer["value_at_frequency"]["im"])
    difference = abs(at_f - solved) / max(abs(solved), 1e-300)
    if not math.isfinite(difference):
        difference = None
    warnings = [f"{name} has its own frequency and is zeroed: the formula is of the "
                f"network at {eng(circuit.frequency, 'Hz')}" for name in zeroed]
    check_ok = difference is not None and (difference <= CHECK_RTOL or at_f == solved)
    if not check_ok:
        warnings.append("the formula evaluated at the analysis frequency differs from the "
                        "numeric solve" + (f" by {difference:.1e} (relative)"
                                           if difference is not None else
                                           " (the solve has no value there)"))
    if solve_for is not None and not answer["solve_for"]["single_value"]:
        warnings.append(f"no single value of {solve_for} balances at every frequency: "
                        "each power of s gives its own condition")
    symbols = [dict(e, kept=e["name"] in kept) for e in entries]
    return {
        "probe": probe.text,
        "unit": probe.unit,
        "frequency_hz": circuit.frequency,
        "symbols": symbols,
        "kept": kept,
        **{k: v for k, v in answer.items() if k != "value_at_frequency"},
        "check": {"frequency_hz": circuit.frequency,
                  "formula": answer["value_at_frequency"],
                  "solved": ({"re": solved.real, "im": solved.imag}
                             if cmath.isfinite(solved) else None),
                  "relative_difference": difference, "ok": check_ok},
        "warnings": warnings,
    }


def _solved_value(circuit: Circuit, probe) -> complex:
    """The probe from the numeric solve at the analysis frequency: the solver's own
    (refined) solution for voltages and currents, the engine's test-current solve for
    ``Z`` probes."""
    if any(isinstance(part, Impedance) for part in probe.parts()):
        numeric = sweep_response(circuit, [probe], [circuit.frequency])
        return complex(numeric.values[probe.text][0])
    solution = solve(circuit)
    position = {name: k for k, name in enumerate(solution.names)}

    def one(part):
        if isinstance(part, Current):
            return complex(solution.current[position[part.element.name]])
        b = solution.node_voltages[part.b.node] if part.b is not None else 0j
        return complex(solution.node_voltages[part.a.node]) - complex(b)
    values = [one(part) for part in probe.parts()]
    if len(values) == 1:
        return values[0]
    return values[0] / values[1] if values[1] != 0 else complex("nan")


# -- the worker ---------------------------------------------------------------------


class _Worker:
    """One ``formula_worker`` process kept between jobs (sympy is imported once); it is
    killed when a job passes the time limit and started again for the next."""

    def __init__(self):
        self.process = None

    def start(self) -> None:
        package_root = str(Path(__file__).resolve().parents[2])
        env = dict(os.environ)
        env["PYTHONPATH"] = os.pathsep.join(
            [package_root] + ([env["PYTHONPATH"]] if env.get("PYTHONPATH") else []))
        self.process = subprocess.Popen(
            [sys.executable, "-m", "phasorbench.studies.formula_worker"],
            stdin=subprocess.PIPE, stdout=subprocess.PIPE, env=env)
        if self._receive(STARTUP_S) != "ready":
            self.stop()
            raise RuntimeError("the formula worker did not start")

    def stop(self) -> None:
        if self.process is not None:
            self.process.kill()
            self.process.wait()
            for pipe in (self.process.stdin, self.process.stdout):
                pipe.close()
            self.process = None

    def _receive(self, timeout: float):
        ready, _, _ = select.select([self.process.stdout], [], [], timeout)
        if not ready:
            return _TIMED_OUT
        answer = read_frame(self.process.stdout)
        if answer is None:
            raise RuntimeError("the formula worker stopped without an answer")
        return answer

    def run(self, job, timeout: float):
        if self.process is None or self.process.poll() is not None:
            self.start()
        try:
            write_frame(self.process.stdin, job)
            answer = self._receive(timeout)
        except (OSError, RuntimeError):      # the worker died on the job (memory)
            self.stop()
            return ("stopped", None)
        if answer is _TIMED_OUT:
            self.stop()
        return answer


_TIMED_OUT = object()
#: Seconds the worker may take to start (importing sympy), not counted in the limit.
STARTUP_S = 60.0
_worker = _Worker()
_lock = threading.Lock()
atexit.register(_worker.stop)           # the worker ends with its parent, pipes closed


def _in_worker(circuit, probe, entries, kept, solve_for, time_limit, max_terms,
               fewer: str) -> dict:
    job = (circuit, probe, entries, kept, solve_for, max_terms)
    with _lock:
        answer = _worker.run(job, time_limit)
    if answer is _TIMED_OUT:
        raise CircuitError([Diagnostic(
            f"time limit: the formula took longer than {time_limit:g} s and was "
            "stopped", fewer)])
    status, payload = answer
    if status == "size":
        terms, limit = payload
        raise CircuitError([Diagnostic(
            f"size limit: the formula has {terms:,} terms, above the limit of {limit:,}",
            fewer)])
    if status == "memory":
        raise CircuitError([Diagnostic(
            f"size limit: the formula needed more than {payload // 2**20:,} MB and was "
            "stopped", fewer)])
    if status == "stopped":
        raise CircuitError([Diagnostic(
            "size limit: the formula's worker process stopped before it answered (most "
            "likely out of memory)", fewer)])
    if status == "problem":
        raise CircuitError([Diagnostic(*payload)])
    if status != "ok":
        raise RuntimeError(payload)
    return payload
