// Id-tagged request/reply over a Worker. Each request gets exactly one reply:
//   {id, ok: true, result} or {id, ok: false, error: {field, message}}.
// Messages without an id are events ({event: "ready" | "failed", ...}).
// The protocol is described in docs/worker-protocol.md.

export class Messenger {
  // `early`: messages the worker sent before this object existed (see boot.js).
  constructor(worker, { startTimeoutMs = 45000, requestTimeoutMs = 15000, onEvent = () => {},
    early = [], earlyError = null } = {}) {
    this.worker = worker;
    this.pending = new Map();
    this.nextId = 1;
    this.requestTimeoutMs = requestTimeoutMs;
    this.onEvent = onEvent;
    this.state = "starting";
    this.ready = new Promise((resolve, reject) => {
      this.markReady = resolve;
      this.markFailed = reject;
    });
    this.ready.catch(() => {}); // failure is reported through onEvent as well
    this.startTimer = setTimeout(() => this.fail({
      field: "", code: "start-timeout",
      message: "The calculation engine did not start within " + Math.round(startTimeoutMs / 1000) +
        " seconds.",
    }), startTimeoutMs);
    const workerError = (message) => this.fail({
      field: "", code: "worker-error", message: message || "The engine's script could not run.",
    });
    if (!worker) {
      queueMicrotask(() => workerError(earlyError));
      return;
    }
    worker.onmessage = null;
    worker.onerror = null;
    worker.addEventListener("message", (e) => this.receive(e.data));
    worker.addEventListener("error", (e) => {
      e.preventDefault();
      workerError(e.message);
    });
    for (const msg of early) this.receive(msg);
    if (earlyError) queueMicrotask(() => workerError(earlyError));
  }

  receive(msg) {
    if (msg && msg.id === undefined) {
      if (msg.event === "ready") {
        clearTimeout(this.startTimer);
        this.state = "ready";
        this.markReady(msg);
      } else if (msg.event === "failed") {
        this.fail(msg.error);
        return;
      }
      this.onEvent(msg);
      return;
    }
    const entry = this.pending.get(msg.id);
    if (!entry) return;
    this.pending.delete(msg.id);
    clearTimeout(entry.timer);
    entry.resolve(msg);
  }

  fail(error) {
    if (this.state === "failed") return;
    clearTimeout(this.startTimer);
    this.state = "failed";
    this.error = error;
    this.markFailed(error);
    for (const [id, entry] of this.pending) {
      clearTimeout(entry.timer);
      entry.resolve({ id, ok: false, error });
    }
    this.pending.clear();
    this.onEvent({ event: "failed", error });
  }

  // Resolves (never rejects) with the reply object.
  request(action, payload = {}) {
    const id = this.nextId++;
    if (this.state === "failed") return Promise.resolve({ id, ok: false, error: this.error });
    return new Promise((resolve) => {
      // The clock for a request starts once the engine is up.
      const entry = { resolve, timer: 0 };
      this.pending.set(id, entry);
      this.ready.then(() => {
        if (!this.pending.has(id)) return;
        entry.timer = setTimeout(() => {
          this.pending.delete(id);
          resolve({ id, ok: false, error: { field: "", code: "timeout", message: "The engine took too long to answer." } });
        }, this.requestTimeoutMs);
      }, () => {});
      if (this.worker) this.worker.postMessage({ id, action, payload });
    });
  }
}
