// The port tool: pick two nodes, read the Thevenin and Norton equivalents seen from
// them, the conjugate-matched load and the best resistive load.

import {postPort} from "./api.js";
import {el} from "./dom.js";
import {factList, fill, fillSelect, problemList, savedTool, saveTool} from "./tools.js";

const $ = (id) => document.getElementById(id);

export function createPort({solvedFor}) {
  const form = $("port-form");
  const out = $("port-out");
  let seq = 0;

  function update(choices) {
    const nodes = ((choices && choices.nodes) || []).map((n) => ({value: n, label: n === "0" ? "0 (ground)" : n}));
    const saved = savedTool("port");
    const live = nodes.map((n) => n.value).filter((n) => n !== "0");
    fillSelect($("port-a"), nodes, saved.a, live[live.length - 1] || null);
    fillSelect($("port-b"), nodes, saved.b, "0");
    form.querySelector("button[type=submit]").disabled = nodes.length < 2;
  }

  let answered = null;     // {text, asked} of the equivalent on screen

  /** The port of the last equivalent shown, when it was made for `text` (for the sheet). */
  function sheetRequest(text) {
    return answered && answered.text === text ? answered.asked : null;
  }

  async function run(event) {
    event.preventDefault();
    const a = $("port-a").value, b = $("port-b").value;
    saveTool("port", {a, b});
    const mine = ++seq;
    const text = await solvedFor(out, "Finding the equivalent…", () => mine === seq);
    if (text === null) return;
    const {ok, data} = await postPort(text, a, b);
    if (mine !== seq) return;
    answered = ok ? {text, asked: {a, b}} : null;
    if (!ok) {
      out.replaceChildren(problemList(data));
      return;
    }
    const d = data.display;
    fill(out,
      el("p", {class: "tool-heading"}, el("b", {}, d.heading)),
      factList(d.facts),
      d.notes.length ? el("ul", {class: "tool-notes"}, d.notes.map((n) => el("li", {}, n))) : null);
  }

  form.addEventListener("submit", run);
  for (const select of form.querySelectorAll("select")) {
    select.addEventListener("change", () => saveTool("port", {a: $("port-a").value, b: $("port-b").value}));
  }
  return {update, sheetRequest};
}
