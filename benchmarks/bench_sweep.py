"""Sweep engine speed (issue 13), every ratio against a baseline measured in the same run.

    python benchmarks/bench_sweep.py            # ladder and 100×100 mesh
    python benchmarks/bench_sweep.py --quick    # ladder and a 40×40 mesh
    python benchmarks/bench_sweep.py --profile ladder|mesh

1. A 1,000-point log sweep (10 Hz to 100 kHz) of a 50-node R/L/C ladder, the engine built
   and every probe read (`SweepEngine(circuit, probes).response(f)`), against
   a. one batched `numpy.linalg.solve` of the same (1000, n, n) stack and right-hand
      sides, the stack built beforehand from the engine's own entries (target ≤ 1.5×);
      the same with the stack's build from float64 G, C and 1/L matrices inside the
      timing is printed beside it, and the sweep with its banded path turned off (the
      stacked dense path every small system without a narrow band takes);
   b. 1,000 single-frequency `solver.solve` calls, the element table shared
      (target: the sweep ≥ 50× faster).
2. A 200-point sweep of `mesh.py`'s 100×100 mesh (10,001 unknowns) against 200 bare
   `scipy.sparse.linalg.splu` factor-and-solves of the same CSC matrices, built
   beforehand (target ≤ 1.3×).

One BLAS thread, as `phasorbench sweep` runs. CPU seconds (process_time), the sides
taken in turn, best of the rounds; the load
average is printed, since the machine is shared.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "server"))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from phasorbench.blas import pin_before_import  # noqa: E402

pin_before_import()        # one BLAS thread, as the command line runs (blas.py)

import numpy as np  # noqa: E402

from mesh import mesh_circuit  # noqa: E402
from scipy.sparse.linalg import splu  # noqa: E402

from phasorbench.solver import solve  # noqa: E402
from phasorbench.studies import linear  # noqa: E402
from phasorbench.studies.engine import SweepEngine  # noqa: E402
from phasorbench.studies.probes import parse_probes  # noqa: E402
from phasorbench.studies.sweep import grid  # noqa: E402
from phasorbench.workflow import read_circuit  # noqa: E402

LADDER_PROBES = ["V(n49)/V(n0)", "V(n25)", "I(Vs)", "Z(n12)"]
MESH_PROBES = ["V(n50_50)", "V(n99_99)/V(n0_0)", "I(Vsrc)"]


def ladder_text(nodes: int = 50) -> str:
    """A source, then ``nodes - 1`` sections of series L, shunt C and a shunt R."""
    lines = ["title benchmark ladder", "frequency 50 Hz", "Vs: voltage n0 -> 0 10 V"]
    for k in range(nodes - 1):
        lines += [f"L{k}: inductor n{k} -> n{k + 1} {1 + (k * 37) % 10 / 10:.2f} mH",
                  f"C{k}: capacitor n{k + 1} -> 0 {1 + (k * 53) % 20 / 10:.2f} uF",
                  f"R{k}: resistor n{k + 1} -> 0 {200 + (k * 71) % 300} ohm"]
    return "\n".join(lines) + "\n"


def cpu(job) -> float:
    start = time.process_time()
    job()
    return time.process_time() - start


def rounds(jobs: dict, count: int) -> dict:
    """Each job once per round, in turn; the best time of each."""
    best = {name: float("inf") for name in jobs}
    for _ in range(count):
        for name, job in jobs.items():
            best[name] = min(best[name], cpu(job))
    return best


def load() -> str:
    return "load average " + " ".join(f"{x:.2f}" for x in os.getloadavg())


def ladder(args) -> None:
    circuit = read_circuit(ladder_text())
    probes = parse_probes(LADDER_PROBES, circuit)
    f = grid(10.0, 100e3, 1000)
    engine = SweepEngine(circuit, probes)
    n = engine.size
    stack = np.zeros((len(f), n, n), dtype=complex)
    stack[:, engine._rows, engine._cols] = engine.matrices(f)
    b = engine._rhs.copy()
    # float64 G, C and Γ (1/L) matrices of the same system (entries = G + jωC + Γ/(jω)),
    # for the baseline with its build included
    parts = np.zeros((3, engine.entries), dtype=complex)
    parts[0, engine._fixed] = engine._fixed_values
    for k in range(3):
        parts[k, engine._moving] = engine._parts[k].astype(complex)
    g_m, c_m, l_m = (np.zeros((n, n), complex) for _ in range(3))
    for matrix, part in zip((g_m, c_m, l_m), parts):
        matrix[engine._rows, engine._cols] = part
    omega = 2 * np.pi * f

    def batched():
        np.linalg.solve(stack, b)

    def batched_built():
        built = g_m + omega[:, None, None] * c_m + l_m / omega[:, None, None]
        np.linalg.solve(built, b)

    def sweep():
        SweepEngine(circuit, probes).response(f)

    def sweep_stacked():                 # the same with the banded path turned off
        saved, linear.BAND_MIN = linear.BAND_MIN, n + 1
        try:
            SweepEngine(circuit, probes).response(f)
        finally:
            linear.BAND_MIN = saved

    table = circuit.table()

    def singles():
        for fk in f:
            at = replace(circuit, frequency=float(fk))
            at._table = table
            solve(at)

    print(f"ladder: {len(circuit.nodes()) - 1} nodes, {n} unknowns, {len(f)} points, "
          f"{len(probes)} probes ({', '.join(LADDER_PROBES)}); {load()}")
    if args.profile == "ladder":
        profile(sweep)
        return
    best = rounds({"batched": batched, "built": batched_built, "sweep": sweep,
                   "stacked": sweep_stacked}, args.rounds)
    t_single = rounds({"singles": singles}, 1)["singles"]
    print(f"  batched numpy.linalg.solve, stack built before   {best['batched'] * 1e3:8.1f} ms")
    print(f"  batched, float64 stack build included            {best['built'] * 1e3:8.1f} ms")
    print(f"  sweep (engine built, every probe read)           {best['sweep'] * 1e3:8.1f} ms"
          f"   {best['sweep'] / best['batched']:.2f}× batched (target ≤ 1.5), "
          f"{best['sweep'] / best['built']:.2f}× batched with its build")
    print(f"  sweep, stacked dense path (band turned off)     {best['stacked'] * 1e3:8.1f} ms"
          f"   {best['stacked'] / best['batched']:.2f}× batched")
    print(f"  {len(f)} single-frequency solves                   {t_single * 1e3:8.1f} ms"
          f"   sweep {t_single / best['sweep']:.1f}× faster (target ≥ 50)")
    print(f"  {load()}")


def mesh(args) -> None:
    size = 40 if args.quick else args.size
    circuit = read_circuit(mesh_circuit(size))
    probes = parse_probes([p.replace("99", str(size - 1)).replace("50", str(size // 2))
                           for p in MESH_PROBES], circuit)
    f = grid(10.0, 10e3, args.points)
    engine = SweepEngine(circuit, probes)
    entries = engine.matrices(f)
    matrices = [engine.sparse_matrix(entries[k]) for k in range(len(f))]
    b = engine._rhs.copy()
    del entries

    def bare():
        for matrix in matrices:
            splu(matrix).solve(b)

    def sweep():
        SweepEngine(circuit, probes).response(f)

    print(f"mesh {size}×{size}: {engine.size:,} unknowns, {len(circuit.elements):,} elements, "
          f"{len(f)} points; {load()}")
    if args.profile == "mesh":
        profile(sweep)
        return
    best = rounds({"bare": bare, "sweep": sweep}, args.rounds)
    print(f"  {len(f)} bare splu factor-and-solves          {best['bare']:8.2f} s")
    print(f"  sweep (engine built, every probe read)    {best['sweep']:8.2f} s   "
          f"{best['sweep'] / best['bare']:.2f}× bare (target ≤ 1.3)")
    print(f"  {load()}")


def profile(job) -> None:
    import cProfile
    import pstats
    profiler = cProfile.Profile()
    profiler.runcall(job)
    pstats.Stats(profiler).sort_stats("tottime").print_stats(18)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="a 40×40 mesh")
    parser.add_argument("--size", type=int, default=100, help="mesh side")
    parser.add_argument("--points", type=int, default=200, help="points of the mesh sweep")
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--only", choices=("ladder", "mesh"))
    parser.add_argument("--profile", choices=("ladder", "mesh"))
    args = parser.parse_args()
    if args.only != "mesh" and args.profile != "mesh":
        ladder(args)
    if args.only != "ladder" and args.profile != "ladder":
        mesh(args)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
