// The comparison of tests/browser/test_offline_agreement.py, run in the page (page.evaluate).
(async (cases) => {
  const data = self.inkfilmOfflineData;  // the worker's own script: code and data together
  const calc = inkfilmOffline.make(data);
  const close = (a, b) => a === b || Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b));
  function features(html) {
    const doc = new DOMParser().parseFromString("<!doctype html><body>" + html + "</body>", "text/html");
    doc.querySelectorAll("[data-offline-note]").forEach((node) => node.remove());
    const errors = {};
    doc.querySelectorAll(".error-slot").forEach((slot) => {
      const message = slot.querySelector(".field-error");
      if (message) errors[slot.id.replace(/-error$/, "")] = message.textContent;
    });
    const attr = (selector, names) => [...doc.querySelectorAll(selector)].map((el) => names.map((n) => el.getAttribute(n)));
    return {
      errors,
      numbers: attr("data.num", ["data-unit", "value"]).concat(attr("[data-api-value]", ["data-api-unit", "data-api-value"])),
      menus: attr("[data-set-menu]", ["data-set-menu", "data-value"]).map((pair) => pair.join("=")),
      links: attr("a[href]", ["href"]).map((pair) => pair[0]),
      inputs: attr('.save-snippet input[name="inputs"]', ["value"]).map((pair) => JSON.parse(pair[0])),
      // the rest of the save form (title, client_id, kind; the outbox's mark), all but the session's token
      saveForm: attr(".save-snippet", ["data-outbox"]).concat(attr('.save-snippet input:not([name="inputs"]):not([name="csrf_token"])', ["name", "value"])).map((pair) => pair.join("=")),
      drawing: attr("rect.layer", ["y", "height"]).flat().map(Number),
      text: doc.body.textContent.replace(/\s+/g, " ").trim(),
    };
  }
  function sameValues(a, b) {
    const keys = Object.keys(a).sort();
    if (keys.join() !== Object.keys(b).sort().join()) return false;
    return keys.every((key) => typeof a[key] === "number" ? close(a[key], b[key]) : a[key] === b[key]);
  }
  const problems = [];
  let compared = 0, numbers = 0, errors = 0, apiChecked = 0;
  for (const [index, c] of cases.entries()) {
    document.cookie = "inkfilm_units=" + c.system + "; path=/";
    const response = await fetch(c.page, {
      method: "POST",
      headers: { "HX-Request": "true", "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams(c.fields),
    });
    const server = features(await response.text());
    const offline = calc.compute(c.page, c.fields, c.system);
    const phone = features(offline.html);
    const say = (what, a, b) => problems.push({ index, what, server: a, phone: b, case: c });
    compared += 1;
    const fields = Object.keys(server.errors).sort().join();
    if (fields !== Object.keys(phone.errors).sort().join()) say("error fields", server.errors, phone.errors);
    else if (c.words && JSON.stringify(server.errors) !== JSON.stringify(phone.errors)) say("error words", server.errors, phone.errors);
    if (fields) errors += 1;
    if (server.numbers.length !== phone.numbers.length) say("how many numbers", server.numbers, phone.numbers);
    else server.numbers.forEach(([unit, value], i) => {
      numbers += 1;
      if (unit !== phone.numbers[i][0] || !close(Number(value), Number(phone.numbers[i][1]))) say("number " + i, server.numbers[i], phone.numbers[i]);
    });
    if (server.menus.join() !== phone.menus.join()) say("menus", server.menus, phone.menus);
    if (server.links.join() !== phone.links.join()) say("links", server.links, phone.links);
    if (server.saveForm.join("|") !== phone.saveForm.join("|")) say("save form", server.saveForm, phone.saveForm);
    if (server.inputs.length !== phone.inputs.length || !server.inputs.every((v, i) => sameValues(v, phone.inputs[i]))) say("saved inputs", server.inputs, phone.inputs);
    if (server.drawing.length !== phone.drawing.length || !server.drawing.every((v, i) => Math.abs(v - phone.drawing[i]) <= 0.011)) say("drawing", server.drawing, phone.drawing);
    if (c.words && server.text !== phone.text) say("text", server.text, phone.text);
    if (offline.body && !Object.keys(phone.errors).length) {
      // The raw numbers against the JSON API, for the same request body.
      const api = await (await fetch(c.page === "/" ? "/api/v1/equivalents" : "/api/v1/film", {
        method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(offline.body),
      })).json();
      const expected = {};
      if (c.page === "/") api.groups.forEach((g) => g.values.forEach((v) => { expected[g.key + ":" + v.unit] = v.value; }));
      else Object.entries(api).forEach(([key, v]) => { expected[key] = v.value; });
      const raw = offline.numbers.filter(([key]) => c.page === "/film" || key.includes(":"));
      if (raw.length !== Object.keys(expected).length) say("API answer size", expected, raw);
      raw.forEach(([key, value]) => { if (!close(expected[key], value)) say("API " + key, expected[key], value); });
      apiChecked += 1;
    }
  }
  return { compared, numbers, errors, apiChecked, problems: problems.slice(0, 25), problemCount: problems.length };
})
