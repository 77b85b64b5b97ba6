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
