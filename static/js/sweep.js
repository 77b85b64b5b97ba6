// The frequency-response tab: pick probes (a filter box over the circuit's nodes and
// elements, or any probe typed in), a range and points; the server sweeps, draws the
// plot (the same picture as the sheet's) and sends the cursor's readout strings. This
// module places them and moves the cursor; it formats no numbers itself.

import {postSweep, postSweepCsv} from "./api.js";
import {el, insertSvg} from "./dom.js";
import {saveBlob} from "./sheet-export.js";
import {fill, problemList, savedTool, saveTool, smallTable} from "./tools.js";

const $ = (id) => document.getElementById(id);
const SVG_NS = "http://www.w3.org/2000/svg";
// Probes offered as checkboxes at once; the filter box narrows a longer list.
const LISTED = 60;

export function createSweep({solvedFor}) {
  const form = $("sweep-form");
  const out = $("sweep-out");
  const view = $("sweep-view");
  const figure = $("sweep-drawing");
  let offered = [];        // probe texts the circuit offers
  let picked = [];         // probe texts to sweep
  let seq = 0;
  let answered = null;     // {text, asked, display, scale} of the sweep on screen
  let cursor = null;       // {svg, xs, k, ...} of the picture on screen

  function restore() {
    const saved = savedTool("sweep");
    picked = Array.isArray(saved.probes) ? saved.probes.filter((p) => typeof p === "string") : [];
    for (const [id, key] of [["sweep-from", "from"], ["sweep-to", "to"], ["sweep-points", "points"]]) {
      if (saved[key] !== undefined && saved[key] !== null) $(id).value = saved[key];
    }
    if (saved.spacing) $("sweep-spacing").value = saved.spacing;
  }

  function update(choices) {
    offered = (choices && choices.probes) || [];
    // Empty fields take the circuit's sweep line: its range shows as the placeholders.
    const own = (choices && choices.sweep) || null;
    $("sweep-from").placeholder = own ? own.from : "auto";
    $("sweep-to").placeholder = own ? own.to : "auto";
    $("sweep-points").placeholder = own ? own.points : "auto";
    $("sweep-spacing").options[0].textContent = own ? `auto (${own.spacing})` : "auto";
    const hint = form.querySelector(".hint");
    if (hint.dataset.plain === undefined) hint.dataset.plain = hint.textContent;
    hint.textContent = own
      ? `empty fields take the circuit's sweep line: ${own.words}, ${own.points} points ${own.spacing}`
      : hint.dataset.plain;
    const kept = picked.filter((p) => offered.includes(p) || p.includes("/"));
    if (!kept.length && offered.length) kept.push(offered[0]);
    picked = kept;
    renderList();
  }

  function renderList() {
    const words = $("sweep-filter").value.trim().toLowerCase();
    const all = [...picked.filter((p) => !offered.includes(p)), ...offered];
    const match = all.filter((p) => !words || p.toLowerCase().includes(words));
    const shown = match.slice(0, LISTED);
    const boxes = shown.map((probe) => {
      const input = el("input", {type: "checkbox", value: probe, checked: picked.includes(probe)});
      input.addEventListener("change", () => {
        picked = input.checked ? [...picked, probe] : picked.filter((p) => p !== probe);
        saveTool("sweep", {probes: picked});
      });
      return el("label", {}, input, probe);
    });
    const more = match.length > shown.length
      ? el("span", {class: "hint"}, `${match.length - shown.length} more: type to narrow`) : null;
    const none = !match.length ? el("span", {class: "hint"}, "no probe matches the filter") : null;
    fill($("sweep-list"), boxes, more, none);
  }

  function addTyped() {
    const probe = $("sweep-custom").value.trim();
    if (!probe) return;
    if (!picked.includes(probe)) picked = [...picked, probe];
    $("sweep-custom").value = "";
    saveTool("sweep", {probes: picked});
    renderList();
  }

  function asked() {
    const number = (id) => {
      const v = $(id).value.trim();
      return v === "" ? null : Number(v);
    };
    const ask = {probes: picked};
    const from = number("sweep-from"), to = number("sweep-to"), points = number("sweep-points");
    if (from !== null) ask.from = from;
    if (to !== null) ask.to = to;
    if (points !== null) ask.points = points;
    if ($("sweep-spacing").value) ask.spacing = $("sweep-spacing").value;
    saveTool("sweep", {probes: picked, from, to, points, spacing: $("sweep-spacing").value});
    return ask;
  }

  function pictureSize() {
    const width = Math.round(Math.max(420, Math.min(1600, (out.clientWidth || view.clientWidth || 760))));
    return {width, height: Math.round(Math.max(360, Math.min(640, width * 0.56)))};
  }

  async function run(event) {
    if (event) event.preventDefault();
    const ask = asked();
    const mine = ++seq;
    if (!ask.probes.length) {
      fill(out, el("p", {class: "placeholder"}, "Pick at least one probe to sweep."));
      return;
    }
    const text = await solvedFor(out, "Sweeping…", () => mine === seq);
    if (text === null) return;
    const scale = savedTool("sweep").scale || "auto";
    const {ok, data} = await postSweep(text, {...ask, arrays: false,
                                              draw: {...pictureSize(), magnitude: scale}});
    if (mine !== seq) return;
    if (!ok) {
      answered = null;
      view.hidden = true;
      fill(out, problemList(data));
      return;
    }
    answered = {text, asked: ask, display: data.display};
    show(data);
  }

  function show(data) {
    const d = data.display;
    view.hidden = false;
    const svg = insertSvg(figure, data.svg);
    for (const radio of form.ownerDocument.querySelectorAll('input[name="sweep-scale"]')) {
      radio.checked = svg && radio.value === svg.dataset.magnitude;
    }
    cursor = svg ? makeCursor(svg, d.readout) : null;
    const rows = d.resonances.map((r) => r.cells);
    const table = rows.length ? smallTable(d.resonance_note, d.resonance_columns, rows, (k) => k >= 3)
      : null;
    if (table) {
      [...table.tBodies[0].rows].forEach((tr, k) => {
        const res = d.resonances[k];
        tr.tabIndex = 0;
        tr.title = "move the cursor here";
        tr.dataset.frequency = res.frequency_hz;
        const go = () => moveToFrequency(res.frequency_hz, res.words);
        tr.addEventListener("click", go);
        tr.addEventListener("keydown", (e) => { if (e.key === "Enter") go(); });
      });
    }
    fill(out,
      el("p", {class: "tool-heading"}, el("b", {}, d.heading)),
      table || el("p", {class: "placeholder"}, d.resonance_note),
      d.warnings.length ? el("ul", {class: "tool-warnings"}, d.warnings.map((w) =>
        el("li", {}, el("span", {class: "mark", "aria-hidden": "true"}, "▲ "), w))) : null,
      el("details", {class: "sweep-defs"}, el("summary", {}, "What the probes observe"),
        el("ul", {}, d.probes.map((p) => el("li", {}, el("code", {}, p.probe), ` (${p.unit}): ${p.meaning}`)))));
  }

  // ---- the cursor ------------------------------------------------------------------

  function makeCursor(svg, readout) {
    const f = (name) => Number(svg.getAttribute(`data-${name}`));
    const frame = {left: f("plot-left"), right: f("plot-right"), magTop: f("mag-top"),
                   magBottom: f("mag-bottom"), phTop: f("phase-top"), phBottom: f("phase-bottom"),
                   span: f("phase-span"), log: svg.getAttribute("data-x-scale") === "log",
                   fMin: f("f-min"), fMax: f("f-max")};
    const xOf = (hz) => {
      const t = frame.log ? Math.log(hz / frame.fMin) / Math.log(frame.fMax / frame.fMin)
                          : (hz - frame.fMin) / (frame.fMax - frame.fMin);
      return frame.left + t * (frame.right - frame.left);
    };
    const xs = readout.hz.map(xOf);
    const group = document.createElementNS(SVG_NS, "g");
    group.setAttribute("class", "pb-cursor");
    group.setAttribute("pointer-events", "none");
    group.setAttribute("display", "none");
    const line = document.createElementNS(SVG_NS, "line");
    for (const [k, v] of Object.entries({y1: frame.magTop, y2: frame.phBottom, stroke: "#111111",
                                          "stroke-width": 1, "stroke-dasharray": "4 3"})) line.setAttribute(k, v);
    group.append(line);
    const probes = Object.keys(readout.probes);
    const dots = probes.map((p) => {
      const path = svg.querySelector(`path.pb-curve[data-probe="${CSS.escape(p)}"]`);
      const colour = path ? path.getAttribute("stroke") : "#111111";
      const make = () => {
        const c = document.createElementNS(SVG_NS, "circle");
        c.setAttribute("r", 4);
        c.setAttribute("fill", "#ffffff");
        c.setAttribute("stroke", colour);
        c.setAttribute("stroke-width", 2);
        group.append(c);
        return c;
      };
      return {probe: p, colour, mag: make(), phase: make()};
    });
    svg.append(group);
    const state = {svg, readout, xs, frame, group, line, dots, k: null};
    svg.addEventListener("pointermove", (event) => {
      const point = new DOMPoint(event.clientX, event.clientY).matrixTransform(svg.getScreenCTM().inverse());
      if (point.x < frame.left - 4 || point.x > frame.right + 4) return;
      place(nearest(xs, point.x));
    });
    return state;
  }

  function magnitudeY(value) {
    const g = cursor.svg.querySelector(`g.pb-mag[data-scale="${cursor.svg.dataset.magnitude}"]`);
    if (!g || value === null || !(value > 0 || g.dataset.yKind === "linear")) return null;
    const kind = g.dataset.yKind, lo = Number(g.dataset.yMin), hi = Number(g.dataset.yMax);
    const t = kind === "db" ? 20 * Math.log10(value) : kind === "log" ? Math.log10(value) : value;
    const {magTop, magBottom} = cursor.frame;
    return Math.min(magBottom, Math.max(magTop, magBottom - (t - lo) / (hi - lo) * (magBottom - magTop)));
  }

  function place(k, note = null) {
    if (!cursor) return;
    const {readout, xs, frame, group, line, dots} = cursor;
    k = Math.max(0, Math.min(xs.length - 1, k));
    cursor.k = k;
    group.setAttribute("display", "inline");
    line.setAttribute("x1", xs[k]);
    line.setAttribute("x2", xs[k]);
    const parts = [el("b", {}, readout.frequency[k])];
    for (const dot of dots) {
      const data = readout.probes[dot.probe];
      const ym = magnitudeY(data.mag[k]);
      const yp = data.deg[k] === null ? null
        : frame.phBottom - (data.deg[k] + frame.span) / (2 * frame.span) * (frame.phBottom - frame.phTop);
      for (const [circle, y] of [[dot.mag, ym], [dot.phase, yp]]) {
        circle.setAttribute("display", y === null ? "none" : "inline");
        if (y !== null) {
          circle.setAttribute("cx", xs[k]);
          circle.setAttribute("cy", y);
        }
      }
      parts.push(el("span", {class: "sweep-value", style: `color: ${dot.colour}`},
                    `${dot.probe}: ${data.text[k]}`));
    }
    fill($("sweep-readout"), parts, note ? el("span", {class: "sweep-picked"}, `resonance ${note}`) : null);
    $("sweep-readout").dataset.index = readout.index[k];
  }

  function moveToFrequency(hz, note = null) {
    if (!cursor) return;
    const x = (() => {
      const {frame} = cursor;
      const t = frame.log ? Math.log(hz / frame.fMin) / Math.log(frame.fMax / frame.fMin)
                          : (hz - frame.fMin) / (frame.fMax - frame.fMin);
      return frame.left + t * (frame.right - frame.left);
    })();
    place(nearest(cursor.xs, x), note);
  }

  figure.addEventListener("keydown", (event) => {
    if (!cursor) return;
    const n = cursor.xs.length;
    const big = Math.max(10, Math.round(n / 50));
    const k = cursor.k ?? Math.floor(n / 2);
    const to = {ArrowRight: k + (event.shiftKey ? big : 1), ArrowLeft: k - (event.shiftKey ? big : 1),
                PageUp: k + big, PageDown: k - big, Home: 0, End: n - 1}[event.key];
    if (to === undefined) return;
    event.preventDefault();
    place(to);
  });
  figure.addEventListener("focus", () => { if (cursor && cursor.k === null) place(Math.floor(cursor.xs.length / 2)); });

  function setScale(scale) {
    saveTool("sweep", {scale});
    const svg = cursor && cursor.svg;
    if (!svg) return;
    svg.dataset.magnitude = scale;
    for (const g of svg.querySelectorAll("g.pb-mag, g.pb-resonance")) {
      g.setAttribute("display", g.dataset.scale === scale ? "inline" : "none");
    }
    if (cursor.k !== null) place(cursor.k);
  }

  async function downloadCsv() {
    if (!answered) return;
    const button = $("sweep-csv");
    button.disabled = true;
    try {
      const result = await postSweepCsv(answered.text, answered.asked);
      if (result.ok) saveBlob(result.blob, "frequency-response.csv");
      else fill(out, problemList(result.data));
    } finally {
      button.disabled = false;
    }
  }

  /** The sweep on screen, when it was made for `text` (for the sheet's section). */
  function sheetRequest(text) {
    if (!answered || answered.text !== text) return null;
    const scale = cursor && cursor.svg ? cursor.svg.dataset.magnitude : "auto";
    return {...answered.asked, magnitude: scale};
  }

  form.addEventListener("submit", run);
  $("sweep-filter").addEventListener("input", renderList);
  $("sweep-add").addEventListener("click", addTyped);
  $("sweep-custom").addEventListener("keydown", (e) => {
    if (e.key === "Enter") {
      e.preventDefault();
      addTyped();
    }
  });
  for (const radio of document.querySelectorAll('input[name="sweep-scale"]')) {
    radio.addEventListener("change", () => { if (radio.checked) setScale(radio.value); });
  }
  $("sweep-csv").addEventListener("click", downloadCsv);
  restore();
  return {update, sheetRequest, run};
}

/** Index of the value of ascending `xs` nearest to `x` (binary search). */
export function nearest(xs, x) {
  let lo = 0, hi = xs.length - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] < x) lo = mid; else hi = mid;
  }
  return Math.abs(xs[hi] - x) < Math.abs(xs[lo] - x) ? hi : lo;
}
