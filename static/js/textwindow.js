// The editor's text: held whole as an array of lines, with only a window of them (the
// lines around the view) in the textarea, so typing in a 30,000-line circuit lays out
// a few hundred lines, not megabytes.
//
// The textarea sits in a scroll box over a spacer as tall as the whole text; it is
// placed where its first line belongs and is as wide as the widest line, so it never
// scrolls itself and the box's scroll bars are the whole text's. Scrolling near an
// edge of the window moves it. Circuits of up to FULL_LINES lines are held whole.
//
// Since a window move replaces the textarea's text (which clears the browser's undo
// history), undo and redo are this module's own. A selection of the whole window
// (Ctrl+A, "Select all") stands for the whole text: copying, cutting or typing over it
// acts on every line. A caret scrolled out of the window is kept here and brought
// back into the window by the next key.

// Texts of up to this many lines are held whole in the textarea.
export const FULL_LINES = 1000;
// Lines kept beyond each edge of the view.
const MARGIN = 100;
// The window moves when the view comes within this many lines of its edge.
const NEAR = 30;
const UNDO_DEPTH = 300;
// Edits of one line within this time, caret to caret, are undone together.
const MERGE_MS = 1500;

/** Columns a line takes, tabs to the next stop of four. */
export function columns(text) {
  if (!text.includes("\t")) return text.length;
  let n = 0;
  for (const ch of text) n = ch === "\t" ? (Math.floor(n / 4) + 1) * 4 : n + 1;
  return n;
}

export function createTextWindow({textarea, scroller, spacer, probe, onChange, onMove}) {
  let lines = [""];
  let text = "";              // lines joined, when known (null: join again)
  let from = 0;               // the window: lines [from, to) are in the textarea
  let to = 1;
  let shown = "";             // the textarea's text as this module last left it
  let widest = 0;             // the widest line's columns
  let parked = null;          // a caret outside the window: {start, end}
  let before = null;          // the selection and kind of the edit under way
  let dragging = false;
  let composing = false;
  let charWidth = 0;
  const done = [];
  const undone = [];

  const style = getComputedStyle(textarea);
  const pad = {top: parseFloat(style.paddingTop) || 0, bottom: parseFloat(style.paddingBottom) || 0,
               left: parseFloat(style.paddingLeft) || 0, right: parseFloat(style.paddingRight) || 0};
  let height = 0;             // of a line, px (read again when the box is resized)
  const lineHeight = () => height || (height = parseFloat(getComputedStyle(textarea).lineHeight) || 20);
  const measure = () => (charWidth = probe.getBoundingClientRect().width / 10 || charWidth || 8);
  let viewLines = 40;         // lines the box shows, as last measured

  const windowed = () => from > 0 || to < lines.length;
  const pos = (line, col) => ({line, col});
  const lastPos = () => pos(lines.length - 1, lines[lines.length - 1].length);
  const same = (a, b) => a.line === b.line && a.col === b.col;
  const isAll = (sel) => sel.start.line === 0 && sel.start.col === 0 && same(sel.end, lastPos());

  /** The text position of an offset into the textarea's text. */
  function posAt(offset) {
    let line = from;
    let start = 0;
    for (let i = shown.indexOf("\n"); i !== -1 && i < offset; i = shown.indexOf("\n", i + 1)) {
      line++;
      start = i + 1;
    }
    return pos(line, offset - start);
  }

  /** The textarea offset of a text position, or -1 when it is outside the window. */
  function offsetOf(p) {
    if (p.line < from || p.line >= to) return -1;
    let offset = 0;
    for (let k = from; k < p.line; k++) offset += lines[k].length + 1;
    return offset + Math.min(p.col, lines[p.line].length);
  }

  /** The selection in text positions; a whole window selected is the whole text. */
  function selection() {
    if (parked) return parked;
    const s = textarea.selectionStart;
    const e = textarea.selectionEnd;
    if (windowed() && s === 0 && e === shown.length && e > 0) return {start: pos(0, 0), end: lastPos()};
    return {start: posAt(s), end: posAt(e), backward: textarea.selectionDirection === "backward"};
  }

  function select(sel) {
    const s = offsetOf(sel.start);
    const e = offsetOf(sel.end);
    if (s >= 0 && e >= 0) {
      parked = null;
      textarea.setSelectionRange(s, e, sel.backward ? "backward" : "forward");
    } else if (isAll(sel)) {
      parked = null;
      textarea.setSelectionRange(0, shown.length);
    } else {
      parked = sel;
      const at = sel.start.line < from ? 0 : shown.length;
      textarea.setSelectionRange(at, at);
    }
  }

  /** The lines in view, [first, last). */
  function view() {
    const h = lineHeight();
    const first = Math.max(0, Math.floor((scroller.scrollTop - pad.top) / h));
    viewLines = Math.ceil((scroller.clientHeight || 600) / h) + 1;
    return [first, first + viewLines];
  }

  // the sizes as last set: a key that changes none of them writes no style
  let sized = "";
  function size() {
    const h = lineHeight();
    const w = Math.ceil(pad.left + pad.right + (widest + 2) * (charWidth || measure()));
    const now = `${lines.length} ${from} ${to} ${w}`;
    if (now === sized) return;
    sized = now;
    spacer.style.height = `${pad.top + pad.bottom + lines.length * h}px`;
    textarea.style.top = `${from * h}px`;
    textarea.style.height = `${pad.top + pad.bottom + (to - from) * h}px`;
    textarea.style.width = `${w}px`;
    textarea.dataset.firstLine = String(from + 1);
  }

  /** Put lines [start, end) in the textarea, keeping the selection and the scroll. */
  function place(start, end, sel = selection()) {
    const x = scroller.scrollLeft;
    const y = scroller.scrollTop;
    from = start;
    to = end;
    shown = from === 0 && to === lines.length && text !== null ? text : lines.slice(from, to).join("\n");
    textarea.value = shown;
    size();
    select(sel);
    scroller.scrollLeft = x;
    scroller.scrollTop = y;
    textarea.scrollTop = textarea.scrollLeft = 0;
  }

  /** The window for the view (and for a selection reaching out of it). */
  function range(sel) {
    if (lines.length <= FULL_LINES) return [0, lines.length];
    const [first, last] = view();
    let start = first - MARGIN;
    let end = last + MARGIN;
    if (sel && !same(sel.start, sel.end) && !isAll(sel)) {
      start = Math.min(start, sel.start.line);
      end = Math.max(end, sel.end.line + 1);
    }
    return [Math.max(0, start), Math.min(lines.length, end)];
  }

  /** Move the window when the view nears its edge (or `force`). */
  function follow(force = false) {
    if (composing) return;
    // not while the mouse selects: a new text under a drag loses where it started
    // (the drag stops at the window's edge; the window moves when the button is let go)
    if (!force && dragging) return;
    const [first, last] = view();
    const inside = first >= from && last <= to;
    const near = (first - from < NEAR && from > 0) || (to - last < NEAR && to < lines.length);
    const tooBig = to - from > 3 * (last - first + 2 * MARGIN);
    const wrong = lines.length <= FULL_LINES ? (from !== 0 || to !== lines.length) : (near || tooBig);
    if (!force && !wrong && inside) return;
    const sel = selection();
    const [start, end] = range(sel);
    if (force || start !== from || end !== to) place(start, end, sel);
    if (onMove) onMove();
  }

  function widthOf(list) {
    let w = 0;
    for (const l of list) if (l.length * 4 > w) w = Math.max(w, columns(l));
    return w;
  }

  /** Replace `count` lines at `at` by `put` (the text's one way of changing). */
  function splice(at, count, put) {
    const gone = lines.slice(at, at + count);
    if (put.length > 10_000 || count > 10_000) {
      lines = lines.slice(0, at).concat(put, lines.slice(at + count));
    } else {
      lines.splice(at, count, ...put);
    }
    if (!lines.length) lines = [""];
    text = null;
    const lost = widthOf(gone);
    widest = lost >= widest ? widthOf(lines) : Math.max(widest, widthOf(put));
    return gone;
  }

  /** Keep an edit for undo, joined to the last one when it goes on typing on one line. */
  function record(edit) {
    undone.length = 0;
    const last = done[done.length - 1];
    const oneLine = (e) => e.removed.length === 1 && e.inserted.length === 1;
    if (last && edit.kind && last.kind === edit.kind && oneLine(last) && oneLine(edit) &&
        last.at === edit.at && edit.time - last.time < MERGE_MS &&
        same(last.after.start, edit.before.start) && same(last.after.end, edit.before.end)) {
      last.inserted = edit.inserted;
      last.after = edit.after;
      last.time = edit.time;
      return;
    }
    done.push(edit);
    if (done.length > UNDO_DEPTH) done.shift();
  }

  /**
   * Take in what changed in the textarea. A script's own input event (a page that sets
   * the textarea's value and says so) sets the whole text.
   */
  function taken(event) {
    const value = textarea.value;
    if (value === shown) return;
    const all = (before && before.all) || !event.isTrusted;
    const start = all ? 0 : from;
    const end = all ? lines.length : to;
    const old = all ? lines : lines.slice(from, to);
    const fresh = value.split("\n");
    let a = 0;
    while (a < old.length && a < fresh.length && old[a] === fresh[a]) a++;
    let b = 0;
    while (b < old.length - a && b < fresh.length - a &&
           old[old.length - 1 - b] === fresh[fresh.length - 1 - b]) b++;
    const inserted = fresh.slice(a, fresh.length - b);
    const removed = splice(start + a, old.length - a - b, inserted);
    from = start;
    to = start + fresh.length;
    shown = value;
    if (from === 0 && to === lines.length) text = value;
    size();
    const kind = before && /^(insertText|deleteContent(Backward|Forward))$/.test(before.type) ? before.type : "";
    record({at: start + a, removed, inserted, kind, time: Date.now(),
            before: (before && before.sel) || selection(), after: selection()});
    before = null;
    // typing leaves the window where it is; a paste may make it the wrong size
    const whole = lines.length <= FULL_LINES;
    if (whole ? from !== 0 || to !== lines.length : to - from > 3 * (viewLines + 2 * MARGIN)) follow(true);
    if (onChange) onChange();
  }

  /** Undo (or redo) the last edit: its lines back, its selection, the window at it. */
  function step(back) {
    const edit = (back ? done : undone).pop();
    if (!edit) return;
    (back ? undone : done).push(edit);
    splice(edit.at, (back ? edit.inserted : edit.removed).length, back ? edit.removed : edit.inserted);
    const sel = back ? edit.before : edit.after;
    bring(sel);
    if (onChange) onChange();
  }

  /** Put the selection in the window and its caret in view. */
  function bring(sel) {
    const h = lineHeight();
    const y = pad.top + sel.start.line * h;
    if (y < scroller.scrollTop || y > scroller.scrollTop + scroller.clientHeight - 2 * h) {
      scroller.scrollTop = Math.max(0, y - scroller.clientHeight / 3);
    }
    const x = pad.left + columns(lines[sel.start.line].slice(0, sel.start.col)) * (charWidth || measure());
    if (x < scroller.scrollLeft || x > scroller.scrollLeft + scroller.clientWidth - 2 * charWidth) {
      scroller.scrollLeft = Math.max(0, x - scroller.clientWidth / 2);
    }
    parked = null;
    const [start, end] = range(sel);
    place(start, end, sel);
    if (onMove) onMove();
  }

  function keydown(event) {
    before = null;              // a beforeinput left without its input (cancelled) is stale
    const mod = event.ctrlKey || event.metaKey;
    const key = event.key.toLowerCase();
    if (mod && !event.altKey && (key === "z" || key === "y")) {
      event.preventDefault();
      step(key === "z" && !event.shiftKey);
      return;
    }
    if (mod && windowed() && (event.key === "Home" || event.key === "End")) {
      // to the text's first or last line, not the window's
      event.preventDefault();
      const at = event.key === "Home" ? pos(0, 0) : lastPos();
      const anchor = event.shiftKey ? selection() : null;
      const sel = !anchor ? {start: at, end: at} : event.key === "Home" ? {start: at, end: anchor.end, backward: true}
        : {start: anchor.start, end: at};
      bring(sel);
      return;
    }
    // a key that types, deletes or moves the caret brings a caret scrolled away back
    const typing = !mod && (event.key.length === 1 || event.key === "Process" ||
                            ["Enter", "Backspace", "Delete", "Tab"].includes(event.key));
    const moving = /^(Arrow|Page)/.test(event.key) || event.key === "Home" || event.key === "End";
    if (parked && (typing || moving || (mod && (key === "v" || key === "x")))) bring(parked);
  }

  textarea.addEventListener("keydown", keydown);
  textarea.addEventListener("beforeinput", (event) => {
    if (event.inputType === "historyUndo" || event.inputType === "historyRedo") {
      event.preventDefault();
      step(event.inputType === "historyUndo");
      return;
    }
    const sel = selection();
    before = {sel, all: windowed() && isAll(sel), type: event.inputType};
  });
  textarea.addEventListener("input", taken);
  textarea.addEventListener("compositionstart", () => { composing = true; });
  textarea.addEventListener("compositionend", () => { composing = false; follow(); });
  textarea.addEventListener("copy", (event) => {
    if (!windowed() || !isAll(selection())) return;
    event.preventDefault();
    event.clipboardData.setData("text/plain", getText());
  });
  textarea.addEventListener("cut", (event) => {
    if (!windowed() || !isAll(selection())) return;
    event.preventDefault();
    event.clipboardData.setData("text/plain", getText());
    const sel = selection();
    const removed = splice(0, lines.length, [""]);
    record({at: 0, removed, inserted: [""], kind: "", time: Date.now(), before: sel,
            after: {start: pos(0, 0), end: pos(0, 0)}});
    scroller.scrollTop = 0;
    place(0, 1, {start: pos(0, 0), end: pos(0, 0)});
    if (onChange) onChange();
  });
  textarea.addEventListener("pointerdown", (event) => {
    dragging = true;
    if (!parked) return;
    const sel = parked;
    parked = null;
    if (!event.shiftKey) return;
    // Shift+click extends from the caret scrolled away: the window takes in both
    const [first, last] = view();
    place(Math.max(0, Math.min(sel.start.line, first - MARGIN)),
          Math.min(lines.length, Math.max(sel.end.line + 1, last + MARGIN)), sel);
  });
  const dropped = () => { if (dragging) { dragging = false; follow(); } };
  window.addEventListener("pointerup", dropped);
  window.addEventListener("pointercancel", dropped);
  // a button let go where no pointerup came (outside the window)
  window.addEventListener("pointermove", (event) => { if (dragging && !event.buttons) dropped(); });
  // the textarea fits its text: a scroll of its own (the caret revealed before the
  // size caught up) is handed to the box
  textarea.addEventListener("scroll", () => {
    if (!textarea.scrollTop && !textarea.scrollLeft) return;
    scroller.scrollTop += textarea.scrollTop;
    scroller.scrollLeft += textarea.scrollLeft;
    textarea.scrollTop = textarea.scrollLeft = 0;
  });
  scroller.addEventListener("scroll", () => follow());
  new ResizeObserver(() => { height = 0; measure(); sized = ""; size(); follow(); }).observe(scroller);
  if (document.fonts) document.fonts.ready.then(() => { measure(); sized = ""; size(); });

  function getText() {
    if (text === null) text = lines.join("\n");
    return text;
  }

  /** Replace the whole text (undoable), caret at its start, view at its top. */
  function setText(value) {
    const sel = selection();
    const fresh = value.split("\n");
    const removed = splice(0, lines.length, fresh);
    text = value;
    record({at: 0, removed, inserted: fresh, kind: "", time: Date.now(), before: sel,
            after: {start: pos(0, 0), end: pos(0, 0)}});
    textarea.focus();
    scroller.scrollTop = 0;
    scroller.scrollLeft = 0;
    parked = null;
    const [start, end] = range(null);
    place(start, end, {start: pos(0, 0), end: pos(0, 0)});
    if (onMove) onMove();
  }

  measure();
  place(0, 1, {start: pos(0, 0), end: pos(0, 0)});

  return {
    getText,
    setText,
    lines: () => lines,
    /** The line (from 1) of the caret or the selection's start, 0 when not focused. */
    caretLine: () => (document.activeElement === textarea ? selection().start.line + 1 : 0),
    /** Caret at (line, column), both from 0, and its line in view. */
    focusAt(line, col) {
      const l = Math.max(0, Math.min(line, lines.length - 1));
      const p = pos(l, Math.max(0, Math.min(col, lines[l].length)));
      textarea.focus();
      bring({start: p, end: p});
    },
    /** The selection in text positions ({start, end}: {line, col}, from 0). */
    selection: () => selection(),
    /** Select from (line, col) to (line, col), all from 0, in the window and in view. */
    selectRange(startLine, startCol, endLine, endCol) {
      bring({start: pos(startLine, startCol), end: pos(endLine, endCol)});
    },
    metrics: () => ({lineHeight: lineHeight(), charWidth: charWidth || measure(), padTop: pad.top,
                     padLeft: pad.left}),
    window: () => ({from, to}),
  };
}
