// inkfilm's service worker: the app shell and static files from the cache, so
// the app opens at once and still opens when the shop network drops.
// Calculations (POST), /api and /snippets always go to the server: a result
// is never served from the cache as if it were live. When the server is out
// of reach, the converter and the film chain are worked out here instead
// (marked so on the page; see "Calculations worked out on this phone").
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

// --- Calculations worked out on this phone (offline-calc.js) ----------------------
// The converter's and the film chain's htmx POSTs go to the server; when it is
// out of reach (no network, no answer within SERVER_WAIT_MS, or the HTTPS front
// saying the app server is down) the worker answers with the same fragment,
// worked out here from the offline document. The next POST tries the server again.
importScripts({{ offline_calc|tojson }});  // the code, and its data as self.inkfilmOfflineData
const OFFLINE_PAGES = new Set(["/", "/film"]);
const SERVER_WAIT_MS = 4000;
let offlineCalc = null;
let csrfToken = "";

function offlineCalculator() {
  if (!offlineCalc) offlineCalc = self.inkfilmOffline.make(self.inkfilmOfflineData);
  return offlineCalc;
}

function unitSystem(request) {
  const sent = request.headers.get("X-Inkfilm-Units");
  if (sent === "metric" || sent === "imperial") return Promise.resolve(sent);
  if (!self.cookieStore) return Promise.resolve("metric");
  return self.cookieStore.get("inkfilm_units").then((cookie) => (cookie && cookie.value) || "metric", () => "metric");
}

function workedOutHere(request, copy) {
  const page = new URL(request.url).pathname;
  return Promise.all([copy.text(), unitSystem(request)]).then(([body, system]) => {
    const fields = {};
    new URLSearchParams(body).forEach((value, key) => { if (!(key in fields)) fields[key] = value; });
    const answer = offlineCalculator().compute(page, fields, system, csrfToken);
    return new Response(answer.html, {
      headers: { "Content-Type": "text/html; charset=utf-8", "Cache-Control": "no-store", "X-Inkfilm-Worked-Out": "phone" },
    });
  }).catch(() => Response.error());
}

function calculate(request) {
  const copy = request.clone();
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), SERVER_WAIT_MS);
  return fetch(request, { signal: controller.signal }).then((response) => {
    clearTimeout(timer);
    if (response.status >= 502 && response.status <= 504) return workedOutHere(request, copy);
    if (response.ok) {  // the session's CSRF token, for the save button of an answer worked out here
      response.clone().text().then((text) => {
        const token = text.match(/name="csrf_token" value="([^"]+)"/);
        if (token) csrfToken = token[1];
      }).catch(() => {});
    }
    return response;
  }, () => {
    clearTimeout(timer);
    return workedOutHere(request, copy);
  });
}

self.addEventListener("fetch", (event) => {
  const request = event.request;
  const url = new URL(request.url);
  if (request.method === "POST" && url.origin === self.location.origin && OFFLINE_PAGES.has(url.pathname)
      && request.headers.get("HX-Request") === "true") {
    event.respondWith(calculate(request));
    return;
  }
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
