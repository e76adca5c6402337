// The case screen: the form, the answer band and the folded results. It asks
// the worker for the case's figures after each edit and shows them; it never
// computes optics. The app shell (app.js) owns the case bar (Save, Open, New,
// Import, Export), notices and offline use, and calls loadCase() to show a case.
import { pointsProblem } from "./documents.js";
import { renderBand } from "./answer-band.js";
import { CaseForm, pathInWords, refusalMessage, toValue } from "./form.js";
import { el, renderCautions, renderPrintSummary, renderResult, renderTransposed } from "./results.js";
import * as store from "./store.js";
import { setUpZone } from "./zone.js";

// Short enough that each keystroke visibly changes the band (issue 12: <= 60 ms).
export const DEBOUNCE_MS = 50;
const MAX_MARKED = 6; // bad fields marked at once
// What each keystroke asks for (the band, the transposed forms) and what each folded
// section adds once opened (pycore.evaluate, docs/worker-protocol.md).
const LIVE_SECTIONS = ["point_totals", "eyes", "reading_zone", "remedies"];
const ON_OPEN = { "sec-points": ["points", "fitting", "frame"], "sec-map": ["reading_map", "frame"],
  "sec-remedies": ["remedies_full"], "sec-errors": ["sensitivity"] };
const $ = (selector) => document.querySelector(selector);

// host: {messenger, say(text), onFirstResult()}
export function setUpCaseScreen(host) {
  const { messenger } = host;
  const results = $("#results");
  const statusLine = $("#result-status");
  const body = $("#result-body");
  const band = $("#answer-band");
  const form = $("#case-form");
  const caseForm = new CaseForm(form, $("#point-row"));
  const say = (text) => host.say(text);
  // Lens designs, reading zone and remedies (zone.js): a part of the form and of the results.
  const zone = setUpZone({ caseForm, loadCase: (doc, message, how) => loadCase(doc, message, how), say,
    typed: () => typedSnapshot(), form, results, statusLine, body });
  let lastGood = null; // {doc, result}
  let marked = []; // inputs marked invalid
  const touched = new Set(); // inputs the user has edited
  let firstResultShown = false;
  let printPending = false;
  let shownAddress = location.hash; // the address the screen last wrote or loaded

  function drawPrintSummary() {
    if (printPending && lastGood) renderPrintSummary($("#print-summary"), lastGood.doc, lastGood.result, zone.chosen());
    printPending = false;
  }
  window.addEventListener("beforeprint", drawPrintSummary);
  // Drawn anew for each print: nothing of an earlier case stays in the page after it.
  window.addEventListener("afterprint", () => {
    $("#print-summary").replaceChildren();
    printPending = Boolean(lastGood);
  });

  // The band stays in view while typing; fields scrolled into view stay below it.
  // Set only when it changes: a new value on the root restyles the whole page.
  let bandH = "";
  const bandHeight = () => {
    const h = getComputedStyle(band).position === "sticky" ? band.offsetHeight + "px" : "0px";
    if (h !== bandH) document.documentElement.style.setProperty("--band-h", (bandH = h));
  };
  if ("ResizeObserver" in window) new ResizeObserver(bandHeight).observe(band);
  window.addEventListener("resize", bandHeight);

  function engineFailed(error) {
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
    band.dataset.state = "failed";
    $("#band-body").replaceChildren(el("p", { class: "band-prompt", text: "No answer: the calculator is not running." }));
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
    band.dataset.pending = "true";
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
    // Only what is on screen: the band's sections, and a folded section once opened.
    const reply = await messenger.request("evaluate_live", { case: doc, sections: wantedSections() });
    performance.measure("pd:answer", { start: started, end: performance.now() });
    const more = reply.ok || messenger.state === "failed" || messenger.state === "stopped" || reply.error.code
      ? [] : await moreErrors(doc, reply.error, inputs);
    inFlight = false;
    if (again) {
      again = false;
      recompute();
      return;
    }
    if (timerPending) return; // newer input is on its way: draw only its answer
    band.dataset.pending = "false";
    if (reply.ok) {
      showResult(doc, reply.result);
      performance.measure("pd:recompute", { start: started, end: performance.now() });
      if (!firstResultShown) {
        firstResultShown = true;
        performance.mark("pd:first-result");
        host.onFirstResult();
      }
    } else if (messenger.state === "stopped") {
      if (host.onStopped) host.onStopped(messenger.error);
    } else if (messenger.state !== "failed") {
      showErrors([reply.error, ...more], inputs);
    }
  }

  // Sections the band needs on every edit, and those a folded section adds when open.
  function wantedSections() {
    const wanted = [...LIVE_SECTIONS];
    for (const [id, extra] of Object.entries(ON_OPEN)) {
      if (document.getElementById(id)?.open) wanted.push(...extra);
    }
    return wanted;
  }
  function sectionShown(id) {
    const result = lastGood && lastGood.result;
    if (id === "sec-points") return Boolean(result && result.points);
    if (!result || !result.reading_zone) return true; // nothing to add to
    if (id === "sec-map") return Boolean(result.reading_zone.map && result.frame !== undefined);
    if (id === "sec-errors") return Boolean(result.reading_zone.sensitivity);
    if (id === "sec-remedies") return !result.remedies || result.remedies.options.every((o) => o);
    return true;
  }
  // Opening a folded section asks for what it shows (toggle does not bubble: capture it).
  body.addEventListener("toggle", (event) => {
    const id = event.target && event.target.id;
    // Restoring an open section on redraw also fires toggle: ask only when its figures are missing.
    if (event.target.open && Object.hasOwn(ON_OPEN, id) && !sectionShown(id)) schedule(0);
  }, true);

  // The core names one bad field at a time: ask again without it (or with it
  // at zero, for a field that must be given) to find the others, so that
  // every bad field is marked at once.
  async function moreErrors(doc, first, inputs) {
    const found = [];
    const seen = new Set([first.field]);
    const probe = structuredClone(doc);
    let error = first;
    for (let i = 0; i < MAX_MARKED - 1 && error.field && inputFor(error.field, inputs); i++) {
      if (!dropPath(probe, error.field)) break;
      let reply = await messenger.request("evaluate", probe);
      // A field that must be given: stand in the other eye's value, then a few
      // plain values, until the core moves on to the next bad field.
      for (const stand of standIns(doc, error.field)) {
        const same = !reply.ok && (reply.error.field === error.field
          || error.field.startsWith(`${reply.error.field}.`));
        if (!same || !setPath(probe, error.field, stand)) break;
        reply = await messenger.request("evaluate", probe);
      }
      if (reply.ok || !reply.error.field || seen.has(reply.error.field)) break;
      seen.add(reply.error.field);
      found.push(reply.error);
      error = reply.error;
    }
    return found;
  }

  function typedSnapshot() {
    const typed = {};
    for (const input of document.querySelectorAll("#case-form [data-path], #case-name")) {
      if (input.id && input.value !== "") typed[input.id] = input.value;
    }
    return typed;
  }

  // What the user typed stays as typed: a field whose text means the same as the
  // case's value shows the text as it was typed.
  function restoreTyped(typed) {
    if (!typed || typeof typed !== "object") return;
    const same = (a, b) => (typeof a === "number" && typeof b === "number" ? a === b
      : String(a ?? "").trim() === String(b ?? "").trim());
    for (const [id, text] of Object.entries(typed)) {
      const input = document.getElementById(id);
      if (!input || !input.dataset.path || typeof text !== "string" || input.tagName !== "INPUT") continue;
      if (same(toValue(text), toValue(input.value))) input.value = text;
    }
  }

  function keep(doc) {
    if (store.tooDeep(doc)) return; // never saved: it could not be read back
    const address = store.caseAddress(doc);
    const state = history.state && typeof history.state === "object" ? history.state : {};
    history.replaceState({ ...state, typed: typedSnapshot() }, "", address);
    shownAddress = location.hash;
    store.saveDraft(doc);
  }

  // A history entry for the case as it is now, before a New, Open, Import or Apply
  // replaces it: the browser's Back returns to it.
  function remember() {
    history.pushState(history.state, "", location.hash);
  }

  function clearMarks() {
    for (const input of marked) {
      input.removeAttribute("aria-invalid");
      const note = document.getElementById(input.id + "-error");
      if (note) note.remove();
      input.removeAttribute("aria-describedby");
      input.classList.remove("has-error");
      input.closest(".field, .cell")?.classList.remove("invalid");
    }
    marked = [];
  }

  function showResult(doc, result) {
    clearMarks();
    lastGood = { doc, result };
    results.dataset.empty = "false";
    renderResult(body, result);
    for (const dl of document.querySelectorAll(".transposed[data-eye]")) renderTransposed(dl, result, dl.dataset.eye);
    renderCautions($("#cautions"), result);
    zone.render(result, doc);
    band.dataset.state = "current";
    renderBand($("#band-body"), result, { onApply: (option) => zone.apply(option) });
    printPending = true; // the print summary is drawn when printing starts
    $("#print-summary").dataset.stale = "false";
    results.dataset.status = "current";
    results.dataset.seq = String(Number(results.dataset.seq || 0) + 1);
    const count = (result.points || result.point_totals).length;
    statusLine.textContent = `Up to date · ${count} point${count === 1 ? "" : "s"} of gaze`;
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

  function mark(input, words, message) {
    if (marked.includes(input)) return;
    input.setAttribute("aria-invalid", "true");
    const note = el("p", { class: "field-error", id: input.id + "-error" }, el("strong", { text: words + ": " }), message);
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

  function isEmptyCase() {
    return ![...document.querySelectorAll("#case-form [data-path]")].some((input) =>
      input.tagName === "INPUT" && input.value.trim() !== "" && input.dataset.default === undefined);
  }

  function showErrors(errors, inputs) {
    clearMarks();
    const empty = isEmptyCase();
    const shown = [];
    for (const error of errors) {
      const field = error.field || "";
      const input = inputFor(field, inputs);
      const words = field ? pathInWords(field) : "Case";
      const message = refusalMessage(field, error.message);
      const untouchedEmpty = input && !touched.has(input) && input.value.trim() === "" && input.type !== "checkbox";
      if (input && !untouchedEmpty && !empty) mark(input, words, message);
      shown.push({ words, message });
    }
    // A field that no longer reads has no transposed form beside it.
    for (const dl of document.querySelectorAll(".transposed[data-eye]")) dl.replaceChildren();
    results.dataset.status = lastGood ? "stale" : "error";
    results.dataset.empty = String(empty && !lastGood);
    band.dataset.state = lastGood ? "stale" : empty ? "empty" : "error";
    $("#print-summary").dataset.stale = lastGood ? "true" : "false";
    if (empty && !lastGood) {
      const prompt = "Type a prescription for each eye (sphere, or the prescription as written) " +
        "and the monocular PDs: the answer appears at the top as you type.";
      statusLine.replaceChildren(el("span", { class: "prompt", text: prompt }));
      body.replaceChildren();
      $("#band-body").replaceChildren(el("p", { class: "band-prompt", text: "Type a prescription for each eye: the answer appears here." }));
      return;
    }
    const lead = lastGood ? "Out of date – the figures below are for the last valid input. " : "";
    const first = shown[0];
    const others = shown.length > 1 ? ` (${shown.length} fields need a correction; each is marked.)` : "";
    statusLine.replaceChildren(el("span", { class: "problem" }, lead,
      el("strong", { text: first.words + ": " }), first.message, others));
    if (!lastGood) {
      body.replaceChildren(el("p", { class: "empty", text: "Results appear here as soon as the input is complete." }));
      $("#band-body").replaceChildren(el("p", { class: "band-prompt" }, el("strong", { text: first.words + ": " }),
        first.message));
    }
  }

  // ---------------------------------------------------------------- editing
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

  // ---------------------------------------------------------------- showing a case
  // how: {push: a history entry for the case before (New, Open, Import, Apply),
  //       typed: the texts as the user typed them (reload, Back, Undo)}
  function loadCase(doc, source, how = {}) {
    if (how.push) remember();
    touched.clear();
    const extras = caseForm.fill(doc);
    restoreTyped(how.typed);
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
    shownAddress = location.hash;
    if (source) say(source);
    schedule(0);
  }

  // A case link: {doc}, or {problem} saying in one sentence why it was not opened.
  function readLink() {
    const found = store.readAddress();
    if (!found || found.problem) return found;
    const points = pointsProblem(found.doc);
    return points ? { problem: `The case in this link was not opened: ${points}.` } : found;
  }

  const fromAddress = (message) => {
    if (location.hash === shownAddress) return; // written by this screen
    shownAddress = location.hash;
    const found = readLink();
    if (!found) return;
    if (found.problem) {
      // The address goes back to the case on screen: nothing passes it off as the link's.
      const { doc } = caseForm.collect();
      if (!store.tooDeep(doc)) history.replaceState(history.state, "", store.caseAddress(doc));
      shownAddress = location.hash;
      say(found.problem + " The case below is the one you had.");
      return;
    }
    loadCase(found.doc, message, { typed: history.state && history.state.typed });
  };
  window.addEventListener("popstate", () => fromAddress("Back to the case before."));
  window.addEventListener("hashchange", () => fromAddress("Opened the case in the address."));

  $("#print-case").addEventListener("click", async () => {
    // The order note lists every remedy: ask for the whole result first.
    if (lastGood) {
      const reply = await messenger.request("evaluate", lastGood.doc);
      if (reply.ok) lastGood = { doc: lastGood.doc, result: reply.result };
      printPending = true;
    }
    drawPrintSummary();
    window.print();
  });

  function start() {
    const arrived = readLink();
    if (arrived && arrived.doc) {
      loadCase(arrived.doc, "", { typed: history.state && history.state.typed });
      return;
    }
    // A damaged link never shows the last draft as if it were the linked case.
    const draft = store.draftCase();
    if (draft) loadCase(draft, "", { typed: history.state && history.state.typed });
    else {
      caseForm.fill({});
      schedule(0);
    }
    if (arrived) say(arrived.problem + (draft ? " Below is the case you last worked on in this browser." : ""));
  }

  // The shape every screen has (DEVELOPERS.md, "Screens"). The case screen's
  // markup is in index.html, so that it can be typed in while the runtime downloads.
  const parts = [$(".casebar"), $("#main")];
  return {
    root: $("#main"),
    resultsId: "results",
    show() { for (const part of parts) part.hidden = false; },
    hide() { for (const part of parts) part.hidden = true; },
    loadCase, remember, start, engineFailed,
    recompute: () => schedule(0),
    collect: () => caseForm.collect(),
    focusFirst: () => $("#right-rx").focus(),
  };
}

// ---------------------------------------------------------------- paths in a case document
function parts(path) {
  return path.split(".").map((p) => (/^\d+$/.test(p) ? Number(p) : p));
}

function standIns(doc, path) {
  const other = path.replace(/\b(right|left)\b/, (eye) => (eye === "right" ? "left" : "right"));
  const mirrored = other !== path ? getPath(doc, other) : undefined;
  return [...(typeof mirrored === "number" ? [mirrored] : []), 0, 1, 32, 400];
}

function getPath(doc, path) {
  let node = doc;
  for (const key of parts(path)) {
    if (!node || typeof node !== "object") return undefined;
    node = node[key];
  }
  return node;
}

function dropPath(doc, path) {
  const keys = parts(path);
  let node = doc;
  for (const key of keys.slice(0, -1)) {
    if (!node || typeof node !== "object") return false;
    node = node[key];
  }
  const last = keys[keys.length - 1];
  if (!node || typeof node !== "object" || !(last in node) || Array.isArray(node)) return false;
  delete node[last];
  return true;
}

function setPath(doc, path, value) {
  const keys = parts(path);
  let node = doc;
  for (const key of keys.slice(0, -1)) {
    if (!node || typeof node !== "object") return false;
    node = node[key];
  }
  if (!node || typeof node !== "object" || Array.isArray(node)) return false;
  node[keys[keys.length - 1]] = value;
  return true;
}
