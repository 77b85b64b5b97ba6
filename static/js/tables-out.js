// Tables out: a table of the solved circuit as a CSV file, or on the clipboard as
// tab-separated text (what a spreadsheet pastes into cells).
//
// The text is made on the server (POST /api/table, presentation/tables_out.py), the one
// home of these rows, so the file is the one `phasorbench solve FILE --table T` prints
// (with `--show` as the page's RMS / peak switch stands).

import {shownField} from "./api.js";
import {saveBlob} from "./sheet-export.js";

async function fetchTable(netlist, table, format) {
  let response;
  try {
    response = await fetch("/api/table", {
      method: "POST",
      headers: {"Content-Type": "application/json"},
      // the RMS / peak switch's state: the file says what the screen shows
      body: JSON.stringify({netlist, table, format, ...shownField()}),
    });
  } catch {
    return {ok: false, message: "the server did not answer (is `phasorbench serve` still running?)"};
  }
  if (!response.ok) {
    let message = `the server answered ${response.status}`;
    try {
      const data = await response.json();
      if (data.errors && data.errors.length) message = data.errors[0].message;
    } catch { /* keep the status */ }
    return {ok: false, message};
  }
  return {ok: true, text: await response.text()};
}

/** Put `text` on the clipboard; falls back to a hidden text area where the API is missing. */
async function copyText(text) {
  if (navigator.clipboard && window.isSecureContext) {
    try {
      await navigator.clipboard.writeText(text);
      return true;
    } catch { /* fall back below */ }
  }
  const area = document.createElement("textarea");
  area.value = text;
  area.setAttribute("readonly", "");
  area.style.position = "fixed";
  area.style.opacity = "0";
  document.body.append(area);
  area.select();
  let done = false;
  try { done = document.execCommand("copy"); } catch { done = false; }
  area.remove();
  return done;
}

/**
 * Wire every `button[data-table-out]` (value "csv" or "copy", with `data-table` naming
 * nodes, branches or three-phase). `getText()` resolves to the solved circuit's text (or
 * null when it does not solve); `report(message, kind)` shows the outcome.
 */
export function setupTableButtons(root, getText, report) {
  for (const button of root.querySelectorAll("button[data-table-out]")) {
    button.addEventListener("click", async () => {
      const table = button.dataset.table;
      const copy = button.dataset.tableOut === "copy";
      button.disabled = true;
      try {
        const text = await getText();
        if (text === null) {
          report("The circuit does not solve: fix it before taking its tables out.", "error");
          return;
        }
        const answer = await fetchTable(text, table, copy ? "tsv" : "csv");
        if (!answer.ok) {
          report(`No table: ${answer.message}`, "error");
          return;
        }
        if (!copy) {
          saveBlob(new Blob([answer.text], {type: "text/csv"}), `${table}.csv`);
          return;
        }
        const rows = answer.text.trimEnd().split("\r\n").length - 1;
        report(await copyText(answer.text)
          ? `Copied the ${table} table (${rows} rows, tab-separated) — paste it into a spreadsheet.`
          : "The browser refused the clipboard: use CSV instead.", "note");
      } finally {
        button.disabled = false;
      }
    });
  }
}
