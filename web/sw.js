// Service worker. build.py fills in the version and the precache list
// (every file of the release with its sha256), so the list always matches the build.
const VERSION = "__VERSION__";
const PREFIX = "prism-desk-";
const CACHE = PREFIX + VERSION;
const PRECACHE = /*PRECACHE*/__PRECACHE__/*END*/;
const LIST_KEY = "./__precache-list.json"; // written last: marks a cache as complete

const scoped = (path) => new URL(path, self.registration.scope).href;

async function olderCopies() {
  // url + integrity -> a cache of an earlier release holding that exact file
  const found = new Map();
  for (const name of await caches.keys()) {
    if (!name.startsWith(PREFIX) || name === CACHE) continue;
    const cache = await caches.open(name);
    const list = await cache.match(scoped(LIST_KEY));
    if (!list) continue;
    for (const [path, integrity] of await list.json()) found.set(path + " " + integrity, cache);
  }
  return found;
}

async function fill() {
  const cache = await caches.open(CACHE);
  const older = await olderCopies();
  await Promise.all(PRECACHE.map(async ([path, integrity]) => {
    const url = scoped(path);
    const earlier = older.get(path + " " + integrity);
    let response = earlier ? await earlier.match(url) : undefined;
    if (!response) {
      // Bypass the HTTP cache's freshness and refuse any byte that is not this release's.
      response = await fetch(url, { cache: "no-cache", integrity });
      if (!response.ok) throw new Error("precache failed: " + path + " " + response.status);
    }
    await cache.put(url, response);
  }));
  await cache.put(scoped(LIST_KEY), new Response(JSON.stringify(PRECACHE),
    { headers: { "Content-Type": "application/json" } }));
}

self.addEventListener("install", (event) => {
  event.waitUntil(fill());
});

self.addEventListener("activate", (event) => {
  // Only now, with the new cache complete and in charge, drop the old ones.
  event.waitUntil((async () => {
    for (const name of await caches.keys()) {
      if (name.startsWith(PREFIX) && name !== CACHE) await caches.delete(name);
    }
    await self.clients.claim();
  })());
});

self.addEventListener("message", (event) => {
  if (event.data && event.data.type === "skip-waiting") self.skipWaiting();
  if (event.data && event.data.type === "version" && event.ports[0]) event.ports[0].postMessage(VERSION);
});

const appShell = new Set([scoped("./"), scoped("./index.html")]);

self.addEventListener("fetch", (event) => {
  const request = event.request;
  if (request.method !== "GET") return;
  const url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  url.hash = "";
  url.search = "";
  if (request.mode === "navigate" && !appShell.has(url.href)) return;
  const key = request.mode === "navigate" ? scoped("./index.html") : url.href;
  event.respondWith((async () => {
    const cache = await caches.open(CACHE);
    const hit = await cache.match(key);
    return hit || fetch(request);
  })());
});
