// Prism Desk app shell: the worker, the engine status, the case bar (Save, Open,
// Delete, New, Export, Import), notices and offline use. The case screen itself
// (form, answer band, results) is case-screen.js; other screens are in views.js.
// JavaScript never computes optics here: every figure comes from the core.
import { Messenger } from "./messenger.js";
import { setUpCaseScreen } from "./case-screen.js";
import { el } from "./results.js";
import * as store from "./store.js";

const $ = (selector) => document.querySelector(selector);

const boot = self.prismBoot || { worker: null, early: [], error: "boot.js did not run" };
const engineLine = $("#engine");

let caseScreen = null; // set up once the messenger exists
let failedEarly = null; // a failure reported before the case screen was set up

// Shared with other screens (they import these from this module).
export const messenger = new Messenger(boot.worker, {
  early: boot.early,
  earlyError: boot.error,
  onEvent: (msg) => {
    if (msg.event === "failed") engineFailed(msg.error);
    if (msg.event === "timings") self.prismEngineTimings = msg.timings; // read by bench/web_bench.py
  },
});

caseScreen = setUpCaseScreen({ messenger, say: (text) => say(text), onFirstResult: () => offerOffline() });
if (failedEarly) caseScreen.engineFailed(failedEarly);
const loadCase = caseScreen.loadCase;

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
  if (caseScreen) caseScreen.engineFailed(error);
  else failedEarly = error;
}

// ---------------------------------------------------------------- cases
const caseMessage = $("#case-message");
function say(text) {
  caseMessage.textContent = text;
}

function refreshSaved(select = "") {
  const list = $("#saved-cases");
  const names = store.savedNames();
  list.replaceChildren(...(names.length ? names : [""]).map((name) =>
    el("option", { value: name, text: name || "(none saved)" })));
  if (select) list.value = select;
}

$("#save-case").addEventListener("click", () => {
  const { doc } = caseScreen.collect();
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
  if (doc) loadCase(doc, `Opened “${name}”.`, { push: true });
});
$("#delete-saved").addEventListener("click", () => {
  const name = $("#saved-cases").value;
  if (!name) return;
  store.deleteCase(name);
  refreshSaved();
  say(`Deleted “${name}” from this browser.`);
});
$("#new-case").addEventListener("click", () => {
  loadCase({}, "New case.", { push: true });
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
  loadCase(doc, reply.ok ? `Imported ${file.name}.` : `Imported ${file.name}; it needs a correction (marked below).`,
    { push: true });
});
function fileName(name) {
  const stem = (name || "case").replace(/[^\p{L}\p{N}._ -]+/gu, "").trim().replace(/\s+/g, "-") || "case";
  return stem + ".prism.json";
}

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
caseScreen.start();
