// Prism Desk page: collects input, asks the worker, shows the answer.
// JavaScript never computes optics here: every figure comes from the core.
import { Messenger } from "./messenger.js";
import { CaseForm, pathInWords } from "./form.js";
import { el, renderCautions, renderPrintSummary, renderResult, renderTransposed } from "./results.js";
import * as store from "./store.js";
import { setUpZone } from "./zone.js";
import { readDocument, wrongKind } from "./documents.js";

const DEBOUNCE_MS = 150;
const $ = (selector) => document.querySelector(selector);

const boot = self.prismBoot || { worker: null, early: [], error: "boot.js did not run" };
// Before anything is written: an unreadable store is kept aside, an older one upgraded.
const storage = store.openStorage();
const engineLine = $("#engine");
const results = $("#results");
const statusLine = $("#result-status");
const body = $("#result-body");

// Shared with other screens (they import these from this module).
export const messenger = new Messenger(boot.worker, {
  early: boot.early,
  earlyError: boot.error,
  onEvent: (msg) => {
    if (msg.event === "failed") engineFailed(msg.error);
    if (msg.event === "stopped") engineStopped(msg.error);
    if (msg.event === "progress") downloadProgress(msg);
    if (msg.event === "timings") self.prismEngineTimings = msg.timings; // read by bench/web_bench.py
  },
});

const caseForm = new CaseForm($("#case-form"), $("#point-row"));
// Lens designs, reading zone and remedies (zone.js): a part of the form and of the results.
const zone = setUpZone({ caseForm, loadCase: (doc, message) => loadCase(doc, message), say: (text) => say(text),
  form: $("#case-form"), results, statusLine, body });
let lastGood = null; // {doc, result}
let marked = []; // inputs marked invalid
const touched = new Set(); // inputs the user has edited
let firstResultShown = false;
let printPending = false;

function drawPrintSummary() {
  if (printPending && lastGood) renderPrintSummary($("#print-summary"), lastGood.doc, lastGood.result);
  printPending = false;
}
window.addEventListener("beforeprint", drawPrintSummary);

// ---------------------------------------------------------------- engine status
function whenReady() {
  messenger.ready.then((msg) => {
    self.prismEngineTimings = msg.timings; // read by bench/web_bench.py
    document.body.dataset.engineStart = msg.start || "boot";
    engineLine.dataset.state = "ready";
    engineLine.textContent = "Calculator ready" + (msg.version ? " · core " + msg.version.version : "");
    engineAction(null);
    downloads.clear();
    $("#first-visit")?.remove();
  }, () => {});
}
whenReady();

// A button beside the engine line in the header (Reload or Restart), or none.
function engineAction(label, run) {
  $("#engine-action")?.remove();
  if (!label) return;
  const button = el("button", { type: "button", id: "engine-action", class: "engine-action", text: label });
  button.addEventListener("click", run);
  engineLine.after(button);
}

// First visit: what is being fetched and how much is left (the worker's progress events).
const downloads = new Map(); // file -> {what, loaded, total}
let progressShownAt = 0;
function downloadProgress(msg) {
  if (messenger.state !== "starting") return;
  downloads.set(msg.file, msg);
  if (!progressShownAt) progressShownAt = performance.now();
  let left = 0;
  let total = 0;
  for (const d of downloads.values()) {
    left += Math.max(0, d.total - d.loaded);
    total += d.total;
  }
  // Files already on the device arrive at once; show the line only for a real download.
  if (performance.now() - progressShownAt < 300 && left > 0 && !$("#first-visit")) return;
  const mb = (n) => (n / 1048576).toFixed(1);
  const current = [...downloads.values()].find((d) => d.loaded < d.total) || msg;
  let line = $("#first-visit");
  if (!line) {
    line = el("div", { id: "first-visit", class: "first-visit", role: "status" },
      el("p", { class: "fetching" }),
      el("p", { class: "later", text: "The calculator is downloaded once, on this first visit; later visits start in about a second, also offline." }));
    $(".masthead").after(line);
  }
  line.querySelector(".fetching").textContent = left > 0
    ? `Fetching ${current.what} (${current.file}): ${mb(left)} MB of ${mb(total)} MB left.`
    : "Downloaded; starting the calculator…";
  engineLine.textContent = left > 0 ? `Downloading · ${mb(left)} MB left` : "Starting the calculator…";
}

function engineStopped(error) {
  engineLine.dataset.state = "stopped";
  engineLine.textContent = "Calculator stopped";
  engineAction("Restart", restartEngine);
  results.dataset.status = "stopped";
  statusLine.replaceChildren(el("span", { class: "problem", text: error.message }));
}

function restartEngine() {
  engineLine.dataset.state = "starting";
  engineLine.textContent = "Restarting the calculator…";
  engineAction(null);
  let worker = null;
  try {
    worker = new Worker("worker.js", { type: "module" });
  } catch (err) {
    console.warn("worker not started:", err);
  }
  messenger.restart(worker);
  whenReady();
  messenger.ready.then(() => {
    schedule(0);
    document.dispatchEvent(new CustomEvent("pd:engine-restarted"));
  }, () => {});
}

function engineFailed(error) {
  engineLine.dataset.state = "failed";
  engineLine.textContent = "Calculator unavailable";
  engineAction("Reload", () => location.reload());
  $("#first-visit")?.remove();
  results.dataset.status = "failed";
  const advice = el("div", { class: "engine-failed", role: "alert" },
    el("h3", { text: "The calculator could not start" }),
    el("p", { text: error && error.message ? error.message : "Unknown problem." }),
    el("p", { text: "Your input is kept in this page's address and in this browser. What usually helps:" }),
    el("ul", {},
      el("li", { text: "Reload the page once; the first visit downloads about 14 MB." }),
      el("li", { text: "Allow WebAssembly: some security settings, enterprise policies or " +
        "privacy extensions turn it off." }),
      el("li", { text: "Use a current version of Chrome, Edge, Firefox or Safari." }),
      el("li", { text: "Free some storage space on the device, then reload." })),
    el("button", { type: "button", class: "primary", id: "retry-engine", text: "Reload" }));
  body.replaceChildren(advice);
  statusLine.textContent = "No results: the calculator is not running.";
  $("#retry-engine").addEventListener("click", () => location.reload());
}

// ---------------------------------------------------------------- recompute
let timer = 0;
let timerPending = false;
let inFlight = false;
let again = false;

function schedule(delay = DEBOUNCE_MS) {
  clearTimeout(timer);
  if (messenger.state !== "failed" && messenger.state !== "stopped") results.dataset.status = "pending";
  timerPending = true;
  timer = setTimeout(recompute, delay);
}

async function recompute() {
  timerPending = false;
  if (inFlight) {
    again = true; // only the newest form state is rendered
    return;
  }
  const { doc, inputs } = caseForm.collect();
  keep(doc);
  inFlight = true;
  const started = performance.now();
  const reply = await messenger.request("evaluate", doc);
  performance.measure("pd:answer", { start: started, end: performance.now() });
  inFlight = false;
  if (again) {
    again = false;
    recompute();
    return;
  }
  if (timerPending) return; // newer input is on its way: draw only its answer
  if (reply.ok) {
    showResult(doc, reply.result);
    performance.measure("pd:recompute", { start: started, end: performance.now() });
    if (!firstResultShown) {
      firstResultShown = true;
      performance.mark("pd:first-result");
      offerOffline();
    }
  } else if (messenger.state === "stopped") {
    engineStopped(messenger.error);
  } else if (messenger.state !== "failed") {
    showError(reply.error, inputs);
  }
}

function keep(doc) {
  if (store.tooDeep(doc)) return; // never saved: it could not be read back
  history.replaceState(history.state, "", store.caseAddress(doc));
  lastAddress = location.hash;
  store.saveDraft(doc);
}

function clearMarks() {
  for (const input of marked) {
    input.removeAttribute("aria-invalid");
    const note = document.getElementById(input.id + "-error");
    if (note) note.remove();
    input.removeAttribute("aria-describedby");
    input.closest(".field, .cell")?.classList.remove("invalid");
  }
  marked = [];
}

function showResult(doc, result) {
  clearMarks();
  lastGood = { doc, result };
  renderResult(body, result);
  renderTransposed($("#transposed"), result);
  renderCautions($("#cautions"), result);
  zone.render(result);
  printPending = true; // the print summary is drawn when printing starts
  $("#print-summary").dataset.stale = "false";
  results.dataset.status = "current";
  results.dataset.seq = String(Number(results.dataset.seq || 0) + 1);
  statusLine.textContent = `Up to date · ${result.points.length} point${result.points.length === 1 ? "" : "s"} of gaze`;
}

// Words for a field path; a key that objects inherit ("constructor") is never looked up.
function fieldWords(field) {
  const parts = field.split(".");
  if (parts.some((part) => part in Object.prototype)) return parts.join(" ").replace(/_/g, " ");
  const words = pathInWords(field);
  return typeof words === "string" ? words : parts.join(" ");
}

// The input a refusal belongs to: the exact path, else the nearest enclosing one.
function inputFor(field, inputs) {
  let path = field;
  while (path) {
    if (inputs.has(path) && inputs.get(path)) return inputs.get(path);
    path = path.includes(".") ? path.slice(0, path.lastIndexOf(".")) : "";
  }
  for (const [key, input] of inputs) {
    if (field && key.startsWith(field + ".") && input) return input;
  }
  return null;
}

function showError(error, inputs) {
  clearMarks();
  const field = error.field || "";
  const input = inputFor(field, inputs);
  const words = field ? fieldWords(field) : "Case";
  const untouchedEmpty = input && !touched.has(input) && input.value.trim() === "" && input.type !== "checkbox";
  if (input && !untouchedEmpty) {
    input.setAttribute("aria-invalid", "true");
    const note = el("p", { class: "field-error", id: input.id + "-error" },
      el("strong", { text: words + ": " }), error.message);
    input.setAttribute("aria-describedby", note.id);
    const holder = input.closest(".field") || input;
    if (holder === input) {
      input.classList.add("has-error");
      const grid = input.closest(".grid");
      (grid || input.parentElement).after(note);
    } else {
      holder.classList.add("invalid");
      holder.append(note);
    }
    marked.push(input);
  }
  results.dataset.status = lastGood ? "stale" : "error";
  $("#print-summary").dataset.stale = lastGood ? "true" : "false";
  const lead = lastGood ? "Out of date – the figures below are for the last valid input. " : "";
  statusLine.replaceChildren(el("span", { class: "problem" }, lead,
    el("strong", { text: words + ": " }), error.message));
  if (!lastGood) {
    const hint = untouchedEmpty
      ? "Enter the prescription for both eyes (sphere 0 for plano) to see the prism at each point of gaze."
      : "Results appear here as soon as the input is complete.";
    body.replaceChildren(el("p", { class: "empty", text: hint }));
  }
}

// ---------------------------------------------------------------- editing
const form = $("#case-form");
form.addEventListener("input", (e) => {
  if (e.target.matches("input")) touched.add(e.target);
  if (e.target.matches("[data-path$='.rx']")) caseForm.syncWritten();
  schedule();
});
form.addEventListener("change", (e) => {
  if (e.target.type === "checkbox") schedule(0);
});
form.addEventListener("submit", (e) => e.preventDefault());
$("#case-name").addEventListener("input", () => schedule());

$("#add-point").addEventListener("click", () => {
  const row = caseForm.addPoint({ name: "" });
  row.querySelector("input").focus();
  schedule(0);
});
$("#custom-points").addEventListener("click", (e) => {
  const button = e.target.closest(".remove");
  if (!button) return;
  const row = button.closest("li");
  const next = row.nextElementSibling || row.previousElementSibling;
  row.remove();
  caseForm.renumber();
  (next ? next.querySelector(".remove") : $("#add-point")).focus();
  schedule(0);
});

// ---------------------------------------------------------------- cases
const caseMessage = $("#case-message");
// A message under the case bar, optionally with one action (Undo).
function say(text, action) {
  caseMessage.replaceChildren(text);
  if (action) {
    const button = el("button", { type: "button", class: "secondary undo", text: action.label });
    button.addEventListener("click", () => {
      button.remove();
      action.run();
    });
    caseMessage.append(" ", button);
  }
}

// Points the form can show: "distance", "near" and points with in/up millimetres.
// Anything else is refused rather than dropped without a word.
function pointsProblem(doc) {
  if (!Object.hasOwn(doc, "points")) return "";
  if (!Array.isArray(doc.points)) return "its points of gaze are not a list";
  const bad = doc.points.findIndex((p) => !(p === "distance" || p === "near" ||
    (p && typeof p === "object" && !Array.isArray(p))));
  return bad < 0 ? "" : `point of gaze ${bad + 1} is neither “distance”, “near” nor a point with in and up millimetres`;
}

// Shows a case in the form. With {push: true} the case shown before gets its
// own history entry, so that the browser's Back returns to it.
export function loadCase(doc, source, { push = false } = {}) {
  if (push) {
    clearTimeout(timer);
    timerPending = false;
    const before = caseForm.collect().doc;
    if (!store.tooDeep(before)) history.replaceState(history.state, "", store.caseAddress(before));
    history.pushState({ pd: "case" }, "", store.caseAddress(doc));
    lastAddress = location.hash;
  }
  touched.clear();
  const extras = caseForm.fill(doc);
  for (const input of document.querySelectorAll("[data-path]")) if (input.value) touched.add(input);
  const kept = [];
  for (const [key, value] of Object.entries(extras)) {
    if (key === "right" || key === "left") kept.push(...Object.keys(value).map((k) => `${key} ${k.replace(/_/g, " ")}`));
    else kept.push(key.replace(/_/g, " "));
  }
  const extrasNote = $("#extras");
  extrasNote.hidden = kept.length === 0;
  extrasNote.replaceChildren();
  if (kept.length) {
    const drop = el("button", { type: "button", class: "secondary", text: "Leave these out" });
    drop.addEventListener("click", () => {
      caseForm.extras = {};
      extrasNote.hidden = true;
      say("Left out the parts this form does not show.");
      schedule(0);
    });
    extrasNote.append(el("span", { text: "Also in this case, kept as given (this form does not edit them): " +
      kept.join(", ") + ". " }), drop);
  }
  lastGood = null;
  if (source) say(source);
  schedule(0);
}

// The form differs from an empty new case (something worth an Undo).
function edited() {
  return [...document.querySelectorAll("#case-form [data-path], #case-name")].some((input) =>
    input.type !== "checkbox" && input.value.trim() !== "" && input.value !== input.dataset.default) ||
    $("#custom-points").children.length > 0;
}

function refreshSaved(select = "") {
  const list = $("#saved-cases");
  const names = store.savedNames();
  list.replaceChildren(...(names.length ? names : [""]).map((name) =>
    el("option", { value: name, text: name || "(none saved)" })));
  if (select) list.value = select;
}

$("#save-case").addEventListener("click", () => {
  const { doc } = caseForm.collect();
  const name = (doc.name || "").trim();
  if (!name) {
    say("Give the case a name first (the Case name field), then Save.");
    $("#case-name").focus();
    return;
  }
  say(store.saveCase(name, doc) ? `Saved “${name}” in this browser.` : "Not saved: " + store.whyNotSaved());
  refreshSaved(name);
});
$("#open-saved").addEventListener("click", () => {
  const name = $("#saved-cases").value;
  const doc = name && store.savedCase(name);
  if (doc) loadCase(doc, `Opened “${name}”. Back returns to the case before.`, { push: true });
});
$("#delete-saved").addEventListener("click", () => {
  const name = $("#saved-cases").value;
  if (!name) return;
  const entry = store.deleteCase(name);
  refreshSaved();
  if (!entry) {
    say(`Not deleted: ${store.whyNotSaved()}`);
    return;
  }
  say(`Deleted “${name}” from this browser.`, { label: "Undo", run: () => {
    say(store.restoreCase(name, entry) ? `Brought back “${name}”.` : "Could not bring it back: " + store.whyNotSaved());
    refreshSaved(name);
  } });
});
$("#new-case").addEventListener("click", () => {
  const before = caseForm.collect().doc;
  const wasEdited = edited();
  loadCase({}, "", { push: wasEdited });
  if (wasEdited) {
    say("New case. The one before is kept: Undo, or the browser's Back.", { label: "Undo", run: () => {
      loadCase(before, "Brought back the case from before New.");
    } });
  } else {
    say("New case.");
  }
  $("#right-sphere").focus();
});
$("#export-case").addEventListener("click", () => {
  const { doc } = caseForm.collect();
  const blob = new Blob([JSON.stringify(doc, null, 2) + "\n"], { type: "application/json" });
  const link = el("a", { href: URL.createObjectURL(blob), download: fileName(doc.name) });
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(link.href), 10000);
  say("Exported " + link.download + ".");
});
$("#import-case").addEventListener("click", () => $("#import-file").click());
$("#import-file").addEventListener("change", async (e) => {
  const file = e.target.files[0];
  e.target.value = "";
  if (!file) return;
  let text;
  try {
    text = await file.text();
  } catch {
    say(`Not imported: ${file.name} could not be read. The current case is unchanged.`);
    return;
  }
  // What kind of document it is (nothing of it is sent or saved before this).
  const found = await readDocument(messenger, text, file.name);
  if (found.problem) {
    say(`Not imported: ${found.problem.replace(" is not JSON", " is not a JSON case file")}. The current case is unchanged.`);
    return;
  }
  if (found.kind !== "case") {
    say(wrongKind(file.name, found.kind, "case") + " The current case is unchanged.");
    return;
  }
  const doc = found.document;
  const points = pointsProblem(doc);
  if (points) {
    say(`Not imported: in ${file.name}, ${points}. The current case is unchanged.`);
    return;
  }
  // The core checks the case. A refusal of the document as a whole leaves the
  // current case alone; one naming a field is shown at that field.
  const reply = await messenger.request("evaluate", doc);
  if (!reply.ok && (!reply.error.field || reply.error.code)) {
    say(`Not imported: ${file.name}: ${reply.error.message} The current case is unchanged.`);
    return;
  }
  loadCase(doc, reply.ok ? `Imported ${file.name}. Back returns to the case before.`
    : `Imported ${file.name}; it needs a correction (marked below).`, { push: true });
});
$("#print-case").addEventListener("click", () => {
  drawPrintSummary();
  window.print();
});

function fileName(name) {
  const stem = (name || "case").replace(/[^\p{L}\p{N}._ -]+/gu, "").trim().replace(/\s+/g, "-") || "case";
  return stem + ".prism.json";
}

// A case link: {doc} shown, or a sentence saying why it was not opened.
function fromAddress() {
  const found = store.readAddress();
  if (!found) return null;
  if (found.problem) return found;
  const points = pointsProblem(found.doc);
  if (points) return { problem: `The case in this link was not opened: ${points}.` };
  return found;
}

// Back and Forward: the case of that history entry comes back into the form.
let lastAddress = location.hash;
function followAddress(source) {
  if (location.hash === lastAddress) return;
  lastAddress = location.hash;
  const found = fromAddress();
  if (!found) return;
  if (found.problem) {
    // The address goes back to the case on screen, so that nothing passes it off as the link's.
    const { doc } = caseForm.collect();
    if (!store.tooDeep(doc)) history.replaceState(history.state, "", store.caseAddress(doc));
    lastAddress = location.hash;
    say(found.problem + " The case below is the one you had.");
    return;
  }
  loadCase(found.doc, source);
}
window.addEventListener("popstate", () => followAddress("Back to the case as it was before."));
window.addEventListener("hashchange", () => followAddress("Opened the case in the address."));

// ---------------------------------------------------------------- offline and updates
const notices = $("#notices");
function notice(text, action, { quietMs = 0 } = {}) {
  const box = el("div", { class: "notice" }, el("p", { text }));
  if (action) {
    const button = el("button", { type: "button", class: "primary", text: action.label });
    button.addEventListener("click", action.run);
    box.append(button);
  }
  const close = el("button", { type: "button", class: "close", "aria-label": "Dismiss", text: "×" });
  close.addEventListener("click", () => box.remove());
  box.append(close);
  notices.append(box);
  if (quietMs) setTimeout(() => box.remove(), quietMs);
  return box;
}

// Registers the service worker once, after a first result, so that installing
// never competes with it. Safe to call again (later calls do nothing).
let offlineOffered = false;
export function offerOffline() {
  if (offlineOffered || !("serviceWorker" in navigator)) return;
  offlineOffered = true;
  const hadController = Boolean(navigator.serviceWorker.controller);
  navigator.serviceWorker.register("./sw.js", { scope: "./", updateViaCache: "none" }).then((reg) => {
    const waiting = () => notice("A new version of Prism Desk is ready.", {
      label: "Reload to update",
      run: () => {
        updateRequested = true;
        if (reg.waiting) reg.waiting.postMessage({ type: "skip-waiting" });
        else location.reload();
      },
    });
    if (reg.waiting && hadController) waiting();
    reg.addEventListener("updatefound", () => {
      const worker = reg.installing;
      worker.addEventListener("statechange", () => {
        if (worker.state === "installed" && navigator.serviceWorker.controller) waiting();
        if (worker.state === "activated" && !hadController) {
          document.body.dataset.offline = "ready";
          notice("Prism Desk now works offline on this device.", null, { quietMs: 8000 });
          // Ask the browser to keep the offline copy when storage runs low (no prompt in Chromium).
          navigator.storage?.persist?.().catch(() => {});
        }
      });
    });
    if (reg.active && hadController) document.body.dataset.offline = "ready";
  }, (err) => console.warn("service worker not registered:", err && err.message));
  // Reload only when the user asked for the update (the first install also
  // changes the controller, and must not reload the page).
  let updateRequested = false;
  let reloading = false;
  navigator.serviceWorker.addEventListener("controllerchange", () => {
    if (updateRequested && !reloading) {
      reloading = true;
      location.reload();
    }
  });
}

// ---------------------------------------------------------------- start
// What storage said at start-up, in words, with the damaged copy offered as a file.
function storageNotice() {
  if (storage.problem === "unreadable" || storage.problem === "unreadable-unsaved") {
    const box = notice("The saved cases in this browser could not be read. " + (storage.backup !== null
      ? "They were set aside untouched (not deleted): download them as a file to keep or repair them."
      : "They were left as they are; nothing new is saved until this is sorted out."),
    storage.backup !== null ? { label: "Download the unreadable copy", run: () => {
      const blob = new Blob([storage.backup], { type: "application/octet-stream" });
      const link = el("a", { href: URL.createObjectURL(blob), download: "prism-desk-saved-cases-unreadable.txt" });
      document.body.append(link);
      link.click();
      link.remove();
    } } : null);
    box.id = "storage-notice";
  } else if (storage.problem === "newer") {
    notice("The saved cases in this browser were written by a newer version of Prism Desk. This version can " +
      "open them but leaves them untouched; reload to get the newer version.").id = "storage-notice";
  }
  if (storage.stockSkipped) {
    notice(`${storage.stockSkipped} unreadable row${storage.stockSkipped === 1 ? " was" : "s were"} left out of the readers stock.`);
  }
}
storageNotice();
refreshSaved();
const arrived = fromAddress();
if (arrived && arrived.doc) {
  loadCase(arrived.doc, "");
} else {
  // A damaged link never shows the last draft as if it were the linked case.
  const draft = store.draftCase();
  if (draft) loadCase(draft, "");
  else {
    caseForm.fill({});
    schedule(0);
  }
  if (arrived) say(arrived.problem + (draft ? " Below is the case you last worked on in this browser." : ""));
}
