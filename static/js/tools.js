// The Tools panel: tabs (three-phase view, power-factor correction, port equivalent)
// and the small pieces the three tools share. Every string shown comes from the
// server's `display` fields; this module only places them.

import {el} from "./dom.js";
import {loadSaved, save} from "./store.js";

/** Put `parts` in `container`, leaving out the missing ones (null, undefined, false). */
export function fill(container, ...parts) {
  container.replaceChildren(...parts.flat().filter((p) => p !== null && p !== undefined && p !== false));
}

/** The saved settings of one tool (or of the panel, key "panel"). */
export function savedTool(key) {
  const tools = loadSaved().tools;
  const value = tools && typeof tools === "object" ? tools[key] : null;
  return value && typeof value === "object" ? value : {};
}

/** Merge `patch` into the saved settings of one tool. */
export function saveTool(key, patch) {
  const tools = loadSaved().tools;
  const all = tools && typeof tools === "object" ? tools : {};
  save({tools: {...all, [key]: {...(all[key] || {}), ...patch}}});
}

// A <select> offers at most this many options; a bigger list gets a find box beside it
// that picks which ones (a node list of a big network would cost the page seconds).
const SELECT_OPTIONS = 100;

/**
 * Refill a <select> with `options` ([{value, label}]), keeping `wanted` (or the
 * current value) when it is still offered, else the first option (or `fallback`).
 */
export function fillSelect(select, options, wanted, fallback = null) {
  const keep = wanted ?? select.value;
  const values = options.map((o) => o.value);
  const chosen = values.includes(keep) ? keep
    : fallback !== null && values.includes(fallback) ? fallback : values[0];
  select._options = options;
  const finder = findBox(select, options.length > SELECT_OPTIONS);
  offer(select, options, chosen, finder ? finder.value : "");
  return select.value;
}

/** Put the options matching `typed` (at most SELECT_OPTIONS, and `chosen`) in `select`. */
function offer(select, options, chosen, typed = "") {
  const needle = typed.trim().toLowerCase();
  let shown = options;
  if (options.length > SELECT_OPTIONS) {
    shown = options.filter((o) => o.value === chosen ||
      (!needle || String(o.value).toLowerCase().includes(needle))).slice(0, SELECT_OPTIONS + 1);
    if (chosen !== undefined && !shown.some((o) => o.value === chosen)) {
      shown.unshift(options.find((o) => o.value === chosen));
    }
  }
  select.replaceChildren(...shown.map((o) => el("option", {value: o.value}, o.label)));
  if (chosen !== undefined) select.value = chosen;
}

/** The find box of a long select (made once, shown only while the list is long). */
function findBox(select, wanted) {
  let box = select._finder;
  if (!box && wanted) {
    box = el("input", {type: "search", class: "select-find", placeholder: "find…",
                       "aria-label": `find in ${select.getAttribute("aria-label") || select.name || "the list"}`});
    let timer = null;
    box.addEventListener("input", () => {
      clearTimeout(timer);
      timer = setTimeout(() => {
        const options = select._options || [];
        const needle = box.value.trim().toLowerCase();
        const first = options.find((o) => String(o.value).toLowerCase().includes(needle));
        offer(select, options, needle && first ? first.value : select.value, box.value);
        select.dispatchEvent(new Event("change", {bubbles: true}));
      }, 150);
    });
    select.before(box);
    select._finder = box;
  }
  if (box) box.hidden = !wanted;
  return wanted ? box : null;
}

/** The facts of a tool's answer as a definition list; a flag is a word and a mark too. */
export function factList(facts, className = "tool-facts") {
  return el("dl", {class: className}, facts.map((f) =>
    el("div", {class: f.flag ? `flag-${f.flag}` : null, dataset: {key: f.key}},
      el("dt", {}, f.term), el("dd", {}, f.value))));
}

/** The API's errors as a short list under a tool's form. */
export function problemList(data) {
  const errors = (data && data.errors) || [{message: "unknown problem", hint: ""}];
  return el("ul", {class: "tool-problems", role: "alert"}, errors.map((e) =>
    el("li", {}, el("span", {class: "mark", "aria-hidden": "true"}, "✖ "),
       e.line ? `line ${e.line}: ` : "", e.message,
       e.hint ? el("span", {class: "fix"}, ` — ${e.hint}`) : null)));
}

/** A small table from rows of strings: headings [text], rows [[cell, …]]. */
export function smallTable(caption, headings, rows, numeric = () => true) {
  return el("table", {class: "data small"},
    caption ? el("caption", {}, caption) : null,
    el("thead", {}, el("tr", {}, headings.map((h, k) =>
      el("th", {scope: "col", class: k && numeric(k) ? "num" : null}, h)))),
    el("tbody", {}, rows.map((cells) => el("tr", {}, cells.map((c, k) =>
      el(k ? "td" : "th", {scope: k ? null : "row", class: k && numeric(k) ? "num" : null}, c))))));
}

/**
 * The tab list of the Tools panel (WAI-ARIA tabs: arrow keys move between tabs,
 * Home/End to the ends). `onShow(name)` runs when a tab is shown.
 */
export function createTabs(root, {onShow}) {
  const tabs = () => [...root.querySelectorAll('[role="tab"]')].filter((t) => !t.hidden);
  const none = document.getElementById("tool-none");
  let current = null;
  let context = null;     // the tab the circuit on screen suggests, saved with a pick
  let picked = null;      // the tab the person chose since the page was opened

  function mark(tab) {
    const all = [...root.querySelectorAll('[role="tab"]')];
    for (const t of all) {
      const on = t === tab;
      t.setAttribute("aria-selected", on ? "true" : "false");
      t.tabIndex = on ? 0 : -1;
      document.getElementById(t.getAttribute("aria-controls")).hidden = !on;
    }
    if (none) none.hidden = Boolean(tab);
  }

  function show(name, {focus = false, remember = true} = {}) {
    const all = [...root.querySelectorAll('[role="tab"]')];
    const tab = all.find((t) => t.dataset.tool === name && !t.hidden) || tabs()[0];
    if (!tab) return;
    mark(tab);
    if (focus) tab.focus();
    current = tab.dataset.tool;
    if (remember) {
      picked = current;
      saveTool("panel", {tab: current, suggested: context});
    }
    onShow(current);
  }

  /** No tab open: the tables and diagrams hold the answer; the first tab stays reachable. */
  function close() {
    mark(null);
    current = null;
    const first = tabs()[0];
    if (first) first.tabIndex = 0;
  }

  root.addEventListener("click", (event) => {
    const tab = event.target.closest('[role="tab"]');
    if (tab) show(tab.dataset.tool);
  });
  root.addEventListener("keydown", (event) => {
    const tab = event.target.closest('[role="tab"]');
    if (!tab) return;
    const list = tabs();
    const at = list.indexOf(tab);
    const to = {ArrowRight: at + 1, ArrowLeft: at - 1, Home: 0, End: list.length - 1}[event.key];
    if (to === undefined) return;
    event.preventDefault();
    show(list[(to + list.length) % list.length].dataset.tool, {focus: true});
  });

  return {
    show,
    close,
    get current() { return current; },
    /**
     * Open the tab worth opening for a circuit: the one the person picked on this page,
     * else one picked before for a circuit that suggested the same (`suggested`, from
     * the server's `display.tools`), else the suggestion itself (null: none open).
     */
    open(suggested) {
      context = suggested ?? null;
      const saved = savedTool("panel");
      const wanted = picked && tabs().some((t) => t.dataset.tool === picked) ? picked
        : saved.tab && (saved.suggested ?? null) === context ? saved.tab : context;
      if (wanted && tabs().some((t) => t.dataset.tool === wanted)) {
        if (wanted !== current) show(wanted, {remember: false});
        else onShow(current);
      } else {
        close();
      }
    },
    /** Show or hide a tab; a hidden current tab gives way to the first one left. */
    offer(name, on) {
      const tab = root.querySelector(`[role="tab"][data-tool="${name}"]`);
      tab.hidden = !on;
      if (!on && current === name) show(tabs()[0].dataset.tool, {remember: false});
    },
  };
}
