"""End to end: ``phasorbench serve`` as a real process on a free port."""

from __future__ import annotations

import math
import os
import queue
import signal
import subprocess
import sys
import threading

import httpx

from .conftest import CAP_CIRCUIT, ROOT, free_port


def test_serve_prints_the_url_and_answers(tmp_path):
    port = free_port()
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    proc = subprocess.Popen([sys.executable, "-m", "phasorbench", "serve", "--port", str(port)],
                            cwd=tmp_path, env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    lines: queue.Queue = queue.Queue()
    threading.Thread(target=lambda: [lines.put(l) for l in proc.stdout], daemon=True).start()
    try:
        first = lines.get(timeout=30)
        url = f"http://127.0.0.1:{port}/"
        assert url in first
        with httpx.Client(base_url=url, timeout=30) as client:
            page = client.get("/")
            assert page.status_code == 200 and "phasor" in page.text
            solved = client.post("/api/solve", json={"netlist": CAP_CIRCUIT})
            assert solved.status_code == 200
            # check-values C1: 10 µF across 230 V at 50 Hz takes 0.722566 A.
            assert math.isclose(solved.json()["elements"]["C1"]["current"]["mag"], 0.722566,
                                rel_tol=1e-6)
            samples = client.get("/api/samples").json()
            assert {s["name"] for s in samples} == {p.stem for p in (ROOT / "samples").glob("*.circuit")}
    finally:
        proc.send_signal(signal.SIGINT)
        try:
            code = proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            proc.kill()
            raise
        stderr = proc.stderr.read()
        proc.stdout.close()
        proc.stderr.close()
    assert code == 0, stderr
    assert "Traceback" not in stderr
