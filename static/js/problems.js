// What the page says about the circuit and the server: the problems list under the
// editor (each item goes to its line), the check's state beside the heading, and the
// banner over the results. The messages are the server's; only their places are here.

import {el} from "./dom.js";

const $ = (id) => document.getElementById(id);

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

export function showDiagnostics(editor, errors, warnings) {
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

/** The server did not answer (status 0), was busy (503) or failed (5xx): not the circuit. */
export function serverFault(status) {
  return status === 0 || status >= 500;
}

/** Say, where the check's state shows, that nothing is known of the text right now. */
export function showServerSilent(data, status) {
  const node = $("check-state");
  node.className = "check-state bad";
  const busy = status === 503;
  node.textContent = busy ? "? not checked: the server is busy" : "? not checked: the server is not answering";
  showBanner(busy ? `The server is busy: ${problemText(data)}.`
                  : `The server is not answering: ${problemText(data)}.`, "error");
}

/** The first error's message and hint, as one line. */
export function problemText(data) {
  const first = (data && data.errors && data.errors[0]) || {message: "unknown problem"};
  return first.message + (first.hint ? ` (${first.hint})` : "");
}

/** The banner over the results: `text` (none hides it), an error unless `kind` is "note". */
export function showBanner(text, kind) {
  const banner = $("result-banner");
  if (!text) {
    banner.hidden = true;
    return;
  }
  banner.hidden = false;
  banner.className = `banner ${kind === "note" ? "note" : ""}`;
  banner.textContent = text;
}
