"""The formula tab as a person uses it, in headless Chromium: the sample coil bridge,
a transfer function rendered as MathML, a balance condition, a bad probe."""

from __future__ import annotations

import shutil

import pytest

from .conftest import ROOT, LiveServer, free_port, make_app

pytestmark = pytest.mark.browser

TIMEOUT_MS = 60_000          # the first formula starts the sympy worker


@pytest.fixture(scope="module")
def formula_server(tmp_path_factory):
    folder = tmp_path_factory.mktemp("formula-samples")
    shutil.copy(ROOT / "samples" / "coil-bridge.circuit", folder / "coil-bridge.circuit")
    port = free_port()
    server = LiveServer(make_app(folder, port=port, initial_sample="coil-bridge"), port).start()
    yield server
    server.stop()


def open_formula_tab(page, server):
    page.goto(server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    page.wait_for_selector("#branch-table tbody tr[data-element]", timeout=TIMEOUT_MS)
    page.click("#tab-formula")
    assert page.get_attribute("#tab-formula", "aria-selected") == "true"


def derive(page, probe, keep="", solve_for=""):
    page.fill("#formula-probe", probe)
    page.fill("#formula-keep", keep)
    page.fill("#formula-solve-for", solve_for)
    with page.expect_response(lambda r: r.url.endswith("/api/formula"), timeout=TIMEOUT_MS):
        page.click("#formula-run")


def test_bridge_formula_and_its_balance(new_page, formula_server, artifacts):
    page = new_page()
    open_formula_tab(page, formula_server)
    derive(page, "V(left, right)/V(top)", keep="R1 C1 R2 R3 Lx Rx", solve_for="Lx")
    page.wait_for_selector("#formula-out .formula-main math", timeout=TIMEOUT_MS)
    # the MathML arrived as MathML elements (W3C MathML 3 namespace), a fraction on top
    ns = page.evaluate("() => document.querySelector('#formula-out .formula-main math').namespaceURI")
    assert ns == "http://www.w3.org/1998/Math/MathML"
    assert page.locator("#formula-out .formula-main math > mrow > mfrac").count() == 2
    # Maxwell inductance bridge L = R2·R3·C (from memory): with the sample's names
    # Lx = C1·R2·R3 = 0.1 µF · 1 kΩ · 500 Ω = 50 mH
    solution = page.inner_text("#formula-out .formula-balance .solution")
    assert "50 mH" in solution
    assert "agree" in page.inner_text("#formula-out .formula-check")
    # the rendered formula has height: a fraction, not one line of text
    box = page.locator("#formula-out .formula-main math").bounding_box()
    assert box["height"] > 30
    page.screenshot(path=str(artifacts / "formula-tab.png"), full_page=True)
    page.locator("#tool-formula").screenshot(path=str(artifacts / "formula-tab-panel.png"))


def test_bad_probe_shows_the_problem(new_page, formula_server, artifacts):
    page = new_page()
    open_formula_tab(page, formula_server)
    derive(page, "V(lef)", keep="Rq")
    page.wait_for_selector("#formula-out .tool-problems", timeout=TIMEOUT_MS)
    text = page.inner_text("#formula-out .tool-problems")
    # studies.md: every problem in one pass, with a did-you-mean
    assert "did you mean 'left'" in text and "Keep 'Rq'" in text and "--keep" not in text
    page.screenshot(path=str(artifacts / "formula-tab-error.png"))
