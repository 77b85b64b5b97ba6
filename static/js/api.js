// The JSON API of the local server: one function per route.

/** How long the page waits for one answer before saying the server is not answering
 * (the server's `page_timeout_s`, handed over on the page's body). */
export const REQUEST_TIMEOUT_MS = Number(document.body.dataset.requestTimeoutMs) || 60_000;

/** The API's error shape for "no answer": `timedOut` when the time above ran out. */
export function noAnswer(timedOut) {
  const message = timedOut
    ? `the server did not answer within ${Math.round(REQUEST_TIMEOUT_MS / 1000)} s`
    : "the server cannot be reached";
  return {errors: [{line: null, column: null, message,
                    hint: "is `phasorbench serve` still running? The circuit stays in the editor as typed"}],
          warnings: []};
}

/** A signal that aborts on the caller's `signal` or when the request timeout passes. */
export function withTimeout(signal) {
  const timer = AbortSignal.timeout(REQUEST_TIMEOUT_MS);
  return {timer, signal: signal ? AbortSignal.any([signal, timer]) : timer};
}

async function postJSON(path, body, signal) {
  const limit = withTimeout(signal);
  let response, data;
  try {
    response = await fetch(path, {
      method: "POST",
      headers: {"Content-Type": "application/json", "Accept": "application/json"},
      body: JSON.stringify(body),
      signal: limit.signal,
    });
    data = await response.json().catch((err) => {
      if (limit.signal.aborted) throw err;
      return {errors: [{line: null, column: null, message: `the server answered ${response.status} without JSON`, hint: ""}], warnings: []};
    });
  } catch (err) {
    if (signal && signal.aborted) throw err;       // the page's own abort (a newer edit)
    return {ok: false, status: 0, data: noAnswer(limit.timer.aborted)};
  }
  return {ok: response.ok, status: response.status, data};
}

// The page's RMS / peak switch: how the answers' magnitudes are read (null: as the
// circuit's `amplitudes` line says). Every answer that shows magnitudes asks for it.
let shownAs = null;
export function showMagnitudesAs(kind) { shownAs = kind === "rms" || kind === "peak" ? kind : null; }
const show = () => (shownAs ? {show: shownAs} : {});
/** The switch's state as a request field ({show} or nothing): the table and sheet exports ask for it too. */
export const shownField = show;

export const postCheck = (netlist, signal) => postJSON("/api/check", {netlist}, signal);
/** `names`: elements the page shows; the answer's display.present lists those the circuit has. */
export const postSolve = (netlist, signal, names = []) =>
  postJSON("/api/solve", {netlist, contract: false, ...(names.length ? {names} : {}), ...show()}, signal);
/** `window`: {table, start, count, sort, direction, find} (see /docs). */
export const postRows = (netlist, window, signal) => postJSON("/api/rows", {netlist, ...window, ...show()}, signal);
export const postPhasors = (netlist, elements, size, signal) =>
  postJSON("/api/phasors", {netlist, elements, ...size, ...show()}, signal);
export const postWaveforms = (netlist, elements, size, signal) =>
  postJSON("/api/waveforms", {netlist, elements, ...size, ...show()}, signal);
export const postThreePhase = (netlist, group, size, signal) =>
  postJSON("/api/three-phase", {netlist, group, ...size, ...show()}, signal);
/** `ask`: {source, target, leading, at | across, bank, rated_voltage} (see /docs). */
export const postCorrect = (netlist, ask, signal) => postJSON("/api/correct", {netlist, ...ask}, signal);
/** `ask`: {probe, keep, solve_for} (see /docs). */
export const postFormula = (netlist, ask, signal) => postJSON("/api/formula", {netlist, ...ask}, signal);
export const postPort = (netlist, a, b, signal) => postJSON("/api/port", {netlist, a, b}, signal);
/** `ask`: {pcc, nominal, rated: {capacitor: volts}, node, element} (see /docs). */
export const postHarmonics = (netlist, ask, signal) => postJSON("/api/harmonics", {netlist, ...ask}, signal);

/** The tolerance study as a job: start it, poll it, cancel it (see /docs). */
export const startToleranceJob = (netlist, ask) =>
  postJSON("/api/tolerance/jobs", {netlist, ...ask, display: true});
export async function getToleranceJob(job) {
  const limit = withTimeout();
  try {
    const response = await fetch(`/api/tolerance/jobs/${encodeURIComponent(job)}`,
                                 {headers: {"Accept": "application/json"}, signal: limit.signal});
    return {ok: response.ok, status: response.status, data: await response.json()};
  } catch {
    return {ok: false, status: 0, data: noAnswer(limit.timer.aborted)};
  }
}
export async function cancelToleranceJob(job) {
  try {
    await fetch(`/api/tolerance/jobs/${encodeURIComponent(job)}`, {method: "DELETE"});
  } catch {
    // the poll says what happened
  }
}

/** `ask`: {probes, from, to, points, spacing, draw: {width, height, magnitude}, arrays}. */
export const postSweep = (netlist, ask, signal) => postJSON("/api/sweep", {netlist, ...ask}, signal);

/** The sweep as CSV: {ok: true, blob} or {ok: false, status, data: {errors, warnings}}. */
export async function postSweepCsv(netlist, ask) {
  const limit = withTimeout();
  let response, blob;
  try {
    response = await fetch("/api/sweep/csv", {
      method: "POST",
      headers: {"Content-Type": "application/json", "Accept": "text/csv"},
      body: JSON.stringify({netlist, ...ask}),
      signal: limit.signal,
    });
    if (response.ok) blob = await response.blob();
  } catch {
    return {ok: false, status: 0, data: noAnswer(limit.timer.aborted)};
  }
  if (response.ok) return {ok: true, blob};
  let data;
  try {
    data = await response.json();
  } catch {
    data = {errors: [{line: null, column: null, message: `the server answered ${response.status} without a CSV`, hint: ""}], warnings: []};
  }
  return {ok: false, status: response.status, data};
}

export async function getSamples() {
  try {
    const response = await fetch("/api/samples", {headers: {"Accept": "application/json"}});
    return response.ok ? await response.json() : [];
  } catch {
    return [];
  }
}
