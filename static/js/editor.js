// The circuit editor: a plain textarea with a line-number gutter and a backdrop
// that marks the lines the checker complains about, with the message at the line's end.
// The textarea holds a window of the text around the view (textwindow.js); the gutter,
// backdrop and overlay are drawn for the whole text's lines, scrolled with its box.
//
// The backdrop sits under the transparent textarea with the same font and line
// height; only marked lines carry text (to place the wavy underline), so a long
// circuit stays cheap to redraw.
//
// Over the textarea lies a layer that scrolls only vertically with the text, drawn
// for the lines in view: a mark at the right edge of every line cut off by the
// editor's width (the text goes on past the edge: scroll sideways to read it), and
// the notes of marked lines. A note that fits after its line's text stands there on
// one line; one that does not is a short mark at the right edge, and while the caret
// is on its line the note opens whole, wrapped, in a box under the line.

import {el} from "./dom.js";
import {createFindBar} from "./findbar.js";
import {columns, createTextWindow} from "./textwindow.js";

const MARK = {error: "✖", warning: "▲"};
// Line numbers drawn beyond each edge of the view: the gutter holds a window of them,
// not one per line of a 30,000-line circuit (painting those took a third of a second
// every time anything on the page changed).
const NUMBER_MARGIN = 200;

/** The editor; `onChange` runs after every edit of the person's (not after setText). */
export function createEditor({textarea, scroller, gutter, backdrop, findBar, findOpener, onChange}) {
  const code = scroller.parentElement;
  const overlay = el("div", {class: "overlay", "aria-hidden": "true"});
  const overLines = el("div", {class: "lines"});
  overlay.append(overLines);
  code.append(overlay);
  const probe = el("span", {class: "measure", "aria-hidden": "true"}, "0".repeat(10));
  code.append(probe);
  const spacer = el("div", {class: "spacer", "aria-hidden": "true"});
  scroller.prepend(spacer);
  const text = createTextWindow({
    textarea, scroller, spacer, probe,
    onChange() {
      if (finder) finder.changed();
      render();
      if (onChange) onChange();
    },
    onMove: () => syncScroll(),
  });
  // Line numbers are one text node; marks are a few absolutely placed rows over it
  // and over the backdrop, so typing in a 5000-line circuit stays quick.
  const numbers = el("div", {class: "numbers"});
  const gutterMarks = el("div", {class: "marks"});
  const gutterLines = el("div", {class: "lines"}, numbers, gutterMarks);
  const backLines = el("div", {class: "lines"});
  gutter.replaceChildren(gutterLines);
  backdrop.replaceChildren(backLines);
  let diagnostics = [];
  let lineCount = 0;
  let numbersFrom = 0;
  let numbersTo = -1;

  const lines = () => text.lines();

  /** Diagnostics grouped by line; a line's errors come before its warnings. */
  function byLine() {
    const map = new Map();
    for (const d of diagnostics) {
      if (!d.line) continue;
      const list = map.get(d.line) || [];
      list.push(d);
      map.set(d.line, list);
    }
    for (const list of map.values()) {
      list.sort((a, b) => (a.severity === "warning") - (b.severity === "warning"));
    }
    return map;
  }

  const severityOf = (list) => (list[0].severity === "warning" ? "warning" : "error");
  const topOf = (line) => `calc(${line - 1} * var(--line))`;

  const lineHeight = () => text.metrics().lineHeight;

  /** The line numbers around the view (all of them when `force` or the count changed). */
  function drawNumbers(force = false) {
    const h = lineHeight();
    const first = Math.floor(scroller.scrollTop / h);
    const last = first + Math.ceil((scroller.clientHeight || 600) / h) + 1;
    if (!force && first >= numbersFrom && Math.min(last, lineCount) <= numbersTo) return;
    const from = Math.max(0, first - NUMBER_MARGIN);
    const to = Math.min(lineCount, last + NUMBER_MARGIN);
    let text = "";
    for (let i = from + 1; i <= to; i++) text += i + "\n";
    numbers.textContent = text;
    numbers.style.top = `calc(${from} * var(--line))`;
    numbers.style.minWidth = `${String(lineCount).length}ch`;
    numbersFrom = from;
    numbersTo = to;
  }

  function renderGutter(count, marks) {
    if (count !== lineCount) {
      lineCount = count;
      gutterLines.style.height = `calc(${count} * var(--line))`;
      drawNumbers(true);
    }
    gutterMarks.replaceChildren(...[...marks].filter(([line]) => line <= count).map(([line, list]) =>
      el("div", {class: severityOf(list), style: `top: ${topOf(line)}`, dataset: {line},
                 title: list.map((d) => d.message).join("\n")}, String(line))));
  }

  function markedLine(text, list) {
    const first = list[0];
    const severity = severityOf(list);
    const node = el("div", {class: `ln ${severity}`, style: `top: ${topOf(first.line)}`,
                            dataset: {line: first.line}});
    const col = first.column ? first.column - 1 : null;
    if (col !== null && col <= text.length) {
      const width = Math.max(1, first.length || 1);
      node.append(text.slice(0, col), el("span", {class: "span"}, text.slice(col, col + width) || " "),
                  text.slice(col + width));
    } else {
      node.append(text);
    }
    return node;
  }

  function noteText(list) {
    const first = list[0];
    const more = list.length > 1 ? ` (+${list.length - 1} more)` : "";
    const hint = first.hint ? ` — hint: ${first.hint}` : "";
    return `${MARK[severityOf(list)]} ${first.message}${hint}${more}`;
  }

  const caretLine = () => text.caretLine();

  /** The cut-off marks and the notes of the lines in view (see the head of the file). */
  function renderOverlay(all, marks) {
    const {lineHeight, padTop, padLeft, charWidth} = text.metrics();
    const view = scroller.clientWidth;
    const x = scroller.scrollLeft;
    const first = Math.max(1, Math.floor((scroller.scrollTop - padTop) / lineHeight) + 1);
    const last = Math.min(all.length, first + Math.ceil(scroller.clientHeight / lineHeight) + 1);
    const caret = marks.size ? caretLine() : 0;
    const nodes = [];
    const top = (line) => `${padTop + (line - 1) * lineHeight}px`;
    for (let line = first; line <= last; line++) {
      const end = padLeft + columns(all[line - 1]) * charWidth - x;
      const list = marks.get(line);
      if (!list) {
        if (end > view + 1) nodes.push(el("div", {class: "cut", style: `top: ${top(line)}`, dataset: {line}}, "▸"));
        continue;
      }
      const severity = severityOf(list);
      const text = noteText(list);
      const note = el("div", {class: `note ${severity}`, style: `top: ${top(line)}`, dataset: {line}}, text);
      overLines.append(note);
      const start = Math.max(end, padLeft) + 2 * charWidth;
      const fits = end <= view && start + note.offsetWidth <= view - 4;
      note.remove();
      if (fits) {
        note.style.left = `${start}px`;
        nodes.push(note);
        continue;
      }
      nodes.push(el("div", {class: `cut ${severity}`, style: `top: ${top(line)}`, dataset: {line},
                            title: text}, `${MARK[severity]} note`));
      if (line === caret) {
        nodes.push(el("div", {class: `note open ${severity}`, role: "note", dataset: {line},
                              style: `top: ${padTop + line * lineHeight}px`}, text));
      }
    }
    overlay.style.width = `${view}px`;
    overlay.style.height = `${scroller.clientHeight}px`;
    // the same marks as drawn (a key typed on a line that stays within the edge) are
    // left alone, so typing does not repaint the layer (an open note's side of its line
    // depends on the scroll too)
    const drawn = nodes.map((n) => `${n.className}|${n.dataset.line}|${n.style.cssText}|${n.textContent}`)
      .join("\n") + (caret && marks.has(caret) ? `|${scroller.scrollTop}` : "");
    if (drawn === overlayDrawn) return;
    overlayDrawn = drawn;
    overLines.replaceChildren(...nodes);
    // An open note near the foot of the editor opens above its line instead.
    const open = overLines.querySelector(".note.open");
    if (open) {
      const line = Number(open.dataset.line);
      const below = padTop + line * lineHeight - scroller.scrollTop;
      if (below + open.offsetHeight > scroller.clientHeight && below - lineHeight - open.offsetHeight >= 0) {
        open.style.top = `${padTop + (line - 1) * lineHeight - open.offsetHeight}px`;
      }
    }
  }

  function render() {
    const all = lines();
    const marks = byLine();
    shown = {all, marks};
    renderGutter(all.length, marks);
    backLines.replaceChildren(...[...marks].filter(([line]) => line <= all.length)
      .map(([line, list]) => markedLine(all[line - 1], list)));
    if (hit) backLines.append(hit);
    // The backdrop is as tall as the text, so marks scroll with it.
    backLines.style.height = `calc(${all.length} * var(--line))`;
    queueOverlay();
  }
  // The lines and marks of the last render, reused while scrolling and moving the caret.
  let shown = {all: [], marks: new Map()};
  let overlayQueued = false;
  let overlayDrawn = "";
  function queueOverlay() {
    if (overlayQueued) return;
    overlayQueued = true;
    requestAnimationFrame(() => {
      overlayQueued = false;
      renderOverlay(shown.all, shown.marks);
    });
  }
  let caretSeen = 0;
  function caretMoved() {
    if (!shown.marks.size) return;
    const line = caretLine();
    if (line !== caretSeen) {
      caretSeen = line;
      queueOverlay();
    }
  }
  function syncScroll() {
    const y = scroller.scrollTop;
    const x = scroller.scrollLeft;
    gutterLines.style.transform = `translateY(${-y}px)`;
    backLines.style.transform = `translate(${-x}px, ${-y}px)`;
    overLines.style.transform = `translateY(${-y}px)`;
    overlay.classList.toggle("scrolled", x > 0);
    queueOverlay();
    drawNumbers();
  }

  /** Put the caret at (line, column), both from 1, and bring the line into view. */
  function focusAt(line, column = 1) {
    text.focusAt(line - 1, Math.max(0, (column || 1) - 1));
  }

  /** Replace the whole text (undoable with Ctrl+Z), caret and view at its start. */
  function setText(value) {
    text.setText(value);
    if (finder) finder.changed();        // a new text: the bar's matches are gone
    render();
  }

  // The find bar's current match, drawn on the backdrop (the textarea shows its
  // selection only while it has the focus, and the focus is in the bar's box).
  let hit = null;
  function markHit(found) {
    if (hit) hit.remove();
    hit = null;
    if (!found) return;
    const {charWidth} = text.metrics();
    const line = lines()[found.line] || "";
    const left = columns(line.slice(0, found.col));
    const width = columns(line.slice(0, found.col + found.length)) - left;
    hit = el("div", {class: "find-hit", dataset: {line: found.line + 1},
                     style: `top: calc(${found.line} * var(--line)); left: ${left * charWidth}px; ` +
                            `width: ${Math.max(1, width) * charWidth}px`});
    backLines.append(hit);
  }
  const finder = findBar ? createFindBar({bar: findBar, text, textarea, mark: markHit,
                                          opener: findOpener}) : null;

  scroller.addEventListener("scroll", syncScroll);
  document.addEventListener("selectionchange", caretMoved);
  textarea.addEventListener("focus", caretMoved);
  textarea.addEventListener("blur", caretMoved);
  new ResizeObserver(syncScroll).observe(scroller);
  render();

  return {
    getText: text.getText,
    setText,
    setDiagnostics(list) {
      diagnostics = list || [];
      render();
    },
    focusAt,
    render,
  };
}
