// Shared parts of the check screens (pair check, readers, deviation): building
// inputs, collecting them into the action's payload, drafts in localStorage,
// one calculation at a time per screen, and figures with data-key/data-value.
// Nothing here computes optics: every figure shown comes from the core's answer.
import { el, get } from "./results.js";
import { fixed } from "./zone-common.js";
import { pathInWords, refusalMessage, toValue } from "./form.js";

export { el, fixed, get };

const DRAFT_PREFIX = "prism-desk.checks.";
const DEBOUNCE_MS = 200;

// ---------------------------------------------------------------- storage
export function loadSaved(name, fallback = null) {
  try {
    const value = JSON.parse(localStorage.getItem(DRAFT_PREFIX + name) || "null");
    return value === null ? fallback : value;
  } catch {
    return fallback;
  }
}

export function save(name, value) {
  try {
    localStorage.setItem(DRAFT_PREFIX + name, JSON.stringify(value));
    return true;
  } catch {
    return false; // private mode or storage full
  }
}

// Every input, select and radio of a form by id -> what was typed or chosen.
export function saveFormDraft(name, form) {
  const draft = {};
  for (const input of form.querySelectorAll("input[id], select[id]")) {
    if (input.type === "file") continue;
    draft[input.id] = input.type === "radio" || input.type === "checkbox" ? input.checked : input.value;
  }
  save(name, draft);
}

export function restoreFormDraft(name, form) {
  const draft = loadSaved(name);
  if (!draft || typeof draft !== "object") return false;
  for (const [id, value] of Object.entries(draft)) {
    const input = form.querySelector("#" + CSS.escape(id));
    if (!input) continue;
    if (input.type === "radio" || input.type === "checkbox") input.checked = Boolean(value);
    else if (input.tagName === "SELECT") {
      if ([...input.options].some((o) => o.value === value)) input.value = value;
    } else input.value = typeof value === "string" ? value : "";
  }
  return true;
}

// ---------------------------------------------------------------- figures
// One figure from the answer: rounded text, the exact value in data-value.
export function fig(result, key, format, cls = "fig") {
  const value = get(result, key);
  if (value === undefined || value === null) return null;
  const node = el("span", { class: cls, "data-key": key,
    "data-value": typeof value === "object" ? JSON.stringify(value) : String(value) });
  node.textContent = format ? format(value) : String(value);
  return node;
}

export const signed = (digits) => (v) => {
  const text = fixed(digits)(v);
  return /^[1-9]|^0\.0*[1-9]/.test(text) ? "+" + text : text;
};
const prismDioptres = (v) => fixed(2)(v) + " Δ";
export const millimetres = (v) => fixed(1)(v) + " mm";
export const dioptres = (v) => signed(2)(v) + " D";
const baseInOut = (v) => fixed(2)(Math.abs(v)) + (v > 0 ? " BI" : v < 0 ? " BO" : "");
const baseUpDown = (v) => fixed(2)(Math.abs(v)) + (v > 0 ? " BU" : v < 0 ? " BD" : "");
export const inOut = (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "out" : "in"}`;
export const upDown = (v) => `${fixed(1)(Math.abs(v))} mm ${v < 0 ? "down" : "up"}`;
export const words = (v) => String(v).replace(/_/g, " ");

// A number with its unit as the core names it ("prism dioptres" or "mm").
export function withUnit(unit, digits = 2, sign = false) {
  const short = unit === "mm" ? " mm" : unit === "prism dioptres" ? " Δ" : unit === "dioptres" ? " D" : " " + unit;
  return (v) => (sign ? signed(digits) : fixed(digits))(v) + short;
}

export function factRow(label, ...content) {
  const present = content.filter((c) => c !== null && c !== undefined && c !== false);
  if (!present.length) return null;
  return el("div", { class: "row" }, el("dt", { text: label }), el("dd", {}, ...present));
}

export function facts(...rows) {
  return el("dl", { class: "facts" }, ...rows.filter(Boolean));
}

// A prism value of the core (base_in, base_up, amount, direction_360, in_words).
export function prismFigures(result, key) {
  if (!get(result, key)) return null;
  return el("span", { class: "prism-figs" },
    el("span", { class: "prism-words" }, fig(result, key + ".in_words")),
    el("span", { class: "components" },
      " (H ", fig(result, key + ".base_in", baseInOut), " · V ", fig(result, key + ".base_up", baseUpDown),
      " · ", fig(result, key + ".amount", prismDioptres), ")"));
}

// ---------------------------------------------------------------- building inputs
// A labelled input. kind "text" is sent as typed; "number" becomes a number when
// it is a plain decimal (anything else is sent as typed so that the core refuses
// it and names the field).
export function field({ id, label, hint, path, kind = "number", placeholder, value = "", wide = false }) {
  const input = el("input", { id, type: "text", "data-path": path, "data-kind": kind,
    inputmode: kind === "number" ? "decimal" : undefined, autocomplete: "off", spellcheck: "false",
    placeholder });
  input.value = value;
  const lab = el("label", { for: id }, label);
  if (hint) lab.append(" ", el("small", { text: hint }));
  return el("div", { class: "field" + (wide ? " wide" : "") }, lab, input);
}

export function selectField({ id, label, hint, path, options, wide = false }) {
  const select = el("select", { id, "data-path": path, "data-kind": "choice" },
    ...options.map(([value, text]) => el("option", { value, text })));
  const lab = el("label", { for: id }, label);
  if (hint) lab.append(" ", el("small", { text: hint }));
  return el("div", { class: "field" + (wide ? " wide" : "") }, lab, select);
}

// A right/left grid: rows of [label, hint, rightInput, leftInput].
export function eyeGrid(prefix, caption, rows) {
  const colR = `${prefix}-col-r`;
  const colL = `${prefix}-col-l`;
  const grid = el("div", { class: "grid eyes", role: "group", "aria-label": caption },
    el("span"), el("span", { class: "colhead", id: colR, text: "Right (R)" }),
    el("span", { class: "colhead", id: colL, text: "Left (L)" }));
  for (const row of rows) {
    const rowId = `${prefix}-row-${row.key}`;
    const head = el("span", { class: "rowhead", id: rowId }, row.label);
    if (row.hint) head.append(" ", el("small", { text: row.hint }));
    grid.append(head);
    for (const [eye, col] of [["right", colR], ["left", colL]]) {
      const input = el("input", { id: `${prefix}-${eye}-${row.key}`, type: "text",
        "data-path": row.path(eye), "data-kind": row.kind || "number",
        inputmode: (row.kind || "number") === "number" ? "decimal" : undefined,
        autocomplete: "off", spellcheck: "false", "aria-labelledby": `${col} ${rowId}`,
        placeholder: row.placeholder });
      grid.append(input);
    }
  }
  return grid;
}

export function button(text, attrs = {}) {
  return el("button", { type: "button", ...attrs, text });
}

// ---------------------------------------------------------------- collecting
// The value an input holds for the payload, or undefined when empty.
export function inputValue(input) {
  const kind = input.dataset.kind;
  if (kind === "choice") return input.value === "" ? undefined : input.value;
  if (input.value.trim() === "") return undefined;
  if (kind === "text") return input.value.trim();
  return toValue(input.value);
}

function setPath(doc, path, value) {
  const parts = path.split(".");
  let node = doc;
  parts.slice(0, -1).forEach((part, i) => {
    const next = parts[i + 1];
    if (node[part] === undefined) node[part] = /^\d+$/.test(next) ? [] : {};
    node = node[part];
  });
  node[parts[parts.length - 1]] = value;
}

// Visible inputs under root -> {doc, inputs: Map(path -> input), typed: any input filled}.
export function collect(root) {
  const doc = {};
  const inputs = new Map();
  let typed = false;
  for (const input of root.querySelectorAll("[data-path]")) {
    // Parts of the form hidden for the current choices are left out (the whole
    // screen being hidden is not such a part).
    const hiddenPart = input.closest("[hidden]");
    if ((hiddenPart && root.contains(hiddenPart)) || input.disabled) continue;
    if (input.type === "radio" && !input.checked) continue;
    const path = input.dataset.path;
    if (!inputs.has(path)) inputs.set(path, input);
    const value = inputValue(input);
    if (value === undefined) continue;
    if (input.dataset.kind !== "choice") typed = true;
    setPath(doc, path, value);
  }
  return { doc, inputs, typed };
}

// ---------------------------------------------------------------- refusals
// The input a refusal belongs to: the exact path, a prescription's text field
// for its sphere/cylinder/axis, else the nearest enclosing path, else the first
// input under it.
function inputFor(field, inputs, aliases = {}) {
  if (!field) return null;
  if (aliases[field] && inputs.get(aliases[field])) return inputs.get(aliases[field]);
  const rx = field.replace(/\.(sphere|cylinder|axis)$/, ".rx");
  for (const candidate of [field, rx]) if (inputs.get(candidate)) return inputs.get(candidate);
  let path = field;
  while (path.includes(".")) {
    path = path.slice(0, path.lastIndexOf("."));
    if (aliases[path] && inputs.get(aliases[path])) return inputs.get(aliases[path]);
    if (inputs.get(path)) return inputs.get(path);
  }
  for (const [key, input] of inputs) if (key.startsWith(field + ".")) return input;
  return null;
}

function labelOf(input) {
  if (!input) return "";
  if (input.labels && input.labels.length) return firstLine(input.labels[0]);
  const ids = (input.getAttribute("aria-labelledby") || "").split(/\s+/).filter(Boolean);
  if (ids.length) return ids.map((id) => firstLine(document.getElementById(id))).join(", ");
  return input.getAttribute("aria-label") || "";
}

function firstLine(node) {
  if (!node) return "";
  const copy = node.cloneNode(true);
  for (const small of copy.querySelectorAll("small")) small.remove();
  return copy.textContent.trim();
}

// ---------------------------------------------------------------- the answer band
// The answer a person reads first (the verdict, the pair to hand out, the
// deviation at the eye). It sits under the screen's title, before the form:
// pinned to the top of a phone or portrait tablet while the form scrolls under
// it, heading the results column on wider screens. Before any answer it says
// what to enter; when the input is refused it keeps the last answer, marked out
// of date, and names the field.
export function answerSlot({ id, action, label, prompt, after = [] }) {
  const content = el("div", { class: "band-content" }, el("p", { class: "band-prompt", text: prompt }));
  const slot = el("section", { class: "check-band", id, "data-action": action, "aria-label": label, "data-state": "empty" },
    content, ...after);
  slot.prompt = prompt;
  slot.content = content;
  return slot;
}

// ---------------------------------------------------------------- a check screen's shape
// What every check screen returns (DEVELOPERS.md, "Screens"): the screen starts
// (loads its tables, runs its first calculation) the first time it is shown,
// and a restarted engine recomputes it.
export function checkScreen({ root, resultsId, calc, start = () => {} }) {
  let started = false;
  document.addEventListener("pd:engine-restarted", () => {
    if (started) calc.schedule(0);
  });
  return {
    root,
    resultsId,
    calc,
    show() {
      root.hidden = false;
      if (started) return;
      started = true;
      start();
      calc.run();
    },
    hide() {
      root.hidden = true;
    },
  };
}

// ---------------------------------------------------------------- one screen's calculation
// Sends the screen's payload to the core (debounced, one request at a time, only
// the newest answer drawn), keeps the last good result on screen and marks it out
// of date when the input is refused, and marks the refused field. render(body,
// result, doc) draws the details and returns the answer band's content, which
// goes into the screen's answer slot (band).
export class Calculation {
  constructor({ messenger, action, results, band, build, render, hint, aliases = () => ({}), onShown = () => {} }) {
    this.messenger = messenger;
    this.action = action;
    this.results = results;
    this.band = band;
    this.status = results.querySelector(".check-status");
    this.body = results.querySelector(".check-body");
    this.build = build;
    this.render = render;
    this.hint = hint;
    this.aliases = aliases;
    this.onShown = onShown;
    this.lastGood = null;
    this.marked = [];
    this.timer = 0;
    this.timerPending = false;
    this.inFlight = false;
    this.again = false;
    this.results.dataset.status = "idle";
    this.results.dataset.seq = "0";
  }

  schedule(delay = DEBOUNCE_MS) {
    clearTimeout(this.timer);
    this.timerPending = true;
    if (this.results.dataset.status !== "failed") this.results.dataset.status = "pending";
    this.timer = setTimeout(() => this.run(), delay);
  }

  async run() {
    this.timerPending = false;
    if (this.inFlight) {
      this.again = true;
      return;
    }
    const built = this.build();
    if (!built.typed) {
      this.clearMarks();
      this.lastGood = null;
      this.results.dataset.status = "idle";
      delete this.results.dataset.request;
      this.status.textContent = "";
      this.body.replaceChildren(el("p", { class: "empty", text: this.hint }));
      this.band.dataset.state = "empty";
      this.band.content.replaceChildren(el("p", { class: "band-prompt", text: this.band.prompt }));
      return;
    }
    this.inFlight = true;
    const reply = await this.messenger.request(this.action, built.doc);
    this.inFlight = false;
    if (this.again) {
      this.again = false;
      this.run();
      return;
    }
    if (this.timerPending) return; // newer input is on its way
    if (reply.ok) this.show(built.doc, reply.result);
    else this.refuse(reply.error, built.inputs);
  }

  show(doc, result) {
    this.clearMarks();
    this.lastGood = { doc, result };
    // Sections the user opened stay open across recomputes.
    const open = new Set([...this.body.querySelectorAll("details[open][data-remember]")].map((d) => d.dataset.remember));
    const answer = this.render(this.body, result, doc);
    this.band.content.replaceChildren(answer);
    this.band.dataset.state = "current";
    for (const details of this.body.querySelectorAll("details[data-remember]")) {
      if (open.has(details.dataset.remember)) details.open = true;
    }
    this.results.dataset.request = JSON.stringify(doc);
    this.results.dataset.status = "current";
    this.results.dataset.seq = String(Number(this.results.dataset.seq) + 1);
    this.status.textContent = "Up to date.";
    this.onShown(result, doc);
  }

  refuse(error, inputs) {
    this.clearMarks();
    if (error.code && error.code !== "internal") {
      // The engine failed or timed out: the input is kept, nothing is marked.
      this.results.dataset.status = this.messenger.state === "failed" ? "failed" : (this.lastGood ? "stale" : "error");
      this.status.replaceChildren(el("span", { class: "problem", text: error.message }));
      this.bandProblem(null, error.message);
      return;
    }
    const field = error.field || "";
    const input = inputFor(field, inputs, this.aliases());
    const name = labelOf(input) || (field ? pathInWords(field) : "Input");
    const message = refusalMessage(field, error.message);
    if (input) this.mark(input, name, message);
    this.results.dataset.status = this.lastGood ? "stale" : "error";
    const lead = this.lastGood ? "Out of date: the figures below are for the last valid input. " : "";
    this.status.replaceChildren(el("span", { class: "problem" }, lead,
      el("strong", { text: name + ": " }), message));
    if (!this.lastGood) this.body.replaceChildren(el("p", { class: "empty", text: this.hint }));
    this.bandProblem(name, message);
  }

  // The band keeps the last answer, marked out of date, under one line naming
  // what was refused; with no answer yet it shows that line and the prompt.
  bandProblem(name, message) {
    this.band.dataset.state = this.lastGood ? "stale" : "error";
    const line = el("p", { class: "band-problem" },
      name ? el("strong", { text: name + ": " }) : null, message);
    const content = this.band.content;
    const rest = this.lastGood ? [...content.children].filter((c) => !c.classList.contains("band-problem"))
      : [el("p", { class: "band-prompt", text: this.band.prompt })];
    content.replaceChildren(line, ...rest);
  }

  mark(input, name, message) {
    input.setAttribute("aria-invalid", "true");
    const note = el("p", { class: "field-error", id: input.id + "-error" },
      el("strong", { text: name + ": " }), message);
    input.setAttribute("aria-describedby", note.id);
    const holder = input.closest(".field, .stock-cell");
    if (holder) {
      holder.classList.add("invalid");
      holder.append(note);
    } else {
      // In a right/left grid: right under the row the input is on.
      let last = input;
      while (last.nextElementSibling && last.nextElementSibling.tagName === "INPUT") last = last.nextElementSibling;
      last.after(note);
    }
    this.marked.push(input);
  }

  clearMarks() {
    for (const input of this.marked) {
      input.removeAttribute("aria-invalid");
      input.removeAttribute("aria-describedby");
      document.getElementById(input.id + "-error")?.remove();
      input.closest(".field, .stock-cell")?.classList.remove("invalid");
    }
    this.marked = [];
  }
}

// The results panel of a screen: heading, status line, body, print button.
export function resultsPanel({ id, action, title, intro }) {
  const heading = el("h2", { id: id + "-h", text: title });
  const print = button("Print", { class: "secondary", "aria-label": "Print this screen" });
  print.addEventListener("click", () => window.print());
  return el("section", { class: "check-results panel", id, "data-action": action, "aria-labelledby": id + "-h",
    tabindex: "-1" },
  el("div", { class: "results-head" }, heading, print),
  el("p", { class: "check-status", role: "status", "aria-live": "polite" }),
  intro ? el("p", { class: "hint", text: intro }) : null,
  el("div", { class: "check-body" }));
}

// Cautions from the answer, shown beside the verdict.
export function cautionsBox(result, title = "Before you rely on this") {
  const list = el("ul", {}, ...(result.cautions || []).map((_, i) => el("li", {}, fig(result, `cautions.${i}`, null, "caution"))));
  return el("aside", { class: "cautions check-cautions", "aria-label": title },
    el("h3", { text: title }), list);
}

// The standing caution shown on every check screen before any result.
export function standingCaution(text) {
  return el("p", { class: "standing-caution" },
    el("strong", { text: "A check aid. " }),
    text || "Verify every figure by measurement; the standards in force locally and licensed practitioners decide.");
}

// A file the user saves: a Blob through a temporary link.
export function download(name, text, type) {
  const blob = new Blob([text], { type });
  const link = el("a", { href: URL.createObjectURL(blob), download: name });
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(link.href), 10000);
}

// The current case (as the case screen last kept it), for "use the case" buttons.
export function prismText(value) {
  if (value === undefined || value === null) return "";
  if (typeof value === "string") return value;
  if (typeof value === "object" && !Array.isArray(value)) {
    const h = Number(value.base_in || 0);
    const v = Number(value.base_up || 0);
    if ("amount" in value && "base_360" in value) return `${value.amount} @ ${value.base_360}`;
    const parts = [];
    if (v) parts.push(Math.abs(v) + (v > 0 ? " BU" : " BD"));
    if (h) parts.push(Math.abs(h) + (h > 0 ? " BI" : " BO"));
    return parts.join(" ");
  }
  return String(value);
}

// A case lens's prescription as written text: its own rx, or its components
// written out with signs (only formatting what was typed; nothing is computed
// or rounded).
export function rxText(lens) {
  if (!lens || typeof lens !== "object") return "";
  if (typeof lens.rx === "string") return lens.rx;
  const text = (v) => (typeof v === "number" ? String(v) : typeof v === "string" ? v.trim() : "");
  const power = (v) => {
    const t = text(v);
    return t === "" || /^[+-]/.test(t) || Number(t) === 0 ? t : "+" + t;
  };
  const sphere = text(lens.sphere);
  if (sphere === "") return "";
  const cylinder = text(lens.cylinder);
  const sph = Number(sphere) === 0 ? "plano" : power(sphere);
  if (cylinder === "" || Number(cylinder) === 0) return sph === "plano" ? "plano" : sph + " DS";
  const axis = text(lens.axis);
  return `${sph} / ${power(cylinder)}` + (axis === "" ? "" : ` x ${axis}`);
}
