// What survives a reload: the circuit text and the view settings, in localStorage.

const KEY = "phasorbench.workbench.v1";

export function loadSaved() {
  try {
    const saved = JSON.parse(localStorage.getItem(KEY) || "{}");
    return saved && typeof saved === "object" ? saved : {};
  } catch {
    return {};
  }
}

export function save(patch) {
  try {
    localStorage.setItem(KEY, JSON.stringify({...loadSaved(), ...patch}));
  } catch {
    // Storage full or disabled (private window): the page still works, it just forgets.
  }
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
