"""End to end: ``phasorbench serve`` as a real process on a free port."""

from __future__ import annotations

import json
import math
import os
import queue
import signal
import subprocess
import sys
import threading

import httpx

from .conftest import CAP_CIRCUIT, ROOT, free_port


#: A 1,500-section RC ladder (invented values): an answer of a few megabytes.
LADDER = "title ladder\nfrequency 50 Hz\nV1: voltage n0 -> 0 230 V\n" + "".join(
    f"R{k}: resistor n{k} -> n{k + 1} {1 + k % 7} ohm\nC{k}: capacitor n{k + 1} -> 0 "
    f"{10 + k % 5} uF\n" for k in range(1500))


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
            # A big answer crosses the socket in 1 MiB slices (jsonsafe.SlicedResponse):
            # RFC 9110 section 8.6, Content-Length counts the whole body; the numbers are
            # the command line's to the last bit (the contract is one, issue 10).
            big = client.post("/api/solve", json={"netlist": LADDER, "contract": True})
            assert big.status_code == 200 and len(big.content) > 1.5 * 2**20   # > one slice
            assert int(big.headers["content-length"]) == len(big.content)
            cli = subprocess.run([sys.executable, "-m", "phasorbench", "solve", "--json", "-"],
                                 input=LADDER, capture_output=True, text=True, env=env,
                                 check=True)
            shown = big.json()
            shown.pop("display", None)
            assert shown == json.loads(cli.stdout)
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
