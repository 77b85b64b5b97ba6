"""Circuit files on the page, in headless Chromium: open from disk by the file picker and
by a drop on the editor, save as NAME.circuit, and circuits kept in the browser (store,
list, open, rename, delete) that are still there after a reload."""

from __future__ import annotations

import pytest

from .conftest import CAP_CIRCUIT

pytestmark = pytest.mark.browser

TIMEOUT_MS = 15_000

#: A circuit of our own with a comment and a non-ASCII character: it must arrive as written.
FEEDER = """# Shop feeder — invented for the tests
title Shop feeder
frequency 50 Hz
V1: voltage a -> 0 230 V
C1: capacitor a -> 0 10 uF   # check-values C1
"""


def open_bench(new_page, live_server):
    page = new_page()
    page.goto(live_server.url + "/")
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    return page


def wait_solved(page, title):
    page.wait_for_function("t => document.getElementById('fact-title').textContent.includes(t)"
                           " && document.getElementById('edit-state').hidden", arg=title,
                           timeout=TIMEOUT_MS)


def c1_current(page) -> str:
    return page.inner_text('#branch-table tr[data-element="C1"]')


def test_open_a_file_by_the_picker_and_save_it_back(new_page, live_server, tmp_path):
    page = open_bench(new_page, live_server)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.set_input_files("#file-input", files=[{
            "name": "shop-feeder.circuit", "mimeType": "text/plain",
            "buffer": FEEDER.encode("utf-8")}])
    wait_solved(page, "Shop feeder")
    # common practice, no source: a file opens exactly as written
    assert page.input_value("#editor-text") == FEEDER
    assert page.inner_text("#circuit-name") == "shop-feeder"
    # check-values C1: 10 µF on 230 V, 50 Hz draws 0.722566 A leading by 90°
    assert "722.6 mA ∠90.00°" in c1_current(page)

    page.fill("#editor-text", FEEDER.replace("10 uF", "20 uF"))
    with page.expect_download() as info:
        page.click("#file-save")
    download = info.value
    assert download.suggested_filename == "shop-feeder.circuit"
    saved = tmp_path / "saved.circuit"
    download.save_as(saved)
    # the editor's text, byte for byte, in UTF-8
    assert saved.read_bytes() == FEEDER.replace("10 uF", "20 uF").encode("utf-8")


def test_drop_a_file_on_the_editor(new_page, live_server):
    page = open_bench(new_page, live_server)
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.evaluate("""(text) => {
            const data = new DataTransfer();
            data.items.add(new File([text], "dropped.circuit", {type: "text/plain"}));
            const zone = document.getElementById("editor");
            for (const type of ["dragenter", "dragover", "drop"]) {
              zone.dispatchEvent(new DragEvent(type, {dataTransfer: data, bubbles: true, cancelable: true}));
            }
        }""", CAP_CIRCUIT)
    wait_solved(page, "Capacitor across the mains")
    assert page.input_value("#editor-text") == CAP_CIRCUIT
    assert page.inner_text("#circuit-name") == "dropped"
    assert "722.6 mA ∠90.00°" in c1_current(page)          # check-values C1


def test_circuits_kept_in_the_browser_survive_a_reload(new_page, live_server, artifacts):
    page = open_bench(new_page, live_server)
    page.click("#stored summary")
    page.fill("#editor-text", FEEDER)
    page.fill("#store-name", "feeder A")
    page.click("#store-form button[type=submit]")
    page.fill("#editor-text", CAP_CIRCUIT)
    page.fill("#store-name", "cap B")
    page.click("#store-form button[type=submit]")
    names = lambda: page.eval_on_selector_all("#store-list li[data-name]",
                                               "rows => rows.map(r => r.dataset.name)")
    assert sorted(names()) == ["cap B", "feeder A"]
    page.screenshot(path=str(artifacts / "files-stored-1366x768.png"))

    # The last circuit is restored on reload, and the stored ones are still listed.
    page.reload()
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    assert page.input_value("#editor-text") == CAP_CIRCUIT
    page.click("#stored summary")
    assert sorted(names()) == ["cap B", "feeder A"]

    # Open one: its text comes back as stored and is solved.
    with page.expect_response(lambda r: r.url.endswith("/api/solve")):
        page.click('#store-list li[data-name="feeder A"] button[data-act=open]')
    wait_solved(page, "Shop feeder")
    assert page.input_value("#editor-text") == FEEDER
    assert "722.6 mA ∠90.00°" in c1_current(page)           # check-values C1

    # Rename: Enter commits; a name already taken is refused and said.
    page.click('#store-list li[data-name="feeder A"] button[data-act=rename]')
    page.fill("#store-list input.rename", "cap B")
    page.keyboard.press("Enter")
    assert "already a circuit named" in page.inner_text("#result-banner")
    page.fill("#store-list input.rename", "feeder 2026")
    page.keyboard.press("Enter")
    assert sorted(names()) == ["cap B", "feeder 2026"]
    assert page.inner_text("#circuit-name") == "feeder 2026"

    # Delete asks for a second press.
    delete = '#store-list li[data-name="cap B"] button[data-act=delete]'
    page.click(delete)
    assert sorted(names()) == ["cap B", "feeder 2026"]
    page.click(delete)
    assert names() == ["feeder 2026"]
    page.reload()
    page.wait_for_selector("body[data-ready=true]", timeout=TIMEOUT_MS)
    assert names() == ["feeder 2026"]
    assert page.input_value("#editor-text") == FEEDER
    with page.expect_download() as info:
        page.click("#file-save")
    assert info.value.suggested_filename == "feeder-2026.circuit"
