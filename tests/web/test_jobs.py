"""Lanes, bounded queues and cancellation of the API's jobs (issue 9, items 2 and 6).

No test here measures time: each waits for events (with a generous safety bound that
only a hang would reach) and asserts what ran, what was dropped and what was answered.
"""

from __future__ import annotations

import asyncio
import socket
import threading

import httpx
import pytest

from phasorbench.web import answers, jobs
from phasorbench.web.settings import Settings

from .conftest import CAP_CIRCUIT, LiveServer, free_port, make_app, run_async

SAFETY = 30          # seconds: a bound on waiting for an event, never a speed target


class Disconnect:
    """An ASGI ``receive`` that says ``http.disconnect`` once the test lets it."""

    def __init__(self):
        self.gone = asyncio.Event()

    async def __call__(self):
        await self.gone.wait()
        return {"type": "http.disconnect"}


def busy_python(started: threading.Event, ended: threading.Event, ran: list):
    """A job that spins in Python until it is stopped (so JobCancelled can land)."""
    started.set()
    try:
        n = 0
        while n >= 0:
            n += 1
        ran.append("finished")
    finally:
        ended.set()


def runner(workers=1, queue=4, small_workers=1, small_queue=4):
    return jobs.JobRunner(Settings(solve_workers=workers, large_queue=queue,
                                   small_workers=small_workers, small_queue=small_queue))


def test_a_running_job_is_stopped_when_its_client_goes():
    # common practice, no source: work whose client has gone is stopped (the issue's
    # contract), so it cannot delay the next request
    r = runner()
    started, ended, ran = threading.Event(), threading.Event(), []

    async def scenario():
        receive = Disconnect()
        task = asyncio.ensure_future(r.run(receive, r.large, busy_python, started, ended, ran))
        assert await asyncio.to_thread(started.wait, SAFETY)
        receive.gone.set()
        with pytest.raises(jobs.ClientGone):
            await task
        assert await asyncio.to_thread(ended.wait, SAFETY)
        # the worker is free again: the next job runs and returns normally
        return await r.run(Disconnect(), r.large, lambda: "next")
    assert run_async(scenario()) == "next"
    assert ran == []                 # stopped in the loop, never reached its end
    r.shutdown()


def test_a_queued_job_whose_client_goes_never_starts():
    # common practice, no source: a request still queued when its client leaves is dropped
    r = runner(workers=1)
    release, started, ran = threading.Event(), threading.Event(), []

    def blocker():
        started.set()
        release.wait(SAFETY)
        return "first"

    async def scenario():
        first = asyncio.ensure_future(r.run(Disconnect(), r.large, blocker))
        assert await asyncio.to_thread(started.wait, SAFETY)
        receive = Disconnect()
        second = asyncio.ensure_future(r.run(receive, r.large, lambda: ran.append("second")))
        await asyncio.sleep(0)
        receive.gone.set()
        with pytest.raises(jobs.ClientGone):
            await second
        release.set()
        assert await first == "first"
        assert await r.run(Disconnect(), r.large, lambda: "third") == "third"
    run_async(scenario())
    assert ran == []
    r.shutdown()


def test_cancelling_at_any_moment_never_hits_a_later_job():
    # common practice, no source: the asynchronous exception is armed and disarmed under
    # one lock, so however late a cancel comes, no later job of that thread is hit
    r = runner(workers=1)

    def short(k):
        return sum(range(k * 50))

    async def scenario():
        for k in range(300):
            receive = Disconnect()
            task = asyncio.ensure_future(r.run(receive, r.large, short, k))
            for _ in range(k % 7):
                await asyncio.sleep(0)
            receive.gone.set()
            try:
                assert await task == sum(range(k * 50))
            except jobs.ClientGone:
                pass
            # an uncancelled job right after must never see a stray JobCancelled
            assert await r.run(Disconnect(), r.large, short, 3) == sum(range(150))
    run_async(scenario())
    r.shutdown()


def test_a_full_lane_answers_503_with_retry_after(bench_samples, monkeypatch):
    # RFC 9110, sections 15.6.4 (503 Service Unavailable) and 10.2.3 (Retry-After)
    app = make_app(bench_samples, solve_workers=1, large_queue=0, retry_after_s=3)
    release, started = threading.Event(), threading.Event()
    original = answers.solve_answer

    def slow(text, *rest):
        if len(text) > jobs.SMALL_TEXT_CHARS:        # only the big request is held
            started.set()
            assert release.wait(SAFETY)
        return original(text, *rest)
    monkeypatch.setattr(answers, "solve_answer", slow)
    big = CAP_CIRCUIT + "#" * 5000              # past the small lane's size

    async def scenario():
        transport = httpx.ASGITransport(app=app)
        async with httpx.AsyncClient(transport=transport, base_url="http://127.0.0.1:8000") as c:
            first = asyncio.ensure_future(c.post("/api/solve", json={"netlist": big}))
            assert await asyncio.to_thread(started.wait, SAFETY)
            refused = await c.post("/api/solve", json={"netlist": big})
            small = await c.post("/api/solve", json={"netlist": CAP_CIRCUIT.replace("10 uF", "1 uF")})
            release.set()
            return refused, small, await first
    refused, small, first = run_async(scenario())
    assert refused.status_code == 503 and refused.headers["retry-after"] == "3"
    assert refused.json()["errors"][0]["message"].startswith("the server is busy")
    assert first.status_code == 200
    # common practice, no source: the small lane answered while the large one was full
    assert small.status_code == 200


def test_a_dropped_connection_stops_its_solve_on_a_live_server(bench_samples, monkeypatch):
    # RFC 9112, section 9.6 (tear-down): a closed connection is a client that has gone;
    # uvicorn passes it on as http.disconnect and the job is stopped
    started, ended, ran = threading.Event(), threading.Event(), []
    monkeypatch.setattr(answers, "solve_answer",
                        lambda text, *rest: busy_python(started, ended, ran))
    port = free_port()
    server = LiveServer(make_app(bench_samples, port=port), port).start()
    try:
        body = b'{"netlist": "frequency 50 Hz"}'
        with socket.create_connection(("127.0.0.1", port)) as s:
            s.sendall(b"POST /api/solve HTTP/1.1\r\nHost: 127.0.0.1:%d\r\n"
                      b"Content-Type: application/json\r\nContent-Length: %d\r\n\r\n%s"
                      % (port, len(body), body))
            assert started.wait(SAFETY)
        assert ended.wait(SAFETY)
        assert ran == []
        # and the server still answers
        assert httpx.post(f"http://127.0.0.1:{port}/api/check",
                          json={"netlist": CAP_CIRCUIT}).status_code == 200
    finally:
        server.stop()
