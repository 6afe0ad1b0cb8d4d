// The phone's outbox and the new-build note; how it works: webapp/outbox/__init__.py.
(() => {
  "use strict";
  window.inkfilmOutboxReady = true;  // from now on, js/inkfilm.js leaves the save forms to this script
  const $$ = (s) => document.querySelectorAll(s);
  const kv = window.idbKeyval;
  if (!kv || !window.indexedDB) return;
  const store = kv.createStore("inkfilm-outbox", "saves");
  const META = ["title", "job_number", "press", "station", "notes", "tags", "saved_by"];
  let sending = null, lastSend = 0;

  const newId = () => crypto.randomUUID ? crypto.randomUUID() : "10000000-1000-4000-8000-100000000000".replace(
    /[018]/g, (c) => (c ^ (crypto.getRandomValues(new Uint8Array(1))[0] & (15 >> (c / 4)))).toString(16));
  const items = async () => (await kv.values(store)).sort((a, b) => (a.made < b.made ? -1 : 1));
  const within = (ms, p) => Promise.race([p, new Promise((_, no) => setTimeout(no, ms))]);
  const say = (text) => $$("[data-outbox-status]").forEach((n) => { n.textContent = text; });

  async function token() {
    const r = await within(6000, fetch("/outbox/token", { cache: "no-store" }));
    if (!r.ok) throw new Error("no token");
    return (await r.json()).csrf_token;
  }

  async function show() {
    const all = await items(), link = document.getElementById("outbox-link");
    $$("[data-outbox-count]").forEach((n) => { n.textContent = all.length; });
    $$("[data-outbox-section]").forEach((n) => { n.hidden = !all.length; });
    if (link) {
      link.hidden = !all.length;
      link.classList.toggle("outbox-refused", all.some((item) => item.reason));
    }
    const list = document.querySelector("[data-outbox-list]");
    if (list) {
      list.replaceChildren(...all.map((item) => {
        const li = document.getElementById("outbox-item").content.firstElementChild.cloneNode(true);
        const part = (name) => li.querySelector(`[data-part="${name}"]`);
        part("title").textContent = item.body.title;
        part("when").textContent = `Kept on this phone ${new Date(item.made).toLocaleString([],
          { dateStyle: "medium", timeStyle: "short" })}${item.reason ? "" : " · waiting for the server"}`;
        part("reason").hidden = !item.reason;
        part("reason").textContent = item.reason || "";
        li.querySelectorAll("button").forEach((b) => { b.value = item.id; });
        return li;
      }));
      document.querySelector("[data-outbox-empty]").hidden = all.length > 0;
    }
    return all;
  }

  async function reachable() {
    if (navigator.onLine === false) return false;
    try { return (await within(6000, fetch("/healthz", { cache: "no-store" }))).ok; } catch (e) { return false; }
  }

  async function keep(form, madeHere) {
    const data = new FormData(form);
    const body = { client_id: data.get("client_id"), kind: data.get("kind"), inputs: JSON.parse(data.get("inputs")) };
    META.forEach((name) => { if (data.get(name)) body[name] = data.get(name); });
    body.title = body.title || body.kind;
    await kv.set(body.client_id, { id: body.client_id, body, made: new Date().toISOString(), reason: "" }, store);
    const all = await show();
    if (madeHere) form.elements.client_id.value = "";  // the next press is another save, as online
    const note = form.querySelector(".outbox-note") || form.appendChild(document.createElement("p"));
    note.className = "outbox-note notice";
    note.setAttribute("role", "status");
    note.textContent = `The server is out of reach: this save waits on this phone (waiting to be saved: ${all.length}). ` +
      "It is sent when the server answers again.";
  }

  document.addEventListener("submit", async (event) => {
    const form = event.target;
    if (!form.matches("form[data-outbox]") || !form.elements.client_id) return;
    event.preventDefault();
    if (form.dataset.busy) return;
    form.dataset.busy = "1";
    const madeHere = !form.elements.client_id.value;
    if (madeHere) form.elements.client_id.value = newId();
    try {
      if (await reachable()) {
        // the usual way, with the same client_id; a live answer may have replaced the form meanwhile
        if (!form.isConnected) { form.hidden = true; document.body.appendChild(form); }
        form.submit();
      }
      else await keep(form, madeHere);
    } finally { delete form.dataset.busy; }
  });

  function reason(status, error) {
    if (status === 401 || (status === 403 && /passcode|csrf/i.test(error.field || ""))) {
      return "Not saved: saving needs the shop passcode here. Open it to type the passcode, or unlock this phone " +
        "under Saved → Settings, then Send now.";
    }
    if (status >= 500) return `Not saved yet: the server could not save it (${error.message || status}); it is tried again.`;
    const where = error.field ? `${error.field.replace(/^inputs\./, "").replace(/_/g, " ")}: ` : "";
    return `Not saved: the server refused it (${status}) — ${where}${error.message || "no reason given"}. ` +
      "Open it to put it right, or discard it.";
  }

  async function sendOne(item, csrf) {
    let response;
    try {
      response = await within(15000, fetch("/api/v1/snippets", {
        method: "POST", cache: "no-store", body: JSON.stringify(item.body),
        headers: { "Content-Type": "application/json", "X-CSRF-Token": csrf },
      }));
    } catch (e) { return null; }
    const error = (await response.json().catch(() => ({}))).error || {};
    if (response.ok || (response.status === 409 && item.opened && error.field === "client_id")) {
      await kv.del(item.id, store);
      return 1;
    }
    item.reason = reason(response.status, error);
    await kv.set(item.id, item, store);
    return 0;
  }

  function send() {
    lastSend = Date.now();
    sending = sending || (async () => {
      try {
        const all = await items();
        if (!all.length) return;
        let sent = 0, csrf;
        try { csrf = await token(); } catch (e) { sent = null; }
        for (const item of all) {
          if (sent === null) break;
          const n = await sendOne(item, csrf);
          sent = n === null ? null : sent + n;
        }
        say(sent === null ? "The server is out of reach; the saves keep waiting here." :
          sent ? `Sent: ${sent}.` : "");
      } finally {
        sending = null;
        await show();
      }
    })();
    return sending;
  }

  async function open(id) {
    const item = await kv.get(id, store);
    let csrf;
    try { csrf = await token(); } catch (e) { return say("The server is out of reach: open it once it answers."); }
    item.opened = true;
    await kv.set(id, item, store);
    const form = Object.assign(document.createElement("form"), { method: "post", action: "/snippets/new" });
    const fields = { ...item.body, csrf_token: csrf, inputs: JSON.stringify(item.body.inputs) };
    Object.entries(fields).forEach(([name, value]) => {
      form.appendChild(Object.assign(document.createElement("input"), { type: "hidden", name, value }));
    });
    document.body.appendChild(form).submit();
  }

  document.addEventListener("click", (event) => {
    const button = event.target.closest("[data-outbox-send], [data-outbox-open], [data-outbox-discard]");
    if (!button) return;
    if (button.hasAttribute("data-outbox-send")) { say("Sending…"); send(); }
    else if (button.hasAttribute("data-outbox-open")) open(button.value);
    else if (confirm("Discard this save? It never reached the server, and it will be gone from this phone.")) {
      kv.del(button.value, store).then(show);
    }
  });

  window.addEventListener("online", send);
  document.addEventListener("htmx:afterRequest", (event) => {
    if (event.detail.successful && !sending && Date.now() - lastSend > 30000) send();
  });
  show().then((all) => all.length && send(), () => {});
})();
