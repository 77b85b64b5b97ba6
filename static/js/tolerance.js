// The tolerance tab: probes, limits, runs and seed; the study runs as a server job with
// a progress bar and a Cancel button; the answer's strings and pictures come from the
// server's `display` (presentation/studies/tolerance.py), this module only places them.

import {cancelToleranceJob, getToleranceJob, startToleranceJob} from "./api.js";
import {el, insertSvg} from "./dom.js";
import {fill, problemList, savedTool, saveTool, smallTable} from "./tools.js";

const $ = (id) => document.getElementById(id);
const POLL_MS = 250;

function lines(textarea) {
  return textarea.value.split("\n").map((s) => s.trim()).filter(Boolean);
}

function figure(svgText, className) {
  const box = el("figure", {class: `drawing ${className}`});
  insertSvg(box, svgText);
  return box;
}

export function createTolerance({solvedFor}) {
  const form = $("tol-form");
  const out = $("tol-out");
  const bar = $("tol-progress");
  const cancel = $("tol-cancel");
  let job = null;
  let seq = 0;
  let answered = null;    // {text, asked} of the study on screen (for the sheet)

  const saved = savedTool("tolerance");
  if (typeof saved.probes === "string") $("tol-probes").value = saved.probes;
  if (typeof saved.limits === "string") $("tol-limits").value = saved.limits;
  if (saved.runs) $("tol-runs").value = saved.runs;
  if (saved.seed !== undefined) $("tol-seed").value = saved.seed;
  if (typeof saved.worst_case === "boolean") $("tol-worst").checked = saved.worst_case;

  function asked() {
    const number = (id) => ($(id).value.trim() === "" ? null : Number($(id).value));
    return {probes: lines($("tol-probes")), limits: lines($("tol-limits")),
            runs: number("tol-runs"), seed: number("tol-seed"), worst_case: $("tol-worst").checked};
  }

  function busy(on) {
    bar.hidden = !on;
    cancel.hidden = !on;
    $("tol-run").disabled = on;
    if (on) bar.removeAttribute("value");     // indeterminate until the first chunk
  }

  function render(data) {
    const d = data.display;
    const parts = [el("p", {class: "tool-heading"}, el("b", {}, d.settings))];
    parts.push(smallTable("Toleranced quantities", ["Quantity", "Nominal", "Tolerance", "Law", "Kind"],
      d.quantities.map((q) => [q.name, q.nominal, q.tol, q.law, q.source]), (k) => k === 1 || k === 2));
    for (const p of d.probes) {
      const block = el("div", {class: "tol-probe", dataset: {probe: p.text}},
        el("h3", {}, el("code", {}, p.text), ` nominal ${p.nominal}`),
        el("div", {class: "tol-pictures"}, figure(p.mag_svg, "tol-mag"), figure(p.deg_svg, "tol-deg")),
        smallTable(null, ["Statistic", "Magnitude", "Angle"], p.stats.map((r) => [r.label, r.mag, r.deg])),
        figure(p.sens_svg, "tol-sens"),
        p.worst ? el("p", {class: "tol-worst"}, p.worst) : null,
        p.worst_rows.length ? smallTable("Part values at the worst cases", ["Quantity", "at the largest |X|", "at the smallest |X|"],
          p.worst_rows.map((r) => [r.name, r.max, r.min])) : null,
        p.limits.map((l) => el("p", {}, `Limit: ${l}`)),
        p.yield ? el("p", {class: "tol-yield"}, el("b", {}, p.yield)) : null);
      parts.push(block);
    }
    if (d.yield && d.probes.length > 1) parts.push(el("p", {class: "tol-yield"}, el("b", {}, `All limits: ${d.yield}`)));
    if (d.warnings.length) parts.push(el("ul", {class: "tool-notes"}, d.warnings.map((w) => el("li", {}, w))));
    if (d.caution) parts.push(el("p", {class: "tool-notes caution-note"}, d.caution));
    fill(out, parts);
  }

  async function run(event) {
    event.preventDefault();
    const ask = asked();
    saveTool("tolerance", {probes: $("tol-probes").value, limits: $("tol-limits").value,
                           runs: ask.runs, seed: ask.seed, worst_case: ask.worst_case});
    const mine = ++seq;
    const text = await solvedFor(out, "Running the tolerance study…", () => mine === seq);
    if (text === null) return;
    busy(true);
    try {
      const started = await startToleranceJob(text, ask);
      if (!started.ok) {
        answered = null;
        out.replaceChildren(problemList(started.data));
        return;
      }
      job = started.data.job;
      for (;;) {
        await new Promise((resolve) => setTimeout(resolve, POLL_MS));
        if (mine !== seq) return;
        const polled = await getToleranceJob(job);
        const data = polled.data;
        if (polled.ok && data.state === "running") {
          if (data.total) {
            bar.max = data.total;
            bar.value = data.done;
            out.replaceChildren(el("p", {class: "placeholder"}, `Running the tolerance study: chunk ${data.done} of ${data.total} done…`));
          }
          continue;
        }
        if (!polled.ok) {
          answered = null;
          out.replaceChildren(problemList(data));
        } else if (data.state === "cancelled") {
          answered = null;
          out.replaceChildren(el("p", {class: "placeholder"}, "Cancelled: no result."));
        } else {
          answered = {text, asked: ask};
          render(data);
        }
        return;
      }
    } finally {
      if (mine === seq) {
        job = null;
        busy(false);
      }
    }
  }

  form.addEventListener("submit", run);
  cancel.addEventListener("click", () => {
    if (job) cancelToleranceJob(job);
  });

  /** The study of the result on screen, when it was made for `text` (for the sheet). */
  function sheetRequest(text) {
    return answered && answered.text === text ? answered.asked : null;
  }
  return {sheetRequest};
}
