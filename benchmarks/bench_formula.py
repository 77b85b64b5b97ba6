"""How long an exact formula takes, and how its cost grows, against the numeric solve.

Run by hand:  PYTHONPATH=server python benchmarks/bench_formula.py [SECTIONS]

Each case is an RC ladder of N sections (2N elements, N + 1 nodes) and the probe
V(out)/V(in): once with every element a symbol, once with every value exact from the
text (``--keep`` nothing). The baseline is the numeric solve of the same circuit
(``workflow.solve_circuit``), timed in the same run. Wall seconds of the whole request
as a caller sees it (the worker process, sympy already imported, pipes included); the
worker's start-up (importing sympy) is measured once on its own.
"""

from __future__ import annotations

import sys
import time

from phasorbench.studies.formula import run_formula
from phasorbench.workflow import read_circuit, solve_circuit


def ladder(n: int) -> str:
    lines = ["frequency 1 kHz", "Vin: voltage n0 -> 0 1 V"]
    for k in range(n):
        lines.append(f"R{k + 1}: resistor n{k} -> n{k + 1} {k + 1} kohm")
        lines.append(f"C{k + 1}: capacitor n{k + 1} -> 0 {10 * (k + 1)} nF")
    return "\n".join(lines) + "\n"


def best(fn, repeat: int = 3) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main(sections: int = 6) -> None:
    start = time.perf_counter()
    run_formula(read_circuit(ladder(1)), "V(n1)/V(n0)")
    print(f"worker start-up and first formula: {time.perf_counter() - start:.2f} s")
    print(f"{'sections':>8} {'solve s':>9} {'exact s':>9} {'ratio':>8} {'symbolic s':>11} "
          f"{'ratio':>8} {'terms':>7}")
    for n in range(1, sections + 1):
        circuit = read_circuit(ladder(n))
        probe = f"V(n{n})/V(n0)"
        numeric = best(lambda: solve_circuit(circuit))
        exact = best(lambda: run_formula(circuit, probe, keep=[]))
        holder = {}

        def symbolic():
            holder["r"] = run_formula(circuit, probe, time_limit=120)
        symbolic_s = best(symbolic, repeat=1)
        print(f"{n:>8} {numeric:>9.4f} {exact:>9.3f} {exact / numeric:>8.0f} {symbolic_s:>11.3f} "
              f"{symbolic_s / numeric:>8.0f} {holder['r']['terms']:>7}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 6)
