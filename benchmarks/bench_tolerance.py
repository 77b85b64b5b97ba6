"""Speed of the tolerance study's Monte Carlo against bare solves measured in the same run.

    python benchmarks/bench_tolerance.py            # 10,000 runs of 30 nodes, 1,000 of 100×100
    python benchmarks/bench_tolerance.py --quick    # 10,000 runs of 30 nodes, 50 of 100×100

Targets (issue 15): 10,000 runs of a 30-node circuit within 1.5× one batched
``numpy.linalg.solve`` of the same stack of matrices (built beforehand, not timed);
1,000 runs of a 10,000-node mesh within 1.3× as many bare ``splu`` factor-and-solves of
the same matrices (built beforehand, not timed). CPU seconds (user + system of this
process), best of a few repeats: the machine is shared.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import splu

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parent / "server"))
from mesh import mesh_circuit  # noqa: E402

from phasorbench.studies.parameters import (CHUNK_RUNS, chunk_count, draw_scales,  # noqa: E402
                                            value_matrix)
from phasorbench.studies.tolerance import monte_carlo, prepare  # noqa: E402
from phasorbench.workflow import read_circuit  # noqa: E402


def compare(ours, bare, repeats: int) -> tuple[float, float]:
    """Least CPU time of each over ``repeats`` rounds, the two taken in turn (a shared
    machine's load then weighs on both alike)."""
    best = [float("inf"), float("inf")]
    for _ in range(repeats):
        for k, fn in enumerate((ours, bare)):
            start = time.process_time()
            fn()
            best[k] = min(best[k], time.process_time() - start)
    return best[0], best[1]


def toleranced(text: str, pct: int = 5) -> str:
    """Every passive line of a circuit with ``tol PCT%`` (normal on every third)."""
    out = []
    for k, line in enumerate(text.splitlines()):
        if any(f": {kind} " in line for kind in ("resistor", "inductor", "capacitor")):
            line += f" tol {pct}%" + (" normal" if k % 3 == 0 else "")
        out.append(line)
    return "\n".join(out) + "\n"


def stacks(batch, runs: int, seed: int):
    """The matrices and right-hand sides the engine solves, built by its own pieces."""
    mats, rhs = [], []
    for k in range(chunk_count(runs)):
        size = min(CHUNK_RUNS, runs - k * CHUNK_RUNS)
        scales = draw_scales(batch.q, seed, k, size)
        v = value_matrix(batch.q, scales)
        dg = batch._g(v) - batch.g0
        mats.append(dg)
        rhs.append(batch._rhs(v - batch.v0))
    return np.concatenate(mats), np.concatenate(rhs)


def grid_circuit(rows: int, cols: int) -> str:
    """A rows × cols R/L/C grid (every edge and every node's shunt an element)."""
    lines = ["frequency 60 Hz", "Vs: voltage n0_0 -> 0 230 V"]
    kinds = (("resistor", "ohm", 1.5), ("inductor", "mH", 2.5), ("capacitor", "uF", 30))
    count = 0
    for i in range(rows):
        for j in range(cols):
            for di, dj in ((0, 1), (1, 0)):
                if i + di < rows and j + dj < cols:
                    kind, unit, v = kinds[count % 3]
                    lines.append(f"E{count}: {kind} n{i}_{j} -> n{i + di}_{j + dj} "
                                 f"{v * (1 + count % 7 / 10):.4f} {unit}")
                    count += 1
            lines.append(f"S{count}: resistor n{i}_{j} -> 0 {50 + count % 17} ohm")
            count += 1
    return "\n".join(lines) + "\n"


def small(runs: int, repeats: int) -> float:
    circuit = read_circuit(toleranced(grid_circuit(5, 6)))          # 30 nodes
    batch = prepare(circuit, ["V(n2_2)", "I(E1)"], runs)[0]
    n = batch.size
    dg, b = stacks(batch, runs, 1)
    dense = np.broadcast_to(batch.A0.toarray(), (runs, n, n)).copy()
    flat = dense.reshape(runs, n * n)
    flat[:, batch.flat] += (batch.to_flat.T @ dg.T).T
    ours, bare = compare(lambda: monte_carlo(batch, runs, 1),
                         lambda: np.linalg.solve(dense, b), repeats)
    print(f"{runs:,} runs, {len(circuit.nodes()) - 1} nodes ({n} unknowns), "
          f"{len(batch.q.params)} toleranced parts")
    print(f"  tolerance Monte Carlo      {ours:8.3f} s")
    print(f"  one batched linalg.solve   {bare:8.3f} s")
    ratio = ours / bare
    print(f"  ratio {ratio:.2f}  (target ≤ 1.5)")
    return ratio


def large(side: int, runs: int, repeats: int) -> float:
    circuit = read_circuit(toleranced(mesh_circuit(side)))
    batch = prepare(circuit, ["V(n3_3)"], runs)[0]
    dg, b = stacks(batch, runs, 1)
    matrices = [batch._matrix(dg[k]) for k in range(runs)]

    def bare_solves():
        for k in range(runs):
            splu(sp.csc_matrix(matrices[k])).solve(b[k])
    ours, bare = compare(lambda: monte_carlo(batch, runs, 1), bare_solves, repeats)
    print(f"{runs:,} runs, {side}×{side} mesh ({batch.size:,} unknowns), "
          f"{len(batch.q.params):,} toleranced parts")
    print(f"  tolerance Monte Carlo      {ours:8.3f} s")
    print(f"  bare splu factor+solve     {bare:8.3f} s")
    ratio = ours / bare
    print(f"  ratio {ratio:.2f}  (target ≤ 1.3)")
    return ratio


def main() -> None:
    ask = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ask.add_argument("--quick", action="store_true")
    ask.add_argument("--side", type=int, default=100)
    ask.add_argument("--runs", type=int, default=None, help="runs of the large mesh")
    ask.add_argument("--repeats", type=int, default=None, help="rounds of the large mesh")
    args = ask.parse_args()
    ask_repeats = args.repeats or (2 if args.quick else 3)
    small(10_000, 5)
    large(args.side, args.runs or (50 if args.quick else 1000), ask_repeats)


if __name__ == "__main__":
    main()
