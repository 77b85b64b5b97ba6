"""How the workbench page copes with a big circuit, in headless Chromium (Playwright).

    python benchmarks/bench_page.py                 # 10,000 and 30,000 elements
    python benchmarks/bench_page.py --elements 3000

For each size it starts `phasorbench serve` (with --max-elements for the size), opens
the page, pastes the circuit, solves it with Ctrl+Enter and prints:

- the time from Ctrl+Enter to the branch table's first rows, and the longest
  main-thread task after the answer arrived (PerformanceObserver "longtask"; target
  none over 200 ms);
- the time per key typed into the editor, at the end of the text and at a line in its
  middle (target < 50 ms);
- the DOM size and the <option> count (no list of tens of thousands);
- the requests and solves of the one action.

Timings come from the page's own clock (performance.now), so they measure the browser,
not the test driver. Run by hand, never as a timed test.
"""

from __future__ import annotations

import argparse
import os
import socket
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))
from mesh import mesh_circuit  # noqa: E402

CHROMIUM = "/usr/lib/chromium/chromium"
ARGS = ["--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync",
        "--disable-dev-shm-usage", "--disable-extensions"]

#: Long tasks and their end, recorded by the page from the start (buffered observer).
OBSERVE = """
window.__longtasks = [];
window.__frames = [];
new PerformanceObserver((list) => {
  for (const e of list.getEntries()) window.__longtasks.push({start: e.startTime, duration: e.duration});
}).observe({type: "longtask", buffered: true});
// a long task leaves out the style, layout and paint after it; a long animation frame
// counts them too (where the browser has the entry type)
if (PerformanceObserver.supportedEntryTypes.includes("long-animation-frame")) {
  new PerformanceObserver((list) => {
    for (const e of list.getEntries()) window.__frames.push({start: e.startTime, duration: e.duration});
  }).observe({type: "long-animation-frame", buffered: true});
}
"""


def mesh_for(elements: int) -> str:
    """A mesh with about ``elements`` elements (an n×n mesh has 3n² − 2n)."""
    n = 2
    while 3 * (n + 1) ** 2 - 2 * (n + 1) <= elements:
        n += 1
    return mesh_circuit(n)


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_server(max_elements: int):
    port = free_port()
    env = {**os.environ, "PYTHONPATH": str(ROOT / "server"), "PYTHONUNBUFFERED": "1"}
    proc = subprocess.Popen([sys.executable, "-m", "phasorbench", "serve", "--port", str(port),
                             "--max-elements", str(max_elements)], env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    line = proc.stdout.readline()
    if "workbench at" not in line:
        proc.kill()
        raise SystemExit(f"the server did not start: {line}")
    return proc, f"http://127.0.0.1:{port}/"


def stage(what: str) -> None:
    """Where the run is (standard error), so a slow step on a busy machine is seen."""
    print(f"  [{time.strftime('%H:%M:%S')}] {what}", file=sys.stderr, flush=True)


def median(values: list[float]) -> float:
    return sorted(values)[len(values) // 2] if values else float("nan")


def measure(browser, url: str, text: str, keys: int) -> dict:
    context = browser.new_context(viewport={"width": 1366, "height": 768})
    page = context.new_page()
    page.add_init_script(OBSERVE)
    stage("opening the page")
    page.goto(url)
    page.wait_for_selector("body[data-ready=true]", timeout=60_000)
    # pasted as one input event (Playwright's fill goes through the browser's editing
    # machinery, which takes minutes over megabytes)
    page.eval_on_selector("#editor-text", "(t, text) => { t.value = text; "
                          "t.dispatchEvent(new Event('input', {bubbles: true})); }", text)
    stage("pasted")
    page.wait_for_timeout(800)                     # the typing's check has gone out
    seen: list[str] = []
    page.on("request", lambda r: seen.append(r.url.split("/api/", 1)[1]) if "/api/" in r.url else None)
    page.evaluate("window.__longtasks = []; window.__frames = []")
    start = page.evaluate("performance.now()")
    with page.expect_response(lambda r: r.url.endswith("/api/solve"), timeout=600_000) as answer:
        page.keyboard.press("Control+Enter")
    answered = page.evaluate("performance.now()")
    stage("answered")
    # the mesh's own rows and views (the page drew the start-up sample's before)
    page.wait_for_selector('#branch-table tbody tr[data-element="E0"]', timeout=600_000)
    drawn = page.evaluate("performance.now()")
    stage("table drawn")
    page.wait_for_function("() => document.getElementById('waveform-element').textContent"
                           " === 'of E0' && document.querySelector('#waveform-drawing svg polyline')",
                           timeout=600_000)
    page.wait_for_timeout(1500)
    tasks = page.evaluate("window.__longtasks")
    after = [t["duration"] for t in tasks if t["start"] + t["duration"] >= answered]
    frames = [t["duration"] for t in page.evaluate("window.__frames")
              if t["start"] + t["duration"] >= answered]
    dom = page.evaluate("document.getElementsByTagName('*').length")
    options = page.evaluate("document.getElementsByTagName('option').length")
    size = len(answer.value.body())
    stage("views drawn")
    action = list(seen)                            # the requests of the one action
    # typing: keys at the end of the text (Ctrl+End), then at a line in the middle
    # (scrolled to, clicked), each timed from keydown to the next frame
    page.focus("#editor-text")
    page.keyboard.press("Control+End")
    page.evaluate("""() => { window.__keys = [];
        document.getElementById('editor-text').addEventListener('keydown', (e) => {
          if (e.ctrlKey) return;
          const t0 = performance.now();
          requestAnimationFrame(() => setTimeout(() => window.__keys.push(performance.now() - t0), 0));
        }); }""")

    def type_keys() -> list[float]:
        page.evaluate("window.__keys = []")
        for k in range(keys):
            page.keyboard.press("x" if k % 2 == 0 else "Backspace")
            page.wait_for_timeout(60)
        page.wait_for_timeout(500)
        return page.evaluate("window.__keys")

    per_key = type_keys()
    page.eval_on_selector("#editor-scroll", "s => { s.scrollTop = s.scrollHeight / 2; }")
    page.wait_for_timeout(200)
    box = page.locator("#editor-scroll").bounding_box()
    page.mouse.click(box["x"] + 120, box["y"] + box["height"] / 2)
    page.keyboard.press("End")
    middle = type_keys()
    stage("typed")
    # scrolling to the end of the branch table
    scroll_start = page.evaluate("""() => { const w = document.querySelector('#branch-table').closest('.table-wrap');
                                    w.scrollTop = w.scrollHeight; return performance.now(); }""")
    page.wait_for_function("""() => { const rows = document.querySelectorAll('#branch-table tbody tr[data-element]');
                              return rows.length && !document.querySelector('#branch-table tr.pending'); }""",
                           timeout=60_000)
    scrolled = page.evaluate("performance.now()") - scroll_start
    context.close()
    return {"answer_s": (answered - start) / 1000, "table_s": (drawn - start) / 1000,
            "longest_task_ms": max(after, default=0.0), "long_tasks": len(after),
            "longest_frame_ms": max(frames, default=0.0), "long_frames": len(frames),
            "key_ms": median(per_key), "key_max_ms": max(per_key, default=float("nan")),
            "mid_key_ms": median(middle), "mid_key_max_ms": max(middle, default=float("nan")),
            "dom": dom, "options": options, "answer_mb": size / 1e6, "scroll_s": scrolled / 1000,
            "requests": action}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--elements", type=int, nargs="*", default=[10_000, 30_000])
    parser.add_argument("--keys", type=int, default=20)
    args = parser.parse_args()
    from playwright.sync_api import sync_playwright

    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.2f} at start")
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        for size in args.elements:
            text = mesh_for(size)
            count = text.count(":")
            proc, url = start_server(max(50_000, 2 * count))
            try:
                r = measure(browser, url, text, args.keys)
            finally:
                proc.terminate()
                proc.wait(timeout=10)
            solves = r["requests"].count("solve")
            print(f"{count:6d} elements: answer {r['answer_s']:5.2f} s ({r['answer_mb']:.2f} MB), "
                  f"table drawn {r['table_s']:5.2f} s after Ctrl+Enter; longest main-thread "
                  f"task after the answer {r['longest_task_ms']:5.0f} ms (target ≤ 200, "
                  f"{r['long_tasks']} over 50 ms), longest frame with its rendering "
                  f"{r['longest_frame_ms']:5.0f} ms ({r['long_frames']} over 50 ms); typing {r['key_ms']:4.1f} ms per key median, "
                  f"{r['key_max_ms']:4.1f} ms worst at the end of the text, {r['mid_key_ms']:4.1f} ms "
                  f"median, {r['mid_key_max_ms']:4.1f} ms worst in its middle (target < 50); {r['dom']} DOM elements, "
                  f"{r['options']} <option>s; end of table drawn {r['scroll_s']:4.2f} s after the "
                  f"scroll; requests of the action: {', '.join(r['requests'])} "
                  f"({solves} solve request)")
        browser.close()
    print(f"load average {os.getloadavg()[0]:.2f} at the end")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
