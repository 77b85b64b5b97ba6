"""Harmonic study speed: a 50-order spectrum against 50 single-frequency solves.

    python benchmarks/bench_harmonics.py            # 100×100 mesh (10,000 nodes)
    python benchmarks/bench_harmonics.py --quick    # 40×40 mesh

The circuit is `mesh.py`'s R/L/C mesh with its source given a spectrum of orders 2 to
50, so the study solves 50 frequencies. The baseline, measured in the same run, solves
the same circuit (no spectrum) at the same 50 frequencies with `solver.solve`, the
element table shared (the cheapest way to ask the solver 50 times). The study is
`run_harmonics(..., scan=False)`: every per-order solve plus the IEEE 1459 arrays, the
node and element JSON, and again with that JSON written to bytes (what ``--json`` and
the API do). The capacitor resonance scan is timed on its own (it is a sweep, not part
of the 50 solves). CPU seconds (process_time), best of the repeats, the jobs taken in
turn. Target: study ≤ 1.3 × baseline.
"""

from __future__ import annotations

import argparse
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "server"))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from mesh import mesh_circuit  # noqa: E402

from phasorbench.jsonout import dumps  # noqa: E402
from phasorbench.solver import solve  # noqa: E402
from phasorbench.studies.harmonics import run_harmonics  # noqa: E402
from phasorbench.workflow import read_circuit  # noqa: E402

ORDERS = range(2, 51)


def spectrum_text(n: int) -> str:
    entries = ", ".join(f"{h}: {20.0 / h:.4g} % @ {(37 * h) % 360} deg" for h in ORDERS)
    return mesh_circuit(n).replace("Vsrc: voltage n0_0 -> 0 480 V",
                                   f"Vsrc: voltage n0_0 -> 0 480 V spectrum {entries}")


def interleaved(jobs: dict, repeats: int) -> dict:
    """Least CPU time of each job over ``repeats`` rounds, the jobs taken in turn (a
    shared machine's load then weighs on all alike)."""
    best = dict.fromkeys(jobs, float("inf"))
    for _ in range(repeats):
        for name, job in jobs.items():
            start = time.process_time()
            job()
            best[name] = min(best[name], time.process_time() - start)
    return best


def load() -> str:
    try:
        return " ".join(Path("/proc/loadavg").read_text().split()[:3])
    except OSError:
        return "unknown"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", type=int, default=100, help="mesh side (nodes = size²)")
    parser.add_argument("--quick", action="store_true", help="a 40×40 mesh")
    parser.add_argument("--repeats", type=int, default=2)
    parser.add_argument("--no-scan", action="store_true", help="skip the resonance scan")
    args = parser.parse_args()
    size = 40 if args.quick else args.size
    plain = read_circuit(mesh_circuit(size))
    harmonic = read_circuit(spectrum_text(size))
    frequencies = [plain.frequency * h for h in (1, *ORDERS)]
    table = plain.table()

    def baseline():
        for f in frequencies:
            at = replace(plain, frequency=f)
            at._table = table
            solve(at)

    def study():
        run_harmonics(harmonic, scan=False)

    def study_json():
        dumps(run_harmonics(harmonic, scan=False))

    def with_scan():
        run_harmonics(harmonic, scan=True)

    nodes = len(plain.nodes()) - 1
    scanned = min(12, sum(e.kind == "capacitor" for e in plain.elements.values()))
    print(f"mesh {size}×{size}: {nodes:,} nodes, {len(plain.elements):,} elements, "
          f"{len(frequencies)} frequencies; load average {load()}")
    run_harmonics(harmonic, scan=False)          # the element table, built once
    t = interleaved({"base": baseline, "study": study, "json": study_json}, args.repeats)
    t_base = t["base"]
    print(f"baseline: {len(frequencies)} single-frequency solves  {t_base:8.2f} s")
    print(f"harmonic study (no scan)                 {t['study']:8.2f} s   "
          f"{t['study'] / t_base:.2f}× baseline (target ≤ 1.3)")
    print(f"  … and its JSON written (jsonout)       {t['json']:8.2f} s   "
          f"{t['json'] / t_base:.2f}× baseline")
    if not args.no_scan:
        t_scan = interleaved({"scan": with_scan}, 1)["scan"]
        print(f"harmonic study with the resonance scan   {t_scan:8.2f} s   "
              f"{t_scan / t_base:.2f}× baseline (the scan alone "
              f"{(t_scan - t['study']) / t_base:.2f}×, {scanned} largest capacitors)")
    print(f"load average after: {load()}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
