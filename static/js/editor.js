// The circuit editor: a plain textarea with a line-number gutter and a backdrop
// that marks the lines the checker complains about, with the message at the line's end.
//
// The backdrop sits under the transparent textarea with the same font and line
// height; only marked lines carry text (to place the wavy underline and the note),
// so a long circuit stays cheap to redraw.

import {el} from "./dom.js";

const MARK = {error: "✖", warning: "▲"};
// Texts up to this size replace the editor's text as an undoable edit.
const UNDOABLE_CHARS = 100_000;

export function createEditor({textarea, gutter, backdrop}) {
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

  function lines() {
    return textarea.value.split("\n");
  }

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

  function renderGutter(count, marks) {
    if (count !== lineCount) {
      let text = "";
      for (let i = 1; i <= count; i++) text += i + "\n";
      numbers.textContent = text;
      lineCount = count;
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
    const more = list.length > 1 ? ` (+${list.length - 1} more)` : "";
    const hint = first.hint ? ` — hint: ${first.hint}` : "";
    node.append(el("span", {class: "note"}, `${MARK[severity]} ${first.message}${hint}${more}`));
    return node;
  }

  function render() {
    const all = lines();
    const marks = byLine();
    renderGutter(all.length, marks);
    backLines.replaceChildren(...[...marks].filter(([line]) => line <= all.length)
      .map(([line, list]) => markedLine(all[line - 1], list)));
    // The backdrop is as tall as the text, so marks scroll with it.
    backLines.style.height = `calc(${all.length} * var(--line))`;
    syncScroll();
  }
  function syncScroll() {
    const y = textarea.scrollTop;
    const x = textarea.scrollLeft;
    gutterLines.style.transform = `translateY(${-y}px)`;
    backLines.style.transform = `translate(${-x}px, ${-y}px)`;
  }

  /** Put the caret at (line, column), both from 1, and bring the line into view. */
  function focusAt(line, column = 1) {
    const all = lines();
    let offset = 0;
    for (let i = 0; i < Math.min(line - 1, all.length); i++) offset += all[i].length + 1;
    offset += Math.max(0, (column || 1) - 1);
    textarea.focus();
    textarea.setSelectionRange(offset, offset);
    const lineHeight = parseFloat(getComputedStyle(textarea).lineHeight) || 20;
    const top = (line - 1) * lineHeight;
    if (top < textarea.scrollTop || top > textarea.scrollTop + textarea.clientHeight - 2 * lineHeight) {
      textarea.scrollTop = Math.max(0, top - textarea.clientHeight / 3);
    }
    syncScroll();
  }

  /**
   * Replace the whole text, keeping the browser's undo history where it can (not for a
   * big circuit: the editing machinery behind undo takes minutes over megabytes).
   */
  function setText(text) {
    textarea.focus();
    textarea.select();
    const done = text.length <= UNDOABLE_CHARS && document.execCommand &&
      document.execCommand("insertText", false, text);
    if (!done || textarea.value !== text) textarea.value = text;
    textarea.setSelectionRange(0, 0);
    textarea.scrollTop = 0;
    render();
  }

  textarea.addEventListener("scroll", syncScroll);
  textarea.addEventListener("input", render);
  new ResizeObserver(syncScroll).observe(textarea);
  render();

  return {
    getText: () => textarea.value,
    setText,
    setDiagnostics(list) {
      diagnostics = list || [];
      render();
    },
    focusAt,
    render,
  };
}
