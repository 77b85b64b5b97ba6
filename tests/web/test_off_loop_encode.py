"""A big answer is encoded in its job's worker thread, never on the event loop.

No test here measures time: they record which thread encoded, and the order in which
a held encode and a small request finish.
"""

from __future__ import annotations

import asyncio
import threading

import httpx

from phasorbench.jsonout import dumps as real_dumps
from phasorbench.web import jsonsafe

from .conftest import CAP_CIRCUIT, make_app, run_async

SAFETY = 20          # seconds: a bound on waiting for an event, never a speed target

#: A circuit text longer than the small lane's 4096 characters (jobs.SMALL_TEXT_CHARS):
#: its jobs run in the large lane, beside the small one.
BIG_TEXT = CAP_CIRCUIT.replace("title Capacitor across the mains", "title held answer") + \
    "".join(f"# padding line {i:04d} to make the text long\n" for i in range(120))


def _client(app):
    return httpx.AsyncClient(transport=httpx.ASGITransport(app=app), base_url="http://127.0.0.1:8000")


def test_the_answer_is_encoded_in_a_worker_thread_with_the_same_bytes(bench_samples,
                                                                      monkeypatch):
    # common practice, no source: blocking work (a 250 MB encode) stays off the asyncio
    # event loop (Python docs, "Developing with asyncio", "Running Blocking Code")
    threads = []

    def recording(data):
        threads.append(threading.current_thread())
        return real_dumps(data)
    monkeypatch.setattr(jsonsafe, "dumps", recording)
    monkeypatch.setattr(jsonsafe, "dumps_in_pieces", recording, raising=False)
    app = make_app(bench_samples)

    async def scenario():
        loop_thread = threading.current_thread()
        async with _client(app) as client:
            r = await client.post("/api/solve", json={"netlist": CAP_CIRCUIT, "contract": True})
        return loop_thread, r
    loop_thread, r = run_async(scenario())
    assert r.status_code == 200
    assert r.headers["content-type"] == "application/json"
    assert threads and all(t is not loop_thread for t in threads)
    assert all(t.name.startswith("phasorbench-small") for t in threads)
    # the bytes are those of the one encoder: what jsonout.dumps writes for the answer
    # common practice, no source: RFC 8259 JSON reads back to the same values
    assert r.content == real_dumps(r.json())
    # check-values C1: |I| = 230 V · 2π·50 Hz · 10 µF = 0.72257 A
    assert abs(r.json()["elements"]["C1"]["current"]["mag"] - 0.722566) < 1e-5


def test_a_small_request_is_answered_while_a_big_answer_is_being_encoded(bench_samples,
                                                                        monkeypatch):
    # common practice, no source: one slow answer must not hold the event loop, so a
    # short request sent after it is answered first (ordering, not timing)
    held, release = threading.Event(), threading.Event()
    order = []

    def holding(data):
        if isinstance(data, dict) and data.get("title") == "held answer":
            held.set()
            release.wait(SAFETY)        # on the event loop this would stop everything
            order.append("big encoded")
        return real_dumps(data)
    monkeypatch.setattr(jsonsafe, "dumps", holding)
    monkeypatch.setattr(jsonsafe, "dumps_in_pieces", holding, raising=False)
    app = make_app(bench_samples)

    async def scenario():
        async with _client(app) as client:
            big = asyncio.ensure_future(client.post(
                "/api/solve", json={"netlist": BIG_TEXT, "contract": True}))
            assert await asyncio.to_thread(held.wait, SAFETY)
            small = await client.post("/api/check", json={"netlist": CAP_CIRCUIT})
            order.append("small answered")
            release.set()
            return small, await big
    small, big = run_async(scenario())
    assert order == ["small answered", "big encoded"]
    assert small.status_code == 200 and small.json() == {"errors": [], "warnings": []}
    assert big.status_code == 200 and big.json()["title"] == "held answer"
    assert big.content == real_dumps(big.json())
