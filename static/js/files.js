// Circuit files: open a .circuit from disk (file picker or dropped on the editor), save
// the editor's text as NAME.circuit, and keep named circuits in this browser (store.js).

import {el} from "./dom.js";
import {deleteCircuit, listCircuits, loadCircuit, loadSaved, renameCircuit, save,
        storeCircuit} from "./store.js";

const $ = (id) => document.getElementById(id);
// A file bigger than the server takes is refused before it is read.
const maxBytes = () => Number(document.body.dataset.maxBodyBytes) || 16 * 1024 * 1024;

/** A name fit for a file: the circuit's own words, without path or odd characters. */
export function fileName(name) {
  const base = String(name || "").replace(/\.circuit$/i, "").replace(/[\\/:*?"<>|\s]+/g, "-")
    .replace(/^[-.]+|[-.]+$/g, "").slice(0, 80);
  return `${base || "circuit"}.circuit`;
}

/** The name the editor's circuit goes by: the one it was opened or stored as, else its title. */
function titleOf(text) {
  const line = text.split("\n").find((l) => /^\s*title\s+/i.test(l));
  return line ? line.replace(/^\s*title\s+/i, "").replace(/#.*$/, "").trim() : "";
}

export function setupFiles({getText, open, say}) {
  let current = typeof loadSaved().circuitName === "string" ? loadSaved().circuitName : "";

  function setName(name) {
    current = name;
    save({circuitName: name});
    $("circuit-name").textContent = name ? name : "";
    $("circuit-name").hidden = !name;
    $("store-name").value = name || titleOf(getText());
  }

  /** Called when the editor's text comes from elsewhere (a sample): no name of its own. */
  function forget() { setName(""); }

  async function openFile(file) {
    if (!file) return;
    if (file.size > maxBytes()) {
      say(`${file.name} is ${file.size} bytes, more than the ${maxBytes()} the server reads.`, "error");
      return;
    }
    const text = await file.text();
    if (text.includes("\u0000")) {
      say(`${file.name} is not a text file: nothing was opened.`, "error");
      return;
    }
    setName(file.name.replace(/\.circuit$/i, ""));
    open(text);
    say(`Opened ${file.name} from disk.`, "note");
  }

  // -- open: the file picker and a drop on the editor --------------------------------
  const picker = $("file-input");
  $("file-open").addEventListener("click", () => picker.click());
  picker.addEventListener("change", () => {
    openFile(picker.files[0]);
    picker.value = "";          // the same file can be opened again after an edit
  });
  const zone = $("editor");
  const isFile = (event) => [...(event.dataTransfer?.types || [])].includes("Files");
  zone.addEventListener("dragover", (event) => {
    if (!isFile(event)) return;
    event.preventDefault();
    event.dataTransfer.dropEffect = "copy";
    zone.classList.add("drop-target");
  });
  zone.addEventListener("dragleave", () => zone.classList.remove("drop-target"));
  zone.addEventListener("drop", (event) => {
    zone.classList.remove("drop-target");
    if (!isFile(event)) return;
    event.preventDefault();
    openFile(event.dataTransfer.files[0]);
  });

  // -- save: a download of the editor's text ------------------------------------------
  $("file-save").addEventListener("click", () => {
    const name = fileName(current || titleOf(getText()));
    const url = URL.createObjectURL(new Blob([getText()], {type: "text/plain;charset=utf-8"}));
    const link = el("a", {href: url, download: name, hidden: true});
    document.body.append(link);
    link.click();
    link.remove();
    setTimeout(() => URL.revokeObjectURL(url), 1000);
  });

  // -- circuits kept in the browser ------------------------------------------------------
  const list = $("store-list");

  function render() {
    const items = listCircuits();
    $("store-count").textContent = items.length ? `(${items.length})` : "";
    if (!items.length) {
      list.replaceChildren(el("li", {class: "placeholder"}, "No circuits stored in this browser yet."));
      return;
    }
    list.replaceChildren(...items.map((item) => {
      const when = item.saved ? new Date(item.saved).toLocaleString([], {dateStyle: "short", timeStyle: "short"}) : "";
      const openButton = el("button", {type: "button", class: "link", "data-act": "open",
                                       title: `open ${item.name} in the editor`}, item.name);
      const row = el("li", {dataset: {name: item.name}, class: item.name === current ? "current" : null},
        openButton, el("span", {class: "hint"}, ` ${when}`),
        el("span", {class: "acts"},
          el("button", {type: "button", class: "small", "data-act": "rename"}, "Rename"),
          el("button", {type: "button", class: "small", "data-act": "delete"}, "Delete")));
      return row;
    }));
  }

  function storeAs() {
    const name = $("store-name").value.trim();
    if (!name) {
      say("Give the circuit a name to store it under.", "error");
      $("store-name").focus();
      return;
    }
    if (!storeCircuit(name, getText())) {
      say("The browser refused to store the circuit (storage full or disabled).", "error");
      return;
    }
    setName(name);
    render();
    say(`Stored “${name}” in this browser.`, "note");
  }

  $("store-form").addEventListener("submit", (event) => { event.preventDefault(); storeAs(); });

  list.addEventListener("click", (event) => {
    const button = event.target.closest("button[data-act]");
    if (!button) return;
    const row = button.closest("li");
    const name = row.dataset.name;
    const act = button.dataset.act;
    if (act === "open") {
      const text = loadCircuit(name);
      if (text === null) { render(); return; }
      setName(name);
      open(text);
      render();
    } else if (act === "delete") {
      if (button.dataset.armed !== "true") {
        // a second press deletes: no dialog box, and no circuit lost to one stray click
        button.dataset.armed = "true";
        button.textContent = "Delete for good?";
        setTimeout(() => { if (button.isConnected) { button.dataset.armed = ""; button.textContent = "Delete"; } }, 4000);
        return;
      }
      deleteCircuit(name);
      if (name === current) setName("");
      render();
      say(`Deleted “${name}” from this browser.`, "note");
    } else if (act === "rename") {
      const input = el("input", {type: "text", value: name, "aria-label": `new name for ${name}`,
                                 class: "rename", spellcheck: "false"});
      const done = (commit) => {
        const to = input.value.trim();
        if (commit && to && to !== name) {
          if (!renameCircuit(name, to)) {
            say(`There is already a circuit named “${to}”: choose another name.`, "error");
            input.focus();
            return;
          }
          if (name === current) setName(to);
        }
        render();
      };
      input.addEventListener("keydown", (e) => {
        if (e.key === "Enter") { e.preventDefault(); done(true); }
        if (e.key === "Escape") { e.preventDefault(); done(false); }
      });
      input.addEventListener("blur", () => { if (input.isConnected) done(true); });
      row.firstChild.replaceWith(input);
      input.focus();
      input.select();
    }
  });

  setName(current);
  render();
  return {forget, setName};
}
