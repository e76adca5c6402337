// Where cases live outside the form: the page address (#case=...), saved cases
// and the current draft in localStorage. Nothing here interprets optics.

export const STORE_KEY = "prism-desk.store";
export const SCHEMA = 1;

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

export function caseFromAddress(hash = location.hash) {
  const match = /^#case=([A-Za-z0-9_-]*)$/.exec(hash);
  if (!match) return null;
  try {
    const doc = decodeCase(match[1]);
    return doc && typeof doc === "object" && !Array.isArray(doc) ? doc : null;
  } catch {
    return null;
  }
}

export function caseAddress(doc) {
  return "#case=" + encodeCase(doc);
}

// --- localStorage, with a schema version ---------------------------------
// Schema history:
//   0 (early drafts): {"<name>": <case>, ...} with no version field
//   1: {schema: 1, cases: {"<name>": {saved: ISO date, case}}, draft: {saved, case} | null}
export function migrate(raw) {
  const fresh = { schema: SCHEMA, cases: {}, draft: null };
  if (!raw || typeof raw !== "object" || Array.isArray(raw)) return fresh;
  if (raw.schema === undefined) {
    for (const [name, doc] of Object.entries(raw)) {
      if (doc && typeof doc === "object") fresh.cases[name] = { saved: null, case: doc };
    }
    return fresh;
  }
  if (raw.schema === 1) {
    return {
      schema: 1,
      cases: raw.cases && typeof raw.cases === "object" ? raw.cases : {},
      draft: raw.draft || null,
    };
  }
  // A newer app wrote this; keep it untouched rather than guess.
  return { ...raw, readOnly: true };
}

export function readStore() {
  try {
    return migrate(JSON.parse(localStorage.getItem(STORE_KEY) || "null"));
  } catch {
    return migrate(null);
  }
}

function writeStore(store) {
  if (store.readOnly) return false;
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify(store));
    return true;
  } catch {
    return false; // private mode or storage full: the address still carries the case
  }
}

export function saveDraft(doc) {
  const store = readStore();
  store.draft = { saved: new Date().toISOString(), case: doc };
  return writeStore(store);
}

export function saveCase(name, doc) {
  const store = readStore();
  store.cases[name] = { saved: new Date().toISOString(), case: doc };
  return writeStore(store);
}

export function deleteCase(name) {
  const store = readStore();
  delete store.cases[name];
  return writeStore(store);
}

export function savedNames() {
  return Object.keys(readStore().cases).sort((a, b) => a.localeCompare(b));
}

export function savedCase(name) {
  const entry = readStore().cases[name];
  return entry ? entry.case : null;
}

export function draftCase() {
  const draft = readStore().draft;
  return draft ? draft.case : null;
}
