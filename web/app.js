// Prism Desk app shell: the worker, the engine status (first-visit progress,
// failure, restart), the case bar (Save, Open, Delete, New, Export, Import, each
// undoable or a Back away), storage notices and offline use. The case screen
// itself (form, answer band, results) is case-screen.js; other screens are in
// views.js. JavaScript never computes optics here: every figure comes from the core.
import { Messenger } from "./messenger.js";
import { setUpCaseScreen } from "./case-screen.js";
import { pointsProblem, readDocument, wrongKind } from "./documents.js";
import { el } from "./results.js";
import * as store from "./store.js";

const $ = (selector) => document.querySelector(selector);

const boot = self.prismBoot || { worker: null, early: [], error: "boot.js did not run" };
const engineLine = $("#engine");
const results = $("#results");
const statusLine = $("#result-status");

// Before anything is written: an unreadable store is kept aside, an older one upgraded.
const storage = store.openStorage();

export let caseScreen = null; // set up once the messenger exists (views.js shows and hides it)
let failedEarly = null; // a failure reported before the case screen was set up

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

caseScreen = setUpCaseScreen({
  messenger,
  say: (text) => say(text),
  onFirstResult: () => offerOffline(),
  onStopped: (error) => engineStopped(error),
});
if (failedEarly) caseScreen.engineFailed(failedEarly);
const loadCase = caseScreen.loadCase;

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
    caseScreen.recompute();
    document.dispatchEvent(new CustomEvent("pd:engine-restarted"));
  }, () => {});
}

function engineFailed(error) {
  engineLine.dataset.state = "failed";
  engineLine.textContent = "Calculator unavailable";
  engineAction("Reload", () => location.reload());
  $("#first-visit")?.remove();
  if (caseScreen) caseScreen.engineFailed(error);
  else failedEarly = error;
}

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

function refreshSaved(select = "") {
  const list = $("#saved-cases");
  const names = store.savedNames();
  list.replaceChildren(...(names.length ? names : [""]).map((name) =>
    el("option", { value: name, text: name || "(none saved)" })));
  if (select) list.value = select;
}

// The form differs from an empty new case (something worth an Undo).
function edited() {
  return [...document.querySelectorAll("#case-form [data-path], #case-name")].some((input) =>
    input.type !== "checkbox" && input.type !== "radio" && input.tagName === "INPUT"
    && input.value.trim() !== "" && input.value !== input.dataset.default) ||
    ($("#custom-points")?.children.length ?? 0) > 0;
}

$("#save-case").addEventListener("click", () => {
  const { doc } = caseScreen.collect();
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
  const before = caseScreen.collect().doc;
  const typed = history.state && typeof history.state === "object" ? history.state.typed : undefined;
  const wasEdited = edited();
  loadCase({}, "", { push: wasEdited });
  if (wasEdited) {
    say("New case. The one before is kept: Undo, or the browser's Back.", { label: "Undo", run: () => {
      loadCase(before, "Brought back the case from before New.", { typed });
    } });
  } else {
    say("New case.");
  }
  caseScreen.focusFirst();
});
$("#export-case").addEventListener("click", () => {
  const { doc } = caseScreen.collect();
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
function fileName(name) {
  const stem = (name || "case").replace(/[^\p{L}\p{N}._ -]+/gu, "").trim().replace(/\s+/g, "-") || "case";
  return stem + ".prism.json";
}

// ---------------------------------------------------------------- offline, updates, notices
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

// ---------------------------------------------------------------- start
refreshSaved();
caseScreen.start();
