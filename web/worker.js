// Module worker that owns the Python runtime and the calculation core.
// Requests: {id, action, payload}; one reply each: {id, ok, result | error}.
// Events (no id): {event: "ready", version, timings, start}, {event: "failed", error},
// {event: "progress", file, what, loaded, total}, {event: "stopped", error}, {event: "timings"}.
// See docs/worker-protocol.md.
//
// Start-up: the runtime, the lock file and the core's wheel are fetched in
// parallel; the wheel is hash checked (its sha256 from the lock file), inflated
// while the runtime starts and written into site-packages once it is up. After
// the first answer, an image of the warmed interpreter's memory is kept in Cache
// Storage, so later visits restore it instead of booting Python and importing the
// core again. Any trouble with that image falls back to the ordinary start.

const t0 = performance.now();
const timings = {};
const mark = (name) => { timings[name] = Math.round(performance.now() - t0); };
const here = (path) => new URL(path, import.meta.url).href;
const SNAPSHOT_CACHE = "pd-interpreter-image";
const SNAPSHOT_FORMAT = 1;

function failure(code, message) {
  return { field: "", code, message };
}

// ---------------------------------------------------------------- downloads
// Every file of the runtime, by the end of its name, in words a person knows.
const FILES = [
  [".wasm", "the Python runtime"],
  ["python_stdlib.zip", "Python's standard library"],
  [".whl", "the calculation core"],
  ["pyodide-lock.json", "the list of the calculator's parts"],
  [".mjs", "the runtime's loader"],
  [".js", "the runtime's loader"],
];
const whatIs = (url) => (FILES.find(([end]) => url.split("?")[0].endsWith(end)) || [null, "a part of the calculator"])[1];
const fileOf = (url) => url.split("?")[0].split("/").pop();
let startFailed = false;
let ready = false;

// Start-up fails at once (not after a time-out) when a file cannot be downloaded.
function downloadFailed(url, why) {
  if (startFailed || ready) return;
  startFailed = true;
  self.postMessage({ event: "failed", error: failure("fetch",
    `The calculator could not start: ${whatIs(url)} (${fileOf(url)}) could not be downloaded${why}. ` +
    "Check the connection and reload; once it has started here, the app also works offline.") });
}

// Large downloads report how far they are ({event: "progress"}), at most ~5 times a second.
function counted(url, response) {
  const total = Number(response.headers.get("Content-Length")) || 0;
  if (!response.body || total < 200000 || typeof ReadableStream !== "function") return response;
  let loaded = 0;
  let last = 0;
  const post = (force) => {
    const now = performance.now();
    if (!force && now - last < 200) return;
    last = now;
    self.postMessage({ event: "progress", file: fileOf(url), what: whatIs(url), loaded, total });
  };
  const reader = response.body.getReader();
  const stream = new ReadableStream({
    async pull(controller) {
      let part;
      try {
        part = await reader.read();
      } catch (err) {
        downloadFailed(url, " completely");
        controller.error(err);
        return;
      }
      if (part.done) {
        post(true);
        controller.close();
        return;
      }
      loaded += part.value.byteLength;
      post(false);
      controller.enqueue(part.value);
    },
    cancel(reason) { return reader.cancel(reason); },
  });
  post(true);
  return new Response(stream, { status: response.status, statusText: response.statusText, headers: response.headers });
}

// After a start-up failure has been reported, the runtime's own left-over
// rejections (its other downloads) are only logged.
self.addEventListener("unhandledrejection", (e) => {
  if (!startFailed) return;
  e.preventDefault();
  console.warn("after the start-up failure:", e.reason && e.reason.message);
});

const plainFetch = self.fetch.bind(self);
self.fetch = async (input, init) => {
  const url = typeof input === "string" ? input : input instanceof URL ? input.href : input.url;
  let response;
  try {
    response = await plainFetch(input, init);
  } catch (err) {
    downloadFailed(url, "");
    throw err;
  }
  if (!response.ok) {
    downloadFailed(url, ` (the server answered ${response.status})`);
    return response;
  }
  return counted(url, response);
};

function hexToBase64(hex) {
  let binary = "";
  for (let i = 0; i < hex.length; i += 2) binary += String.fromCharCode(parseInt(hex.slice(i, i + 2), 16));
  return btoa(binary);
}

async function fetchOk(url, options, what) {
  let response;
  try {
    response = await fetch(url, options);
  } catch (err) {
    throw failure("fetch", `The calculator could not start: ${what} could not be loaded. ` +
      "If you are offline, open the app once while online so that it can be kept on this device.");
  }
  if (!response.ok) throw failure("fetch", `The calculator could not start: ${what} could not be loaded (the server answered ${response.status}).`);
  return response;
}

// The wheel's files as [path in the wheel, bytes], read from its zip directory and
// inflated here (DecompressionStream) while the runtime starts, so that installing them
// is only writing files. The wheel's bytes were checked against the lock file's sha256
// when fetched. Null when this browser cannot inflate or the archive is not as expected:
// Python's zipfile then unpacks it.
async function wheelFiles(buffer) {
  if (typeof DecompressionStream !== "function") return null;
  const bytes = new Uint8Array(buffer);
  const view = new DataView(buffer);
  const word = (at) => view.getUint32(at, true);
  const half = (at) => view.getUint16(at, true);
  let end = bytes.length - 22;
  while (end >= 0 && word(end) !== 0x06054b50) end--;
  if (end < 0) return null;
  const names = new TextDecoder("utf-8", { fatal: true });
  const files = [];
  let at = word(end + 16);
  for (let i = half(end + 10); i > 0; i--) {
    if (word(at) !== 0x02014b50) return null;
    const method = half(at + 10);
    const size = word(at + 20);
    const name = names.decode(bytes.subarray(at + 46, at + 46 + half(at + 28)));
    const local = word(at + 42);
    at += 46 + half(at + 28) + half(at + 30) + half(at + 32);
    if (word(local) !== 0x04034b50 || (method !== 0 && method !== 8)
      || name.startsWith("/") || name.split("/").includes("..")) return null;
    const start = local + 30 + half(local + 26) + half(local + 28);
    const packed = bytes.subarray(start, start + size);
    files.push(method === 0 ? [name, packed] : new Response(
      new Blob([packed]).stream().pipeThrough(new DecompressionStream("deflate-raw")))
      .arrayBuffer().then((data) => [name, new Uint8Array(data)]));
  }
  return Promise.all(files);
}

// Writes the wheel's files into site-packages: inflated already (wheelFiles), or
// with Python's zipfile.
function install(pyodide, buffer, files) {
  if (files) {
    const root = pyodide.runPython("import site\nsite.getsitepackages()[0]");
    for (const [name, data] of files) {
      const path = `${root}/${name}`;
      pyodide.FS.mkdirTree(path.slice(0, path.lastIndexOf("/")));
      pyodide.FS.writeFile(path, data);
    }
    return;
  }
  pyodide.FS.writeFile("/tmp/prism_desk.whl", new Uint8Array(buffer));
  pyodide.runPython("import site, zipfile\n" +
    "with zipfile.ZipFile('/tmp/prism_desk.whl') as w: w.extractall(site.getsitepackages()[0])\n" +
    "del site, zipfile, w");
  pyodide.FS.unlink("/tmp/prism_desk.whl");
}

async function openImages() {
  try {
    return await caches.open(SNAPSHOT_CACHE);
  } catch {
    return null; // Cache Storage unavailable (private mode, old browser): no images
  }
}

async function start(useImage = true) {
  if (typeof WebAssembly !== "object" || typeof WebAssembly.instantiate !== "function") {
    throw failure("no-wasm", "This browser has WebAssembly turned off or does not support it.");
  }
  const lock = fetchOk(here("./pyodide-lock.json"), {}, "the list of the calculator's parts").then((r) => r.json());
  const entry = lock.then((l) => Object.values(l.packages)[0]);
  const wheel = entry.then((e) => fetchOk(here("./wheels/" + e.file_name),
    { integrity: "sha256-" + hexToBase64(e.sha256) }, "the calculation core").then((r) => r.arrayBuffer()));
  const images = openImages();
  const imageKey = entry.then((e) => here(`./__image/${SNAPSHOT_FORMAT}/${e.sha256}`));
  const image = !useImage ? Promise.resolve(null) : Promise.all([images, imageKey]).then(async ([cache, key]) => {
    const hit = cache && (await cache.match(key));
    return hit ? new Uint8Array(await hit.arrayBuffer()) : null;
  }).catch(() => null);
  wheel.catch(() => {});
  const inflated = wheel.then(wheelFiles).catch((err) => {
    console.warn("wheel not inflated here; Python unpacks it:", err && err.message);
    return null;
  });

  const [{ loadPyodide, version: runtimeVersion }, lockData, saved] =
    await Promise.all([import("./pyodide/pyodide.mjs").catch((err) => {
      console.warn("runtime loader:", err && err.message);
      throw failure("fetch", "The calculator could not start: the runtime's loader (pyodide.mjs) could not be " +
        "loaded. Check the connection and reload.");
    }), lock, image]);
  mark("fetched");
  const options = {
    indexURL: here("./pyodide/"),
    lockFileContents: lockData,
    packageBaseUrl: here("./wheels/"),
    stdout: () => {},
    stderr: (line) => console.warn("[python]", line),
  };
  let pyodide = null;
  let from = "boot";
  if (saved) {
    try {
      pyodide = await loadPyodide({ ...options, _loadSnapshot: saved });
      from = "image";
    } catch (err) {
      console.warn("saved interpreter image refused; starting afresh:", err && err.message);
      (await images)?.delete(await imageKey);
    }
  }
  if (!pyodide) pyodide = await loadPyodide({ ...options, _makeSnapshot: true });
  mark("runtime");

  // Unpack the (hash-checked) wheel into site-packages. After an image restore the
  // modules are already in memory, but their files are needed for later imports.
  let bridge;
  try {
    install(pyodide, await wheel, await inflated);
    mark("unpacked");
    bridge = pyodide.pyimport("pycore.interfaces.bridge");
  } catch (err) {
    if (from !== "image") throw err;
    console.warn("restored interpreter unusable; starting afresh:", err && err.message);
    (await images)?.delete(await imageKey);
    return start(false);
  }
  mark("core");

  const keepImage = async () => {
    if (from !== "boot") return;
    try {
      const cache = await images;
      if (!cache) return;
      // The first result needed only the case pipeline; load every other action's
      // modules now, so that the image holds them all.
      pyodide.pyimport("pycore.interfaces.actions").preload();
      const bytes = pyodide.makeMemorySnapshot();
      const key = await imageKey;
      for (const old of await cache.keys()) if (old.url !== key) await cache.delete(old);
      await cache.put(key, new Response(bytes, { headers: { "X-Runtime": runtimeVersion } }));
    } catch (err) {
      console.warn("interpreter image not kept:", err && err.message);
    }
  };
  return { handle: bridge.handle, from, keepImage };
}

const engine = start();

engine.then(
  ({ handle, from }) => {
    let version = null;
    try {
      const reply = JSON.parse(handle(JSON.stringify({ action: "version", payload: {} })));
      version = reply.ok ? reply.result : null;
    } catch (err) {
      console.warn("version request failed", err);
    }
    mark("ready");
    ready = true;
    self.postMessage({ event: "ready", version, timings, start: from });
  },
  (err) => {
    if (startFailed) return; // already reported, the moment a download failed
    startFailed = true;
    self.postMessage({ event: "failed", error: startError(err) });
  },
);

// A start-up error in words a person understands; the runtime's own text goes to the console.
function startError(err) {
  if (err && err.code) return err;
  console.warn("start-up failed:", err);
  return failure("start", "The calculator could not start in this browser (its runtime stopped while loading). " +
    "Reload the page; if that does not help, see the advice below.");
}

let imageQueued = false;

// After a restored image, a person's first dozen edits ran 10-30 ms where later ones
// run 3-5 ms (bench/results-web.md), most likely while the browser has not yet optimised
// the runtime's compiled code for what the core does. So once the
// first answer is out, the worker evaluates the same case again, with the right sphere
// stepped (so no answer comes from the core's small caches; a written right
// prescription is replaced by a sphere alone), one evaluation per task:
// a person's request waits behind one at most, and the answers are dropped.
const WARM_UP_RUNS = 100;
function warmUp(handle, action, payload) {
  const right = payload && payload.case && payload.case.right;
  if (!right || typeof right !== "object" || Array.isArray(right)) return;
  let run = 0;
  const step = () => {
    if (run >= WARM_UP_RUNS) return;
    const copy = structuredClone(payload);
    const sphere = -8 + (run++ % 64) * 0.25;
    if ("rx" in right) copy.case.right.rx = `${sphere.toFixed(2)} DS`;
    else copy.case.right.sphere = sphere;
    try {
      handle(JSON.stringify({ action, payload: copy }));
    } catch {
      return; // a stopped runtime is reported by the next real request
    }
    setTimeout(step, 0);
  };
  setTimeout(step, 0);
}

self.addEventListener("message", async (e) => {
  const { id, action, payload } = e.data || {};
  if (typeof id !== "number" || typeof action !== "string") return;
  let core;
  try {
    core = await engine;
  } catch (err) {
    self.postMessage({ id, ok: false, error: startError(err) });
    return;
  }
  let reply;
  try {
    reply = JSON.parse(core.handle(JSON.stringify({ action, payload })));
  } catch (err) {
    console.warn("core failure", err);
    if (err instanceof WebAssembly.RuntimeError || /fatal error/i.test(String(err && err.message))) {
      // The runtime cannot go on: the page ends this worker and offers a restart.
      self.postMessage({ id, ok: false, error: failure("stopped", "The calculator stopped unexpectedly.") });
      self.postMessage({ event: "stopped", error: failure("stopped", "The calculator stopped unexpectedly.") });
      return;
    }
    reply = { ok: false, error: failure("internal", "The calculation stopped unexpectedly; the input was kept.") };
  }
  if (reply.ok) {
    self.postMessage({ id, ok: true, result: reply.result });
  } else {
    const error = reply.error || {};
    if (error.detail) console.warn("core detail:", error.detail);
    self.postMessage({ id, ok: false, error: { field: error.field || "", message: error.message || "Refused." } });
  }
  // Once the first full answer is out (and the core's lazy imports are done),
  // keep an image of the warmed interpreter for the next visit.
  if (!imageQueued && (action === "evaluate" || action === "evaluate_live") && reply.ok) {
    if (core.from === "image") warmUp(core.handle, action, payload);
    imageQueued = true;
    mark("first");
    self.postMessage({ event: "timings", timings });
    setTimeout(core.keepImage, 50);
  }
});
