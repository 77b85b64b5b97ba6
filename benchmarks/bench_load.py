"""Many clients at once against a live server: queueing, small-request latency, abandoned work.

Run by hand (it starts its own server on a free port, from the package on PYTHONPATH):

    PYTHONPATH=server python benchmarks/bench_load.py [--mesh 32] [--crowds 40,100]

Cases, each measured in this one run:

- ``alone``: one one-resistor solve on an idle server (the baseline of the ratios).
- ``crowd N``: N concurrent mid-size solves (a mesh of ``--mesh`` × ``--mesh`` nodes,
  about 3,000 elements) plus one one-resistor solve sent 0.3 s later. Printed: p50/p99
  of the mid-size answers that were served, how many were refused busy (503), the small
  solve's time and its ratio to ``alone``, and the server's peak RSS.
- ``abandoned``: 20 mid-size solves and 4 mid-size checks sent and dropped after 0.3 s
  (as the page drops a check on each keystroke), then a one-resistor solve: its time
  says how much the dropped work still delays the next request.

Wall-clock seconds on whatever machine runs it; compare ratios, not seconds.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import socket
import statistics
import subprocess
import sys
import time
from pathlib import Path

import httpx

sys.path.insert(0, str(Path(__file__).resolve().parent))
from mesh import mesh_circuit  # noqa: E402

TINY = "frequency 50 Hz\nV1: voltage a -> 0 10 V\nR1: resistor a -> 0 5 ohm\n"


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def peak_rss_mb(pid: int) -> float:
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024
    return float("nan")


def start_server(port: int) -> subprocess.Popen:
    proc = subprocess.Popen([sys.executable, "-m", "phasorbench", "serve", "--port", str(port)],
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 60
    while time.time() < deadline:
        try:
            httpx.get(f"http://127.0.0.1:{port}/api/samples", timeout=1)
            return proc
        except httpx.HTTPError:
            time.sleep(0.2)
    proc.kill()
    raise SystemExit("the server did not start")


async def timed_post(client, path: str, text: str) -> tuple[float, int]:
    t0 = time.perf_counter()
    r = await client.post(path, json={"netlist": text})
    return time.perf_counter() - t0, r.status_code


def quantile(values, q):
    if not values:
        return float("nan")
    values = sorted(values)
    return values[min(len(values) - 1, int(round(q * (len(values) - 1))))]


async def crowd(base: str, n: int, mesh: str) -> dict:
    limits = httpx.Limits(max_connections=n + 10, max_keepalive_connections=0)
    async with httpx.AsyncClient(base_url=base, timeout=600, limits=limits) as client:
        big = [asyncio.create_task(timed_post(client, "/api/solve", mesh)) for _ in range(n)]
        await asyncio.sleep(0.3)
        tiny = await timed_post(client, "/api/solve", TINY)
        done = await asyncio.gather(*big)
    served = [t for t, status in done if status == 200]
    return {"p50": quantile(served, 0.5), "p99": quantile(served, 0.99),
            "served": len(served), "busy": sum(status == 503 for _, status in done),
            "tiny": tiny[0], "tiny_status": tiny[1]}


async def abandoned(base: str, mesh: str) -> float:
    limits = httpx.Limits(max_connections=40, max_keepalive_connections=0)
    async with httpx.AsyncClient(base_url=base, timeout=600, limits=limits) as client:
        dropped = [asyncio.create_task(timed_post(client, "/api/solve", mesh)) for _ in range(20)]
        dropped += [asyncio.create_task(timed_post(client, "/api/check", mesh)) for _ in range(4)]
        await asyncio.sleep(0.3)
        for task in dropped:
            task.cancel()                  # closes each connection: the client has gone
        await asyncio.gather(*dropped, return_exceptions=True)
        await asyncio.sleep(0.05)
        return (await timed_post(client, "/api/solve", TINY))[0]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--mesh", type=int, default=32)
    parser.add_argument("--crowds", default="40,100")
    args = parser.parse_args()
    mesh = mesh_circuit(args.mesh)
    elements = sum(1 for line in mesh.splitlines() if ": " in line)
    port = free_port()
    base = f"http://127.0.0.1:{port}"
    proc = start_server(port)
    try:
        alone_mid = min(asyncio.run(timed_post(httpx.AsyncClient(base_url=base, timeout=600),
                                               "/api/solve", mesh))[0] for _ in range(2))
        alone = min(asyncio.run(timed_post(httpx.AsyncClient(base_url=base, timeout=60),
                                           "/api/solve", TINY))[0] for _ in range(5))
        print(f"mesh {args.mesh}x{args.mesh}: {elements} elements; mid-size solve alone "
              f"{alone_mid:.2f} s; one-resistor solve alone {alone * 1000:.1f} ms")
        for n in (int(x) for x in args.crowds.split(",")):
            r = asyncio.run(crowd(base, n, mesh))
            print(f"crowd {n:>3}: mid-size p50 {r['p50']:.2f} s p99 {r['p99']:.2f} s "
                  f"({r['served']} served, {r['busy']} busy 503); one-resistor "
                  f"{r['tiny']:.2f} s = {r['tiny'] / alone:.0f}x alone (status "
                  f"{r['tiny_status']}); server peak RSS {peak_rss_mb(proc.pid):.0f} MB")
        time.sleep(1)
        t = asyncio.run(abandoned(base, mesh))
        print(f"abandoned: 20 solves + 4 checks dropped after 0.3 s, then a one-resistor "
              f"solve: {t:.2f} s = {t / alone:.0f}x alone")
    finally:
        proc.terminate()
        proc.wait(10)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
