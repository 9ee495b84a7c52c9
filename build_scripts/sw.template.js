// Acidscape service worker: keeps every file of this build for offline use. Written by
// build_scripts/build.py from build_scripts/sw.template.js; the two values below are filled in
// by the build.
//
// Caches. The files sit in three caches (vendor: Pyodide and BokehJS; snapshot: the Python
// memory image; app: the page, the core wheel, the manifest), each named by a hash of its own
// file names and contents. A build that changes only the page or the core keeps the vendor
// cache's name, and its files are not fetched again. Every file is fetched with its integrity
// hash, so a cache only ever holds this build's bytes; a cache with the same name already holds
// the same bytes, so only the entries it lacks are fetched.
//
// Updates. A new build installs in the background and then WAITS: the page that is open keeps
// running the copy it started with (the old worker and its caches stay until the new worker
// takes over). The page sees the waiting worker and shows its "new version" notice
// (site/share-view.js watchForUpdates); its reload button sends {type: "skip-waiting"}, the new
// worker activates, deletes the caches no longer named here, and the page reloads on
// "controllerchange".

const BUILD = /*@BUILD@*/;
const CACHE_PREFIX = "acidscape-";
// {group: {name, assets: [[url relative to this file, "sha256-<base64>"], ...]}}
const CACHES = /*@CACHES@*/;

const NAMES = new Set(Object.values(CACHES).map((group) => group.name));
// Which cache holds a URL (absolute, without query or fragment).
const CACHE_OF = new Map();
for (const group of Object.values(CACHES)) {
  for (const [url] of group.assets) CACHE_OF.set(new URL(url, self.location.href).href, group.name);
}

async function fillCache({ name, assets }) {
  const cache = await caches.open(name);
  const present = await Promise.all(assets.map(([url]) => cache.match(url)));
  const missing = assets.filter((_, i) => !present[i]);
  await Promise.all(
    missing.map(async ([url, integrity]) => {
      // "no-cache": revalidate with the server (a 304 reuses the HTTP cache's copy, so the first
      // visit does not download the page's files twice); the integrity hash guards the bytes.
      const response = await fetch(new Request(url, { cache: "no-cache", integrity }));
      if (!response.ok) throw new Error(`${url}: HTTP ${response.status}`);
      await cache.put(url, response);
    }),
  );
}

self.addEventListener("install", (event) => {
  event.waitUntil(Promise.all(Object.values(CACHES).map(fillCache)));
});

self.addEventListener("message", (event) => {
  if (event.data && event.data.type === "skip-waiting") self.skipWaiting();
  if (event.data && event.data.type === "build" && event.ports[0]) event.ports[0].postMessage(BUILD);
});

self.addEventListener("activate", (event) => {
  event.waitUntil(
    caches
      .keys()
      .then((names) =>
        Promise.all(
          names
            .filter((name) => name.startsWith(CACHE_PREFIX) && !NAMES.has(name))
            .map((name) => caches.delete(name)),
        ),
      )
      // Takes charge of a first visit's page; an update reaches here only after the page asked.
      .then(() => self.clients.claim()),
  );
});

self.addEventListener("fetch", (event) => {
  const request = event.request;
  if (request.method !== "GET") return;
  const url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  const name = CACHE_OF.get(url.origin + url.pathname);
  if (!name) return; // not a file of this build: the network answers
  event.respondWith(
    caches
      .open(name)
      .then((cache) => cache.match(request, { ignoreSearch: true }))
      .then((hit) => hit || fetch(request)),
  );
});
