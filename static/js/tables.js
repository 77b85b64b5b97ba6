// The branch table (sortable, selects an element) and the node table.
// Cells show the server's display strings; sorting reads the raw numbers beside them.

import {el} from "./dom.js";

// Column key (from the server's element_columns) → raw value it sorts by.
const SORT_BY = {
  name: (r) => r.name,
  kind: (r) => r.kind,
  terminals: (r) => `${r.from} ${r.to}`,
  voltage: (r) => r.values.v_mag,
  current: (r) => r.values.i_mag,
  impedance_rect: (r) => r.values.z_re,
  impedance_polar: (r) => r.values.z_mag,
  p: (r) => r.values.p_w,
  q: (r) => r.values.q_var,
  s: (r) => r.values.s_va,
  pf: (r) => r.values.pf,
};
const TEXT_COLUMNS = new Set(["name", "kind", "terminals"]);
// Rows drawn before a "show all" button: laying out thousands of table rows takes the
// browser seconds, and nobody reads them all at once.
export const ROW_LIMIT = 300;
// Columns shown as a second line of another column's cell, to keep the table narrow
// enough for a laptop screen: Z in rectangular form over |Z|∠.
const FOLDED = {impedance_polar: "impedance_rect"};

function compare(a, b) {
  // Missing values sort last whatever the direction.
  if (a === null || a === undefined) return b === null || b === undefined ? 0 : 1;
  if (b === null || b === undefined) return -1;
  if (typeof a === "number" && typeof b === "number") return a - b;
  return String(a).localeCompare(String(b), undefined, {numeric: true});
}

export function sortedRows(rows, sort) {
  if (!sort || !sort.key || !SORT_BY[sort.key]) return rows.slice();
  const key = SORT_BY[sort.key];
  const dir = sort.dir === -1 ? -1 : 1;
  return rows
    .map((row, index) => ({row, index}))
    .sort((x, y) => {
      const a = key(x.row), b = key(y.row);
      const missing = a === null || a === undefined || b === null || b === undefined;
      const c = compare(a, b);
      return (missing ? c : dir * c) || x.index - y.index;
    })
    .map((x) => x.row);
}

function nextSort(sort, key) {
  if (!sort || sort.key !== key) return {key, dir: 1};
  if (sort.dir === 1) return {key, dir: -1};
  return {key: null, dir: 1};                 // third click: back to circuit order
}

/**
 * Draw the branch table. `onSelect(name)` runs when a row is chosen by click or
 * keyboard; `onSort(sort)` when a heading is clicked.
 */
function moreRow(span, shown, total, onAll) {
  return el("tr", {class: "more"}, el("td", {colspan: span},
    `Showing ${shown} of ${total} rows. `,
    el("button", {type: "button", class: "link", onclick: onAll}, `Show all ${total}`)));
}

export function renderBranchTable(table, display, {selected, sort, onSelect, onSort, all = false}) {
  const allColumns = display.element_columns;
  const folded = Object.fromEntries(Object.entries(FOLDED)
    .filter(([sub, host]) => allColumns.some((c) => c.key === sub) && allColumns.some((c) => c.key === host))
    .map(([sub, host]) => [host, allColumns.find((c) => c.key === sub)]));
  const columns = allColumns.filter((c) => !(c.key in FOLDED && Object.values(folded).includes(c)));
  const head = el("tr", {}, columns.map(({key, heading}) => {
    if (folded[key]) heading = `${heading} · ${folded[key].heading}`;
    const ariaSort = sort && sort.key === key ? (sort.dir === -1 ? "descending" : "ascending") : "none";
    return el("th", {scope: "col", "aria-sort": ariaSort, class: TEXT_COLUMNS.has(key) ? null : "num",
                     dataset: {key}},
      el("button", {type: "button", title: `Sort by ${heading}`,
                    onclick: () => onSort(nextSort(sort, key))}, heading));
  }));
  table.tHead.replaceChildren(head);

  const sorted = sortedRows(display.elements, sort);
  let rows = sorted;
  if (!all && sorted.length > ROW_LIMIT) {
    rows = sorted.slice(0, ROW_LIMIT);
    const picked = sorted.find((r) => r.name === selected);
    if (picked && !rows.includes(picked)) rows.push(picked);   // the selection stays in view
  }
  const body = document.createDocumentFragment();
  const hasSelected = rows.some((r) => r.name === selected);
  rows.forEach((row, i) => {
    const isSelected = row.name === selected;
    const tr = el("tr", {
      dataset: {element: row.name},
      class: isSelected ? "selected" : null,
      "aria-selected": isSelected ? "true" : "false",
      tabindex: isSelected || (!hasSelected && i === 0) ? "0" : "-1",
    });
    for (const {key} of columns) {
      const td = el("td", {class: TEXT_COLUMNS.has(key) ? null : "num", dataset: {col: key}},
                    row.text[key] ?? "");
      const sub = folded[key] ? row.text[folded[key].key] ?? "" : "";
      if (sub && sub !== row.text[key]) td.append(el("div", {class: "sub"}, sub));
      if (row.secondary && (key === "voltage" || key === "current")) {
        td.append(el("div", {class: "sub"}, `secondary ${row.secondary[key]}`));
      }
      tr.append(td);
    }
    body.append(tr);
  });
  if (!rows.length) body.append(el("tr", {class: "empty"}, el("td", {colspan: columns.length}, "No elements.")));
  if (rows.length < sorted.length) {
    body.append(moreRow(columns.length, rows.length, sorted.length, () =>
      renderBranchTable(table, display, {selected, sort, onSelect, onSort, all: true})));
  }
  table.tBodies[0].replaceChildren(body);
  table.tBodies[0].onclick = (event) => {
    const tr = event.target.closest("tr[data-element]");
    if (tr) onSelect(tr.dataset.element, {focus: true});
  };
  table.tBodies[0].onkeydown = (event) => {
    const tr = event.target.closest("tr[data-element]");
    if (!tr) return;
    if (event.key === "Enter" || event.key === " ") {
      event.preventDefault();
      onSelect(tr.dataset.element, {focus: true});
    } else if (event.key === "ArrowDown" || event.key === "ArrowUp") {
      event.preventDefault();
      const next = event.key === "ArrowDown" ? tr.nextElementSibling : tr.previousElementSibling;
      if (next && next.dataset.element) onSelect(next.dataset.element, {focus: true});
    }
  };
}

/** Move the selection mark without redrawing the table. */
export function markSelected(table, name, {focus = false} = {}) {
  for (const tr of table.tBodies[0].rows) {
    const on = tr.dataset.element === name;
    tr.classList.toggle("selected", on);
    tr.setAttribute("aria-selected", on ? "true" : "false");
    tr.tabIndex = on ? 0 : -1;
    if (on && focus) tr.focus({preventScroll: false});
  }
}

export function renderNodeTable(table, display, {all = false} = {}) {
  const columns = display.node_columns;
  table.tHead.replaceChildren(el("tr", {}, columns.map(({key, heading}) =>
    el("th", {scope: "col", class: key === "name" ? null : "num"}, heading))));
  const rows = all ? display.nodes : display.nodes.slice(0, ROW_LIMIT);
  table.tBodies[0].replaceChildren(...rows.map((row) =>
    el("tr", {}, columns.map(({key}) =>
      el("td", {class: key === "name" ? null : "num"}, row.text[key] ?? "")))));
  if (rows.length < display.nodes.length) {
    table.tBodies[0].append(moreRow(columns.length, rows.length, display.nodes.length,
                                    () => renderNodeTable(table, display, {all: true})));
  }
}
