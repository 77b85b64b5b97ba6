// The three-phase view: one block's phasor diagram (phase voltages and line currents,
// drawn by the server) beside its phase, line and sequence values.

import {postThreePhase} from "./api.js";
import {el, insertSvg, placeholder} from "./dom.js";
import {factList, fill, fillSelect, savedTool, saveTool, smallTable} from "./tools.js";

const $ = (id) => document.getElementById(id);

export function createThreePhase({onSelect}) {
  let groups = [];
  let text = "";
  let seq = 0;
  let controller = null;

  function choose(name) {
    if (groups.some((g) => g.name === name)) {
      $("tp-group").value = name;
      saveTool("threePhase", {group: name});
    }
  }

  /** New solve: the blocks it has and the text they belong to. */
  function update(next, solvedText) {
    groups = next || [];
    text = solvedText;
    fillSelect($("tp-group"), groups.map((g) => ({value: g.name, label: g.label})),
               savedTool("threePhase").group);
  }

  function size() {
    const width = $("tp-drawing").clientWidth || 420;
    const side = Math.round(Math.max(280, Math.min(width, window.innerHeight * 0.55, 560)));
    return {width: Math.round(Math.max(280, Math.min(width, 1200))), height: side};
  }

  function renderValues(d) {
    const m = d.magnitudes || "RMS";
    const phases = smallTable(`Phases of ${d.name}`, ["Element", `|V| ${m} ∠`, `|I| ${m} ∠`, "P", "Q", "PF"],
      d.phases.map((r) => [r.text.name, r.text.voltage, r.text.current, r.text.p, r.text.q, r.text.pf]));
    const lines = smallTable("Lines", ["Line", `line current (${m})`, "between", `line-to-line |V| ${m} ∠`],
      d.lines.map((l) => [l.line, l.current, l.pair, l.voltage]), (k) => k !== 2);
    const sequence = smallTable("Sequence values (Fortescue)", ["Sequence", `V ${m}`, `I ${m}`],
      d.sequence.map((s) => [s.name, s.voltage, s.current]));
    fill($("tp-values"),
      el("p", {class: "tool-heading"}, el("b", {}, d.heading)),
      factList(d.facts.map((f, k) => ({...f, key: `f${k}`})), "tool-facts narrow"),
      phases, lines, sequence, el("p", {class: "hint"}, d.note));
  }

  /** Draw the chosen block (when there is one and the view is on screen). */
  async function load() {
    const name = $("tp-group").value;
    if (!name || !text) {
      placeholder($("tp-drawing"), "This circuit has no three-phase blocks.");
      fill($("tp-values"),);
      return;
    }
    if (controller) controller.abort();
    controller = new AbortController();
    const mine = ++seq;
    try {
      const {ok, data} = await postThreePhase(text, name, size(), controller.signal);
      if (mine !== seq) return;
      if (!ok) {
        placeholder($("tp-drawing"), `No three-phase view: ${(data.errors && data.errors[0] || {}).message || "unknown problem"}`);
        return;
      }
      const svg = insertSvg($("tp-drawing"), data.svg);
      if (svg) {
        for (const shaft of svg.querySelectorAll("[data-element]")) {
          const arrow = shaft.closest(".pb-arrow") || shaft;
          arrow.style.cursor = "pointer";
          arrow.addEventListener("click", () => onSelect(shaft.dataset.element));
        }
      }
      renderValues(data.display);
    } catch (err) {
      if (err.name !== "AbortError") throw err;
    }
  }

  $("tp-form").addEventListener("submit", (event) => event.preventDefault());
  $("tp-group").addEventListener("change", () => { choose($("tp-group").value); load(); });
  return {update, load, choose, get hasGroups() { return groups.length > 0; }};
}
