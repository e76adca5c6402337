// Starts the calculation worker as early as the page can (before the body is
// parsed), keeping any early messages until app.js takes over.
"use strict";
(function () {
  var boot = { worker: null, early: [], error: null };
  try {
    boot.worker = new Worker("worker.js", { type: "module" });
    boot.worker.onmessage = function (e) { boot.early.push(e.data); };
    boot.worker.onerror = function (e) { e.preventDefault(); boot.error = e.message || "worker error"; };
  } catch (err) {
    boot.error = String((err && err.message) || err);
  }
  self.prismBoot = boot;
})();
