// Id-tagged request/reply over a Worker. Each request gets exactly one reply:
//   {id, ok: true, result} or {id, ok: false, error: {field, message, code?}}.
// Messages without an id are events ({event: "ready" | "failed" | "progress" | "timings", ...}).
// A worker that stops after it was ready (an uncaught error, no answer in time)
// is reported as the event "stopped"; restart(worker) carries on with a new one.
// The protocol is described in docs/worker-protocol.md.

const START_WORDS = "The calculator could not start.";

export class Messenger {
  // `early`: messages the worker sent before this object existed (see boot.js).
  constructor(worker, { startTimeoutMs = 45000, requestTimeoutMs = 15000, onEvent = () => {},
    early = [], earlyError = null } = {}) {
    this.startTimeoutMs = startTimeoutMs;
    this.requestTimeoutMs = requestTimeoutMs;
    this.onEvent = onEvent;
    this.pending = new Map();
    this.nextId = 1;
    this.connect(worker, early, earlyError);
  }

  connect(worker, early = [], earlyError = null) {
    this.worker = worker;
    this.state = "starting";
    this.error = null;
    this.ready = new Promise((resolve, reject) => {
      this.markReady = resolve;
      this.markFailed = reject;
    });
    this.ready.catch(() => {}); // failure is reported through onEvent as well
    this.startTimer = setTimeout(() => this.fail({
      field: "", code: "start-timeout",
      message: "The calculator did not start within " + Math.round(this.startTimeoutMs / 1000) +
        " seconds. Reload the page to try again.",
    }), this.startTimeoutMs);
    const workerError = (detail) => {
      if (detail) console.warn("calculator worker:", detail);
      if (this.state === "ready") this.stop("The calculator stopped unexpectedly.");
      else this.fail({ field: "", code: "worker-error", message: START_WORDS + " Its script could not run in this browser." });
    };
    if (!worker) {
      queueMicrotask(() => workerError(earlyError));
      return;
    }
    worker.onmessage = null;
    worker.onerror = null;
    const mine = worker;
    worker.addEventListener("message", (e) => { if (this.worker === mine) this.receive(e.data); });
    worker.addEventListener("error", (e) => {
      e.preventDefault();
      if (this.worker === mine) workerError(e.message);
    });
    // Handed on once the page's own set-up has finished (its handlers may use this object).
    queueMicrotask(() => {
      for (const msg of early) if (this.worker === mine) this.receive(msg);
      if (earlyError && this.worker === mine) workerError(earlyError);
    });
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
      } else if (msg.event === "stopped") {
        this.stop(msg.error && msg.error.message);
        return;
      }
      this.onEvent(msg);
      return;
    }
    const entry = msg && this.pending.get(msg.id);
    if (!entry) return;
    this.pending.delete(msg.id);
    clearTimeout(entry.timer);
    entry.resolve(msg);
  }

  answerAll(error) {
    for (const [id, entry] of this.pending) {
      clearTimeout(entry.timer);
      entry.resolve({ id, ok: false, error });
    }
    this.pending.clear();
  }

  // Start-up failed: every pending and later request gets this error.
  fail(error) {
    if (this.state === "failed" || this.state === "stopped") return;
    clearTimeout(this.startTimer);
    this.state = "failed";
    this.error = error;
    this.markFailed(error);
    this.answerAll(error);
    this.onEvent({ event: "failed", error });
  }

  // The worker stopped after it was ready: it is ended; restart() starts another.
  stop(message) {
    if (this.state === "stopped" || this.state === "failed") return;
    clearTimeout(this.startTimer);
    const error = { field: "", code: "stopped",
      message: (message || "The calculator stopped.") + " Your input is kept; press Restart." };
    this.state = "stopped";
    this.error = error;
    try {
      this.worker?.terminate();
    } catch { /* already gone */ }
    this.answerAll(error);
    this.onEvent({ event: "stopped", error });
  }

  restart(worker) {
    clearTimeout(this.startTimer);
    this.answerAll({ field: "", code: "stopped", message: "The calculator was restarted." });
    try {
      this.worker?.terminate();
    } catch { /* already gone */ }
    this.connect(worker);
    this.onEvent({ event: "restarting" });
  }

  // Resolves (never rejects) with the reply object.
  request(action, payload = {}) {
    const id = this.nextId++;
    if (this.state === "failed" || this.state === "stopped") return Promise.resolve({ id, ok: false, error: this.error });
    return new Promise((resolve) => {
      const entry = { resolve, timer: 0 };
      // Sent first: a message that cannot be sent (a value the browser cannot
      // copy, nesting too deep for it) is answered at once and never left pending.
      try {
        if (this.worker) this.worker.postMessage({ id, action, payload });
      } catch (err) {
        console.warn("request not sent:", err && err.message);
        resolve({ id, ok: false, error: { field: "", code: "send",
          message: "This input could not be passed to the calculator (it is too large or too deeply nested)." } });
        return;
      }
      this.pending.set(id, entry);
      // The clock for a request starts once the engine is up. No answer in
      // time means the worker is stuck or gone.
      const ready = this.ready;
      ready.then(() => {
        if (!this.pending.has(id) || this.ready !== ready) return;
        entry.timer = setTimeout(() => {
          if (!this.pending.has(id)) return;
          this.pending.delete(id);
          resolve({ id, ok: false, error: { field: "", code: "timeout", message: "The calculator took too long to answer." } });
          this.stop("The calculator stopped answering.");
        }, this.requestTimeoutMs);
      }, () => {});
    });
  }
}
