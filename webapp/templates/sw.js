// inkfilm's service worker: the app shell and static files from the cache, so
// the app opens at once and still opens when the shop network drops.
// Calculations (POST), /api and /snippets always go to the server: a result
// is never served from the cache as if it were live.
"use strict";
const CACHE = "inkfilm-{{ version }}";
const SHELL = {{ shell|tojson }};
const SHELL_PAGES = new Set({{ shell_pages|tojson }});

self.addEventListener("install", (event) => {
  event.waitUntil(
    // Versioned static files come from the HTTP cache when the page just loaded them.
    caches.open(CACHE).then((cache) => cache.addAll(SHELL))
      .then(() => self.skipWaiting())
  );
});

self.addEventListener("activate", (event) => {
  event.waitUntil(
    caches.keys()
      .then((keys) => Promise.all(keys.filter((key) => key.startsWith("inkfilm-") && key !== CACHE).map((key) => caches.delete(key))))
      .then(() => self.clients.claim())
  );
});

// The pages were drawn in the user's units; after a change of units, draw them again.
self.addEventListener("message", (event) => {
  if (event.data === "refresh-shell") {
    // Only the pages this phone has kept: a change of units fetches nothing new.
    event.waitUntil(caches.open(CACHE).then((cache) => Promise.all([...SHELL_PAGES].map((url) =>
      cache.match(url).then((hit) => hit && cache.add(new Request(url, { cache: "reload" })))))).catch(() => {}));
  }
});

function fromCacheFirst(request, key) {
  return caches.open(CACHE).then((cache) => cache.match(key).then((hit) => hit || fetch(request).then((response) => {
    if (response.ok && response.type === "basic") cache.put(key, response.clone());
    return response;
  })));
}

self.addEventListener("fetch", (event) => {
  const request = event.request;
  const url = new URL(request.url);
  if (request.method !== "GET" || url.origin !== self.location.origin) return;
  if (request.headers.has("HX-Request")) return;
  if (url.pathname.startsWith("/api/") || url.pathname.startsWith("/snippets")) {
    // Live data only; a navigation that cannot reach the server gets the offline page.
    if (request.mode === "navigate") {
      event.respondWith(fetch(request).catch(() => caches.match("/offline")));
    }
    return;
  }
  if (request.mode === "navigate" && SHELL_PAGES.has(url.pathname) && !url.search) {
    event.respondWith(fromCacheFirst(request, url.pathname).catch(() => caches.match("/offline")));
    return;
  }
  if (url.pathname.startsWith("/static/")) {
    event.respondWith(fromCacheFirst(request, request));
    return;
  }
  if (request.mode === "navigate") {
    event.respondWith(fetch(request).catch(() => caches.match("/offline")));
  }
});
