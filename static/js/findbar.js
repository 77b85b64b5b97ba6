// Find in the circuit: the editor's own find bar. The textarea holds only a window of a
// long text (textwindow.js), so the browser's find (and a screen reader) sees only the
// lines around the view; this bar searches every line, brings the match into view and
// selects it. Ctrl+F in the editor opens it; Ctrl+F in its box is the browser's own find.
//
// Plain text, never a pattern: what the person types is matched as it is, case folded
// unless "match case" is ticked. Matches are counted up to MAX_MATCHES.

export const MAX_MATCHES = 100_000;

/** The text escaped for a RegExp that matches it literally. */
const literal = (s) => s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

/** Every match of `query` in `lines`, in order: [{line, col}] (both from 0). */
export function matchesIn(lines, query, matchCase = false) {
  const out = [];
  if (!query || query.includes("\n")) return out;
  const pattern = new RegExp(literal(query), matchCase ? "g" : "gi");
  for (let k = 0; k < lines.length && out.length < MAX_MATCHES; k++) {
    const line = lines[k];
    if (line.length < query.length) continue;
    pattern.lastIndex = 0;
    for (let m = pattern.exec(line); m && out.length < MAX_MATCHES; m = pattern.exec(line)) {
      out.push({line: k, col: m.index});
    }
  }
  return out;
}

/** The first match at or after `at` ({line, col}), or before it going back; wraps. */
export function nearest(matches, at, back = false) {
  if (!matches.length) return -1;
  const before = (m) => m.line < at.line || (m.line === at.line && m.col < at.col);
  let lo = 0;
  let hi = matches.length;            // first index not before `at`
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (before(matches[mid])) lo = mid + 1;
    else hi = mid;
  }
  if (back) return lo === 0 ? matches.length - 1 : lo - 1;
  return lo === matches.length ? 0 : lo;
}

/**
 * The bar over the editor. `text`: the text window (lines, selection, selectRange);
 * `mark(hit)`: draw the current match ({line, col, length}) or none (null).
 */
export function createFindBar({bar, text, textarea, mark, opener}) {
  const box = bar.querySelector("input[type=search]");
  const matchCase = bar.querySelector("input[type=checkbox]");
  const status = bar.querySelector("[role=status]");
  let matches = [];
  let current = -1;
  let stale = true;            // the text or the query changed since `matches`

  function search() {
    matches = matchesIn(text.lines(), box.value, matchCase.checked);
    stale = false;
  }

  function show(index) {
    current = index;
    const count = matches.length;
    const more = count >= MAX_MATCHES ? "+" : "";
    if (!box.value) status.textContent = "";
    else if (!count) status.textContent = "no match";
    else status.textContent = `${index + 1} of ${count.toLocaleString("en")}${more}`;
    bar.classList.toggle("missed", Boolean(box.value) && !count);
    if (index < 0) { mark(null); return; }
    const m = matches[index];
    text.selectRange(m.line, m.col, m.line, m.col + box.value.length);
    mark({line: m.line, col: m.col, length: box.value.length});
  }

  /** Go to the next match (or the previous), from the caret, or from the current one. */
  function go(back = false, fromCaret = false) {
    if (stale) { search(); fromCaret = true; }
    if (!matches.length) { show(-1); return; }
    let index;
    if (fromCaret || current < 0) {
      const sel = text.selection();
      index = nearest(matches, back ? sel.end : sel.start, back);
    } else {
      index = (current + (back ? matches.length - 1 : 1)) % matches.length;
    }
    show(index);
  }

  function open() {
    bar.hidden = false;
    const sel = text.selection();
    if (sel.start.line === sel.end.line && sel.end.col > sel.start.col &&
        sel.end.col - sel.start.col <= 200) {
      box.value = text.lines()[sel.start.line].slice(sel.start.col, sel.end.col);
      stale = true;
    }
    box.focus();
    box.select();
    if (box.value) go(false, true);
  }

  function close({focusText = true} = {}) {
    if (bar.hidden) return;
    bar.hidden = true;
    mark(null);
    current = -1;
    if (focusText) textarea.focus();
  }

  box.addEventListener("input", () => { stale = true; current = -1; go(false, true); });
  matchCase.addEventListener("change", () => { stale = true; current = -1; go(false, true); });
  box.addEventListener("keydown", (event) => {
    if (event.key === "Enter") { event.preventDefault(); go(event.shiftKey); }
    else if (event.key === "Escape") { event.preventDefault(); close(); }
  });
  bar.querySelector("[data-find=next]").addEventListener("click", () => go(false));
  bar.querySelector("[data-find=previous]").addEventListener("click", () => go(true));
  bar.querySelector("[data-find=close]").addEventListener("click", () => close());
  textarea.addEventListener("keydown", (event) => {
    const mod = event.ctrlKey || event.metaKey;
    if (mod && !event.altKey && !event.shiftKey && event.key.toLowerCase() === "f") {
      event.preventDefault();
      open();
    } else if (event.key === "Escape" && !bar.hidden) {
      close();
    } else if (event.key === "F3" && !bar.hidden) {
      event.preventDefault();
      go(event.shiftKey);
    }
  });
  if (opener) opener.addEventListener("click", open);

  return {
    open,
    close,
    /** The text changed: matches are found again at the next step; the mark goes. */
    changed() {
      stale = true;
      current = -1;
      mark(null);
      if (!bar.hidden && box.value) status.textContent = "";
    },
  };
}
