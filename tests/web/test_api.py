"""The JSON API: contract shape, errors at their line, guards, samples, strict JSON."""

from __future__ import annotations

import asyncio
import json
import logging
import math
from pathlib import Path

import httpx
import pytest

from phasorbench import workflow
from phasorbench.presentation.cautions import CAUTIONS, SCOPE_NOTE
from phasorbench.web.jsonsafe import jsonable

from .conftest import (BENCH_CIRCUIT, BENCH_I_DEG, BENCH_I_MAG, CAP_CIRCUIT, ROOT, Api,
                       make_app, template_context)

CONTRACT_KEYS = {"title", "frequency_hz", "amplitudes", "nodes", "elements", "balance", "warnings"}
ELEMENT_KEYS = {"kind", "from", "to", "voltage", "current", "impedance", "p_w", "q_var", "s_va",
                "pf", "pf_sense"}
PHASOR_KEYS = {"re", "im", "mag", "deg"}
ERROR_KEYS = {"line", "column", "message", "hint"}


def strict_json(response: httpx.Response):
    """Parse a body refusing NaN and ±Infinity, which are not JSON (RFC 8259, section 6)."""
    def refuse(token):
        raise AssertionError(f"non-JSON number {token} in the body")
    return json.loads(response.text, parse_constant=refuse)


# ---- the results contract ---------------------------------------------------------

def test_solve_returns_the_contract_with_display_text(api):
    r = api.post("/api/solve", json={"netlist": CAP_CIRCUIT})
    assert r.status_code == 200
    body = strict_json(r)
    assert CONTRACT_KEYS <= body.keys()                 # results-contract.md
    assert body["nodes"]["0"] == {"re": 0.0, "im": 0.0, "mag": 0.0, "deg": 0.0}
    for element in body["elements"].values():
        assert ELEMENT_KEYS <= element.keys()
        assert PHASOR_KEYS <= element["voltage"].keys()
    c1 = body["elements"]["C1"]
    # check-values C1 (formula Xc = 1/(2πfC)): I = 0.722566 A leading V by 90°, Q = −166.19 var.
    assert math.isclose(c1["current"]["mag"], 0.722566, rel_tol=1e-6)
    assert math.isclose(c1["current"]["deg"], 90.0, abs_tol=1e-6)
    assert math.isclose(c1["q_var"], -166.19, rel_tol=1e-4)
    # The display strings are formatting.py's: 0.722566 A at 4 significant digits.
    row = next(r for r in body["display"]["elements"] if r["name"] == "C1")
    assert row["text"]["current"] == "722.6 mA ∠90.00°"   # common practice, no source
    assert body["display"]["facts"]["frequency"] == "50 Hz"


def test_solve_answer_equals_the_core_contract(api):
    # The API adds fields but changes none of the core's (results-contract.md: add, never rename).
    body = strict_json(api.post("/api/solve", json={"netlist": BENCH_CIRCUIT}))
    core = json.loads(json.dumps(workflow.solve_text(BENCH_CIRCUIT)))
    assert {k: body[k] for k in core} == core
    i = body["elements"]["C1"]["current"]
    # R = Xc gives a current leading by 45° (conftest, formula).
    assert math.isclose(i["mag"], BENCH_I_MAG, rel_tol=1e-6)
    assert math.isclose(i["deg"], BENCH_I_DEG, abs_tol=1e-6)


def test_power_summary_adds_up_to_the_balance(api):
    body = strict_json(api.post("/api/solve", json={"netlist": BENCH_CIRCUIT}))
    summary = body["display"]["summary"]
    # Tellegen's theorem: all complex power sums to zero, so the rows (passive sign) do too.
    total_p = sum(row["values"]["p_w"] for row in summary["totals"])
    total_q = sum(row["values"]["q_var"] for row in summary["totals"])
    assert abs(total_p) < 1e-9 * 166 and abs(total_q) < 1e-9 * 166
    source = summary["sources"][0]
    # A source's delivered power is minus its passive-sign power (circuit-language.md).
    assert source["values"]["p_w"] == pytest.approx(-body["elements"]["V1"]["p_w"])
    assert body["display"]["facts"]["balance"]["ok"] is True
    assert "closes" in body["display"]["facts"]["balance"]["text"]


# ---- errors -----------------------------------------------------------------------

UNIT_ERROR = """\
frequency 50 Hz
V1: voltage a -> 0 230 V

C1: capacitor a -> 0 10 uH
"""


def test_unit_error_is_422_at_its_line_and_column(api):
    r = api.post("/api/solve", json={"netlist": UNIT_ERROR})
    assert r.status_code == 422
    body = strict_json(r)
    assert body["errors"], body
    err = body["errors"][0]
    assert ERROR_KEYS <= err.keys()
    # circuit-language.md, "Errors": a capacitor given henries is an error at the value.
    assert err["line"] == 4
    assert err["column"] == UNIT_ERROR.splitlines()[3].index("10 uH") + 1
    assert "F" in err["message"] and err["hint"]


def test_check_lists_errors_and_warnings_without_solving(api):
    text = "frequency 50 Hz\nV1: voltage a -> 0 1 V\nR1: resistor a -> 0 1\nR2: resistor a -> dangling 1\n"
    r = api.post("/api/check", json={"netlist": text})
    assert r.status_code == 200
    body = strict_json(r)
    # circuit-language.md: a node reached by one terminal is a warning, not an error.
    assert body["errors"] == []
    assert [w["line"] for w in body["warnings"]] == [4]
    bad = strict_json(api.post("/api/check", json={"netlist": UNIT_ERROR}))
    assert [e["line"] for e in bad["errors"]] == [4]


def test_every_error_of_a_file_comes_back_at_once(api):
    # circuit-language.md: all errors of a file in one pass, not only the first.
    text = "frequency 50 Hz\nV1: voltage a -> 0 230 V\nC1: capacitor a -> 0 10 uH\nL1: inductor a -> 0 3 F\n"
    body = strict_json(api.post("/api/solve", json={"netlist": text}))
    assert [e["line"] for e in body["errors"]] == [3, 4]


def test_malformed_body_gets_the_error_shape(api):
    # common practice, no source: a schema error answers 422 like any input problem.
    for kwargs in ({"json": {"text": "x"}}, {"content": b"not json",
                                             "headers": {"content-type": "application/json"}}):
        r = api.post("/api/solve", **kwargs)
        assert r.status_code == 422
        body = strict_json(r)
        assert body["errors"] and ERROR_KEYS <= body["errors"][0].keys()


def test_too_many_elements_is_a_clear_422(make_api):
    api = make_api(max_elements=3)
    text = "frequency 50 Hz\nV1: voltage a -> 0 1\n" + "".join(
        f"R{k}: resistor a -> 0 1\n" for k in range(3))
    r = api.post("/api/solve", json={"netlist": text})
    assert r.status_code == 422
    message = strict_json(r)["errors"][0]["message"]
    assert "4 elements" in message and "limit of 3" in message      # common practice, no source
    assert strict_json(api.post("/api/check", json={"netlist": text}))["errors"][0]["message"] == message


def test_internal_failure_is_500_without_details(api, monkeypatch, caplog):
    def broken(text, filename="<circuit>"):
        raise RuntimeError("secret internal detail")
    monkeypatch.setattr(workflow, "solve_text", broken)
    with caplog.at_level(logging.ERROR, logger="phasorbench.web"):
        r = api.post("/api/solve", json={"netlist": CAP_CIRCUIT})
    assert r.status_code == 500
    assert "secret" not in r.text and "Traceback" not in r.text   # common practice, no source
    assert strict_json(r)["errors"][0]["message"].startswith("internal error")
    assert any("secret internal detail" in (rec.exc_text or "") or
               (rec.exc_info and "secret" in str(rec.exc_info[1])) for rec in caplog.records)


# ---- guards -----------------------------------------------------------------------

@pytest.mark.parametrize("host", ["127.0.0.1:8000", "localhost:8000", "[::1]:8000", "LOCALHOST:8000"])
def test_loopback_hosts_are_served(api, host):
    assert api.get("/api/samples", headers={"host": host}).status_code == 200


@pytest.mark.parametrize("host", ["evil.example", "evil.example:8000", "127.0.0.1.evil.example:8000",
                                  "localhost:9999", "127.0.0.2:8000", "", "user@localhost:8000"])
def test_foreign_hosts_get_400(api, host):
    # DNS rebinding: a page on another name that resolves to 127.0.0.1 must be refused
    # (common practice, no source).
    r = api.get("/", headers={"host": host})
    assert r.status_code == 400
    assert strict_json(r)["errors"][0]["message"]


def test_extra_allowed_host_is_served(make_api):
    api = make_api(allowed_hosts=("bench.local",))
    assert api.get("/api/samples", headers={"host": "bench.local:8000"}).status_code == 200


@pytest.mark.parametrize("headers", [{"origin": "http://evil.example"},
                                     {"origin": "http://localhost.evil.example:8000"},
                                     {"origin": "null"},
                                     {"sec-fetch-site": "cross-site"}])
def test_foreign_origin_on_post_gets_403(api, headers):
    # Cross-site request forgery against a local server (common practice, no source).
    r = api.post("/api/solve", json={"netlist": CAP_CIRCUIT}, headers=headers)
    assert r.status_code == 403


@pytest.mark.parametrize("origin", ["http://127.0.0.1:8000", "http://localhost:8000"])
def test_own_origin_on_post_is_served(api, origin):
    r = api.post("/api/solve", json={"netlist": CAP_CIRCUIT}, headers={"origin": origin})
    assert r.status_code == 200


def test_body_over_the_limit_gets_413(api):
    from phasorbench.web.settings import MAX_BODY_BYTES
    netlist = "# " + "x" * MAX_BODY_BYTES
    r = api.post("/api/solve", json={"netlist": netlist})
    assert r.status_code == 413


def test_chunked_body_over_the_limit_gets_413(make_api):
    # A body with no Content-Length is counted as it arrives (common practice, no source).
    api = make_api(max_body_bytes=1000)

    async def chunks():
        yield b'{"netlist": "'
        for _ in range(20):
            yield b"#" * 100
        yield b'"}'
    r = api.post("/api/solve", content=chunks(), headers={"content-type": "application/json"})
    assert r.status_code == 413
    small = api.post("/api/solve", json={"netlist": CAP_CIRCUIT})
    assert small.status_code == 200


# ---- views ------------------------------------------------------------------------

def test_waveforms_of_a_capacitor(api):
    r = api.post("/api/waveforms", json={"netlist": CAP_CIRCUIT, "elements": ["C1"]})
    assert r.status_code == 200
    body = strict_json(r)
    assert body["order"] == ["C1"]
    c1 = body["elements"]["C1"]
    samples = c1["samples"]
    # check-values C3: p(t) of an ideal C averages to 0 with amplitude |Q| = 166.19 VA.
    assert abs(samples["p_avg"]) <= 1e-9 * 166.19
    assert math.isclose(samples["s_va"], 166.19, rel_tol=1e-4)
    # Energy returned per cycle by a pure reactance is 2|S|/ω (formula in waveforms.py).
    assert math.isclose(samples["returned_energy_j"], 2 * 166.19 / (2 * math.pi * 50), rel_tol=1e-4)
    assert len(samples["t_s"]) == 401 and samples["t_s"][-1] == pytest.approx(0.04)  # 2 periods
    assert c1["svg"].startswith("<svg") and c1["svg"].count("<polyline") == 3
    assert c1["display"]["p_avg"] == "0 W"
    assert c1["display"]["returned_energy"] == "1.058 J"        # 2·166.19/(100π), 4 digits


def test_waveform_picture_size_follows_the_request(api):
    body = strict_json(api.post("/api/waveforms", json={"netlist": CAP_CIRCUIT, "elements": ["C1"],
                                                        "width": 800, "height": 400}))
    assert 'width="800" height="400"' in body["elements"]["C1"]["svg"]
    too_big = api.post("/api/waveforms", json={"netlist": CAP_CIRCUIT, "elements": ["C1"],
                                               "width": 10**6})
    assert too_big.status_code == 422


def test_phasors_svg_has_one_arrow_per_phasor(api):
    r = api.post("/api/phasors", json={"netlist": BENCH_CIRCUIT, "elements": ["C1", "R1"]})
    assert r.status_code == 200
    svg = strict_json(r)["svg"]
    assert svg.count('class="pb-shaft"') == 4          # V and I of two elements
    assert 'data-element="C1"' in svg and 'data-element="R1"' in svg


def test_views_refuse_unknown_or_too_many_elements(api):
    r = api.post("/api/phasors", json={"netlist": BENCH_CIRCUIT, "elements": ["Nope"]})
    assert r.status_code == 422 and "Nope" in strict_json(r)["errors"][0]["message"]
    r = api.post("/api/waveforms", json={"netlist": BENCH_CIRCUIT, "elements": []})
    assert r.status_code == 422
    r = api.post("/api/phasors", json={"netlist": BENCH_CIRCUIT, "elements": ["C1"] + [f"X{k}" for k in range(40)]})
    assert r.status_code == 422


# ---- samples, pages, docs ---------------------------------------------------------

def test_samples_list_reads_the_folder(api, bench_samples):
    body = strict_json(api.get("/api/samples"))
    assert [s["name"] for s in body] == ["cap-mains", "rc-bench"]
    assert body[1] == {"name": "rc-bench", "title": "RC bench", "netlist": BENCH_CIRCUIT}


def test_every_real_sample_solves(samples_dir):
    # Each shipped sample must solve and its power must balance (Tellegen's theorem).
    api = Api(make_app(Path(samples_dir)))
    samples = strict_json(api.get("/api/samples"))
    assert sorted(s["name"] for s in samples) == sorted(p.stem for p in Path(samples_dir).glob("*.circuit"))
    assert samples, "samples/ holds no .circuit file"
    for sample in samples:
        r = api.post("/api/solve", json={"netlist": sample["netlist"]})
        assert r.status_code == 200, (sample["name"], r.text[:400])
        body = strict_json(r)
        assert body["display"]["facts"]["balance"]["ok"], sample["name"]
        names = list(body["elements"])[:8]
        for route in ("/api/phasors", "/api/waveforms"):
            view = api.post(route, json={"netlist": sample["netlist"], "elements": names})
            assert view.status_code == 200, (sample["name"], route, view.text[:400])
            strict_json(view)


def test_workbench_page_hands_the_template_its_data(bench_samples):
    app = make_app(bench_samples, initial_sample="rc-bench")
    name, context = template_context(app, "/")
    assert name == "workbench.html"
    assert [(c["title"], c["text"]) for c in context["cautions"]] == list(CAUTIONS)
    assert context["scope_note"] == SCOPE_NOTE
    assert context["initial_sample"] == "rc-bench"


def test_workbench_page_is_served_with_its_assets(api):
    page = api.get("/")
    assert page.status_code == 200 and "text/html" in page.headers["content-type"]
    assert CAUTIONS[0][0] in page.text                  # the cautions are on the page itself
    for asset in ("/static/js/main.js", "/static/css/workbench.css", "/static/css/base.css"):
        assert asset in page.text
        assert api.get(asset).status_code == 200
    assert "https://" not in page.text                  # nothing from a CDN: works offline
    # Scripts from this server only and no framing by other sites (common practice, no source);
    # the browser tests fail on any console error, so a page that breaks this policy fails.
    policy = page.headers["content-security-policy"]
    assert "script-src 'self'" in policy and "frame-ancestors 'none'" in policy


def test_docs_and_openapi_work_offline(api):
    schema = strict_json(api.get("/openapi.json"))
    assert {"/api/check", "/api/solve", "/api/waveforms", "/api/phasors", "/api/samples"} <= set(schema["paths"])
    docs = api.get("/docs")
    assert docs.status_code == 200
    assert "/api/solve" in docs.text and "https://" not in docs.text


def test_missing_static_folder_fails_at_start(tmp_path, bench_samples):
    with pytest.raises(RuntimeError, match="not found"):
        make_app(bench_samples, static_dir=tmp_path / "nope")


# ---- strict JSON and concurrency --------------------------------------------------

def test_jsonable_replaces_non_finite_numbers():
    # RFC 8259, section 6: NaN and Infinity are not permitted.
    assert jsonable({"a": float("nan"), "b": [float("inf"), -float("inf"), 1.5], "c": (1,)}) == \
        {"a": None, "b": [None, None, 1.5], "c": [1]}


def test_no_nan_in_any_answer_even_for_zero_power(api):
    # A source with nothing to feed: |S| = 0, PF defined as 1 by the contract, no NaN.
    text = "frequency 50 Hz\nI1: current 0 -> a 0 A\nR1: resistor a -> 0 10\n"
    for route, extra in (("/api/solve", {}), ("/api/waveforms", {"elements": ["R1"]}),
                         ("/api/phasors", {"elements": ["R1"]})):
        r = api.post(route, json={"netlist": text, **extra})
        assert r.status_code == 200, r.text
        strict_json(r)


def test_forty_concurrent_solves_all_succeed(bench_samples):
    app = make_app(bench_samples)
    # Ohm's law (common practice, no source): 10 V across R gives 10/R A.
    texts = [f"frequency 50 Hz\nV1: voltage a -> 0 10 V\nR1: resistor a -> 0 {k + 1} ohm\n"
             for k in range(40)]

    async def run():
        transport = httpx.ASGITransport(app=app)
        async with httpx.AsyncClient(transport=transport, base_url="http://127.0.0.1:8000") as c:
            return await asyncio.gather(*(c.post("/api/solve", json={"netlist": t}) for t in texts))
    answers = asyncio.run(run())
    assert [r.status_code for r in answers] == [200] * 40
    for k, r in enumerate(answers):
        assert math.isclose(r.json()["elements"]["R1"]["current"]["mag"], 10 / (k + 1), rel_tol=1e-9)


def test_a_body_that_is_not_json_gets_the_error_shape(api):
    # results-contract.md: errors are {"errors": [{"line", "column", "message", "hint"}]}
    deep = "[" * 100_000 + "]" * 100_000
    r = api.post("/api/solve", content=deep, headers={"Content-Type": "application/json"})
    assert 400 <= r.status_code < 500
    body = r.json()
    assert set(body) == {"errors", "warnings"} and body["errors"][0]["message"]


# An origin is the triple scheme, host, port (RFC 6454, section 4; section 5 compares
# all three): a page at http://127.0.0.1 (port 80) or over https is another origin
# than this server at http://127.0.0.1:8000.
@pytest.mark.parametrize("origin", ["http://127.0.0.1", "http://localhost", "http://[::1]",
                                    "http://127.0.0.1:8001", "https://127.0.0.1:8000",
                                    "http://localhost:80", "ftp://127.0.0.1:8000"])
def test_origin_on_another_port_or_scheme_gets_403(api, origin):
    r = api.post("/api/solve", json={"netlist": CAP_CIRCUIT}, headers={"origin": origin})
    assert r.status_code == 403


def test_origin_with_the_ephemeral_port_of_the_request_is_served(make_api):
    # Settings(port=0): the port the request was addressed to is the server's own
    # (RFC 6454, section 5: same scheme, host and port).
    api = make_api(port=0)
    api.base_url = "http://127.0.0.1:43210"
    ok = api.post("/api/solve", json={"netlist": CAP_CIRCUIT},
                  headers={"origin": "http://127.0.0.1:43210"})
    other = api.post("/api/solve", json={"netlist": CAP_CIRCUIT},
                     headers={"origin": "http://127.0.0.1:43211"})
    assert (ok.status_code, other.status_code) == (200, 403)


# ---- any Unicode, any finite float: 200 or 422, never 500 (issue 9, items 4 and 5) ----

SMALL = "frequency 50 Hz\nV1: voltage a -> 0 10 V\nR1: resistor a -> 0 5 ohm\n"

#: Every POST route with a body that is valid but for the text under test.
POST_BODIES = {
    "/api/check": {},
    "/api/solve": {},
    "/api/waveforms": {"elements": ["R1"]},
    "/api/phasors": {"elements": ["R1"]},
    "/api/three-phase": {"group": "G1"},
    "/api/correct": {"source": "V1", "target": 0.95},
    "/api/port": {"a": "a", "b": "0"},
    "/api/sweep": {"probes": ["V(a)"], "points": 5},
    "/api/tolerance": {"probes": ["V(a)"], "runs": 10},
    "/api/sheet": {},
}


def _post_raw(api, route: str, body: dict) -> httpx.Response:
    # json.dumps writes a lone surrogate as the escape \ud800, which is valid JSON text
    # (RFC 8259, section 7) that decodes to a string no UTF-8 encoder accepts
    return api.post(route, content=json.dumps(body), headers={"content-type": "application/json"})


@pytest.mark.parametrize("route", sorted(POST_BODIES))
@pytest.mark.parametrize("where", ["title", "comment", "name"])
def test_a_lone_surrogate_in_the_circuit_is_a_422_at_its_place(api, route, where):
    # Unicode 15.0, section 3.9 (D76): a lone surrogate is no character; RFC 8259, section 8.2
    # warns such strings exist in JSON. Expected: a clear 422 pointing at it, never a 500.
    text = {"title": "title bad \ud800 title\n" + SMALL,
            "comment": SMALL + "# \udfff\n",
            "name": SMALL + "R\ud800: resistor a -> 0 1 ohm\n"}[where]
    r = _post_raw(api, route, {"netlist": text, **POST_BODIES[route]})
    assert r.status_code == 422, (route, r.status_code, r.text[:200])
    error = strict_json(r)["errors"][0]
    line = {"title": 1, "comment": 4, "name": 4}[where]
    assert (error["line"], "surrogate" in error["message"]) == (line, True)


@pytest.mark.parametrize("route, field", [("/api/phasors", "elements"), ("/api/port", "a"),
                                          ("/api/three-phase", "group"), ("/api/correct", "source"),
                                          ("/api/sweep", "probes"), ("/api/sheet", "elements")])
def test_a_lone_surrogate_in_any_field_is_a_422(api, route, field):
    # Unicode 15.0, section 3.9 (D76): as above, for the fields beside the circuit
    body = {"netlist": SMALL, **POST_BODIES[route]}
    body[field] = ["\ud800"] if isinstance(body.get(field), list) or field == "elements" else "\ud800"
    r = _post_raw(api, route, body)
    assert r.status_code == 422, (route, r.text[:200])
    assert field in strict_json(r)["errors"][0]["message"]


def test_other_unicode_in_the_title_solves(api):
    # common practice, no source: astral characters (a surrogate PAIR in the JSON escape),
    # combining marks and right-to-left text are characters like any other
    title = "Ωmega 😀 e\u0301 \u05e9\u05dc\u05d5\u05dd \u4e2d\u6587"
    for route in ("/api/solve", "/api/sheet"):
        r = _post_raw(api, route, {"netlist": f"title {title}\n" + SMALL})
        assert r.status_code == 200, (route, r.text[:200])
    assert strict_json(_post_raw(api, "/api/solve", {"netlist": f"title {title}\n" + SMALL}))["title"] == title


EXTREMES = ["1.7976931348623157e308", "1e308", "1e300", "1e-300", "2.2250738585072014e-308",
            "1e-323", "5e-324"]


@pytest.mark.filterwarnings("ignore::RuntimeWarning")     # numpy's overflow notes, as served
@pytest.mark.parametrize("value", EXTREMES)
@pytest.mark.parametrize("place", ["frequency", "source", "resistor", "capacitor"])
def test_extreme_finite_values_answer_200_or_422_on_every_route(api, value, place):
    # IEEE 754-2019, section 3.3: the ends of binary64 (largest finite, smallest normal,
    # subnormals); expected by the contract: any finite float gets 200 or 422
    text = {"frequency": f"frequency {value} Hz\nV1: voltage a -> 0 10 V\n"
                         "R1: resistor a -> b 1 ohm\nC1: capacitor b -> 0 1 uF\n",
            "source": f"frequency 50 Hz\nV1: voltage a -> 0 {value} V\n"
                      "R1: resistor a -> b 1 ohm\nC1: capacitor b -> 0 1 uF\n",
            "resistor": f"frequency 50 Hz\nV1: voltage a -> 0 10 V\n"
                        f"R1: resistor a -> b {value} ohm\nC1: capacitor b -> 0 1 uF\n",
            "capacitor": f"frequency 50 Hz\nV1: voltage a -> 0 10 V\n"
                         f"R1: resistor a -> b 1 ohm\nC1: capacitor b -> 0 {value} F\n"}[place]
    for route, extra in POST_BODIES.items():
        r = api.post(route, json={"netlist": text, **extra})
        assert r.status_code in (200, 422), (route, r.status_code, r.text[:200])
        if r.status_code == 422:
            assert strict_json(r)["errors"][0]["message"]


def test_error_answers_stay_small_whatever_the_request(api):
    # common practice, no source (issue 9, item 12: 300 KB of bad lines once gave a
    # 21 MB answer): the answer is bounded by the listed diagnostics, not by the input
    bad = "\n".join(f"bogus{i} " + "q" * 30 for i in range(8000))          # ~310 KB
    for route in ("/api/check", "/api/solve"):
        r = api.post(route, json={"netlist": bad})
        assert r.status_code in (200, 422)
        body = strict_json(r)
        assert len(body["errors"]) <= 101 and "more like these" in body["errors"][-1]["message"]
        assert len(r.content) < 64 * 1024, len(r.content)


def test_the_magnitudes_can_be_shown_as_peak_or_rms(api):
    # check-values C1: 10 µF on 230 V RMS, 50 Hz: 0.722566 A; shown as peak, √2 times
    # each (textbook V_peak = √2·V_RMS) and the same power
    plain = api.post("/api/solve", json={"netlist": CAP_CIRCUIT}).json()
    peak = api.post("/api/solve", json={"netlist": CAP_CIRCUIT, "show": "peak"}).json()
    assert peak["amplitudes"] == "peak" and peak["amplitudes_input"] == "rms"
    assert peak["elements"]["C1"]["current"]["mag"] == pytest.approx(0.722566 * 2 ** 0.5,
                                                                     rel=1e-6)
    assert peak["elements"]["C1"]["q_var"] == plain["elements"]["C1"]["q_var"]
    rows = api.post("/api/rows", json={"netlist": CAP_CIRCUIT, "table": "nodes",
                                       "show": "peak"}).json()["rows"]
    assert {r["name"]: r["text"]["voltage"] for r in rows}["a"] == "325.3 V ∠0.00°"
    svg = api.post("/api/phasors", json={"netlist": CAP_CIRCUIT, "elements": ["C1"],
                                         "show": "peak"}).json()["svg"]
    assert "peak magnitudes" in svg and "outer ring = 400 V" in svg
    bad = api.post("/api/solve", json={"netlist": CAP_CIRCUIT, "show": "average"})
    assert bad.status_code == 422                    # common practice, no source
