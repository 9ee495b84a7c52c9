// Acidscape service worker: keeps every file of this build in one cache so the page
// works offline after the first visit. Written by build_scripts/build.py from
// build_scripts/sw.template.js; the two lists below are filled in by the build.
// The cache name carries a hash of the content, so a new build gets a fresh cache
// and the old one is deleted when the new worker activates.

const CACHE_NAME = /*@CACHE_NAME@*/;
const CACHE_PREFIX = "acidscape-";
const ASSETS = /*@ASSETS@*/;

self.addEventListener("install", (event) => {
  event.waitUntil(
    caches
      .open(CACHE_NAME)
      .then((cache) => cache.addAll(ASSETS.map((url) => new Request(url, { cache: "reload" }))))
      .then(() => self.skipWaiting()),
  );
});

// The page's "new version" notice (site/share-view.js watchForUpdates) may ask a waiting
// worker to take over at once; the page then reloads on "controllerchange".
self.addEventListener("message", (event) => {
  if (event.data && event.data.type === "skip-waiting") self.skipWaiting();
});

self.addEventListener("activate", (event) => {
  event.waitUntil(
    caches
      .keys()
      .then((names) =>
        Promise.all(
          names
            .filter((name) => name.startsWith(CACHE_PREFIX) && name !== CACHE_NAME)
            .map((name) => caches.delete(name)),
        ),
      )
      .then(() => self.clients.claim()),
  );
});

self.addEventListener("fetch", (event) => {
  const request = event.request;
  if (request.method !== "GET" || new URL(request.url).origin !== self.location.origin) {
    return;
  }
  event.respondWith(
    caches
      .open(CACHE_NAME)
      .then((cache) => cache.match(request, { ignoreSearch: true }))
      .then((hit) => hit || fetch(request)),
  );
});
