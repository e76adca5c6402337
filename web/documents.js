// Which kind of Prism Desk document a file holds, so that each screen imports
// only its own kind and refuses another in one sentence. The core's
// `read_document` action decides when the running core has it (the same reader
// as the command line); until then the kind is told by the top-level keys.
import { parseDocument } from "./store.js";

export const KINDS = {
  case: { words: "a case", screen: "the Case screen" },
  verification: { words: "a pair check (verification) document", screen: "the Pair check screen" },
  readers: { words: "a ready-made readers document", screen: "the Readers screen" },
  deviation: { words: "a deviation document", screen: "the Deviation screen" },
  batch: { words: "a batch document", screen: "the command line (batch)" },
};

const has = (doc, ...keys) => keys.some((k) => Object.hasOwn(doc, k));

// The kind by the top-level keys (docs/case-format.md names each kind's keys).
export function kindByKeys(doc) {
  if (has(doc, "ordered", "lens_type", "mounting", "standard")) return "verification";
  if (has(doc, "wearer", "stock")) return "readers";
  if (has(doc, "measured", "fixating")) return "deviation";
  if (has(doc, "cases", "csv")) return "batch";
  return "case";
}

// {kind, document} or {problem: sentence ending without a full stop}.
export async function readDocument(messenger, text, name) {
  const parsed = parseDocument(text);
  if (parsed.problem) return { problem: `${name} ${parsed.problem}` };
  let actions = [];
  if (messenger.state === "ready") {
    const ready = await messenger.ready.catch(() => null);
    actions = (ready && ready.version && ready.version.actions) || [];
  }
  if (actions.includes("read_document")) {
    const reply = await messenger.request("read_document", { text });
    if (reply.ok && reply.result && KINDS[reply.result.kind]) return reply.result;
    if (!reply.ok && !reply.error.code) return { problem: `${name}: ${reply.error.message.replace(/\.$/, "")}` };
    // The engine is not answering: the file's own keys decide.
  }
  return { kind: kindByKeys(parsed.value), document: parsed.value };
}

// "Not imported: x.json is a deviation document, not a case; open it on the Deviation screen."
export function wrongKind(name, kind, wanted) {
  const found = KINDS[kind] || { words: "another kind of document", screen: "another screen" };
  return `Not imported: ${name} is ${found.words}, not ${KINDS[wanted].words}; open it on ${found.screen}.`;
}

// Points the form can show: "distance", "near" and points with in/up millimetres.
// Anything else is refused rather than dropped without a word.
export function pointsProblem(doc) {
  if (!Object.hasOwn(doc, "points")) return "";
  if (!Array.isArray(doc.points)) return "its points of gaze are not a list";
  const bad = doc.points.findIndex((p) => !(p === "distance" || p === "near" ||
    (p && typeof p === "object" && !Array.isArray(p))));
  return bad < 0 ? "" : `point of gaze ${bad + 1} is neither “distance”, “near” nor a point with in and up millimetres`;
}
