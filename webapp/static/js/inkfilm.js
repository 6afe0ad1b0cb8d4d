// inkfilm's own script: unit preference, "server out of reach" state, print
// button, service worker. Loaded with defer after htmx; no inline scripts (CSP).
(function () {
  "use strict";
  var root = document.documentElement;
  root.classList.add("js");

  var COOKIE = "inkfilm_units";
  var reach = document.getElementById("reach");

  function liveForms() {
    return document.querySelectorAll("form[data-live]");
  }

  function refreshResults() {
    if (!window.htmx) return;
    liveForms().forEach(function (form) { window.htmx.trigger(form, "refresh"); });
  }

  // --- Metric or imperial, remembered on this device --------------------------
  function savedSystem() {
    var match = document.cookie.match(/(?:^|;\s*)inkfilm_units=(metric|imperial)/);
    if (match) return match[1];
    try { return window.localStorage.getItem(COOKIE); } catch (e) { return null; }
  }

  function rememberSystem(system) {
    document.cookie = COOKIE + "=" + system + "; path=/; max-age=31536000; samesite=lax";
    try { window.localStorage.setItem(COOKIE, system); } catch (e) { /* private mode */ }
    if (navigator.serviceWorker && navigator.serviceWorker.controller) {
      // The cached pages were drawn in the old units: fetch them again.
      navigator.serviceWorker.controller.postMessage("refresh-shell");
    }
  }

  var system = savedSystem();
  if (system) {
    // Renew the cookie (from localStorage if the cookie was cleared); the cached pages are fine.
    document.cookie = COOKIE + "=" + system + "; path=/; max-age=31536000; samesite=lax";
    document.querySelectorAll('.units-form input[name="system"]').forEach(function (input) {
      input.checked = input.value === system;
    });
  }
  document.querySelectorAll(".units-form").forEach(function (form) {
    form.addEventListener("change", function (event) {
      if (event.target.name !== "system") return;
      rememberSystem(event.target.value);
      if (liveForms().length && window.htmx) {
        refreshResults();
      } else {
        form.submit();
      }
    });
  });

  // --- Server out of reach ------------------------------------------------------
  function showReach(target) {
    if (reach) reach.hidden = false;
    if (target) target.classList.add("is-stale");
  }
  function hideReach() {
    if (reach) reach.hidden = true;
    document.querySelectorAll(".is-stale").forEach(function (el) { el.classList.remove("is-stale"); });
  }
  document.body.addEventListener("htmx:sendError", function (event) { showReach(event.detail.target); });
  document.body.addEventListener("htmx:timeout", function (event) { showReach(event.detail.target); });
  document.body.addEventListener("htmx:afterRequest", function (event) {
    if (event.detail.successful) hideReach();
  });
  window.addEventListener("offline", function () { showReach(null); });
  window.addEventListener("online", function () { refreshResults(); });
  if (navigator.onLine === false) showReach(null);
  var retry = document.getElementById("reach-retry");
  if (retry) retry.addEventListener("click", function () {
    if (liveForms().length) refreshResults(); else window.location.reload();
  });

  // --- Mark the fields that have a message beside them -------------------------
  function markInvalid() {
    document.querySelectorAll(".error-slot").forEach(function (slot) {
      document.querySelectorAll('[aria-describedby~="' + slot.id + '"]').forEach(function (control) {
        if (slot.querySelector(".field-error")) control.setAttribute("aria-invalid", "true");
        else control.removeAttribute("aria-invalid");
      });
    });
  }
  document.body.addEventListener("htmx:afterSettle", markInvalid);
  markInvalid();

  // --- Print --------------------------------------------------------------------
  document.body.addEventListener("click", function (event) {
    if (event.target.closest && event.target.closest("[data-print]")) window.print();
  });

  // --- Installable app: the service worker ---------------------------------------
  if ("serviceWorker" in navigator) {
    // A page opened from the cache shows the numbers it was cached with: ask again.
    if (navigator.serviceWorker.controller) {
      document.addEventListener("htmx:load", function once() {
        document.removeEventListener("htmx:load", once);
        refreshResults();
      });
    }
    navigator.serviceWorker.register("/sw.js", { scope: "/" }).catch(function () { /* no worker: still works */ });
  }
})();
