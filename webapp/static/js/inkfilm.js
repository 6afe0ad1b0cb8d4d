// inkfilm's own script: unit preference, "server out of reach" state, print
// button, service worker. Loaded with defer after htmx; no inline scripts (CSP).
(function () {
  "use strict";
  var root = document.documentElement;
  root.classList.add("js");

  // The nav scrolls sideways on a phone: keep the current page's link in view.
  var here = document.querySelector(".mainnav [aria-current]");
  if (here && here.parentNode.scrollWidth > here.parentNode.clientWidth) {
    here.parentNode.scrollLeft = here.offsetLeft - (here.parentNode.clientWidth - here.offsetWidth) / 2;
  }

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

  // --- A unit typed with a value sets the unit menu ----------------------------
  // The result fragment names each menu it read a typed unit for ("4.5 bcm").
  function setMenus(root) {
    root.querySelectorAll("[data-set-menu]").forEach(function (marker) {
      var menu = document.getElementById(marker.getAttribute("data-set-menu"));
      if (menu && menu.value !== marker.getAttribute("data-value")) menu.value = marker.getAttribute("data-value");
    });
  }
  document.body.addEventListener("htmx:afterSwap", function (event) { setMenus(event.detail.target); });
  // Picking a unit from the menu takes over from a unit typed in the field: the text keeps its number.
  var LEADING_NUMBER = /^\s*([+-]?(?:\d[\d.,]*|[.,]\d+)(?:[ \u00a0\u202f]\d{3}(?![\d.,]))*(?:[.,]\d+)?(?:[eE][+-]?\d+)?)\s*(?![eE][+-]?\d)[^\d\s.,]/;
  document.body.addEventListener("change", function (event) {
    var menu = event.target;
    if (!menu.matches || !menu.matches("select[data-amount-for]")) return;
    var field = document.getElementById(menu.getAttribute("data-amount-for"));
    var match = field && field.value.match(LEADING_NUMBER);
    if (match) field.value = match[1];
  });

  // --- Choices remembered on this device (the converter's "answer in") -----------
  function cookieValue(name) {
    var match = document.cookie.match(new RegExp("(?:^|;\\s*)" + name + "=([^;]*)"));
    return match ? decodeURIComponent(match[1]) : null;
  }
  document.querySelectorAll("select[data-remember]").forEach(function (menu) {
    var name = menu.getAttribute("data-remember");
    var saved = cookieValue(name);
    if (saved === null) { try { saved = window.localStorage.getItem(name); } catch (e) { saved = null; } }
    var offered = saved !== null && [].some.call(menu.options, function (option) { return option.value === saved; });
    if (offered) {
      document.cookie = name + "=" + encodeURIComponent(saved) + "; path=/; max-age=31536000; samesite=lax";
      if (menu.value !== saved) {  // a page from the cache, drawn before the choice: ask again
        menu.value = saved;
        if (menu.form) document.addEventListener("htmx:load", function once() {
          document.removeEventListener("htmx:load", once);
          refreshResults();
        });
      }
    }
    menu.addEventListener("change", function () {
      document.cookie = name + "=" + encodeURIComponent(menu.value) + "; path=/; max-age=31536000; samesite=lax";
      try { window.localStorage.setItem(name, menu.value); } catch (e) { /* private mode */ }
    });
  });

  // --- Server out of reach ------------------------------------------------------
  // The banner says the numbers on screen are from before only when there are some.
  function resultShown() {
    return [].some.call(document.querySelectorAll(".result"), function (result) {
      return result.querySelector("data, .headline") !== null;
    });
  }
  // The converter and the film chain are worked out by the service worker meanwhile ("phone").
  function worksOffline() {
    return !!(navigator.serviceWorker && navigator.serviceWorker.controller && document.querySelector("form[data-works-offline]"));
  }
  function showReach(target, mode) {
    if (reach) {
      var when = mode || (worksOffline() ? "phone" : resultShown() ? "result" : "none");
      reach.querySelectorAll("[data-reach-when]").forEach(function (part) {
        part.hidden = part.getAttribute("data-reach-when") !== when;
      });
      reach.hidden = false;
    }
    document.querySelectorAll("[data-server-only]").forEach(function (note) { note.hidden = false; });
    if (target) target.classList.add("is-stale");
  }
  function hideReach() {
    if (reach) reach.hidden = true;
    document.querySelectorAll("[data-server-only]").forEach(function (note) { note.hidden = true; });
    document.querySelectorAll(".is-stale").forEach(function (el) { el.classList.remove("is-stale"); });
  }
  document.body.addEventListener("htmx:sendError", function (event) { showReach(event.detail.target); });
  document.body.addEventListener("htmx:timeout", function (event) { showReach(event.detail.target); });
  document.body.addEventListener("htmx:afterRequest", function (event) {
    if (!event.detail.successful) return;
    var xhr = event.detail.xhr;
    if (xhr && xhr.getResponseHeader("X-Inkfilm-Worked-Out") === "phone") showReach(null, "phone");
    else hideReach();
  });
  // The worker works an answer out in the user's units: it cannot read the cookie on every phone.
  document.body.addEventListener("htmx:configRequest", function (event) {
    event.detail.headers["X-Inkfilm-Units"] = savedSystem() || "metric";
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

  // --- Job ink estimate (calculators/_estimate_area.html) ---------------------------
  // While the form is edited the server keeps the last good totals on screen; it needs to
  // know which event sent the form (a submit makes an empty field an error) and which fields
  // were left (an empty field that was left is one too). After a station is added, copied
  // or removed, keyboard focus goes to that station (or the next one), not the footer.
  var ESTIMATE = "estimate-form";
  var leftFields = {};
  function estimateForm(elt) {
    var form = elt && (elt.tagName === "FORM" ? elt : elt.form);
    return form && form.id === ESTIMATE ? form : null;
  }
  document.body.addEventListener("focusout", function (event) {
    var field = event.target;
    var form = estimateForm(field);
    if (!form || !field.name || field.tagName !== "INPUT" || leftFields[field.name]) return;
    leftFields[field.name] = true;
    if (!field.value.trim() && window.htmx) window.htmx.trigger(form, "refresh");
  });
  document.body.addEventListener("htmx:configRequest", function (event) {
    if (!estimateForm(event.detail.elt)) return;
    var trigger = event.detail.triggeringEvent;
    event.detail.parameters["_event"] = trigger ? trigger.type : "";
    event.detail.parameters["_left"] = Object.keys(leftFields).join(" ");
  });
  // The rough coverage menu fills in its typical value, which stays editable.
  document.body.addEventListener("change", function (event) {
    var menu = event.target;
    if (!menu.matches || !menu.matches("select[data-typical-for]")) return;
    var option = menu.options[menu.selectedIndex];
    var field = document.getElementById(menu.getAttribute("data-typical-for"));
    var typical = option && option.getAttribute("data-typical");
    if (field && typical) field.value = typical;
  });
  var stationAction = null;
  document.body.addEventListener("click", function (event) {
    var button = event.target.closest && event.target.closest('button[name="action"]');
    if (!button || !estimateForm(button) || !/^(add|copy-|remove-)/.test(button.value)) return;
    stationAction = { value: button.value, area: document.getElementById("estimate-area") };
  });
  document.body.addEventListener("htmx:afterSettle", function () {
    var area = document.getElementById("estimate-area");
    if (!stationAction || !area || area === stationAction.area) return;  // the form is not new yet
    var action = stationAction.value;
    stationAction = null;
    Object.keys(leftFields).forEach(function (name) { if (name.indexOf("stations[") === 0) delete leftFields[name]; });
    var folds = area.querySelectorAll("details.station-fold");
    if (!folds.length) return;
    var index = folds.length - 1;  // added or copied: the last one
    if (action.indexOf("remove-") === 0) index = Math.min(parseInt(action.slice(7), 10) || 0, folds.length - 1);
    var fold = folds[index];
    var target = fold.open ? fold.querySelector("fieldset input, fieldset select") : fold.querySelector("summary");
    if (target) {
      target.focus({ preventScroll: true });
      fold.scrollIntoView({ block: "start" });
    }
  });

  // --- Print --------------------------------------------------------------------
  document.body.addEventListener("click", function (event) {
    if (event.target.closest && event.target.closest("[data-print]")) window.print();
  });

  // --- The outbox (js/outbox.js and idb-keyval), loaded only when needed ---------
  // Not part of the first load: loaded when a page lists the outbox, when saves wait
  // on this phone, when "Save this…" is pressed, and once the server has answered a
  // calculation with a save button (so the service worker keeps it for a save offline).
  var outboxLink = document.getElementById("outbox-link");
  var outboxLoad = null;
  function loadOutbox() {
    if (!outboxLoad) outboxLoad = new Promise(function (done, fail) {
      var urls = outboxLink ? outboxLink.getAttribute("data-scripts").split(" ") : [];
      (function next(i) {
        if (i === urls.length) return done();
        var script = document.createElement("script");
        script.src = urls[i];
        script.onload = function () { next(i + 1); };
        script.onerror = fail;
        document.head.appendChild(script);
      })(0);
    });
    return outboxLoad;
  }
  function savesWaiting(then) {
    // The outbox's own store (idb-keyval's createStore("inkfilm-outbox", "saves")), only counted here.
    if (!window.indexedDB) return;
    var ask = indexedDB.databases ? indexedDB.databases() : Promise.resolve([{ name: "inkfilm-outbox" }]);
    ask.then(function (all) {
      if (!all.some(function (d) { return d.name === "inkfilm-outbox"; })) return;
      var open = indexedDB.open("inkfilm-outbox");
      open.onupgradeneeded = function () { open.result.createObjectStore("saves"); };
      open.onsuccess = function () {
        var count = open.result.transaction("saves").objectStore("saves").count();
        count.onsuccess = function () { open.result.close(); if (count.result) then(); };
      };
    }, function () {});
  }
  if (outboxLink) {
    if (document.querySelector("[data-outbox-list], [data-outbox-section]")) loadOutbox();
    else savesWaiting(loadOutbox);
    document.addEventListener("submit", function (event) {
      var form = event.target;
      if (window.inkfilmOutboxReady || !form.matches("form[data-outbox]")) return;
      event.preventDefault();
      // A live answer may replace the pressed form while the scripts load: the press still saves what it showed.
      function attached() {
        if (!form.isConnected) { form.hidden = true; document.body.appendChild(form); }
        return form;
      }
      loadOutbox().then(function () { attached().requestSubmit(); }, function () { attached().submit(); });
    });
    document.body.addEventListener("htmx:afterRequest", function (event) {
      var xhr = event.detail.xhr;
      if (event.detail.successful && !(xhr && xhr.getResponseHeader("X-Inkfilm-Worked-Out"))
          && document.querySelector("form[data-outbox]")) loadOutbox().catch(function () {});
    });
  }

  // --- Installable app: the service worker ---------------------------------------
  // A page drawn by an older build offers a reload when the new build's worker takes over.
  var controlled = !!(navigator.serviceWorker && navigator.serviceWorker.controller);
  if (navigator.serviceWorker) navigator.serviceWorker.addEventListener("controllerchange", function () {
    var note = document.getElementById("new-build");
    if (controlled && note) note.hidden = false;
    controlled = true;
  });
  document.body.addEventListener("click", function (event) {
    if (event.target.closest && event.target.closest("[data-reload]")) window.location.reload();
  });
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
