"""POST /api/tolerance and the job routes: the study's JSON, 422 in the language's error
shape, the stated work bound, progress and cancel."""

from __future__ import annotations

import math
import time

import pytest

from .conftest import make_app
from .test_tools_api import ThreadedApi, api  # noqa: F401  (the threaded client fixture)

DIVIDER = """frequency 50 Hz
V1: voltage in -> 0 10 V
R1: resistor in -> out 1 kohm tol 2%
R2: resistor out -> 0 1 kohm tol 2%
"""


def test_tolerance_answers_the_study_json(api):  # noqa: F811
    r = api.post("/api/tolerance", json={"netlist": DIVIDER, "probes": ["V(out)"],
                                         "runs": 1000, "worst_case": True,
                                         "limits": ["V(out) 4.95..5.05"]})
    assert r.status_code == 200
    body = r.json()
    probe = body["probes"]["V(out)"]
    # divider (formula): 5 V nominal, ∂ln V/∂ln R1 = −1/2; worst max 10·1.02/(0.98+1.02)
    assert math.isclose(probe["nominal"]["mag"], 5.0, rel_tol=1e-12)
    assert math.isclose(probe["sensitivities"]["R1"]["mag"], -0.5, rel_tol=1e-9)
    assert math.isclose(probe["worst_case"]["mag"]["max"]["value"], 10 * 1.02 / 2,
                        rel_tol=1e-9)
    assert body["seed"] == 1 and body["runs"] == 1000 and body["yield"]["runs"] == 1000


def test_bad_input_answers_422_with_every_error(api):  # noqa: F811
    r = api.post("/api/tolerance", json={"netlist": DIVIDER, "probes": ["V(ot)"],
                                         "runs": 1, "limits": ["V(out) 3..2"]})
    assert r.status_code == 422                      # studies.md: HTTP 422, all in one pass
    errors = r.json()["errors"]
    assert len(errors) == 3
    probe = [e for e in errors if "'ot'" in e["message"]][0]
    assert probe["column"] == 3 and "did you mean 'out'" in probe["hint"]


def test_work_bound_is_stated(api):  # noqa: F811
    big = "frequency 50 Hz\nVs: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm tol 1%\n" for k in range(60)) + \
        "R99: resistor n60 -> 0 1 ohm\n"
    r = api.post("/api/tolerance", json={"netlist": big, "probes": ["V(n5)"],
                                         "runs": 1_000_000})
    # common practice, no source: a bounded server says its limit
    assert r.status_code == 422
    assert "solves × unknowns" in r.json()["errors"][0]["message"]


def test_job_progress_answer_and_cancel(api):  # noqa: F811
    r = api.post("/api/tolerance/jobs", json={"netlist": DIVIDER, "probes": ["V(out)"],
                                              "runs": 6000})
    job = r.json()["job"]
    for _ in range(200):
        r = api.get(f"/api/tolerance/jobs/{job}")
        if r.json().get("state") != "running":
            break
        time.sleep(0.05)
    body = r.json()
    # common practice, no source: the same answer as the one-shot route
    assert body["state"] == "done" and body["runs"] == 6000
    assert api.get(f"/api/tolerance/jobs/{job}").status_code == 404
    slow = "frequency 50 Hz\nVs: voltage n0 -> 0 1 V\n" + "".join(
        f"R{k}: resistor n{k} -> n{k + 1} 1 ohm tol 1%\n" for k in range(150)) + \
        "R999: resistor n150 -> 0 1 ohm\n"
    r = api.post("/api/tolerance/jobs", json={"netlist": slow, "probes": ["V(n5)"],
                                              "runs": 200000})
    job = r.json()["job"]
    assert api.request("DELETE", f"/api/tolerance/jobs/{job}").json()["state"] == \
        "cancelling"
    for _ in range(400):
        r = api.get(f"/api/tolerance/jobs/{job}")
        if r.json().get("state") != "running":
            break
        time.sleep(0.05)
    assert r.json()["state"] == "cancelled"


@pytest.mark.slow
def test_server_scheduler_setting_gives_the_same_numbers(bench_samples):
    distributed = pytest.importorskip("dask.distributed")
    body = {"netlist": DIVIDER, "probes": ["V(out)"], "runs": 2500, "seed": 4}
    here = ThreadedApi(make_app(bench_samples)).post("/api/tolerance", json=body).json()
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=":0") as cluster:
        app = make_app(bench_samples, scheduler=cluster.scheduler_address)
        there = ThreadedApi(app).post("/api/tolerance", json=body).json()
    # common practice, no source: the server's scheduler setting changes where, not what
    assert there == here and there["runs"] == 2500


def test_a_finished_answer_is_kept_from_when_it_is_ready(api):  # noqa: F811
    # common practice, no source: a result kept for a while is kept from when it is
    # ready, so a study that ran longer than the keeping time is still fetched once
    from phasorbench.web.tolerance_routes import KEEP_SECONDS

    jobs = api.app.state
    ask = {"netlist": DIVIDER, "probes": ["V(out)"], "runs": 200}
    long_run = api.post("/api/tolerance/jobs", json=ask).json()["job"]
    left = api.post("/api/tolerance/jobs", json=ask).json()["job"]
    for key in (long_run, left):
        jobs.tolerance_jobs[key]["future"].result(timeout=30)
    for _ in range(500):                     # the done callbacks have run
        if all("finished" in jobs.tolerance_jobs[k] for k in (long_run, left)):
            break
        time.sleep(0.01)
    assert all("finished" in jobs.tolerance_jobs[k] for k in (long_run, left))
    jobs.tolerance_jobs[long_run]["started"] -= 2 * KEEP_SECONDS    # started long ago
    jobs.tolerance_jobs[left]["finished"] = time.monotonic() - 2 * KEEP_SECONDS  # ready long ago
    r = api.get(f"/api/tolerance/jobs/{long_run}")
    assert r.status_code == 200 and r.json()["state"] == "done" and r.json()["runs"] == 200
    assert api.get(f"/api/tolerance/jobs/{left}").status_code == 404   # never fetched


def test_a_finished_study_is_encoded_once_in_its_worker_thread(bench_samples, monkeypatch):
    # common practice, no source: blocking work (encoding a big answer) stays off the
    # asyncio event loop (Python docs, "Developing with asyncio", "Running Blocking
    # Code"), as for every other route (test_off_loop_encode.py); which thread encodes,
    # and in what order, is recorded: nothing here is timed
    import asyncio
    import threading

    import httpx

    from phasorbench.jsonout import dumps as real_dumps
    from phasorbench.web import jsonsafe
    from phasorbench.web.tolerance_routes import ToleranceBody, tolerance_answer

    from .conftest import run_async
    from .test_off_loop_encode import SAFETY
    events = []

    def recording(data):
        if isinstance(data, dict) and data.get("state") == "done":
            events.append(("done encoded", threading.current_thread()))
        return real_dumps(data)
    monkeypatch.setattr(jsonsafe, "dumps", recording)
    monkeypatch.setattr(jsonsafe, "dumps_in_pieces", recording)
    app = make_app(bench_samples)
    ask = {"netlist": DIVIDER, "probes": ["V(out)"], "runs": 500, "seed": 3}

    async def scenario():
        loop_thread = threading.current_thread()
        async with httpx.AsyncClient(transport=httpx.ASGITransport(app=app),
                                     base_url="http://127.0.0.1:8000") as client:
            job = (await client.post("/api/tolerance/jobs", json=ask)).json()["job"]
            future = app.state.tolerance_jobs[job]["future"]
            await asyncio.wait_for(asyncio.wrap_future(future), SAFETY)
            events.append(("finished", None))
            r = await client.get(f"/api/tolerance/jobs/{job}")
            events.append(("answered", None))
            gone = await client.get(f"/api/tolerance/jobs/{job}")
        return loop_thread, r, gone
    loop_thread, r, gone = run_async(scenario())
    assert [name for name, _ in events] == ["done encoded", "finished", "answered"]
    thread = events[0][1]
    assert thread is not loop_thread and thread.name.startswith("phasorbench-large")
    assert r.status_code == 200 and gone.status_code == 404
    # the bytes and headers the route sent before: jsonout.dumps of the same answer
    # (the study is seeded, so it is the same answer), as application/json
    body = ToleranceBody(**ask)
    want = real_dumps({"state": "done", **tolerance_answer(
        DIVIDER, body.ask(), app.state.settings)})
    assert r.content == want
    assert r.headers["content-type"] == "application/json"
    assert r.headers["content-length"] == str(len(want))
    # divider (formula): V(out) = 10 V · 1 kΩ / 2 kΩ = 5 V nominal
    assert math.isclose(r.json()["probes"]["V(out)"]["nominal"]["mag"], 5.0, rel_tol=1e-12)
