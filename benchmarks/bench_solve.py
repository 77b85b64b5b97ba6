"""Speed and memory of `phasorbench solve --json` on large meshes, against a baseline
measured in the same run.

    python benchmarks/bench_solve.py            # 100×100 timing ratios, 300×300 memory
    python benchmarks/bench_solve.py --quick    # smaller meshes, for a fast look

Targets (issue 2): end to end at most 2× the baseline script; the solve stage
(assembly + factor + solve + powers) within 1.5× of a bare SuperLU factor-and-solve of
the same matrix; a 300×300 mesh solves within 2 GB, memory growing with the non-zeros.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
from mesh import mesh_circuit  # noqa: E402


def _children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def best_of(command: list[str], repeats: int) -> float:
    """Least CPU time (user + system) of the command over ``repeats`` runs.

    CPU time rather than wall time: the machine is shared, and CPU time of the process
    itself moves far less with what else runs.
    """
    times = []
    for _ in range(repeats):
        start = _children_cpu()
        subprocess.run(command, check=True, stdout=subprocess.DEVNULL)
        times.append(_children_cpu() - start)
    return min(times)


def peak_memory_mb(command: list[str]) -> float:
    """Peak resident memory of a child process (ru_maxrss of a fresh child)."""
    code = ("import resource, subprocess, sys; subprocess.run(sys.argv[1:], check=True, "
            "stdout=subprocess.DEVNULL); "
            "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")
    out = subprocess.run([sys.executable, "-c", code, *command], check=True,
                         capture_output=True, text=True).stdout
    return int(out.strip()) / 1024.0


def solve_stage(path: Path, repeats: int) -> tuple[float, float]:
    """(phasorbench's assembly+factor+solve+powers, bare splu+solve of the same matrix),
    each the least CPU time of this process over ``repeats`` runs."""
    import numpy as np
    from scipy.sparse.linalg import splu

    from phasorbench import solver
    from phasorbench.workflow import read_circuit

    circuit = read_circuit(path.read_text(), str(path))
    captured = {}
    original = solver._factor_and_solve

    def capture(matrix, stamps, b, *args):
        captured["A"], captured["b"] = matrix, b
        return original(matrix, stamps, b, *args)

    ours = []
    for _ in range(repeats):
        start = time.process_time()
        solution = solver.solve(circuit)
        power = solution.voltage * np.conj(solution.current)
        power.sum()
        ours.append(time.process_time() - start)
    solver._factor_and_solve = capture
    try:
        solver.solve(circuit)
    finally:
        solver._factor_and_solve = original
    bare = []
    A = captured["A"].tocsc()
    for _ in range(repeats):
        start = time.process_time()
        splu(A).solve(np.asarray(captured["b"], dtype=complex))
        bare.append(time.process_time() - start)
    return min(ours), min(bare)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="smaller meshes")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    size, big = (40, 100) if args.quick else (100, 300)
    work = Path(tempfile.mkdtemp(prefix="pb-bench-"))
    mesh = work / f"mesh{size}.circuit"
    mesh.write_text(mesh_circuit(size))
    ours_cmd = [sys.executable, "-m", "phasorbench", "solve", "--json", str(mesh)]
    base_cmd = [sys.executable, str(HERE / "baseline_solver.py"), str(mesh)]
    print(f"mesh {size}×{size}: {mesh.read_text().count(chr(10)) - 2} elements")
    t_base = best_of(base_cmd, args.repeats)
    t_ours = best_of(ours_cmd, args.repeats)
    print("times are CPU seconds (user + system), best of", args.repeats)
    print(f"end to end   baseline {t_base:7.3f} s   phasorbench {t_ours:7.3f} s   "
          f"ratio {t_ours / t_base:5.2f}  (target ≤ 2.00)")
    stage, bare = solve_stage(mesh, args.repeats)
    print(f"solve stage  bare SuperLU {bare:7.3f} s   phasorbench {stage:7.3f} s   "
          f"ratio {stage / bare:5.2f}  (target ≤ 1.50)")
    for n in (size, big):
        path = work / f"mesh{n}.circuit"
        if not path.exists():
            path.write_text(mesh_circuit(n))
        mb = peak_memory_mb([sys.executable, "-m", "phasorbench", "solve", "--json",
                             str(path)])
        mb_base = peak_memory_mb([sys.executable, str(HERE / "baseline_solver.py"),
                                  str(path)])
        print(f"memory {n}×{n}: phasorbench {mb:7.1f} MB, baseline {mb_base:7.1f} MB, "
              f"ratio {mb / mb_base:5.2f}" + ("  (target < 2048 MB)" if n == big else ""))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
