// The workbench page: wires the editor, the API and the panels together.
//
// State lives in one object; what must survive a reload (the circuit text and the
// view settings) is written to localStorage on every change.

import {getSamples, postCheck, postPhasors, postRows, postSolve, postWaveforms,
        showMagnitudesAs} from "./api.js";
import {setupCautions} from "./cautions-bar.js";
import {createCorrection} from "./correction.js";
import {debounce, el, placeholder} from "./dom.js";
import {createEditor} from "./editor.js";
import {createHarmonics} from "./harmonics.js";
import {createPort} from "./port.js";
import {problemText, serverFault, showBanner, showDiagnostics, showServerSilent} from "./problems.js";
import {setupFiles} from "./files.js";
import {exportSheet} from "./sheet-export.js";
import {setupTableButtons} from "./tables-out.js";
import {loadSaved, save, textSaver} from "./store.js";
import {renderFacts, renderSummary} from "./summary.js";
import {markSelected, renderBranchTable, renderNodeTable} from "./tables.js";
import {createSweep} from "./sweep.js";
import {createThreePhase} from "./threephase.js";
import {createTolerance} from "./tolerance.js";
import {createFormula} from "./formula.js";
import {createTabs} from "./tools.js";
import {clearViews, renderPicker, showPhasors, showWaveform} from "./views.js";

const CHECK_DELAY_MS = 350;
const FIND_DELAY_MS = 200;
const MAX_ASKED = 100;        // element names one solve may ask about (POST /api/solve's bound)
const SOURCE_KINDS = new Set(["voltage", "current", "vcvs", "vccs", "ccvs", "cccs"]);
const $ = (id) => document.getElementById(id);

const state = {
  selected: null,        // the element selected everywhere
  shown: [],             // further elements drawn in the phasor diagram
  sort: {key: null, dir: 1},
  expanded: [],          // three-phase blocks whose phase rows are open in the branch table
  find: "",              // the branch table's filter text
  answer: null,          // the last successful solve answer
  solvedText: "",        // the text that answer belongs to
  seq: {check: 0, solve: 0, views: 0},
  aborts: {},
  failure: null,         // why the last solve did not succeed: {server: bool, text}
};

let editor;
let files;               // opening, saving and storing circuits (files.js)
let tools;               // the Tools panel: {tabs, correction, port, sweep, threePhase}
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

async function runCheck() {
  const text = editor.getText();
  const {signal, seq} = abortable("check");
  if (!text.trim()) {
    showDiagnostics(editor, [], []);
    $("check-state").textContent = "";
    return;
  }
  try {
    const {status, data} = await postCheck(text, signal);
    if (seq !== state.seq.check) return;
    if (status === 200 || status === 422) showDiagnostics(editor, data.errors || [], data.warnings || []);
    else if (serverFault(status)) showServerSilent(data, status);
    else showBanner(problemText(data), "error");
  } catch (err) { ignoreAbort(err); }
}
const scheduleCheck = debounce(runCheck, CHECK_DELAY_MS);

/**
 * The circuit's text as last solved for a tool, saying `working` in `out` meanwhile;
 * null (with the reason in `out`) when it does not solve or the server did not answer,
 * and null too when `isCurrent()` says a later request of the tool took over.
 */
async function solvedFor(out, working, isCurrent) {
  placeholder(out, working);
  const text = await solvedText();
  if (!isCurrent()) return null;
  if (text === null) placeholder(out, whyNotSolved());
  return text;
}

/** Why the tools and Export have no solved circuit: the circuit, or the server. */
function whyNotSolved() {
  if (state.failure && state.failure.server) {
    return `No answer from the server (${state.failure.text}): nothing was solved; the circuit is kept in the editor.`;
  }
  return "The circuit does not solve: fix it first (see the problems under the editor).";
}

/** Say when the results on screen no longer belong to the text in the editor. */
function showEdited() {
  const edited = Boolean(state.answer) && editor.getText() !== state.solvedText;
  $("edit-state").hidden = !edited;
  // the header's title is the solved circuit's: say so while the editor holds another
  $("fact-title").classList.toggle("stale", edited);
  $("fact-title").title = edited ? "the title of the circuit as last solved (edited since)" : "";
}

async function solve() {
  const text = editor.getText();
  if (!text.trim()) return false;
  // The solve reads the text once and answers with its diagnostics too: no check of
  // the same text beside it (one parse and one solve per action).
  scheduleCheck.cancel();
  abortable("check");
  const {signal, seq} = abortable("solve");
  $("solve").disabled = true;
  try {
    const asked = [state.selected, ...state.shown].filter(Boolean).slice(0, MAX_ASKED);
    const {ok, status, data} = await postSolve(text, signal, asked);
    if (seq !== state.seq.solve) return;
    state.failure = ok ? null : {server: serverFault(status), text: problemText(data)};
    if (ok) {
      state.answer = data;
      state.solvedText = text;
      showDiagnostics(editor, [], data.warnings || []);
      showEdited();
      $("results").classList.remove("stale");
      const warnings = data.display.warnings;
      showBanner(warnings.length ? `Solved with ${warnings.length} warning${warnings.length > 1 ? "s" : ""}: ${warnings.join("; ")}` : "", "note");
      await renderResults();
      return true;
    } else if (status === 422) {
      showDiagnostics(editor, data.errors || [], data.warnings || []);
      $("results").classList.toggle("stale", Boolean(state.answer));
      showBanner(`Not solved: ${problemText(data)}` +
        (state.answer ? " — the results below are from the last circuit that solved." : ""), "error");
    } else if (serverFault(status)) {
      $("results").classList.toggle("stale", Boolean(state.answer));
      showServerSilent(data, status);
    } else {
      showBanner(`Not solved: ${problemText(data)}`, "error");
    }
  } catch (err) {
    ignoreAbort(err);
  } finally {
    if (seq === state.seq.solve) $("solve").disabled = false;
  }
  return false;
}

/**
 * The text the tools work on: the circuit as last solved, solving the editor's text
 * first when it has changed. Null when it does not solve.
 */
async function solvedText() {
  if (!state.answer || editor.getText() !== state.solvedText) {
    if (!(await solve())) return null;
  }
  return state.solvedText;
}

/**
 * Append a correction's capacitor line(s) to the circuit it was sized for, then solve.
 * Refused (false) when the editor's text is no longer that circuit.
 */
async function appendLines(forText, comment, lines) {
  if (editor.getText() !== forText) return false;
  const text = `${forText.replace(/\s*$/, "")}\n\n${comment}\n${lines.join("\n")}\n`;
  editor.setText(text);
  save({netlist: text});
  editor.focusAt(text.split("\n").length - 1, 1);
  scheduleCheck();
  return solve();
}

// ---- results ----------------------------------------------------------------------

function elementNames() {
  return state.answer ? state.answer.display.elements.map((r) => r.name) : [];
}

/** Whether the solve said `name` is an element: among its rows, or among the names it was asked about. */
function known(name) {
  const display = state.answer && state.answer.display;
  return Boolean(display && name) && (elementNames().includes(name) || (display.present || []).includes(name));
}

/** Whether `name` is an element of the circuit on screen (a big one's rows are not all here). */
function isElement(name) {
  if (!state.answer || !name) return false;
  return state.answer.display.rows_partial || elementNames().includes(name);
}

/** A window of the solved circuit's branch or node table, in the order shown. */
async function fetchRows({table, start, count, expanded = []}) {
  const window = {table, start, count, find: table === "elements" ? state.find : ""};
  if (table === "elements" && expanded.length) window.expanded = expanded;
  if (table === "elements" && state.sort.key) Object.assign(window, {sort: state.sort.key, direction: state.sort.dir});
  const {ok, data} = await postRows(state.solvedText, window);
  if (!ok) throw new Error(problemText(data));
  if (table === "elements") showCount(data.matched ?? data.total);
  return data;
}

function showCount(total) {
  const display = state.answer && state.answer.display;
  $("branch-count").textContent = !display || !state.find ? "" :
    `${total} of ${display.element_total}`;
}

function tableOptions() {
  return {selected: state.selected, sort: state.sort, expanded: state.expanded, find: state.find,
          onSelect: select, onSort: sortBy, onToggle: toggleGroup, fetchRows};
}

function drawBranchTable() {
  renderBranchTable($("branch-table"), state.answer.display, tableOptions());
}

let drawing = 0;          // the results drawing under way (a newer one stops an older)
/** Let the browser draw and take input between the parts of a big page's drawing. */
const breathe = () => (globalThis.scheduler && scheduler.yield ? scheduler.yield()
                       : new Promise((resolve) => setTimeout(resolve, 0)));

/**
 * Draw the answer: the facts and the branch table first, then the node table and the
 * summary, then the views' pickers and the tools, each part a task of its own (at
 * 30,000 elements the whole took one task of ~230 ms). Resolves when all is drawn,
 * or when a later answer's drawing took over.
 */
async function renderResults() {
  const turn = ++drawing;
  const display = state.answer.display;
  const names = elementNames();
  if (!known(state.selected)) {
    // Start on the first element that is not a source: its waveform tells more.
    const first = display.elements.find((r) => !SOURCE_KINDS.has(r.kind));
    state.selected = first ? first.name : names[0] || null;
  }
  state.shown = state.shown.filter((n) => known(n) && n !== state.selected);
  const blocks = (display.groups || []).map((g) => g.name);
  $("blocks-csv").hidden = $("blocks-copy").hidden = blocks.length === 0;
  state.expanded = state.expanded.filter((n) => blocks.includes(n));
  const owner = blockOf(state.selected);
  if (owner && !state.expanded.includes(owner)) state.expanded.push(owner);
  save({selected: state.selected, shown: state.shown, expanded: state.expanded});
  renderFacts(display.facts);
  markMagnitudes(display.facts.amplitudes_shown);
  $("branch-table").closest(".table-wrap").scrollTop = 0;
  drawBranchTable();
  showCount(display.element_total);
  await breathe();
  if (turn !== drawing) return;
  renderNodeTable($("node-table"), display, {fetchRows});
  renderSummary(display.summary);
  await breathe();
  if (turn !== drawing) return;
  renderPickerNow();
  updateTools(display.tools);
  await breathe();
  if (turn !== drawing) return;
  loadViews();
}

function updateTools(choices) {
  tools.correction.update(choices);
  tools.port.update(choices);
  tools.sweep.update(choices);
  tools.harmonics.update(choices, state.answer.display.elements);
  tools.threePhase.update(choices.groups, state.solvedText);
  const threePhase = choices.groups.length > 0;
  tools.tabs.offer("three-phase", threePhase);
  // The tab the circuit calls for (the three-phase view of blocks, the correction of a
  // mains supply drawing real power, else none), or the one picked for such a circuit.
  tools.tabs.open(choices.suggested);
}

/** The three-phase block an element belongs to, or null. */
function blockOf(name) {
  if (!state.answer || !name) return null;
  const g = (state.answer.display.groups || []).find((b) => b.elements.includes(name));
  return g ? g.name : null;
}

/** Open or close a block's phase rows; opening one also draws it in the three-phase view. */
function toggleGroup(name) {
  const open = state.expanded.includes(name);
  state.expanded = open ? state.expanded.filter((n) => n !== name) : [...state.expanded, name];
  save({expanded: state.expanded});
  drawBranchTable();
  const row = document.querySelector(`#branch-table tr[data-group="${CSS.escape(name)}"]`);
  if (row) {
    for (const tr of $("branch-table").tBodies[0].rows) tr.tabIndex = tr === row ? 0 : -1;
    row.focus({preventScroll: true});
  }
  if (!open) {
    tools.threePhase.choose(name);
    if (tools.tabs.current === "three-phase") tools.threePhase.load();
    else tools.tabs.show("three-phase");
  }
}

function renderPickerNow() {
  renderPicker($("phasor-picker"), elementNames(), {
    shown: state.shown, selected: state.selected, limit: limit(),
    total: state.answer.display.element_total, accepts: isElement,
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
  $("branch-table").closest(".table-wrap").scrollTop = 0;
  drawBranchTable();
  const th = document.querySelector(`#branch-table th[data-key="${sort.key}"] button`);
  if (th) th.focus();
}

function select(name, {focus = false} = {}) {
  if (!isElement(name)) return;
  const changed = name !== state.selected;
  state.selected = name;
  state.shown = state.shown.filter((n) => n !== name);
  save({selected: name, shown: state.shown});
  const owner = blockOf(name);
  if (owner && !state.expanded.includes(owner)) {
    // A phase of a closed block: open it so the selected row can be seen.
    state.expanded = [...state.expanded, owner];
    save({expanded: state.expanded});
    drawBranchTable();
  }
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
  if (widths !== lastWidths && state.answer) {
    loadViews();
    if (tools.tabs.current === "three-phase") tools.threePhase.load();
  }
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

/** The RMS / peak switch shows which way the magnitudes on screen are read. */
function markMagnitudes(shown) {
  for (const b of document.querySelectorAll("#amps-switch button")) {
    b.setAttribute("aria-pressed", b.dataset.amps === shown ? "true" : "false");
  }
}

/** Read the answer's magnitudes the other way: the tables, summary and pictures again. */
async function switchMagnitudes(kind) {
  showMagnitudesAs(kind);
  save({magnitudes: kind});
  if (!state.answer) { markMagnitudes(kind); return; }
  const {signal, seq} = abortable("solve");
  try {
    const {ok, data} = await postSolve(state.solvedText, signal);
    if (seq !== state.seq.solve) return;
    if (!ok) { showBanner(`Not shown: ${problemText(data)}`, "error"); return; }
    state.answer = data;
    await renderResults();
    if (tools.tabs.current === "three-phase") tools.threePhase.load();
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
    files.forget();
    loadText(sample.netlist, sample.name);
    menu.value = sample.name;   // it keeps naming the sample until the text is edited
    solve();
  });
  return samples;
}

function loadText(text, sampleName = "") {
  editor.setText(text);
  save({netlist: text, sample: sampleName});
  scheduleCheck();
}

function setupTools() {
  const threePhase = createThreePhase({onSelect: (name) => select(name, {focus: false})});
  tools = {
    threePhase,
    correction: createCorrection({solvedFor, onAppend: appendLines}),
    port: createPort({solvedFor}),
    tolerance: createTolerance({solvedFor}),
    sweep: createSweep({solvedFor}),
    formula: createFormula({solvedFor}),
    harmonics: createHarmonics({solvedFor}),
    tabs: createTabs($("tool-tabs"), {
      onShow(name) { if (name === "three-phase" && state.answer) threePhase.load(); },
    }),
  };
  tools.tabs.close();          // until a solve says which tab the circuit calls for
}

/**
 * Export sheet: the solved sheet of the circuit as last solved (solving first when the
 * editor has changed), drawing the elements chosen on the page and the power tools'
 * results shown for that same circuit.
 */
async function exportCurrentSheet() {
  const button = $("export-sheet");
  button.disabled = true;
  try {
    const text = await solvedText();
    if (text === null) {
      showBanner(state.failure && state.failure.server ? whyNotSolved()
        : "The circuit does not solve: fix it before exporting the sheet.", "error");
      return;
    }
    // The sheet `phasorbench sheet FILE` writes: its default diagrams unless the person
    // added elements to the views (then those, as `--element` would); the selected
    // row alone does not narrow the sheet.
    const names = state.shown.length ? [state.selected, ...state.shown].filter(Boolean) : [];
    const result = await exportSheet(text, names, {
      correct: tools.correction.sheetRequest(text),
      port: tools.port.sheetRequest(text),
      tolerance: tools.tolerance.sheetRequest(text),
      sweep: tools.sweep.sheetRequest(text),
      formula: tools.formula.sheetRequest(text),
      harmonics: tools.harmonics.sheetRequest(text),
    });
    if (!result.ok) {
      const data = result.data || {};
      if (serverFault(result.status)) {
        showBanner(`No sheet: the server is not answering (${problemText(data)}).`, "error");
      } else {
        showDiagnostics(editor, data.errors || [], data.warnings || []);
        showBanner(`No sheet: ${problemText(data)}`, "error");
      }
    }
  } finally {
    button.disabled = false;
  }
}

async function init() {
  const remember = textSaver(() => editor.getText());
  editor = createEditor({
    textarea: $("editor-text"), scroller: $("editor-scroll"), gutter: $("gutter"), backdrop: $("backdrop"),
    findBar: $("find-bar"), findOpener: $("find-open"),
    onChange() {                        // typed, pasted, cut, undone or redone
      if ($("samples").value) $("samples").value = "";    // the editor no longer holds the sample as loaded
      remember();
      scheduleCheck();
      showEdited();
    },
  });
  const saved = loadSaved();
  showMagnitudesAs(saved.magnitudes);
  for (const b of document.querySelectorAll("#amps-switch button")) {
    b.addEventListener("click", () => switchMagnitudes(b.dataset.amps));
  }
  state.selected = saved.selected || null;
  state.shown = Array.isArray(saved.shown) ? saved.shown : [];
  state.expanded = Array.isArray(saved.expanded) ? saved.expanded.filter((n) => typeof n === "string") : [];
  setupTools();
  files = setupFiles({
    getText: () => editor.getText(),
    open(text) {                        // a file from disk or a stored circuit
      loadText(text);
      $("samples").value = "";
      showEdited();
      solve();
    },
    say: showBanner,
  });
  if (saved.sort && typeof saved.sort === "object") state.sort = saved.sort;

  window.addEventListener("beforeunload", () => remember.flush());
  document.addEventListener("keydown", (event) => {
    if ((event.ctrlKey || event.metaKey) && event.key === "Enter") {
      event.preventDefault();
      solve();
    }
  });
  $("solve").addEventListener("click", solve);
  const find = $("branch-find");
  find.addEventListener("input", debounce(() => {
    state.find = find.value;
    if (!state.answer) return;
    $("branch-table").closest(".table-wrap").scrollTop = 0;
    drawBranchTable();
    if (!state.answer.display.rows_partial) showCount(document.querySelectorAll("#branch-table tbody tr[data-element]").length);
  }, FIND_DELAY_MS));
  $("export-sheet").addEventListener("click", exportCurrentSheet);
  setupTableButtons(document, solvedText, showBanner);
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
  // the menu names the sample in the editor, while its text is the sample's own
  const current = loadSaved();
  const shown = samples.find((s) => s.name === current.sample && s.netlist === editor.getText());
  if (shown) $("samples").value = shown.name;
  if (editor.getText().trim()) {
    await solve();                      // its answer holds the diagnostics too
  }
  document.body.dataset.ready = "true";
}

init();
