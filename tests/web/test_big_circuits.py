"""Big circuits over the API: one solve per text, table windows, the page's lean answer,
limits whose hints name the serve flag that raises them."""

from __future__ import annotations

import json
import threading

import pytest

from phasorbench import workflow
from phasorbench.presentation.formatting import element_rows, node_rows
from phasorbench.presentation.rows import FULL_ROWS, ROW_WINDOW
from phasorbench.web import answers
from phasorbench.web.solved import SolvedCache

from .conftest import CAP_CIRCUIT


def ladder(sections: int) -> str:
    """An invented RC ladder: 2·sections + 1 elements, sections + 1 nodes (plus ground)."""
    lines = ["title ladder", "frequency 50 Hz", "V1: voltage n0 -> 0 230 V"]
    for k in range(sections):
        lines.append(f"R{k}: resistor n{k} -> n{k + 1} {1 + k % 7} ohm")
        lines.append(f"C{k}: capacitor n{k + 1} -> 0 {10 + k % 5} uF")
    return "\n".join(lines) + "\n"


BIG = ladder(600)          # 1,201 elements: more than FULL_ROWS


def blocks_circuit(sections: int) -> str:
    """An invented feeder of three-phase loads: a supply block, then per section three
    line resistors and a wye or delta load block (6·sections + 3 elements)."""
    lines = ["title feeder of three-phase loads", "frequency 50 Hz",
             "G: voltage3 a b c -> 0 230 V"]
    for k in range(sections):
        for p in "abc":
            lines.append(f"R{p}{k}: resistor {p} -> {p}{k} {0.1 + 0.01 * (k % 7):.2f} ohm")
        if k % 2:
            lines.append(f"L{k}: load3 delta a{k} b{k} c{k} {30 + k % 11} ohm")
        else:
            lines.append(f"L{k}: load3 wye a{k} b{k} c{k} -> 0 {20 + k % 5} + j5 ohm")
    return "\n".join(lines) + "\n"


def test_one_solve_per_text_across_routes(api, monkeypatch):
    calls = []
    real = workflow.solve_text

    def counted(text, filename="<circuit>"):
        calls.append(text)
        return real(text, filename)
    monkeypatch.setattr(workflow, "solve_text", counted)
    # common practice, no source: the page's solve, phasors and waveform of one action
    assert api.post("/api/solve", json={"netlist": CAP_CIRCUIT}).status_code == 200
    assert api.post("/api/phasors", json={"netlist": CAP_CIRCUIT, "elements": ["C1"]}).status_code == 200
    assert api.post("/api/waveforms", json={"netlist": CAP_CIRCUIT, "elements": ["C1"]}).status_code == 200
    assert len(calls) == 1
    api.post("/api/solve", json={"netlist": CAP_CIRCUIT + "R9: resistor a -> 0 5 ohm\n"})
    assert len(calls) == 2


def test_cache_waits_for_a_solve_in_progress_and_keeps_errors():
    cache = SolvedCache()
    started, release, calls = threading.Event(), threading.Event(), []

    def slow(text):
        calls.append(text)
        started.set()
        release.wait(5)
        return {"elements": {}}
    out = []
    first = threading.Thread(target=lambda: out.append(cache.get("x", slow)))
    first.start()
    started.wait(5)
    second = threading.Thread(target=lambda: out.append(cache.get("x", slow)))
    second.start()
    release.set()
    first.join(5), second.join(5)
    assert len(calls) == 1 and out[0] is out[1]      # common practice, no source

    def bad(text):
        raise workflow.CircuitError([workflow.Diagnostic("broken", "fix it", 3, 1)])
    for _ in range(2):
        with pytest.raises(workflow.CircuitError) as caught:
            cache.get("bad", bad)
        assert caught.value.diagnostics[0].line == 3


def test_cache_is_bounded_by_elements_but_keeps_the_newest():
    cache = SolvedCache(entries=8, elements=100)
    big = {"elements": dict.fromkeys(range(150))}
    cache.get("a", lambda t: {"elements": dict.fromkeys(range(10))})
    cache.get("b", lambda t: big)
    # common practice, no source: the newest stays even beyond the bound ...
    assert cache.get("b", lambda t: pytest.fail("the newest is kept")) is big
    again = []
    cache.get("a", lambda t: again.append(t) or {"elements": {}})
    assert again == ["a"]                             # ... and the older one made room


def test_cache_makes_room_before_a_big_solve_starts():
    cache = SolvedCache(entries=8, elements=100)
    cache.get("a", lambda t: {"elements": dict.fromkeys(range(60))})
    held = []

    def big(text):
        # what the cache still holds while the big text is being solved
        held.append(list(cache._done))
        return {"elements": dict.fromkeys(range(60))}
    cache.get("b", big, size=60)
    # common practice, no source: 60 + 60 > 100, so "a" was dropped before "b" ran ...
    assert held == [[]]
    small = []
    cache.get("c", lambda t: small.append(t) or {"elements": dict.fromkeys(range(10))}, size=10)
    # ... while a small text leaves the entry before it in place (60 + 10 ≤ 100)
    assert cache.get("b", lambda t: pytest.fail("b is kept"))["elements"]


def test_big_solve_sends_a_window_and_rows_gives_the_rest(make_api):
    api = make_api(max_elements=5000)
    body = api.post("/api/solve", json={"netlist": BIG}).json()
    d = body["display"]
    assert d["rows_partial"] is True and d["element_total"] == 1201
    assert len(d["elements"]) == ROW_WINDOW and 1201 > FULL_ROWS
    full = element_rows(workflow.solve_text(BIG, answers.PAGE_FILENAME))
    # the window is the formatter's own rows, not a second formatting of them
    assert d["elements"] == full[:ROW_WINDOW]
    win = api.post("/api/rows", json={"netlist": BIG, "start": 1000, "count": 150}).json()
    assert win["total"] == 1201 and win["start"] == 1000
    assert win["rows"] == full[1000:1150]
    nodes = api.post("/api/rows", json={"netlist": BIG, "table": "nodes", "start": 590,
                                        "count": 100}).json()
    assert nodes["total"] == 602 and [r["name"] for r in nodes["rows"]][:2] == ["n589", "n590"]


def test_rows_sorted_and_found_like_a_sort_of_all_rows(make_api):
    api = make_api(max_elements=5000)
    full = element_rows(workflow.solve_text(BIG, answers.PAGE_FILENAME))
    # reference: Python's sorted() over every row, stable, descending by |I|
    expected = [r["name"] for r in sorted(full, key=lambda r: -r["values"]["i_mag"])][:50]
    got = api.post("/api/rows", json={"netlist": BIG, "sort": "current", "direction": -1,
                                      "count": 50}).json()
    assert [r["name"] for r in got["rows"]] == expected
    names = api.post("/api/rows", json={"netlist": BIG, "sort": "name", "count": 3}).json()
    assert [r["name"] for r in names["rows"]] == ["C0", "C1", "C2"]   # natural order: C2 before C10
    found = api.post("/api/rows", json={"netlist": BIG, "find": "r59", "count": 500}).json()
    # R59 and R590..R599 (names containing 'r59', no case), common practice, no source
    assert found["total"] == 11 and {r["name"] for r in found["rows"]} >= {"R59", "R599"}


def test_page_answer_leaves_out_the_bulk_maps(api):
    lean = api.post("/api/solve", json={"netlist": CAP_CIRCUIT, "contract": False}).json()
    full = api.post("/api/solve", json={"netlist": CAP_CIRCUIT}).json()
    assert "elements" not in lean and "nodes" not in lean
    assert lean["display"] == full["display"] and lean["balance"] == full["balance"]


def test_limits_name_the_serve_flags(make_api):
    small = make_api(max_elements=100, max_body_bytes=4000)
    r = small.post("/api/solve", json={"netlist": "# " + "x" * 5000})
    assert r.status_code == 413
    assert "--max-body-mb" in r.json()["errors"][0]["hint"]
    r = small.post("/api/solve", json={"netlist": ladder(60)})
    assert r.status_code == 422 and "--max-elements" in r.json()["errors"][0]["hint"]


def test_rows_request_is_checked(api):
    r = api.post("/api/rows", json={"netlist": CAP_CIRCUIT, "count": 10_000})
    assert r.status_code == 422
    assert json.loads(r.text)["errors"][0]["message"].startswith("request body")


def test_windows_of_a_circuit_with_blocks_keep_each_block_with_its_phases(make_api):
    api = make_api(max_elements=5000)
    text = blocks_circuit(200)                 # 1,203 elements: sent a window at a time
    assert api.post("/api/solve", json={"netlist": text}).json()["display"]["rows_partial"]
    win = api.post("/api/rows", json={"netlist": text, "count": 12,
                                      "expanded": ["L0"]}).json()
    shown = [(r["name"], r.get("unit")) for r in win["rows"]]
    # circuit-language.md, three-phase blocks: a block's phases are BLOCK.a, .b, .c
    # (wye) and BLOCK.ab, .bc, .ca (delta); the block's row stands where its first phase
    # would, its phases under it only when it is open (common practice, no source)
    assert shown == [("G", "block"), ("Ra0", None), ("Rb0", None), ("Rc0", None),
                     ("L0", "block"), ("L0.a", "phase"), ("L0.b", "phase"), ("L0.c", "phase"),
                     ("Ra1", None), ("Rb1", None), ("Rc1", None), ("L1", "block")]
    assert win["rows"][4]["open"] is True and win["rows"][11]["open"] is False
    # 1 + 200 blocks and 600 resistors as rows, three phases of L0 open; every element counted
    assert win["total"] == 1 + 200 + 600 + 3 and win["matched"] == 1203
    opened = api.post("/api/rows", json={"netlist": text, "start": 3, "count": 8,
                                         "expanded": ["L1"]}).json()
    assert [r["name"] for r in opened["rows"]][:6] == ["Rc0", "L0", "Ra1", "Rb1", "Rc1", "L1"]
    assert [r["name"] for r in opened["rows"]][6:] == ["L1.ab", "L1.bc"]
    # a find that matches one phase keeps its whole block (the page's full table does so)
    found = api.post("/api/rows", json={"netlist": text, "find": "l7.b",
                                        "expanded": ["L7"]}).json()
    assert [r["name"] for r in found["rows"]] == ["L7", "L7.ab", "L7.bc", "L7.ca"]
    # sorted by P, descending, a block moves as one: its row carries the block's total
    # P, the sum of its phases' (Tellegen: the element powers add up; formula)
    top = api.post("/api/rows", json={"netlist": text, "sort": "p", "direction": -1,
                                      "count": 5, "expanded": ["G"]}).json()["rows"]
    assert top[0]["name"] == "G" and [r["name"] for r in top[1:4]] == ["G.a", "G.b", "G.c"]
    assert top[0]["values"]["p_w"] == pytest.approx(sum(r["values"]["p_w"] for r in top[1:4]),
                                                    rel=1e-9)


def test_solve_says_which_asked_names_are_elements(make_api):
    api = make_api(max_elements=5000)
    body = api.post("/api/solve", json={"netlist": BIG, "contract": False,
                                        "names": ["C599", "Rcable", "C599", "n3"]}).json()
    # common practice, no source: C599 is the ladder's last capacitor (beyond the rows
    # sent); a name the circuit lacks and a node are not elements, a repeat is said once
    assert body["display"]["present"] == ["C599"]
    assert "C599" not in [r["name"] for r in body["display"]["elements"]]
    too_many = api.post("/api/solve", json={"netlist": BIG, "names": ["R1"] * 101})
    assert too_many.status_code == 422
