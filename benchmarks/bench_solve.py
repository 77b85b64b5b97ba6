"""Speed and memory of phasorbench's solve, every ratio of the speed targets in one run,
each against a baseline measured in the same run, the two sides taken in turn.

    python benchmarks/bench_solve.py            # 100×100 and 300×300 meshes
    python benchmarks/bench_solve.py --quick    # 100×100 only

What it prints (targets in brackets):

1. ``phasorbench solve --json`` against ``baseline_solver.py`` (the lean parse → SuperLU
   → JSON script), whole processes, CPU and wall seconds [≤ 1.0×];
2. ``POST /api/solve`` on a live ``phasorbench serve`` (uvicorn) started here, against
   the command line: the server's CPU seconds for the request (from /proc) and the
   client's wall time to the last byte, for the page's answer (``contract: false``)
   and the whole contract [≤ 1.3×]; every request carries a different title so the
   server's solved-text cache never answers it;
3. the server's peak memory (``VmHWM`` of /proc/PID/status, a fresh server per mesh)
   against the command line's (``ru_maxrss``) [≤ 1.5×];
4. four concurrent 100×100 (10k-node) solves with one BLAS thread each (the default)
   and with the BLAS library's own threads (one per core);
5. cold start: ``phasorbench solve`` of a five-element circuit in a fresh process
   against ``python -c "import numpy, scipy.sparse.linalg"`` [≤ 1.3×].

CPU time moves far less than wall time with what else runs on a shared machine; both
are printed, with the load average. Run by hand, never as a timed test.
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import socket
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))
from mesh import mesh_circuit  # noqa: E402

TICK = os.sysconf("SC_CLK_TCK")
FIVE = """title five elements
frequency 50 Hz
Vs: voltage a -> 0 230 V
R1: resistor a -> b 10 ohm
L1: inductor b -> c 20 mH
C1: capacitor c -> 0 100 uF
R2: resistor c -> 0 50 ohm
"""


def child_env(**extra: str) -> dict:
    """The children's environment: this worktree's package, bytecode kept (an installed
    package has it compiled; without it every run pays ~0.1 s of compiling)."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = str(ROOT / "server")
    env.update(extra)
    return env


def run(command: list[str], env: dict | None = None) -> tuple[float, float, float]:
    """(CPU seconds, wall seconds, peak MB) of one run of ``command``."""
    start = time.perf_counter()
    proc = subprocess.Popen(command, stdout=subprocess.DEVNULL, env=env or child_env())
    _pid, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    if status != 0:
        raise SystemExit(f"{' '.join(command)} failed ({status})")
    return usage.ru_utime + usage.ru_stime, wall, usage.ru_maxrss / 1024.0


def cli(path: Path) -> list[str]:
    return [sys.executable, "-m", "phasorbench", "solve", "--json", str(path)]


def lean(path: Path) -> list[str]:
    return [sys.executable, str(HERE / "baseline_solver.py"), str(path)]


#: The lean script runs with one BLAS thread too: its best case on a busy machine (its
#: default threads fight over the cores and make the ratio look better than it is).
ONE_THREAD = {name: "1" for name in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS",
                                     "MKL_NUM_THREADS")}


# --- a live server -------------------------------------------------------------------

class Server:
    """``phasorbench serve`` on a free port, its CPU time and peak memory from /proc."""

    def __init__(self, max_elements: int):
        with socket.socket() as s:
            s.bind(("127.0.0.1", 0))
            self.port = s.getsockname()[1]
        self.proc = subprocess.Popen(
            [sys.executable, "-m", "phasorbench", "serve", "--port", str(self.port),
             "--max-elements", str(max_elements), "--max-body-mb", "128"],
            env=child_env(PYTHONUNBUFFERED="1"), stdout=subprocess.PIPE,
            stderr=subprocess.STDOUT, text=True)
        line = self.proc.stdout.readline()
        if "workbench at" not in line:
            self.proc.kill()
            raise SystemExit(f"the server did not start: {line}")
        self.runs = 0

    def cpu(self) -> float:
        fields = Path(f"/proc/{self.proc.pid}/stat").read_text().rsplit(")", 1)[1].split()
        return (int(fields[11]) + int(fields[12])) / TICK       # utime + stime, all threads

    def peak_mb(self) -> float:
        for line in Path(f"/proc/{self.proc.pid}/status").read_text().splitlines():
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024.0
        return float("nan")

    def solve(self, text: str, contract: bool) -> tuple[float, float, int]:
        """(server CPU seconds, client wall seconds, answer bytes) of one solve of a
        text no earlier request sent (its title changed)."""
        self.runs += 1
        text = text.replace("\n", f" run {self.runs}\n", 1)
        body = json.dumps({"netlist": text, "contract": contract}).encode()
        connection = http.client.HTTPConnection("127.0.0.1", self.port, timeout=3600)
        cpu0, start = self.cpu(), time.perf_counter()
        connection.request("POST", "/api/solve", body, {"Content-Type": "application/json"})
        answer = connection.getresponse()
        data = answer.read()
        wall = time.perf_counter() - start
        time.sleep(0.05)             # the worker thread's last release is counted too
        cpu = self.cpu() - cpu0
        connection.close()
        if answer.status != 200:
            raise SystemExit(f"POST /api/solve answered {answer.status}: {data[:300]!r}")
        return cpu, wall, len(data)

    def stop(self) -> None:
        self.proc.terminate()
        self.proc.wait(timeout=30)


# --- the measurements ----------------------------------------------------------------

def best(samples: list[tuple]) -> tuple:
    """The least of each column over the runs."""
    return tuple(min(column) for column in zip(*samples))


def mesh_figures(n: int, work: Path, repeats: int) -> dict:
    path = work / f"mesh{n}.circuit"
    text = mesh_circuit(n)
    path.write_text(text)
    elements = text.count(":")
    server = Server(max(50_000, 2 * elements))
    try:
        page_cpu, page_wall, page_bytes = server.solve(text, contract=False)
        page_peak = server.peak_mb()
        runs = {"lean": [], "cli": [], "page": [(page_cpu, page_wall)], "contract": []}
        contract_bytes = 0
        for _ in range(repeats):
            runs["lean"].append(run(lean(path), child_env(**ONE_THREAD)))
            runs["cli"].append(run(cli(path)))
            cpu, wall, page_bytes = server.solve(text, contract=False)
            runs["page"].append((cpu, wall))
            cpu, wall, contract_bytes = server.solve(text, contract=True)
            runs["contract"].append((cpu, wall))
        end_peak = server.peak_mb()
    finally:
        server.stop()
    out = {k: best(v) for k, v in runs.items()}
    out.update(n=n, elements=elements, page_peak=page_peak, end_peak=end_peak,
               cli_peak=max(r[2] for r in runs["cli"]), lean_peak=max(r[2] for r in runs["lean"]),
               page_bytes=page_bytes, contract_bytes=contract_bytes,
               json_bytes=len(subprocess.run(cli(path), env=child_env(), check=True,
                                             capture_output=True).stdout))
    return out


def concurrent(path: Path, env: dict, count: int = 4) -> tuple[float, float]:
    """(wall seconds of ``count`` solves started together, their summed CPU seconds)."""
    start = time.perf_counter()
    procs = [subprocess.Popen(cli(path), stdout=subprocess.DEVNULL, env=env)
             for _ in range(count)]
    cpu = 0.0
    for proc in procs:
        _pid, status, usage = os.wait4(proc.pid, 0)
        if status != 0:
            raise SystemExit("a concurrent solve failed")
        cpu += usage.ru_utime + usage.ru_stime
    return time.perf_counter() - start, cpu


def load() -> str:
    return " ".join(Path("/proc/loadavg").read_text().split()[:3])


def ratio(a: float, b: float) -> str:
    return f"{a / b:5.2f}×" if b else "  n/a"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="skip the 300×300 mesh")
    parser.add_argument("--repeats", type=int, default=3, help="rounds per mesh (best kept)")
    parser.add_argument("--big-repeats", type=int, default=2, help="rounds of the 300×300 mesh")
    args = parser.parse_args()
    work = Path(tempfile.mkdtemp(prefix="pb-bench-"))
    print(f"machine: {os.cpu_count()} cores; /proc/loadavg {load()} at start")
    # compile the package's bytecode once, as an installed package has it
    run([sys.executable, "-m", "compileall", "-q", str(ROOT / "server")])

    meshes = [(100, args.repeats)] + ([] if args.quick else [(300, args.big_repeats)])
    print("times: best of the rounds; CPU = user + system seconds of the process "
          "(the server: its CPU for the request)")
    for n, repeats in meshes:
        f = mesh_figures(n, work, repeats)
        lean_t, cli_t = f["lean"], f["cli"]
        print(f"\nmesh {n}×{n} ({f['elements']:,} elements), {repeats} rounds, "
              f"/proc/loadavg {load()}")
        print(f"  lean script (1 thread) CPU {lean_t[0]:7.2f} s  wall {lean_t[1]:7.2f} s")
        print(f"  solve --json (CLI)     CPU {cli_t[0]:7.2f} s  wall {cli_t[1]:7.2f} s   "
              f"CLI/lean CPU {ratio(cli_t[0], lean_t[0])} wall {ratio(cli_t[1], lean_t[1])}"
              "  (target ≤ 1.0)")
        for key, label, size in (("page", "page's answer", f["page_bytes"]),
                                 ("contract", "whole contract", f["contract_bytes"])):
            cpu, wall = f[key]
            print(f"  POST /api/solve, {label:14s} server CPU {cpu:7.2f} s  wall {wall:7.2f} s"
                  f"  {size / 1e6:7.1f} MB   API/CLI CPU {ratio(cpu, cli_t[0])} wall "
                  f"{ratio(wall, cli_t[1])}  (target ≤ 1.3)")
        print(f"  CLI's JSON {f['json_bytes'] / 1e6:.1f} MB")
        print(f"  peak memory: CLI {f['cli_peak']:7.1f} MB, lean {f['lean_peak']:7.1f} MB; "
              f"server after the page's solve {f['page_peak']:7.1f} MB "
              f"({ratio(f['page_peak'], f['cli_peak'])} the CLI's), after every round "
              f"{f['end_peak']:7.1f} MB ({ratio(f['end_peak'], f['cli_peak'])})  (target ≤ 1.5)")

    mesh = work / "mesh100.circuit"
    one = child_env()
    free = child_env(**{name: str(os.cpu_count()) for name in
                        ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")})
    pinned, unpinned = [], []
    for _ in range(2):
        pinned.append(concurrent(mesh, one))
        unpinned.append(concurrent(mesh, free))
    p, u = best(pinned), best(unpinned)
    print(f"\n4 concurrent 100×100 solves (10k nodes), best of 2, /proc/loadavg {load()}")
    print(f"  one BLAS thread each (default)   wall {p[0]:6.2f} s  CPU {p[1]:6.2f} s")
    print(f"  {os.cpu_count()} BLAS threads each              wall {u[0]:6.2f} s  CPU {u[1]:6.2f} s"
          f"   pinned/unpinned wall {ratio(p[0], u[0])} CPU {ratio(p[1], u[1])}")

    five = work / "five.circuit"
    five.write_text(FIVE)
    solve_five = [sys.executable, "-m", "phasorbench", "solve", str(five)]
    imports = [sys.executable, "-c", "import numpy, scipy.sparse.linalg"]
    run(solve_five), run(imports)                       # warm the file cache
    ours, base = [], []
    for _ in range(5):
        base.append(run(imports))
        ours.append(run(solve_five))
    o, b = best(ours), best(base)
    print(f"\ncold start, best of 5, /proc/loadavg {load()}")
    print(f"  import numpy, scipy.sparse.linalg   CPU {b[0]:5.2f} s  wall {b[1]:5.2f} s")
    print(f"  phasorbench solve (5 elements)      CPU {o[0]:5.2f} s  wall {o[1]:5.2f} s   "
          f"ratio CPU {ratio(o[0], b[0])} wall {ratio(o[1], b[1])}  (target ≤ 1.3)")
    print(f"\n/proc/loadavg {load()} at the end")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
