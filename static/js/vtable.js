// A table body that draws only the rows in view, for tables of tens of thousands of rows.
//
// The rows live on the server (POST /api/rows): the body asks for the window it scrolls
// to, in the order and under the filter the table shows, and keeps what it was sent.
// Two spacer rows stand for the rows above and below, so the scroll bar is the whole
// table's. Every row has the same height (the CSS of table.windowed keeps cells to one
// line), measured once from the first row drawn.

import {el} from "./dom.js";

const OVERSCAN = 30;          // rows drawn beyond each edge of the view
const CHUNK = 200;            // rows asked for at once (the server sends at most 500)
const FETCH_DELAY_MS = 40;    // a fling of the scroll bar asks once, where it stops

/**
 * Fill `table`'s body with a window of `total` rows.
 *
 * `first`: rows 0.. already at hand; `fetch(start, count)` → Promise of
 * {total, rows}; `drawRow(row)` → <tr>; `afterDraw()` runs after each redraw (the
 * selection mark). Returns {redraw, rowCount, destroy}.
 */
export function windowedBody(table, {total, first = [], fetch, drawRow, columns, afterDraw = () => {}}) {
  if (table._windowed) table._windowed.destroy();
  const wrap = table.closest(".table-wrap") || table.parentElement;
  const body = table.tBodies[0];
  const rows = new Map(first.map((row, index) => [index, row]));
  const asked = new Set();
  let height = 0;
  let drawn = "";
  let timer = null;
  let frame = 0;
  let alive = true;
  table.classList.add("windowed");

  const spacer = (px) => el("tr", {class: "spacer", "aria-hidden": "true"},
    el("td", {colspan: columns, style: `height: ${px}px`}));

  function view() {
    const h = height || 28;
    const offset = body.offsetTop;                 // the head's height, inside the scroller
    const top = Math.max(0, wrap.scrollTop - offset);
    const start = Math.max(0, Math.floor(top / h) - OVERSCAN);
    const end = Math.min(total, start + Math.ceil((wrap.clientHeight || 400) / h) + 2 * OVERSCAN);
    return {start, end};
  }

  function missing(start, end) {
    for (let i = start; i < end; i++) if (!rows.has(i)) return i;
    return -1;
  }

  function ask(index) {
    const start = Math.floor(index / CHUNK) * CHUNK;
    if (asked.has(start)) return;
    asked.add(start);
    fetch(start, CHUNK).then((answer) => {
      if (!alive || !answer) return;
      total = answer.total;
      answer.rows.forEach((row, k) => rows.set(start + k, row));
      drawn = "";
      draw();
    }).catch(() => asked.delete(start));
  }

  function draw() {
    frame = 0;
    if (!alive) return;
    const {start, end} = view();
    const key = `${start}:${end}:${total}`;
    if (key === drawn) return;
    const fragment = document.createDocumentFragment();
    const h = height || 28;
    fragment.append(spacer(start * h));
    for (let i = start; i < end; i++) {
      const row = rows.get(i);
      fragment.append(row ? drawRow(row) : el("tr", {class: "pending", "aria-hidden": "true"},
        el("td", {colspan: columns}, "…")));
    }
    fragment.append(spacer((total - end) * h));
    if (!total) fragment.append(el("tr", {class: "empty"}, el("td", {colspan: columns}, "No rows match.")));
    body.replaceChildren(fragment);
    drawn = key;
    if (!height) {
      const sample = body.querySelector("tr[data-element], tr[data-node]");
      if (sample) {
        height = sample.getBoundingClientRect().height || 28;
        drawn = "";
        draw();
        return;
      }
    }
    afterDraw();
    const gap = missing(start, end);
    if (gap >= 0) {
      clearTimeout(timer);
      timer = setTimeout(() => ask(gap), FETCH_DELAY_MS);
    }
  }

  const onScroll = () => { if (!frame) frame = requestAnimationFrame(draw); };
  wrap.addEventListener("scroll", onScroll, {passive: true});
  const handle = {
    redraw() { drawn = ""; draw(); },
    rowCount: () => total,
    destroy() {
      alive = false;
      clearTimeout(timer);
      wrap.removeEventListener("scroll", onScroll);
      table.classList.remove("windowed");
      if (table._windowed === handle) table._windowed = null;
    },
  };
  table._windowed = handle;
  draw();
  return handle;
}

/** Stop the windowed drawing of `table`, if any (before drawing it in full). */
export function plainBody(table) {
  if (table._windowed) table._windowed.destroy();
}
