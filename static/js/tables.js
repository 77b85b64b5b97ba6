// The branch table (sortable, selects an element) and the node table.
// Cells show the server's display strings; sorting reads the raw numbers beside them.

import {el} from "./dom.js";
import {plainBody, windowedBody} from "./vtable.js";

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
  return sortedBy(rows, sort, (row) => row);
}

/** Items in the order `sort` asks for, reading each item's row through `rowOf`. */
function sortedBy(items, sort, rowOf) {
  if (!sort || !sort.key || !SORT_BY[sort.key]) return items.slice();
  const key = SORT_BY[sort.key];
  const dir = sort.dir === -1 ? -1 : 1;
  return items
    .map((item, index) => ({item, index}))
    .sort((x, y) => {
      const a = key(rowOf(x.item)), b = key(rowOf(y.item));
      const missing = a === null || a === undefined || b === null || b === undefined;
      const c = compare(a, b);
      return (missing ? c : dir * c) || x.index - y.index;
    })
    .map((x) => x.item);
}

/**
 * The table's units in circuit order: a plain element, or a three-phase block (its
 * row, then its phase rows), placed where its first phase appears. Sorting moves
 * units; a block's phases stay under it in phase order.
 */
function tableUnits(display) {
  const owner = new Map();
  for (const g of display.groups || []) for (const name of g.elements) owner.set(name, g);
  const members = new Map();
  const units = [];
  for (const row of display.elements) {
    const g = owner.get(row.name);
    if (!g) {
      units.push({row, members: null});
    } else if (!members.has(g.name)) {
      members.set(g.name, [row]);
      units.push({row: g, members: members.get(g.name)});
    } else {
      members.get(g.name).push(row);
    }
  }
  return units;
}

function nextSort(sort, key) {
  if (!sort || sort.key !== key) return {key, dir: 1};
  if (sort.dir === 1) return {key, dir: -1};
  return {key: null, dir: 1};                 // third click: back to circuit order
}

function moreRow(span, shown, total, onAll) {
  return el("tr", {class: "more"}, el("td", {colspan: span},
    `Showing ${shown} of ${total} rows. `,
    el("button", {type: "button", class: "link", onclick: onAll}, `Show all ${total}`)));
}

function cells(tr, row, columns, folded, {sub = {}, first = null} = {}) {
  for (const {key} of columns) {
    const td = el("td", {class: TEXT_COLUMNS.has(key) ? null : "num", dataset: {col: key}});
    if (key === "name" && first) td.append(first);
    td.append(row.text[key] ?? "");
    const below = folded[key] ? row.text[folded[key].key] ?? "" : sub[key] || "";
    if (below && below !== row.text[key]) td.append(el("div", {class: "sub"}, below));
    if (row.secondary && (key === "voltage" || key === "current")) {
      td.append(el("div", {class: "sub"}, `secondary ${row.secondary[key]}`));
    }
    tr.append(td);
  }
  return tr;
}

/** A block's row: its totals, and a button that shows or hides its phases. */
function groupRow(g, columns, folded, open) {
  const toggle = el("span", {class: "toggle", "aria-hidden": "true"}, open ? "▾" : "▸");
  const tr = el("tr", {class: "group", dataset: {group: g.name}, "aria-expanded": open ? "true" : "false",
                       "aria-level": "1", tabindex: "-1",
                       title: `${open ? "hide" : "show"} the phases of ${g.name} (${g.elements.join(", ")}) and draw it in the three-phase view`});
  return cells(tr, g, columns, folded, {sub: g.sub || {}, first: toggle});
}

/**
 * An element's row; `block`: the three-phase block it is a phase of (a phase row),
 * `level`: whether the table is a tree (blocks in it), `hidden`: a closed block's phase.
 */
function elementRow(row, columns, folded, {level = false, block = null, hidden = false} = {}) {
  const tr = block
    ? el("tr", {class: "phase", dataset: {element: row.name, inGroup: block}, "aria-level": "2", hidden})
    : el("tr", {dataset: {element: row.name}, "aria-level": level ? "1" : null});
  return cells(tr, row, columns, folded, {sub: row.sub || {}});
}

/** The rows a person can reach: visible ones, in order. */
const visibleRows = (body) => [...body.rows].filter((r) => !r.hidden && (r.dataset.element || r.dataset.group));

/**
 * Draw the branch table. `onSelect(name)` runs when an element row is chosen by click
 * or keyboard; `onSort(sort)` when a heading is clicked; `onToggle(block)` when a
 * three-phase block's row is opened or closed (`expanded` lists the open ones).
 */
export function renderBranchTable(table, display, {selected, sort, onSelect, onSort, onToggle = () => {},
                                                   expanded = [], all = false, find = "",
                                                   fetchRows = null}) {
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
  const hasGroups = (display.groups || []).length > 0;
  table.setAttribute("role", hasGroups ? "treegrid" : "grid");
  wireBody(table, {onSelect, onToggle});
  if (display.rows_partial) {
    // A big circuit: its rows are on the server, drawn as they scroll into view. With
    // three-phase blocks the server sends the same units as below (a block's row, its
    // phases under it when open), so the first rows it sent (flat) are not used.
    windowedBody(table, {
      total: display.element_total, columns: columns.length,
      first: sort && sort.key || find || hasGroups ? [] : display.elements,
      fetch: (start, count) => fetchRows({table: "elements", start, count, expanded}),
      drawRow: (row) => row.unit === "block" ? groupRow(row, columns, folded, row.open)
        : elementRow(row, columns, folded, {level: hasGroups, block: row.unit === "phase" ? row.block : null}),
      afterDraw: () => markSelected(table, selected),
    });
    return;
  }
  plainBody(table);

  const matches = finder(find);
  const sorted = sortedBy(tableUnits(display).filter((u) => matches(u.row) ||
    (u.members || []).some(matches)), sort, (u) => u.row);
  const total = shownTotal(sorted);
  let units = sorted;
  if (!all && total > ROW_LIMIT) {
    units = [];
    let count = 0;
    for (const u of sorted) {
      if (count >= ROW_LIMIT) break;
      units.push(u);
      count += u.members ? u.members.length : 1;
    }
    const picked = sorted.find((u) => (u.members || [u.row]).some((r) => r.name === selected));
    if (picked && !units.includes(picked)) units.push(picked);   // the selection stays in view
  }
  const open = new Set(expanded);
  const body = document.createDocumentFragment();
  const drawn = [];
  for (const unit of units) {
    if (!unit.members) {
      drawn.push(unit.row);
      body.append(elementRow(unit.row, columns, folded, {level: hasGroups}));
      continue;
    }
    const isOpen = open.has(unit.row.name);
    body.append(groupRow(unit.row, columns, folded, isOpen));
    for (const row of unit.members) {
      drawn.push(row);
      body.append(elementRow(row, columns, folded, {level: true, block: unit.row.name, hidden: !isOpen}));
    }
  }
  if (!units.length) body.append(el("tr", {class: "empty"}, el("td", {colspan: columns.length},
                                                               find ? "No rows match." : "No elements.")));
  if (drawn.length < shownTotal(sorted)) {
    body.append(moreRow(columns.length, drawn.length, shownTotal(sorted), () =>
      renderBranchTable(table, display, {selected, sort, onSelect, onSort, onToggle, expanded,
                                         find, all: true})));
  }
  table.tBodies[0].replaceChildren(body);
  markSelected(table, selected);
}

const shownTotal = (units) => units.reduce((n, u) => n + (u.members ? u.members.length : 1), 0);

/** Rows whose name or terminals contain `find` (no case); every row when it is empty. */
function finder(find) {
  const needle = (find || "").trim().toLowerCase();
  if (!needle) return () => true;
  return (row) => [row.name, row.from, row.to].some((t) => String(t ?? "").toLowerCase().includes(needle));
}

/** Click and keyboard handling of the branch table's rows (drawn in full or windowed). */
function wireBody(table, {onSelect, onToggle}) {
  table.tBodies[0].onclick = (event) => {
    const tr = event.target.closest("tr[data-element], tr[data-group]");
    if (!tr) return;
    if (tr.dataset.group) onToggle(tr.dataset.group);
    else onSelect(tr.dataset.element, {focus: true});
  };
  table.tBodies[0].onkeydown = (event) => {
    const tr = event.target.closest("tr[data-element], tr[data-group]");
    if (!tr) return;
    const group = tr.dataset.group;
    if (event.key === "Enter" || event.key === " ") {
      event.preventDefault();
      if (group) onToggle(group);
      else onSelect(tr.dataset.element, {focus: true});
    } else if (event.key === "ArrowRight" || event.key === "ArrowLeft") {
      const wantOpen = event.key === "ArrowRight";
      if (group && (tr.getAttribute("aria-expanded") === "true") !== wantOpen) {
        event.preventDefault();
        onToggle(group);
      } else if (!group && tr.dataset.inGroup && !wantOpen) {
        event.preventDefault();
        focusRow(table, table.tBodies[0].querySelector(`tr[data-group="${CSS.escape(tr.dataset.inGroup)}"]`));
      }
    } else if (event.key === "ArrowDown" || event.key === "ArrowUp") {
      event.preventDefault();
      const rows = visibleRows(table.tBodies[0]);
      const next = rows[rows.indexOf(tr) + (event.key === "ArrowDown" ? 1 : -1)];
      if (!next) return;
      if (next.dataset.element) onSelect(next.dataset.element, {focus: true});
      else focusRow(table, next);
    }
  };
}

/** Move the keyboard focus (the one row with tabindex 0) to `tr`. */
function focusRow(table, tr) {
  if (!tr) return;
  for (const row of table.tBodies[0].rows) row.tabIndex = row === tr ? 0 : -1;
  tr.focus();
}

/** Move the selection mark without redrawing the table. */
export function markSelected(table, name, {focus = false} = {}) {
  const rows = [...table.tBodies[0].rows].filter((tr) => tr.dataset.element || tr.dataset.group);
  let reachable = false;
  for (const tr of rows) {
    const on = Boolean(tr.dataset.element) && tr.dataset.element === name;
    tr.classList.toggle("selected", on);
    tr.setAttribute("aria-selected", on ? "true" : "false");
    tr.tabIndex = on && !tr.hidden ? 0 : -1;
    reachable = reachable || tr.tabIndex === 0;
    if (on && focus) tr.focus({preventScroll: false});
  }
  // No visible selected row (inside a closed block): the first row takes the Tab stop.
  const first = rows.find((tr) => !tr.hidden);
  if (!reachable && first) first.tabIndex = 0;
}

const nodeRow = (row, columns) => el("tr", {dataset: {node: row.name}}, columns.map(({key}) =>
  el("td", {class: key === "name" ? null : "num"}, row.text[key] ?? "")));

export function renderNodeTable(table, display, {all = false, fetchRows = null} = {}) {
  const columns = display.node_columns;
  table.tHead.replaceChildren(el("tr", {}, columns.map(({key, heading}) =>
    el("th", {scope: "col", class: key === "name" ? null : "num"}, heading))));
  if (display.rows_partial) {
    windowedBody(table, {
      total: display.node_total, columns: columns.length, first: display.nodes,
      fetch: (start, count) => fetchRows({table: "nodes", start, count}),
      drawRow: (row) => nodeRow(row, columns),
    });
    return;
  }
  plainBody(table);
  const rows = all ? display.nodes : display.nodes.slice(0, ROW_LIMIT);
  table.tBodies[0].replaceChildren(...rows.map((row) => nodeRow(row, columns)));
  if (rows.length < display.nodes.length) {
    table.tBodies[0].append(moreRow(columns.length, rows.length, display.nodes.length,
                                    () => renderNodeTable(table, display, {all: true})));
  }
}
