// The Harmonics tool: the harmonic study of the circuit as last solved. Every string,
// table cell and picture comes from the server's `display` (presentation/studies/
// harmonics.py); this module only places them and keeps the form's choices.

import {postHarmonics} from "./api.js";
import {el, insertSvg} from "./dom.js";
import {factList, fill, fillSelect, problemList, savedTool, saveTool} from "./tools.js";

const $ = (id) => document.getElementById(id);

function table(t) {
  return el("div", {class: "hs-tables"},
    el("table", {class: "data small", dataset: {table: t.key}},
      el("caption", {}, t.caption),
      el("thead", {}, el("tr", {}, t.headings.map((h, k) =>
        el("th", {scope: "col", class: k ? "num" : null}, h)))),
      el("tbody", {}, t.rows.map((cells, r) =>
        el("tr", {class: t.flags[r] ? `flag-${t.flags[r]}` : null}, cells.map((c, k) =>
          el(k ? "td" : "th", {scope: k ? null : "row", class: k ? "num" : null}, c)))))),
    t.note ? el("p", {class: "hs-note"}, t.note) : null);
}

function pictures(items, cls) {
  return el("div", {class: `hs-pictures ${cls}`}, items.map((p) => {
    const box = el("div", {class: "drawing"});
    insertSvg(box, p.svg);
    return el("figure", {dataset: {picture: p.key}}, box, el("figcaption", {}, p.caption));
  }));
}

export function createHarmonics({solvedFor}) {
  const form = $("hs-form");
  const out = $("hs-out");
  let seq = 0;
  let answered = null;     // {text, asked} of the study on screen (for the sheet)

  function ask() {
    const nominal = Number($("hs-nominal").value);
    const rated = Number($("hs-rated").value);
    const pcc = $("hs-pcc").value;
    const cap = $("hs-cap").value;
    const body = {node: $("hs-node").value || null, element: $("hs-element").value || null};
    // Numbers as typed (a bad one gets the server's message); empty fields are left out.
    if (pcc) { body.pcc = pcc; body.nominal = $("hs-nominal").value === "" ? null : nominal; }
    if (cap && $("hs-rated").value !== "") body.rated = {[cap]: rated};
    return body;
  }

  function remember() {
    saveTool("harmonics", {pcc: $("hs-pcc").value, nominal: $("hs-nominal").value,
      cap: $("hs-cap").value, rated: $("hs-rated").value,
      node: $("hs-node").value, element: $("hs-element").value});
  }

  /** Fill the form from the solved circuit's nodes and elements. */
  function update(choices, elements) {
    const saved = savedTool("harmonics");
    const nodes = ((choices && choices.nodes) || []).filter((n) => n !== "0");
    const rows = elements || [];
    fillSelect($("hs-pcc"), [{value: "", label: "none"}, ...nodes.map((n) => ({value: n, label: n}))], saved.pcc ?? "");
    const caps = rows.filter((r) => r.kind === "capacitor").map((r) => ({value: r.name, label: r.name}));
    fillSelect($("hs-cap"), [{value: "", label: caps.length ? "none" : "no capacitor"}, ...caps], saved.cap ?? (caps[0] ? caps[0].value : ""));
    fillSelect($("hs-node"), [{value: "", label: "automatic"}, ...nodes.map((n) => ({value: n, label: n}))], saved.node ?? "");
    fillSelect($("hs-element"), [{value: "", label: "automatic"}, ...rows.map((r) => ({value: r.name, label: r.name}))], saved.element ?? "");
    if (saved.nominal !== undefined) $("hs-nominal").value = saved.nominal;
    if (saved.rated !== undefined) $("hs-rated").value = saved.rated;
  }

  function sheetRequest(text) {
    return answered && answered.text === text ? answered.asked : null;
  }

  async function run(event) {
    if (event) event.preventDefault();
    remember();
    const mine = ++seq;
    const text = await solvedFor(out, "Solving every order…", () => mine === seq);
    if (text === null) return;
    const asked = ask();
    const {ok, data} = await postHarmonics(text, asked);
    if (mine !== seq) return;
    answered = ok ? {text, asked} : null;
    if (!ok) {
      out.replaceChildren(problemList(data));
      return;
    }
    const d = data.display;
    fill(out,
      el("p", {class: "tool-heading"}, el("b", {}, d.heading)),
      factList(d.facts.map((f) => ({...f, flag: f.flag === "ok" ? "ok" : f.flag === "fail" ? "fail" : null}))),
      d.warnings.length ? el("ul", {class: "tool-warnings"}, d.warnings.map((w) =>
        el("li", {}, el("span", {class: "mark", "aria-hidden": "true"}, "▲ "), w))) : null,
      pictures(d.spectra, "spectra"),
      d.tables.map(table),
      d.waveforms.length ? pictures(d.waveforms, "waves") : null,
      el("ul", {class: "hs-sources"}, d.sources.map((s) => el("li", {}, s))),
      el("details", {class: "tool-cautions", open: true},
        el("summary", {}, "Cautions for harmonic work"),
        d.cautions.map((c) => el("p", {}, el("b", {}, `${c.title}. `), c.text)),
        el("p", {class: "scope"}, d.scope_note)));
  }

  form.addEventListener("submit", run);
  for (const id of ["hs-node", "hs-element"]) {
    $(id).addEventListener("change", () => { if (answered) run(); else remember(); });
  }
  return {update, sheetRequest};
}
