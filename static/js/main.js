// The workbench page: wires the editor, the API and the panels together.
//
// State lives in one object; what must survive a reload (the circuit text and the
// view settings) is written to localStorage on every change.

import {getSamples, postCheck, postPhasors, postSolve, postWaveforms} from "./api.js";
import {debounce, el, placeholder} from "./dom.js";
import {createEditor} from "./editor.js";
import {loadSaved, save} from "./store.js";
import {renderFacts, renderSummary} from "./summary.js";
import {markSelected, renderBranchTable, renderNodeTable} from "./tables.js";
import {clearViews, renderPicker, showPhasors, showWaveform} from "./views.js";

const CHECK_DELAY_MS = 350;
const SOURCE_KINDS = new Set(["voltage", "current", "vcvs", "vccs", "ccvs", "cccs"]);
const $ = (id) => document.getElementById(id);

const state = {
  selected: null,        // the element selected everywhere
  shown: [],             // further elements drawn in the phasor diagram
  sort: {key: null, dir: 1},
  answer: null,          // the last successful solve answer
  solvedText: "",        // the text that answer belongs to
  seq: {check: 0, solve: 0, views: 0},
  aborts: {},
};

let editor;
const limit = () => Number(document.body.dataset.maxViewElements) || 12;

function abortable(kind) {
  if (state.aborts[kind]) state.aborts[kind].abort();
  state.aborts[kind] = new AbortController();
  state.seq[kind] += 1;
  return {signal: state.aborts[kind].signal, seq: state.seq[kind]};
}

function ignoreAbort(err) {
  if (err.name !== "AbortError") throw err;
}

// ---- checking and solving -------------------------------------------------------

function showCheckState(errors, warnings) {
  const node = $("check-state");
  if (errors.length) {
    node.className = "check-state bad";
    node.textContent = `✖ ${errors.length} error${errors.length > 1 ? "s" : ""}` +
      (warnings.length ? `, ▲ ${warnings.length} warning${warnings.length > 1 ? "s" : ""}` : "");
  } else if (warnings.length) {
    node.className = "check-state";
    node.textContent = `▲ ${warnings.length} warning${warnings.length > 1 ? "s" : ""}, no errors`;
  } else {
    node.className = "check-state ok";
    node.textContent = "✓ no problems found";
  }
}

function showDiagnostics(errors, warnings) {
  const all = [...errors.map((d) => ({...d, severity: "error"})),
               ...warnings.map((d) => ({...d, severity: "warning"}))];
  editor.setDiagnostics(all);
  showCheckState(errors, warnings);
  const list = $("diagnostics");
  list.replaceChildren(...all.map((d) => {
    const where = d.line ? `line ${d.line}${d.column ? `:${d.column}` : ""}` : "circuit";
    const item = el("li", {class: d.severity, tabindex: "0", dataset: {line: d.line || ""},
                           title: d.line ? "go to this line" : null},
      el("span", {class: "where"}, `${d.severity === "warning" ? "▲" : "✖"} ${where}`),
      el("span", {class: "msg"}, d.message),
      d.hint ? el("span", {class: "fix"}, d.hint) : null);
    const go = () => { if (d.line) editor.focusAt(d.line, d.column || 1); };
    item.addEventListener("click", go);
    item.addEventListener("keydown", (e) => { if (e.key === "Enter") go(); });
    return item;
  }));
}

async function runCheck() {
  const text = editor.getText();
  const {signal, seq} = abortable("check");
  if (!text.trim()) {
    showDiagnostics([], []);
    $("check-state").textContent = "";
    return;
  }
  try {
    const {status, data} = await postCheck(text, signal);
    if (seq !== state.seq.check) return;
    if (status === 200 || status === 422) showDiagnostics(data.errors || [], data.warnings || []);
    else showBanner(problemText(data), "error");
  } catch (err) { ignoreAbort(err); }
}
const scheduleCheck = debounce(runCheck, CHECK_DELAY_MS);

function problemText(data) {
  const first = (data && data.errors && data.errors[0]) || {message: "unknown problem"};
  return first.message + (first.hint ? ` (${first.hint})` : "");
}

/** Say when the results on screen no longer belong to the text in the editor. */
function showEdited() {
  $("edit-state").hidden = !state.answer || editor.getText() === state.solvedText;
}

function showBanner(text, kind) {
  const banner = $("result-banner");
  if (!text) {
    banner.hidden = true;
    return;
  }
  banner.hidden = false;
  banner.className = `banner ${kind === "note" ? "note" : ""}`;
  banner.textContent = text;
}

async function solve() {
  const text = editor.getText();
  if (!text.trim()) return;
  scheduleCheck.flush();
  const {signal, seq} = abortable("solve");
  $("solve").disabled = true;
  try {
    const {ok, status, data} = await postSolve(text, signal);
    if (seq !== state.seq.solve) return;
    if (ok) {
      state.answer = data;
      state.solvedText = text;
      showEdited();
      $("results").classList.remove("stale");
      const warnings = data.display.warnings;
      showBanner(warnings.length ? `Solved with ${warnings.length} warning${warnings.length > 1 ? "s" : ""}: ${warnings.join("; ")}` : "", "note");
      renderResults();
    } else if (status === 422) {
      showDiagnostics(data.errors || [], data.warnings || []);
      $("results").classList.toggle("stale", Boolean(state.answer));
      showBanner(`Not solved: ${problemText(data)}` +
        (state.answer ? " — the results below are from the last circuit that solved." : ""), "error");
    } else {
      showBanner(`Not solved: ${problemText(data)}`, "error");
    }
  } catch (err) {
    ignoreAbort(err);
  } finally {
    if (seq === state.seq.solve) $("solve").disabled = false;
  }
}

// ---- results ----------------------------------------------------------------------

function elementNames() {
  return state.answer ? state.answer.display.elements.map((r) => r.name) : [];
}

function renderResults() {
  const display = state.answer.display;
  const names = elementNames();
  if (!names.includes(state.selected)) {
    // Start on the first element that is not a source: its waveform tells more.
    const first = display.elements.find((r) => !SOURCE_KINDS.has(r.kind));
    state.selected = first ? first.name : names[0] || null;
  }
  state.shown = state.shown.filter((n) => names.includes(n) && n !== state.selected);
  save({selected: state.selected, shown: state.shown});
  renderFacts(display.facts);
  renderBranchTable($("branch-table"), display, {
    selected: state.selected, sort: state.sort, onSelect: select, onSort: sortBy,
  });
  renderNodeTable($("node-table"), display);
  renderSummary(display.summary);
  renderPickerNow();
  loadViews();
}

function renderPickerNow() {
  renderPicker($("phasor-picker"), elementNames(), {
    shown: state.shown, selected: state.selected, limit: limit(),
    onChange(shown) {
      state.shown = shown;
      save({shown});
      loadViews({waveform: false});
    },
  });
}

function sortBy(sort) {
  state.sort = sort;
  save({sort});
  renderBranchTable($("branch-table"), state.answer.display, {
    selected: state.selected, sort: state.sort, onSelect: select, onSort: sortBy,
  });
  const th = document.querySelector(`#branch-table th[data-key="${sort.key}"] button`);
  if (th) th.focus();
}

function select(name, {focus = false} = {}) {
  if (!state.answer || !elementNames().includes(name)) return;
  const changed = name !== state.selected;
  state.selected = name;
  state.shown = state.shown.filter((n) => n !== name);
  save({selected: name, shown: state.shown});
  markSelected($("branch-table"), name, {focus});
  if (changed) {
    renderPickerNow();
    loadViews();
  }
}

/**
 * Picture sizes that fit their panels, so the server draws text at its true size
 * instead of the browser shrinking a fixed-size picture.
 */
function pictureSizes() {
  const clamp = (x, lo, hi) => Math.round(Math.max(lo, Math.min(hi, x)));
  const tall = window.innerHeight * 0.58;
  const pw = $("phasor-drawing").clientWidth || 480;
  const side = clamp(Math.min(pw, tall), 300, 900);
  const ww = clamp($("waveform-drawing").clientWidth || 600, 360, 1600);
  return {phasor: {width: clamp(pw, 300, 1600), height: side},
          waveform: {width: ww, height: clamp(Math.min(ww * 0.6, tall), 280, 560)}};
}

let lastWidths = "";
const onResize = debounce(() => {
  const sizes = pictureSizes();
  const widths = `${sizes.phasor.width}x${sizes.phasor.height}/${sizes.waveform.width}x${sizes.waveform.height}`;
  if (widths !== lastWidths && state.answer) loadViews();
  lastWidths = widths;
}, 250);

async function loadViews({waveform = true} = {}) {
  const name = state.selected;
  if (!name) {
    clearViews($("phasor-drawing"), $("waveform-drawing"), $("waveform-facts"),
               $("phasor-readout"), "Select an element to draw it.");
    return;
  }
  const {signal, seq} = abortable("views");
  const text = state.solvedText;
  const names = [name, ...state.shown].slice(0, limit());
  $("waveform-element").textContent = `of ${name}`;
  const sizes = pictureSizes();
  const phasorJob = postPhasors(text, names, sizes.phasor, signal).then(({ok, data}) => {
    if (seq !== state.seq.views) return;
    if (ok) showPhasors($("phasor-drawing"), $("phasor-readout"), data.svg, {onSelect: select});
    else placeholder($("phasor-drawing"), `No diagram: ${problemText(data)}`);
  });
  const waveJob = !waveform ? Promise.resolve() : postWaveforms(text, [name], sizes.waveform, signal).then(({ok, data}) => {
    if (seq !== state.seq.views) return;
    if (ok) showWaveform($("waveform-drawing"), $("waveform-facts"), data.elements[name]);
    else placeholder($("waveform-drawing"), `No waveform: ${problemText(data)}`);
  });
  try {
    await Promise.all([phasorJob, waveJob]);
  } catch (err) { ignoreAbort(err); }
}

// ---- samples and start-up ---------------------------------------------------------

async function fillSamples() {
  const samples = await getSamples();
  const menu = $("samples");
  for (const s of samples) menu.append(el("option", {value: s.name}, s.title));
  menu.addEventListener("change", () => {
    const sample = samples.find((s) => s.name === menu.value);
    if (!sample) return;
    loadText(sample.netlist, sample.name);
    menu.value = "";
    solve();
  });
  return samples;
}

function loadText(text, sampleName = "") {
  editor.setText(text);
  save({netlist: text, sample: sampleName});
  scheduleCheck();
}

function setupCautions(open) {
  const footer = $("cautions");
  const toggle = $("cautions-toggle");
  const show = (on) => {
    footer.classList.toggle("open", on);
    toggle.setAttribute("aria-expanded", on ? "true" : "false");
    save({cautionsOpen: on});
  };
  show(open);
  toggle.addEventListener("click", () => show(!footer.classList.contains("open")));
  $("caution-list").addEventListener("click", () => { if (!footer.classList.contains("open")) show(true); });
}

async function init() {
  editor = createEditor({textarea: $("editor-text"), gutter: $("gutter"), backdrop: $("backdrop")});
  const saved = loadSaved();
  state.selected = saved.selected || null;
  state.shown = Array.isArray(saved.shown) ? saved.shown : [];
  if (saved.sort && typeof saved.sort === "object") state.sort = saved.sort;

  const textarea = $("editor-text");
  const remember = debounce(() => save({netlist: editor.getText()}), 200);
  textarea.addEventListener("input", () => {
    remember();
    scheduleCheck();
    showEdited();
  });
  window.addEventListener("beforeunload", () => remember.flush());
  document.addEventListener("keydown", (event) => {
    if ((event.ctrlKey || event.metaKey) && event.key === "Enter") {
      event.preventDefault();
      solve();
    }
  });
  $("solve").addEventListener("click", solve);
  window.addEventListener("resize", onResize);
  setupCautions(saved.cautionsOpen === true);
  clearViews($("phasor-drawing"), $("waveform-drawing"), $("waveform-facts"),
             $("phasor-readout"), "Solve a circuit, then select an element to draw it.");

  const samples = await fillSamples();
  if (typeof saved.netlist === "string" && saved.netlist.trim()) {
    editor.setText(saved.netlist);
  } else if (samples.length) {
    const wanted = document.body.dataset.initialSample;
    const sample = samples.find((s) => s.name === wanted) || samples[0];
    editor.setText(sample.netlist);
    save({netlist: sample.netlist, sample: sample.name});
  }
  if (editor.getText().trim()) {
    scheduleCheck();
    scheduleCheck.flush();           // one check now, none left waiting
    await solve();
  }
  document.body.dataset.ready = "true";
}

init();
