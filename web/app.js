// Prism Desk page: collects input, asks the worker, shows the answer.
// JavaScript never computes optics here: every figure comes from the core.
import { Messenger } from "./messenger.js";
import { CaseForm, pathInWords } from "./form.js";
import { el, renderCautions, renderPrintSummary, renderResult, renderTransposed } from "./results.js";
import * as store from "./store.js";
import { setUpZone } from "./zone.js";

const DEBOUNCE_MS = 150;
const $ = (selector) => document.querySelector(selector);

const boot = self.prismBoot || { worker: null, early: [], error: "boot.js did not run" };
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
messenger.ready.then((msg) => {
  self.prismEngineTimings = msg.timings; // read by bench/web_bench.py
  document.body.dataset.engineStart = msg.start || "boot";
  engineLine.dataset.state = "ready";
  engineLine.textContent = "Calculator ready" + (msg.version ? " · core " + msg.version.version : "");
}, () => {});

function engineFailed(error) {
  engineLine.dataset.state = "failed";
  engineLine.textContent = "Calculator unavailable";
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
  if (messenger.state !== "failed") results.dataset.status = "pending";
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
  } else if (messenger.state !== "failed") {
    showError(reply.error, inputs);
  }
}

function keep(doc) {
  history.replaceState(null, "", store.caseAddress(doc));
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
  const words = field ? pathInWords(field) : "Case";
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
function say(text) {
  caseMessage.textContent = text;
}

function loadCase(doc, source) {
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
  say(store.saveCase(name, doc) ? `Saved “${name}” in this browser.` : "Could not save: this browser's storage is full or turned off.");
  refreshSaved(name);
});
$("#open-saved").addEventListener("click", () => {
  const name = $("#saved-cases").value;
  const doc = name && store.savedCase(name);
  if (doc) loadCase(doc, `Opened “${name}”.`);
});
$("#delete-saved").addEventListener("click", () => {
  const name = $("#saved-cases").value;
  if (!name) return;
  store.deleteCase(name);
  refreshSaved();
  say(`Deleted “${name}” from this browser.`);
});
$("#new-case").addEventListener("click", () => {
  loadCase({}, "New case.");
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
  let doc;
  try {
    doc = JSON.parse(await file.text());
  } catch {
    say(`Not imported: ${file.name} is not a JSON case file. The current case is unchanged.`);
    return;
  }
  // The core checks the case. A refusal of the document as a whole leaves the
  // current case alone; one naming a field is shown at that field.
  const reply = await messenger.request("evaluate", doc);
  if (!reply.ok && !reply.error.field) {
    say(`Not imported: ${file.name}: ${reply.error.message} The current case is unchanged.`);
    return;
  }
  loadCase(doc, reply.ok ? `Imported ${file.name}.` : `Imported ${file.name}; it needs a correction (marked below).`);
});
$("#print-case").addEventListener("click", () => {
  drawPrintSummary();
  window.print();
});

function fileName(name) {
  const stem = (name || "case").replace(/[^\p{L}\p{N}._ -]+/gu, "").trim().replace(/\s+/g, "-") || "case";
  return stem + ".prism.json";
}

window.addEventListener("hashchange", () => {
  const doc = store.caseFromAddress();
  if (doc) loadCase(doc, "Opened the case in the address.");
});

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
refreshSaved();
const initial = store.caseFromAddress() || store.draftCase();
if (initial) {
  loadCase(initial, "");
} else {
  caseForm.fill({});
  schedule(0);
}
