// Export sheet: ask the server for the solved sheet of a circuit and save it as a file.
//
// The sheet is made on the server (POST /api/sheet) from the same data as the page,
// so the file saved here is the one `phasorbench sheet FILE` writes.

import {noAnswer, shownField, withTimeout} from "./api.js";

const FALLBACK_NAME = "circuit-sheet.html";

/** The file name of a Content-Disposition header, or the fallback. */
export function attachmentName(header) {
  const match = /filename="([^"]+)"/.exec(header || "");
  // The server sends only [a-z0-9-] names; anything else is refused here too.
  return match && /^[A-Za-z0-9._-]+$/.test(match[1]) ? match[1] : FALLBACK_NAME;
}

/** Save `blob` as a download named `name`. */
export function saveBlob(blob, name) {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = name;
  link.hidden = true;
  document.body.append(link);
  link.click();
  link.remove();
  // Let the download start before the blob's address is given up.
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

async function errorsOf(response) {
  try {
    return await response.json();
  } catch {
    return {errors: [{line: null, column: null,
                      message: `the server answered ${response.status} without a sheet`, hint: ""}],
            warnings: []};
  }
}

/**
 * Export the solved sheet of `netlist`, drawing the `elements` chosen on the page
 * (an empty or missing list takes the sheet's default set). `tools` may carry the
 * page's power tools as their panels asked for them: `correct` (the body of
 * POST /api/correct without `netlist`), `port` ({a, b}) and `sweep` (the frequency
 * response tab's {probes, from, to, points, spacing, magnitude}); the sheet then shows them.
 *
 * Resolves to {ok: true, filename} once the download has started, or to
 * {ok: false, status, data} with the API's {errors, warnings} (422 for a circuit with
 * errors, 0 when the server did not answer) for the page to show.
 */
export async function exportSheet(netlist, elements, tools = {}) {
  const body = {netlist, ...shownField()};   // magnitudes as the RMS / peak switch reads them
  if (Array.isArray(elements) && elements.length) body.elements = elements;
  if (tools.correct) body.correct = tools.correct;
  if (tools.port) body.port = tools.port;
  if (tools.tolerance) body.tolerance = tools.tolerance;
  if (tools.sweep) body.sweep = tools.sweep;
  if (tools.formula) body.formula = tools.formula;
  if (tools.harmonics) body.harmonics = tools.harmonics;
  const limit = withTimeout();
  let response, blob;
  try {
    response = await fetch("/api/sheet", {
      method: "POST",
      headers: {"Content-Type": "application/json", "Accept": "text/html"},
      body: JSON.stringify(body),
      signal: limit.signal,
    });
    if (!response.ok) return {ok: false, status: response.status, data: await errorsOf(response)};
    blob = await response.blob();
  } catch {
    return {ok: false, status: 0, data: noAnswer(limit.timer.aborted)};
  }
  const filename = attachmentName(response.headers.get("Content-Disposition"));
  saveBlob(blob, filename);
  return {ok: true, filename};
}
