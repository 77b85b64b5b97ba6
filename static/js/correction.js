// The power-factor correction tool: pick a source, a target and a place, ask the
// server for the exact capacitor, read the answer, append its line(s) to the circuit.

import {postCorrect} from "./api.js";
import {el} from "./dom.js";
import {factList, fill, fillSelect, problemList, savedTool, saveTool, smallTable} from "./tools.js";

const $ = (id) => document.getElementById(id);

// Which node boxes each place needs.
const PLACE_NODES = {source: 0, node: 1, across: 2, lines: 3};

function placeOptions(source) {
  const three = source && source.three_phase;
  return [
    {value: "source", label: three ? "at the source's lines" : "across the source"},
    {value: "node", label: "from a node to ground"},
    {value: "across", label: "across two nodes"},
    ...(three ? [{value: "lines", label: "at three lines (bank)"}] : []),
  ];
}

const nodeLabel = (n) => (n === "0" ? "0 (ground)" : n);

/** The answer's warnings as a list, or null when there are none. */
function warningList(d) {
  return d.warnings.length ? el("ul", {class: "tool-warnings"}, d.warnings.map((w) =>
    el("li", {}, el("span", {class: "mark", "aria-hidden": "true"}, "▲ "), w.message,
       w.hint ? el("span", {class: "fix"}, ` — ${w.hint}`) : null))) : null;
}

export function createCorrection({solvedFor, onAppend}) {
  const form = $("pfc-form");
  const out = $("pfc-out");
  const boxes = [$("pfc-node1"), $("pfc-node2"), $("pfc-node3")];
  let choices = {sources: [], nodes: []};
  let seq = 0;

  const source = () => choices.sources.find((s) => s.name === $("pfc-source").value);

  function remember() {
    saveTool("correct", {
      source: $("pfc-source").value, target: $("pfc-target").value,
      leading: $("pfc-leading").checked, place: $("pfc-place").value,
      nodes: boxes.map((b) => b.value), bank: $("pfc-bank").value, rated: $("pfc-rated").value,
      ratings: $("pfc-ratings").value,
    });
  }

  /** Show the node boxes and the bank choice the chosen place needs. */
  function arrange({fresh = false} = {}) {
    const src = source();
    const place = $("pfc-place").value;
    const count = PLACE_NODES[place] || 0;
    boxes.forEach((box, k) => { box.hidden = k >= count; });
    $("pfc-nodes").hidden = count === 0;
    const three = Boolean(src && src.three_phase);
    $("pfc-bank-field").hidden = !(three && (place === "source" || place === "lines"));
    if (fresh && src && place === "lines") {
      // A bank at three lines starts at the source's own lines.
      src.lines.forEach((line, k) => { if (choices.nodes.includes(line)) boxes[k].value = line; });
    }
  }

  function update(next) {
    choices = next || {sources: [], nodes: []};
    const saved = savedTool("correct");
    const has = choices.sources.length > 0;
    form.querySelector("button[type=submit]").disabled = !has;
    fillSelect($("pfc-source"), has ? choices.sources.map((s) => ({value: s.name, label: s.label}))
                                    : [{value: "", label: "no source to correct"}], saved.source);
    fillSelect($("pfc-place"), placeOptions(source()), saved.place);
    const nodes = choices.nodes.map((n) => ({value: n, label: nodeLabel(n)}));
    const firstLive = choices.nodes.find((n) => n !== "0") || "0";
    boxes.forEach((box, k) => fillSelect(box, nodes, (saved.nodes || [])[k], k === 1 ? "0" : firstLive));
    if (saved.target) $("pfc-target").value = saved.target;
    $("pfc-leading").checked = saved.leading === true;
    if (saved.bank) $("pfc-bank").value = saved.bank;
    if (typeof saved.rated === "string") $("pfc-rated").value = saved.rated;
    if (typeof saved.ratings === "string") $("pfc-ratings").value = saved.ratings;
    arrange();
  }

  function request() {
    const body = {source: $("pfc-source").value, target: Number($("pfc-target").value),
                  leading: $("pfc-leading").checked};
    const place = $("pfc-place").value;
    const nodes = boxes.map((b) => b.value);
    if (place === "node") body.at = nodes[0];
    else if (place === "across") body.across = nodes.slice(0, 2);
    else if (place === "lines") body.at = nodes.slice(0, 3);
    if (!$("pfc-bank-field").hidden) body.bank = $("pfc-bank").value;
    const rated = $("pfc-rated").value.trim();
    if (rated) body.rated_voltage = Number(rated);
    // an emptied list falls back to the common ratings the field started with
    body.ratings_kvar = $("pfc-ratings").value.trim() || $("pfc-ratings").dataset.default;
    return body;
  }

  /** A source that meets its target already: the heading and facts, nothing to append. */
  function renderNotNeeded(d) {
    const warnings = warningList(d);
    fill(out,
      el("p", {class: "tool-heading", dataset: {needed: "false"}}, el("b", {}, d.heading),
         el("span", {class: "hint"}, ` — ${d.method}`)),
      warnings, factList(d.facts),
      d.scope_note ? el("p", {class: "hint scope"}, d.scope_note) : null);
  }

  function renderAnswer(data, text) {
    const d = data.display;
    if (data.needed === false) { renderNotNeeded(d); return; }
    const appendButton = el("button", {type: "button", class: "act primary", id: "pfc-append"},
                            `Append ${d.lines.length > 1 ? `these ${d.lines.length} lines` : "this line"} to the circuit and solve`);
    const state = el("span", {class: "hint", id: "pfc-append-state", role: "status"});
    appendButton.addEventListener("click", async () => {
      appendButton.disabled = true;
      const done = await onAppend(text, d.comment, d.lines);
      state.textContent = done ? "appended and solved: the tables now include the capacitor"
                               : "not appended: the circuit changed since this was sized; size it again";
      if (!done) appendButton.disabled = false;
    });
    const warnings = warningList(d);
    const [first, ...more] = d.cautions;
    const cautions = first ? el("div", {class: "tool-cautions"},
      el("p", {}, el("b", {}, `${first.title}: `), first.detail),
      more.length ? el("details", {}, el("summary", {}, `${more.length} more caution${more.length > 1 ? "s" : ""} for this capacitor`),
        more.map((c) => el("p", {}, el("b", {}, `${c.title}: `), c.detail)),
        el("p", {class: "scope"}, d.scope_note)) : null) : null;
    const bank = d.capacitors.length > 1 ? smallTable("Each unit",
      ["Unit", "From → to", "V before", "V after", "I", "Q supplied"],
      d.capacitors.map((c) => [c.name, c.terminals, c.voltage_before, c.voltage_after, c.current, c.q]),
      (k) => k > 1) : null;
    fill(out,
      el("p", {class: "tool-heading"}, el("b", {}, d.heading), el("span", {class: "hint"}, ` — ${d.method}`)),
      el("div", {class: "append"},
        el("pre", {class: "lines", "aria-label": "lines to add to the circuit"},
           el("code", {}, [d.comment, ...d.lines].join("\n"))),
        el("div", {}, appendButton, state)),
      d.standard ? standardSizes(d, text) : null,
      warnings, factList(d.facts), bank, cautions);
  }

  /** The standard ratings either side of the exact answer, each with its re-solved PF. */
  function standardSizes(d, text) {
    const s = d.standard;
    const rows = s.rows.map((row) => {
      let action = "";
      if (row.lines.length) {
        const button = el("button", {type: "button", class: "small", dataset: {which: row.which}},
                          "Append");
        button.title = `append ${row.lines.length > 1 ? "these lines" : "this line"} to the circuit and solve`;
        button.addEventListener("click", async () => {
          button.disabled = true;
          const comment = `# standard bank for ${d.heading.split(":")[0]}: ${row.rating.split(": ")[1]}`;
          const done = await onAppend(text, comment, row.lines);
          $("pfc-append-state").textContent = done ? `appended the ${row.rating.split(":")[0]} and solved`
            : "not appended: the circuit changed since this was sized; size it again";
          if (!done) button.disabled = false;
        });
        action = button;
      }
      return [row.rating, row.capacitance, row.q, row.pf, row.meets, action];
    });
    const table = smallTable(s.heading, [...s.columns, ""], rows, (k) => k >= 1 && k <= 3);
    table.classList.add("standard-sizes");
    for (const [k, tr] of [...table.tBodies[0].rows].entries()) tr.dataset.which = s.rows[k].which;
    return el("div", {class: "standard-block"}, table, el("p", {class: "hint"}, s.note));
  }

  let answered = null;     // {text, asked} of the correction on screen

  async function run(event) {
    event.preventDefault();
    remember();
    const mine = ++seq;
    const text = await solvedFor(out, "Sizing the capacitor…", () => mine === seq);
    if (text === null) return;
    const asked = request();
    const {ok, data} = await postCorrect(text, asked);
    if (mine !== seq) return;
    answered = ok ? {text, asked} : null;
    if (ok) renderAnswer(data, text);
    else out.replaceChildren(problemList(data));
  }

  /** The request of the last correction shown, when it was made for `text` (for the sheet). */
  function sheetRequest(text) {
    return answered && answered.text === text ? answered.asked : null;
  }

  form.addEventListener("submit", run);
  $("pfc-source").addEventListener("change", () => {
    fillSelect($("pfc-place"), placeOptions(source()), $("pfc-place").value);
    arrange({fresh: true});
    remember();
  });
  $("pfc-place").addEventListener("change", () => { arrange({fresh: true}); remember(); });
  for (const input of form.querySelectorAll("input, select")) input.addEventListener("change", remember);

  return {update, sheetRequest};
}
