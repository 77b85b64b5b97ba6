// What survives a reload: the circuit text and the view settings, in localStorage.
// The text has a key of its own: writing a setting does not rewrite a megabyte of
// circuit, and writing the circuit is one setItem with no JSON around it.

const KEY = "phasorbench.workbench.v1";
const TEXT = "phasorbench.netlist.v1";
// The text is written after this long without an edit, in the browser's idle time: a
// megabyte's write then never lands between two keys of someone typing.
const TEXT_QUIET_MS = 300;
const BIG_TEXT_QUIET_MS = 1500;
const BIG_TEXT = 100_000;

function readSettings() {
  try {
    const saved = JSON.parse(localStorage.getItem(KEY) || "{}");
    return saved && typeof saved === "object" ? saved : {};
  } catch {
    return {};
  }
}

/** The settings kept, with the circuit's text as `netlist` (when there is one). */
export function loadSaved() {
  const saved = readSettings();
  try {
    const text = localStorage.getItem(TEXT);
    if (typeof text === "string") saved.netlist = text;
  } catch {
    // storage disabled: nothing kept
  }
  return saved;
}

export function save(patch) {
  const {netlist, ...rest} = patch;
  try {
    const settings = readSettings();
    // a text kept by an earlier version of the page, beside the settings, moves out
    const older = typeof settings.netlist === "string" && localStorage.getItem(TEXT) === null;
    if (typeof netlist === "string" || older) localStorage.setItem(TEXT, typeof netlist === "string" ? netlist : settings.netlist);
    if (Object.keys(rest).length || "netlist" in settings) {
      delete settings.netlist;
      localStorage.setItem(KEY, JSON.stringify({...settings, ...rest}));
    }
  } catch {
    // Storage full or disabled (private window): the page still works, it just forgets.
  }
}

/**
 * Keep the text `getText()` gives after a quiet spell, in idle time: call the result
 * after each edit; its `flush()` writes a waiting text at once (the page unloading).
 */
export function textSaver(getText) {
  let timer = null;
  let idle = null;
  const idleCall = window.requestIdleCallback || ((fn) => setTimeout(fn, 0));
  const idleCancel = window.cancelIdleCallback || clearTimeout;
  const write = () => {
    timer = idle = null;
    save({netlist: getText()});
  };
  const soon = () => {
    clearTimeout(timer);
    if (idle !== null) idleCancel(idle);
    idle = null;
    const quiet = getText().length > BIG_TEXT ? BIG_TEXT_QUIET_MS : TEXT_QUIET_MS;
    timer = setTimeout(() => { timer = null; idle = idleCall(write, {timeout: 5000}); }, quiet);
  };
  soon.flush = () => {
    if (timer === null && idle === null) return;
    clearTimeout(timer);
    if (idle !== null) idleCancel(idle);
    write();
  };
  return soon;
}

// Named circuits kept in this browser: {name: {text, saved}} under a key of their own, so
// the workbench's settings and the circuits never overwrite each other.
const CIRCUITS = "phasorbench.circuits.v1";

function readCircuits() {
  try {
    const all = JSON.parse(localStorage.getItem(CIRCUITS) || "{}");
    return all && typeof all === "object" && !Array.isArray(all) ? all : {};
  } catch {
    return {};
  }
}

function writeCircuits(all) {
  try {
    localStorage.setItem(CIRCUITS, JSON.stringify(all));
    return true;
  } catch {
    return false;        // storage full or disabled: say so to the person, keep the editor
  }
}

/** Stored circuits, newest first: [{name, saved, size}]. */
export function listCircuits() {
  return Object.entries(readCircuits())
    .filter(([, c]) => c && typeof c.text === "string")
    .map(([name, c]) => ({name, saved: c.saved || "", size: c.text.length}))
    .sort((a, b) => (b.saved > a.saved ? 1 : b.saved < a.saved ? -1 : a.name.localeCompare(b.name)));
}

/** The text of a stored circuit, or null. */
export function loadCircuit(name) {
  const c = readCircuits()[name];
  return c && typeof c.text === "string" ? c.text : null;
}

/** Store `text` as `name` (replacing one of that name); false when storage refused it. */
export function storeCircuit(name, text) {
  const all = readCircuits();
  all[name] = {text, saved: new Date().toISOString()};
  return writeCircuits(all);
}

/** Rename a stored circuit; false when `from` is missing or `to` is taken. */
export function renameCircuit(from, to) {
  const all = readCircuits();
  if (!(from in all) || (to in all && to !== from)) return false;
  const entry = all[from];
  delete all[from];
  all[to] = entry;
  return writeCircuits(all);
}

/** Forget a stored circuit. */
export function deleteCircuit(name) {
  const all = readCircuits();
  delete all[name];
  return writeCircuits(all);
}
