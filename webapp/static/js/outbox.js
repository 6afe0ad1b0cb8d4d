// inkfilm's outbox, and the note that a new build is here.
// A save made while the server is out of reach waits on this phone (IndexedDB,
// through the vendored idb-keyval) and is sent when the server answers again:
// on the next page load, when the phone comes back online, when a calculation
// gets through again, and from the "Send now" button.
// A waiting save is the request body of POST /api/v1/snippets with a client_id
// made here, so the server keeps it once however often it is sent, and a newer
// build sends what an older one kept: keep DB, STORE and the item's shape.
// A save the server refuses stays, with the reason, until it is opened or discarded.
(function () {
  "use strict";
  // --- a new build ------------------------------------------------------------------
  // The service worker of a new build takes over at once (skipWaiting, clients.claim),
  // but this page came from the old one's cache: offer to reload (nothing waiting is lost).
  if (navigator.serviceWorker) {
    var controlled = !!navigator.serviceWorker.controller;
    navigator.serviceWorker.addEventListener("controllerchange", function () {
      var note = document.getElementById("new-build");
      if (controlled && note) note.hidden = false;
      controlled = true;
    });
  }
  document.addEventListener("click", function (event) {
    if (event.target.closest && event.target.closest("[data-reload]")) window.location.reload();
  });

  var kv = window.idbKeyval;
  if (!kv || !window.indexedDB) return;
  var DB = "inkfilm-outbox", STORE = "saves";
  var META = ["title", "job_number", "press", "station", "notes", "tags", "saved_by"];
  var store = kv.createStore(DB, STORE);
  var sending = null, lastSend = 0;

  function newId() {
    if (window.crypto.randomUUID) return window.crypto.randomUUID();
    var b = window.crypto.getRandomValues(new Uint8Array(16));
    b[6] = (b[6] & 15) | 64; b[8] = (b[8] & 63) | 128;
    var h = [].map.call(b, function (x) { return (x + 256).toString(16).slice(1); }).join("");
    return [h.slice(0, 8), h.slice(8, 12), h.slice(12, 16), h.slice(16, 20), h.slice(20)].join("-");
  }

  function items() {
    return kv.values(store).then(function (all) {
      return all.sort(function (a, b) { return a.made < b.made ? -1 : 1; });
    });
  }

  function within(ms, promise) {
    return Promise.race([promise, new Promise(function (_, fail) { setTimeout(fail, ms); })]);
  }

  // The session's CSRF token, fresh from the server: fails when it is out of reach.
  function token() {
    return within(6000, fetch("/outbox/token", { cache: "no-store", credentials: "same-origin" }))
      .then(function (r) { if (!r.ok) throw new Error("token"); return r.json(); })
      .then(function (answer) { return answer.csrf_token; });
  }

  // --- what the nav and the outbox page show ---------------------------------------
  function show() {
    return items().then(function (all) {
      document.querySelectorAll("[data-outbox-count]").forEach(function (n) { n.textContent = all.length; });
      var link = document.getElementById("outbox-link");
      if (link) {
        link.hidden = all.length === 0;
        link.classList.toggle("outbox-refused", all.some(function (item) { return item.reason; }));
      }
      var list = document.querySelector("[data-outbox-list]");
      if (list) draw(list, all);
      return all;
    });
  }

  function draw(list, all) {
    var template = document.getElementById("outbox-item");
    list.textContent = "";
    all.forEach(function (item) {
      var li = template.content.firstElementChild.cloneNode(true);
      li.querySelector('[data-part="title"]').textContent = item.body.title || item.body.kind;
      li.querySelector('[data-part="when"]').textContent = "Kept on this phone " +
        new Date(item.made).toLocaleString() + (item.reason ? "" : " · waiting for the server");
      var reason = li.querySelector('[data-part="reason"]');
      reason.hidden = !item.reason;
      reason.textContent = item.reason || "";
      li.querySelectorAll("button").forEach(function (button) { button.value = item.id; });
      list.appendChild(li);
    });
    var empty = document.querySelector("[data-outbox-empty]");
    if (empty) empty.hidden = all.length > 0;
  }

  function status(text) {
    document.querySelectorAll("[data-outbox-status]").forEach(function (n) { n.textContent = text; });
  }

  // --- keeping a save -----------------------------------------------------------------
  function bodyOf(form) {
    var data = new FormData(form);
    var body = { client_id: data.get("client_id"), kind: data.get("kind"), inputs: JSON.parse(data.get("inputs")) };
    META.forEach(function (name) {
      var value = data.get(name);
      if (value !== null && value !== "") body[name] = value;
    });
    if (!body.title) body.title = body.kind;
    return body;
  }

  function keep(form, madeHere) {
    var body = bodyOf(form);
    var item = { id: body.client_id, body: body, made: new Date().toISOString(), reason: "", from: location.pathname };
    return kv.set(item.id, item, store).then(show).then(function (all) {
      // A press of "Save this…" is one save; the next press is another (as online).
      if (madeHere) form.elements.client_id.value = "";
      var note = form.querySelector(".outbox-note") || document.createElement("p");
      note.className = "outbox-note notice";
      note.setAttribute("role", "status");
      note.textContent = "The server is out of reach: this save waits on this phone (waiting to be saved: " +
        all.length + "). It is sent when the server answers again.";
      form.appendChild(note);
    });
  }

  function reachable() {
    if (navigator.onLine === false) return Promise.resolve(false);
    return within(6000, fetch("/healthz", { cache: "no-store" }))
      .then(function (r) { return r.ok; }, function () { return false; });
  }

  document.addEventListener("submit", function (event) {
    var form = event.target;
    if (!form.matches || !form.matches("form[data-outbox]") || !form.elements.client_id) return;
    event.preventDefault();
    if (form.dataset.outboxBusy) return;
    form.dataset.outboxBusy = "1";
    var madeHere = !form.elements.client_id.value;
    if (madeHere) form.elements.client_id.value = newId();
    reachable().then(function (up) {
      if (up) return form.submit();  // the usual way, with the same client_id
      return keep(form, madeHere);
    }).catch(function () { /* kept nothing: the form is still there */ }).then(function () {
      delete form.dataset.outboxBusy;
    });
  });

  // --- sending ----------------------------------------------------------------------
  function reasonFor(status, error) {
    if (status === 401 || (status === 403 && /passcode|csrf/i.test(error.field || ""))) {
      return "Not saved: saving needs the shop passcode here. Open it to type the passcode, or unlock this phone " +
        "under Saved → Settings, then Send now.";
    }
    var where = error.field ? error.field.replace(/^inputs\./, "").replace(/_/g, " ") + ": " : "";
    return "Not saved: the server refused it (" + status + ") — " + where + (error.message || "no reason given") +
      ". Open it to put it right, or discard it.";
  }

  function sendOne(item, csrf) {
    var request = fetch("/api/v1/snippets", {
      method: "POST", cache: "no-store", credentials: "same-origin",
      headers: { "Content-Type": "application/json", "X-CSRF-Token": csrf },
      body: JSON.stringify(item.body)
    });
    return within(15000, request).then(function (response) {
      return response.json().catch(function () { return {}; }).then(function (answer) {
        var error = answer.error || {};
        // 409 on client_id after it was opened: the save page kept it, with the changes made there.
        if (response.ok || (response.status === 409 && item.opened && error.field === "client_id")) {
          return kv.del(item.id, store).then(function () { return 1; });
        }
        item.reason = response.status >= 500
          ? "Not saved yet: the server could not save it (" + (error.message || response.status) + "); it is tried again."
          : reasonFor(response.status, error);
        item.tried = new Date().toISOString();
        return kv.set(item.id, item, store).then(function () { return 0; });
      });
    }, function () { return null; });  // out of reach again: stop, keep the rest
  }

  function send() {
    if (sending) return sending;
    lastSend = Date.now();
    sending = items().then(function (all) {
      if (!all.length) return null;
      return token().then(function (csrf) {
        var sent = 0;
        return all.reduce(function (chain, item) {
          return chain.then(function (go) {
            return go === null ? null : sendOne(item, csrf).then(function (n) { sent += n || 0; return n; });
          });
        }, Promise.resolve(0)).then(function () { return sent; });
      }, function () { return null; });
    }).then(function (sent) {
      if (sent === null) status("The server is out of reach; the saves keep waiting here.");
      else if (sent) status(sent === 1 ? "1 save sent." : sent + " saves sent.");
    }, function () { /* IndexedDB refused: nothing was removed */ }).then(function () {
      sending = null;
      return show();
    });
    return sending;
  }

  // --- open and discard (the outbox page) -------------------------------------------------
  function open(id) {
    return kv.get(id, store).then(function (item) {
      if (!item) return show();
      return token().then(function (csrf) {
        item.opened = true;
        return kv.set(id, item, store).then(function () {
          var form = document.createElement("form");
          form.method = "post";
          form.action = "/snippets/new";
          var fields = { csrf_token: csrf, client_id: item.id, kind: item.body.kind, inputs: JSON.stringify(item.body.inputs) };
          META.forEach(function (name) { if (item.body[name]) fields[name] = item.body[name]; });
          Object.keys(fields).forEach(function (name) {
            var input = document.createElement("input");
            input.type = "hidden"; input.name = name; input.value = fields[name];
            form.appendChild(input);
          });
          document.body.appendChild(form);
          form.submit();
        });
      }, function () { status("The server is out of reach: open it once it answers."); });
    });
  }

  document.addEventListener("click", function (event) {
    var button = event.target.closest && event.target.closest("[data-outbox-send], [data-outbox-open], [data-outbox-discard]");
    if (!button) return;
    if (button.hasAttribute("data-outbox-send")) { status("Sending…"); send(); }
    else if (button.hasAttribute("data-outbox-open")) open(button.value);
    else if (window.confirm("Discard this save? It never reached the server, and it will be gone from this phone.")) {
      kv.del(button.value, store).then(show);
    }
  });

  window.addEventListener("online", send);
  // A calculation got through: the server answers again (tried at most every half minute).
  document.addEventListener("htmx:afterRequest", function (event) {
    if (!event.detail.successful || sending || Date.now() - lastSend < 30000) return;
    show().then(function (all) { if (all.length) send(); });
  });
  show().then(function (all) { if (all.length) send(); }, function () {});
})();
