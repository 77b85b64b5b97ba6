// The facts line in the header and the power summary tables.

import {el} from "./dom.js";

export function renderFacts(facts) {
  const set = (id, text) => { document.getElementById(id).textContent = text || ""; };
  set("fact-title", facts ? facts.title : "");
  // the browser tab names the circuit too, so several open workbenches can be told apart
  document.title = facts && facts.title ? `${facts.title} — phasorbench` : "phasorbench";
  set("fact-frequency", facts ? `f = ${facts.frequency}` : "not solved yet");
  set("fact-amplitudes", facts ? facts.amplitudes : "");
  set("fact-sign", facts ? facts.sign : "");
  const balance = document.getElementById("fact-balance");
  if (!facts) {
    balance.className = "fact balance";
    balance.replaceChildren();
    return;
  }
  const ok = facts.balance.ok;
  balance.className = `fact balance ${ok ? "ok" : "bad"}`;
  balance.dataset.ok = ok ? "true" : "false";
  balance.title = facts.balance.detail || "";
  // A symbol and words as well as the colour: readable without telling hues apart.
  balance.replaceChildren(el("span", {class: "mark", "aria-hidden": "true"}, ok ? "✓" : "✗"),
                          facts.balance.text);
}

export function renderSummary(summary) {
  const sources = document.querySelector("#source-table tbody");
  sources.replaceChildren(...(summary.sources.length ? summary.sources.map((row) =>
    el("tr", {dataset: {element: row.name}},
      el("td", {}, row.text.name), el("td", {}, row.text.kind),
      el("td", {class: "num"}, row.text.p), el("td", {class: "num"}, row.text.q),
      el("td", {class: "num"}, row.text.s), el("td", {class: "num"}, row.text.pf)))
    : [el("tr", {class: "empty"}, el("td", {colspan: 6}, "No sources."))]));
  const groups = summary.groups || [];
  document.getElementById("group-summary").hidden = !groups.length;
  document.querySelector("#group-table tbody").replaceChildren(...groups.map((row) =>
    el("tr", {},
      el("td", {}, row.text.name), el("td", {}, row.text.kind),
      el("td", {class: "num"}, row.text.p), el("td", {class: "num"}, row.text.q),
      el("td", {class: "num"}, row.text.s), el("td", {class: "num"}, row.text.pf),
      el("td", {class: "num"}, row.text.unbalance))));
  const totals = document.querySelector("#totals-table tbody");
  totals.replaceChildren(...summary.totals.map((row) =>
    el("tr", {},
      el("td", {}, row.label), el("td", {class: "num"}, String(row.count)),
      el("td", {class: "num"}, row.text.p), el("td", {class: "num"}, row.text.q))));
}
