// Where cases live outside the form: the page address (#case=...), saved cases,
// the current draft and the readers stock in localStorage. Nothing here
// interprets optics. Every write is read back, so a save that did not keep
// anything never reports success.

export const STORE_KEY = "prism-desk.store";
export const BACKUP_KEY = "prism-desk.store.unreadable";
export const STOCK_PREFIX = "prism-desk.stock.";
export const OLD_STOCK_KEY = "prism-desk.checks.readers-stock"; // schema 1
export const SCHEMA = 2;
export const MAX_NESTING = 32; // the core's limit (load_json), checked here before sending or saving

// --- documents -------------------------------------------------------------
// How deep a JSON value is: a number or string is 0 levels, {} or [] one.
// Stops counting once past `limit`, so a hostile value costs little.
export function nestingDepth(value, limit = MAX_NESTING) {
  let deepest = 0;
  const stack = [[value, 1]];
  while (stack.length) {
    const [node, depth] = stack.pop();
    if (node === null || typeof node !== "object") continue;
    if (depth > deepest) deepest = depth;
    if (deepest > limit) return deepest;
    for (const child of Array.isArray(node) ? node : Object.values(node)) {
      if (child !== null && typeof child === "object") stack.push([child, depth + 1]);
    }
  }
  return deepest;
}

export function tooDeep(value) {
  return nestingDepth(value) > MAX_NESTING;
}

export const TOO_DEEP = `is nested more than ${MAX_NESTING} levels deep, so it is not a Prism Desk document`;

// Parsed JSON text, or a sentence saying why not (never throws). JSON.parse
// itself can run out of stack on very deep text; that is reported the same way.
export function parseDocument(text) {
  let value;
  try {
    value = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (err) {
    return err instanceof RangeError ? { problem: TOO_DEEP } : { problem: "is not JSON" };
  }
  if (!value || typeof value !== "object" || Array.isArray(value)) return { problem: "does not hold a JSON object" };
  if (tooDeep(value)) return { problem: TOO_DEEP };
  return { value };
}

// --- page address --------------------------------------------------------
export function encodeCase(doc) {
  const bytes = new TextEncoder().encode(JSON.stringify(doc));
  let binary = "";
  for (const b of bytes) binary += String.fromCharCode(b);
  return btoa(binary).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

export function decodeCase(text) {
  const b64 = text.replace(/-/g, "+").replace(/_/g, "/");
  const binary = atob(b64 + "===".slice((b64.length + 3) % 4));
  const bytes = Uint8Array.from(binary, (c) => c.charCodeAt(0));
  return JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
}

// What the address holds: null (no case link), {doc}, or {problem: sentence}.
export function readAddress(hash = location.hash) {
  if (!hash.startsWith("#case=")) return null;
  const data = hash.slice("#case=".length);
  if (!/^[A-Za-z0-9_-]*$/.test(data) || data.length % 4 === 1) {
    return { problem: "The case in this link is damaged (its text is not valid base64), so nothing was opened from it." };
  }
  let text;
  try {
    const b64 = data.replace(/-/g, "+").replace(/_/g, "/");
    const binary = atob(b64 + "===".slice((b64.length + 3) % 4));
    text = new TextDecoder("utf-8", { fatal: true }).decode(Uint8Array.from(binary, (c) => c.charCodeAt(0)));
  } catch {
    return { problem: "The case in this link is damaged (it does not decode to UTF-8 text), so nothing was opened from it." };
  }
  const parsed = parseDocument(text);
  if (parsed.problem) return { problem: `The case in this link is damaged (it ${parsed.problem}), so nothing was opened from it.` };
  return { doc: parsed.value };
}

export function caseFromAddress(hash = location.hash) {
  const found = readAddress(hash);
  return found && found.doc ? found.doc : null;
}

export function caseAddress(doc) {
  return "#case=" + encodeCase(doc);
}

// --- localStorage, with a schema version ---------------------------------
// Schema history:
//   0 (early drafts): {"<name>": <case>, ...} with no version field
//   1: {schema: 1, cases: {"<name>": {saved: ISO date, case}}, draft: {saved, case} | null};
//      the readers stock as one array under "prism-desk.checks.readers-stock"
//   2: the same store with schema 2; the readers stock one key per row,
//      "prism-desk.stock.<uid>" = {uid, order, row: {id, power, oc_distance_mm, frame_size, count}},
//      so that two tabs never overwrite each other's rows.
const isObject = (v) => v !== null && typeof v === "object" && !Array.isArray(v);

// What storage holds: {store, problem?}. problem: "unreadable" (not JSON or the
// wrong shape), "newer" (a later version wrote it; read only), "off" (no storage).
export function inspect() {
  let raw;
  try {
    raw = localStorage.getItem(STORE_KEY);
  } catch {
    return { store: fresh(), problem: "off" };
  }
  if (raw === null) return { store: fresh() };
  let parsed;
  try {
    parsed = JSON.parse(raw);
  } catch {
    return { store: fresh(), problem: "unreadable", raw };
  }
  const store = migrate(parsed);
  if (!store) return { store: fresh(), problem: "unreadable", raw };
  if (store.readOnly) return { store, problem: "newer", raw };
  return { store };
}

function fresh() {
  return { schema: SCHEMA, cases: Object.create(null), draft: null };
}

const entryOk = (e) => isObject(e) && isObject(e.case) && !tooDeep(e.case);

// The store in today's shape, or null when it cannot be read as a store.
export function migrate(raw) {
  if (!isObject(raw)) return null;
  const out = fresh();
  if (raw.schema === undefined) {
    for (const [name, doc] of Object.entries(raw)) {
      if (isObject(doc) && !tooDeep(doc)) out.cases[name] = { saved: null, case: doc };
    }
    return out;
  }
  const newer = typeof raw.schema === "number" && raw.schema > SCHEMA; // read what fits, never write
  if (!newer && raw.schema !== 1 && raw.schema !== 2) return null;
  if (newer && !isObject(raw.cases)) return { ...out, readOnly: true };
  if (raw.cases !== undefined && !isObject(raw.cases)) return null;
  for (const [name, entry] of Object.entries(raw.cases || {})) if (entryOk(entry)) out.cases[name] = entry;
  out.draft = entryOk(raw.draft) ? raw.draft : null;
  if (newer) out.readOnly = true;
  return out;
}

// Before anything is written at start-up: an unreadable store is kept as it
// was under BACKUP_KEY (never overwritten with an empty one), a schema-1
// profile is moved to schema 2. Returns what the page should tell the user.
export function openStorage() {
  const found = inspect();
  const report = { problem: found.problem || null, backup: null };
  if (found.problem === "unreadable") {
    try {
      if (localStorage.getItem(BACKUP_KEY) === null) localStorage.setItem(BACKUP_KEY, found.raw);
      report.backup = localStorage.getItem(BACKUP_KEY);
      if (report.backup === found.raw) localStorage.removeItem(STORE_KEY);
    } catch {
      report.problem = "unreadable-unsaved"; // could not keep a copy: leave the store as it is
    }
  }
  if (found.problem !== "newer" && found.problem !== "off" && report.problem !== "unreadable-unsaved") {
    upgradeStock(report);
    const store = inspect().store;
    if (store.schema !== SCHEMA || localStorage.getItem(STORE_KEY) === null) writeStore(store);
  }
  return report;
}

// The damaged store's text, kept at start-up (null when there is none).
export function backupText() {
  try {
    return localStorage.getItem(BACKUP_KEY);
  } catch {
    return null;
  }
}

export function dropBackup() {
  try {
    localStorage.removeItem(BACKUP_KEY);
  } catch { /* nothing to do */ }
}

function readStore() {
  const found = inspect();
  return found.problem === "unreadable" ? null : found.store;
}

// Writes and reads back; false when storage refused or kept something else.
function writeStore(store) {
  if (!store || store.readOnly) return false;
  const text = JSON.stringify({ schema: SCHEMA, cases: store.cases, draft: store.draft });
  try {
    localStorage.setItem(STORE_KEY, text);
    return localStorage.getItem(STORE_KEY) === text;
  } catch {
    return false; // private mode or storage full: the address still carries the case
  }
}

// Why the last write did not keep anything, as a sentence.
export function whyNotSaved() {
  const found = inspect();
  if (found.problem === "newer") {
    return "the cases in this browser were saved by a newer version of Prism Desk, and this version leaves them " +
      "untouched; reload to get the newer version.";
  }
  if (found.problem === "unreadable") return "the saved cases in this browser could not be read; reload the page.";
  return "this browser's storage is full or turned off.";
}

export function saveDraft(doc) {
  if (tooDeep(doc)) return false;
  const store = readStore();
  if (!store) return false;
  store.draft = { saved: new Date().toISOString(), case: doc };
  return writeStore(store);
}

export function saveCase(name, doc) {
  if (tooDeep(doc)) return false;
  const store = readStore();
  if (!store) return false;
  const entry = { saved: new Date().toISOString(), case: doc };
  store.cases[name] = entry;
  if (!writeStore(store)) return false;
  const kept = readStore();
  return Boolean(kept && kept.cases[name] && JSON.stringify(kept.cases[name]) === JSON.stringify(entry));
}

// The entry removed (for undo), or null.
export function deleteCase(name) {
  const store = readStore();
  if (!store || !Object.hasOwn(store.cases, name)) return null;
  const entry = store.cases[name];
  delete store.cases[name];
  return writeStore(store) ? entry : null;
}

export function restoreCase(name, entry) {
  const store = readStore();
  if (!store) return false;
  store.cases[name] = entry;
  return writeStore(store);
}

export function savedNames() {
  return Object.keys(inspect().store.cases).sort((a, b) => a.localeCompare(b));
}

export function savedCase(name) {
  const cases = inspect().store.cases;
  return Object.hasOwn(cases, name) ? cases[name].case : null;
}

export function draftCase() {
  const draft = inspect().store.draft;
  return draft ? draft.case : null;
}

// --- the readers stock, one key per row (schema 2) ------------------------
export const STOCK_FIELDS = ["id", "power", "oc_distance_mm", "frame_size", "count"];

function cleanRow(row) {
  if (!isObject(row)) return null;
  const out = {};
  for (const key of STOCK_FIELDS) {
    const value = row[key];
    out[key] = value === undefined || value === null || typeof value === "object" ? "" : String(value);
  }
  return out;
}

export function newUid() {
  return Date.now().toString(36) + Math.random().toString(36).slice(2, 8);
}

// [{uid, order, row}] in list order; entries that cannot be read are skipped
// and counted in `skipped`.
export function stockEntries() {
  const entries = [];
  let skipped = 0;
  try {
    for (let i = 0; i < localStorage.length; i += 1) {
      const key = localStorage.key(i);
      if (!key || !key.startsWith(STOCK_PREFIX)) continue;
      let value = null;
      try {
        value = JSON.parse(localStorage.getItem(key));
      } catch { /* counted below */ }
      const row = isObject(value) ? cleanRow(value.row) : null;
      if (!row || typeof value.order !== "number") {
        skipped += 1;
        continue;
      }
      entries.push({ uid: key.slice(STOCK_PREFIX.length), order: value.order, row });
    }
  } catch { /* storage turned off: an empty list */ }
  entries.sort((a, b) => a.order - b.order || a.uid.localeCompare(b.uid));
  return { entries, skipped };
}

export function putStockRow(uid, order, row) {
  const text = JSON.stringify({ uid, order, row: cleanRow(row) });
  try {
    localStorage.setItem(STOCK_PREFIX + uid, text);
    return localStorage.getItem(STOCK_PREFIX + uid) === text;
  } catch {
    return false;
  }
}

export function removeStockRow(uid) {
  try {
    localStorage.removeItem(STOCK_PREFIX + uid);
  } catch { /* nothing to do */ }
}

// Schema 1 kept the stock as one array; each readable row becomes its own key
// (after any rows already there), and the array is removed once all are kept.
function upgradeStock(report) {
  let raw;
  try {
    raw = localStorage.getItem(OLD_STOCK_KEY);
  } catch {
    return;
  }
  if (raw === null) return;
  let rows = null;
  try {
    rows = JSON.parse(raw);
  } catch { /* not JSON: left where it is */ }
  if (!Array.isArray(rows)) return;
  const { entries } = stockEntries();
  let order = entries.length ? entries[entries.length - 1].order + 1 : 1;
  let allKept = true;
  let skipped = 0;
  for (const row of rows) {
    const clean = cleanRow(row);
    if (!clean) {
      skipped += 1;
      continue;
    }
    allKept = putStockRow(newUid(), order, clean) && allKept;
    order += 1;
  }
  try {
    if (allKept) localStorage.removeItem(OLD_STOCK_KEY);
  } catch { /* kept for the next start */ }
  report.stockSkipped = skipped;
}
