// Module worker that owns the Python runtime and the calculation core.
// Requests: {id, action, payload}; one reply each: {id, ok, result | error}.
// Events (no id): {event: "ready", version, timings} or {event: "failed", error}.
// See docs/worker-protocol.md.

const t0 = performance.now();
const timings = {};
const here = (path) => new URL(path, import.meta.url).href;

function failure(code, message) {
  return { field: "", code, message };
}

async function start() {
  if (typeof WebAssembly !== "object" || typeof WebAssembly.instantiate !== "function") {
    throw failure("no-wasm", "This browser has WebAssembly turned off or does not support it.");
  }
  // Fetch the small lock file alongside the runtime; Pyodide loads the wheel it
  // lists (hash checked) while the interpreter boots.
  const lock = fetch(here("./pyodide-lock.json")).then((r) => {
    if (!r.ok) throw failure("fetch", "The engine's package list could not be loaded (" + r.status + ").");
    return r.text();
  });
  const [{ loadPyodide }, lockText] = await Promise.all([import("./pyodide/pyodide.mjs"), lock]);
  timings.script = performance.now() - t0;
  const pyodide = await loadPyodide({
    indexURL: here("./pyodide/"),
    lockFileContents: lockText,
    packageBaseUrl: here("./wheels/"),
    packages: ["prism-desk"],
    stdout: () => {},
    stderr: (line) => console.warn("[python]", line),
  });
  timings.runtime = performance.now() - t0;
  const bridge = pyodide.pyimport("pycore.bridge");
  timings.core = performance.now() - t0;
  return bridge.handle;
}

const engine = start();

engine.then(
  (handle) => {
    let version = null;
    try {
      const reply = JSON.parse(handle(JSON.stringify({ action: "version", payload: {} })));
      version = reply.ok ? reply.result : null;
    } catch (err) {
      console.warn("version request failed", err);
    }
    self.postMessage({ event: "ready", version, timings });
  },
  (err) => {
    const error = err && err.code ? err : failure("start", String((err && err.message) || err));
    self.postMessage({ event: "failed", error });
  },
);

self.addEventListener("message", async (e) => {
  const { id, action, payload } = e.data || {};
  if (typeof id !== "number" || typeof action !== "string") return;
  let handle;
  try {
    handle = await engine;
  } catch (err) {
    self.postMessage({ id, ok: false, error: err && err.code ? err : failure("start", String(err)) });
    return;
  }
  let reply;
  try {
    reply = JSON.parse(handle(JSON.stringify({ action, payload })));
  } catch (err) {
    console.warn("core failure", err);
    reply = { ok: false, error: failure("internal", "The calculation stopped unexpectedly; the input was kept.") };
  }
  if (reply.ok) {
    self.postMessage({ id, ok: true, result: reply.result });
  } else {
    const error = reply.error || {};
    self.postMessage({ id, ok: false, error: { field: error.field || "", message: error.message || "Refused." } });
  }
});
