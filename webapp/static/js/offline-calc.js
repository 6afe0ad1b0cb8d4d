// inkfilm offline: the quick converter and the film chain worked out on the
// phone when the server is out of reach. Loaded by the service worker
// (importScripts); a page may load it too (the agreement test does).
//
// This file holds no factor, limit or message of its own: all of them come
// from the offline document the server makes from calc/ (/offline-data.json,
// see calc/offline.py and webapp/shell/offline_data.py). It reads the form as
// webapp/common/forms.py does, follows calc/equivalents.py and calc/film.py
// step by step (only multiplying, dividing and formatting), and writes the
// same fragment as templates/calculators/_converter_result.html and
// _film_result.html, marked as worked out on this phone.
(function (root) {
  "use strict";

  var NOTE = "Worked out on this phone — the server is out of reach.";

  function InputError(field, message) {
    this.field = field;
    this.message = message;
  }

  function fill(template, values) {
    return template.replace(/\{(\w+)\}/g, function (whole, name) {
      return Object.prototype.hasOwnProperty.call(values, name) ? values[name] : whole;
    });
  }

  function escapeHtml(text) {
    return String(text).replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;")
      .replace(/"/g, "&#34;").replace(/'/g, "&#39;");
  }

  // --- Numbers as Python writes them (repr) and as calc/display.py rounds them ---

  function shortest(x) {
    // The shortest decimal digits that read back as x, and the exponent of the first.
    var parts = Math.abs(x).toExponential().split("e");
    return { digits: parts[0].replace(".", ""), exponent: parseInt(parts[1], 10) };
  }

  function pyRepr(x) {
    if (x === 0) return 1 / x < 0 ? "-0.0" : "0.0";
    if (!isFinite(x)) return isNaN(x) ? "nan" : (x > 0 ? "inf" : "-inf");
    var sign = x < 0 ? "-" : "";
    var s = shortest(x), d = s.digits, e = s.exponent;
    if (e < -4 || e >= 16) {
      var mantissa = d[0] + (d.length > 1 ? "." + d.slice(1) : "");
      var power = Math.abs(e);
      return sign + mantissa + "e" + (e < 0 ? "-" : "+") + (power < 10 ? "0" : "") + power;
    }
    if (e < 0) return sign + "0." + "0".repeat(-e - 1) + d;
    var whole = (d + "0".repeat(Math.max(0, e + 1 - d.length))).slice(0, e + 1);
    var fraction = d.slice(e + 1);
    return sign + whole + "." + (fraction || "0");
  }

  function groupThousands(whole) {
    return whole.replace(/\B(?=(\d{3})+(?!\d))/g, ",");
  }

  function exponentText(x, figures) {
    // Python's f"{x:.{n}e}": at least two digits in the exponent.
    return x.toExponential(figures).replace(/e([+-])(\d)$/, "e$10$2");
  }

  function Numbers(rule) {
    function formatNumber(value, significant) {
      if (significant === undefined) significant = rule.significant;
      if (!isFinite(value)) return "—";
      if (value === 0) return "0";
      var exponent = Math.floor(Math.log10(Math.abs(value)));
      if (exponent < rule.scientific_below || exponent >= rule.scientific_from) {
        return exponentText(value, significant - 1);
      }
      // Decimal(repr(value)).quantize(10 ** (exponent - significant + 1), ROUND_HALF_UP)
      var s = shortest(value), d = s.digits, e = s.exponent;
      var quantum = exponent - significant + 1;
      var keep = e - quantum + 1;
      var kept;
      if (keep >= d.length) {
        kept = d + "0".repeat(keep - d.length);
      } else if (keep <= 0) {
        kept = keep === 0 && d[0] >= "5" ? "1" : "0";
      } else {
        kept = d.slice(0, keep);
        if (d[keep] >= "5") {
          var carried = "", carry = 1;
          for (var i = kept.length - 1; i >= 0; i--) {
            var digit = kept.charCodeAt(i) - 48 + carry;
            carry = digit > 9 ? 1 : 0;
            carried = String(digit % 10) + carried;
          }
          kept = (carry ? "1" : "") + carried;
        }
      }
      var sign = value < 0 ? "-" : "";
      kept = kept.replace(/^0+(?=\d)/, "");
      if (quantum >= 0) return sign + groupThousands(kept === "0" ? "0" : kept + "0".repeat(quantum));
      var places = -quantum;
      var padded = kept.length <= places ? "0".repeat(places - kept.length + 1) + kept : kept;
      var whole = padded.slice(0, padded.length - places), fraction = padded.slice(padded.length - places);
      fraction = fraction.replace(/0+$/, "");
      return sign + groupThousands(whole) + (fraction ? "." + fraction : "");
    }
    return {
      formatNumber: formatNumber,
      formatPercent: function (share) { return formatNumber(share * 100, rule.percent_significant); },
    };
  }

  // Python's round(x, 2) (ties to even; the only ties a float can hold are odd multiples of 1/8).
  function round2(x) {
    var eighths = x * 8;
    if (Number.isInteger(eighths) && eighths % 2 !== 0) {
      var low = Math.floor(x * 100);
      return (low % 2 === 0 ? low : low + 1) / 100;
    }
    return Number(x.toFixed(2));
  }

  // Python's f"{share:.0%}" (ties to even on the float share × 100).
  function percent0(share) {
    var y = share * 100, low = Math.floor(y), rest = y - low;
    var n = rest > 0.5 ? low + 1 : rest < 0.5 ? low : (low % 2 === 0 ? low : low + 1);
    return n + "%";
  }

  // --- The calculator --------------------------------------------------------------

  function Offline(data) {
    var units = data.units, forms = data.forms, numbers = Numbers(data.numbers);
    var messages = data.messages, formMessages = forms.messages, eq = data.equivalents;
    var formatNumber = numbers.formatNumber, formatPercent = numbers.formatPercent;

    function factor(spelling) {
      var entry = units[spelling];
      if (!entry) throw new Error("no factor for " + spelling);
      return entry[0];
    }
    function dimension(spelling) { return units[spelling][1]; }
    function Q(v, u) { return { v: v, u: u }; }
    function to(q, spelling) {
      if (q.u === spelling) return q.v;
      var direct = data.factors[q.u] && data.factors[q.u][spelling];
      if (direct !== undefined) return q.v * direct;  // pint's own factor: the same multiplication
      if (dimension(q.u) !== dimension(spelling)) throw new Error("cannot convert " + q.u + " to " + spelling);
      return q.v * factor(q.u) / factor(spelling);
    }
    function label(spelling) { return data.labels[spelling] || spelling; }
    function isImperial(spelling) { return data.imperial.indexOf(spelling) >= 0; }
    function roleUnits(role, system) {
      var pair = data.roles[role];
      return system === "imperial" ? [pair[1], pair[0]] : [pair[0], pair[1]];
    }
    function inOrder(spellings, system) {
      var first = spellings.filter(function (s) { return isImperial(s) === (system === "imperial"); });
      return first.concat(spellings.filter(function (s) { return first.indexOf(s) < 0; }));
    }

    // calc.display.show: a quantity in a unit, rounded, with its label and the full value.
    function show(q, spelling) {
      var value = to(q, spelling);
      return { number: formatNumber(value), unit: label(spelling), value: value, spelling: spelling, shown: true };
    }
    function text(shown) { return shown.number + " " + shown.unit; }
    // calc.display.show_value: a value in the working.
    function showValue(value, system) {
      if (value.shown) return text(value);
      if (typeof value === "number") return formatPercent(value) + " %";
      var how = data.working_units[value.u];
      if (how.role) return text(show(value, roleUnits(how.role, system)[0]));
      return formatNumber(value.v) + " " + how.label;
    }
    function step(template, values, result, system) {
      return {
        label: template.label,
        formula: template.formula,
        inputs: template.inputs.map(function (symbol) { return [symbol, showValue(values[symbol], system)]; }),
        result: template.symbol + " = " + showValue(result, system),
      };
    }
    function stepFor(templates, symbol) {
      for (var i = 0; i < templates.length; i++) if (templates[i].symbol === symbol) return templates[i];
      throw new Error("no step " + symbol);
    }
    function conversionStep(q, from, target, symbol, system) {
      var entry = data.conversions[from + ">" + target];
      if (!entry) throw new Error("no conversion step " + from + ">" + target);
      var values = {};
      values[symbol] = show(q, from);
      return step({ label: entry[0], formula: entry[1].split("§").join(symbol), symbol: symbol, inputs: [symbol] },
        values, show(q, target), system);
    }

    // --- webapp/common/forms.py ---------------------------------------------------
    var THOUSANDS = /^[+-]?\d{1,3}(,\d{3})+(\.\d*)?$/;
    var DECIMAL_COMMA = /^[+-]?\d*,\d+$/;
    var PLAIN = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
    var LEADING_NUMBER = /^\s*([+-]?(?:\d[\d.,]*|[.,]\d+)(?:[ \u00a0\u202f]\d{3}(?![\d.,]))*(?:[.,]\d+)?(?:[eE][+-]?\d+)?)\s*(.*?)\s*$/;

    function parseNumber(raw, field, required) {
      if (raw === undefined || raw === null) raw = "";
      var t = String(raw).trim().split(" ").join("").split("\u202f").join("");
      if (!t) {
        if (required) throw new InputError(field, formMessages.needs_number);
        return null;
      }
      if (t.length > 40) throw new InputError(field, formMessages.too_long);
      if (THOUSANDS.test(t)) t = t.split(",").join("");
      else if (DECIMAL_COMMA.test(t)) t = t.replace(",", ".");
      if (!PLAIN.test(t)) throw new InputError(field, fill(formMessages.not_number, { text: t }));
      var value = Number(t);
      if (!isFinite(value) || Math.abs(value) > data.limits.max_magnitude) {
        throw new InputError(field, formMessages.too_large);
      }
      return value;
    }
    function parsePercent(raw, field, required) {
      var value = parseNumber(typeof raw === "string" ? raw.split("%").join("") : raw, field, required);
      if (value === null) return null;
      if (!(value >= 0 && value <= 100)) throw new InputError(field, formMessages.percent_range);
      return value / 100;
    }
    function choose(value, allowed, field) {
      if (allowed.indexOf(value) < 0) throw new InputError(field, formMessages.choose);
      return value;
    }
    function unitNumber(unitText) {
      var spellings = forms.spellings;
      if (Object.prototype.hasOwnProperty.call(spellings, unitText)) return spellings[unitText];
      var tight = unitText.replace(/\s*([\/*])\s*/g, "$1").replace(/\s+/g, " ");
      if (Object.prototype.hasOwnProperty.call(spellings, tight)) return spellings[tight];
      return null;
    }
    function menuUnit(unitText, menu, field) {
      var stripped = unitText.trim();
      if (stripped.length > data.limits.max_unit_chars) throw new InputError(field, messages.unit_too_long);
      var number = unitNumber(stripped);
      if (number === null) {
        throw new InputError(field, "'" + stripped + "' is not a unit this phone knows without the server: " +
          "pick the unit from the list, or try again when the shop network is back");
      }
      var unit = forms.menu_units[menu][String(number)];
      if (!unit) throw new InputError(field, fill(forms.refusals[menu], { text: unitText }));
      return unit;
    }
    function parseAmount(form, field, unitField, menu, required) {
      var raw = form[field];
      var match = typeof raw === "string" ? LEADING_NUMBER.exec(raw) : null;
      if (match && match[2]) {
        var value = parseNumber(match[1], field, true);
        var unit = menuUnit(match[2], menu, field);
        form[unitField] = unit;
        form.typed_units[unitField] = unit;
        return [value, unit];
      }
      var plain = parseNumber(raw, field, required);
      if (plain === null) return null;
      return [plain, choose(form[unitField], forms.menus[menu], unitField)];
    }
    // calc.units.parse_quantity of the API body's "<repr> <unit>": the magnitude checks.
    function quantity(amount, field) {
      var value = amount[0];
      if (Math.abs(value) > data.limits.max_magnitude) throw new InputError(field, messages.too_large);
      if (value < 0) throw new InputError(field, messages.negative);
      if (value !== 0 && Math.abs(value) < data.limits.min_magnitude) throw new InputError(field, messages.too_small);
      return Q(value, amount[1]);
    }
    function density(amount, field) {
      var rho = quantity(amount, field);
      var limits = data.limits.density, value = to(rho, limits[2]);
      if (value < limits[0] || value > limits[1]) throw new InputError(field, messages.density_range);
      return rho;
    }
    function quantityText(amount) { return pyRepr(amount[0]) + " " + amount[1]; }
    function formValues(defaults, posted) {
      var form = {};
      Object.keys(defaults).forEach(function (key) { form[key] = defaults[key]; });
      Object.keys(posted).forEach(function (key) {
        if (Object.prototype.hasOwnProperty.call(defaults, key)) form[key] = posted[key];
      });
      form.typed_units = {};
      return form;
    }

    // --- calc/equivalents.py --------------------------------------------------------
    function group(key, value, note) {
      var entry = eq.groups[key];
      return { key: key, title: entry[0], units: entry[1], note: note || null,
        values: entry[1].map(function (spelling) { return Q(to(value, spelling), spelling); }) };
    }
    function equivalents(q, rho, share) {
      var kind = eq.kind_of[dimension(q.u)];
      if (!(q.v > 0)) throw new InputError("quantity", messages.not_positive);
      var anilox = eq.volume_per_area_units.indexOf(q.u) >= 0;
      var variant = kind === "film" && anilox ? "film_anilox" : kind;
      var plan = eq.by_kind[variant], templates = plan.steps;
      var notes = {};
      plan.groups.forEach(function (entry) { notes[entry[0]] = entry[1]; });
      var groups = [], raw = [], values = {}, steps = [];
      function add(symbol, result) {
        steps.push({ template: stepFor(templates, symbol), values: Object.assign({}, values), result: result });
        values[symbol] = result;
        raw.push(result.v);
        return result;
      }
      if (rho) values["ρ"] = rho;
      if (kind === "film") {
        values.V = q;
        var film = add("t", Q(to(q, "um"), "um"));
        groups.push(group("volume_per_area", q, notes.volume_per_area));
        groups.push(group("film_thickness", q, notes.film_thickness));
        if (!anilox) groups.push(group("thickness_other", q, notes.thickness_other));
        if (rho) {
          var weight = add("w", Q(film.v * to(rho, "g/cm3"), "g/m2"));
          var mileage = add("M", Q(to(Q(1 / weight.v, "m2/g"), "m2/kg"), "m2/kg"));
          groups.push(group("coat_weight", weight, notes.coat_weight));
          groups.push(group("mileage", mileage, notes.mileage));
        }
      } else if (kind === "coat_weight" || kind === "mileage") {
        var w, m;
        if (kind === "coat_weight") {
          values.w = q;
          w = Q(to(q, "g/m2"), "g/m2");
          m = add("M", Q(to(Q(1 / w.v, "m2/g"), "m2/kg"), "m2/kg"));
          groups.push(group("coat_weight", w, notes.coat_weight), group("mileage", m, notes.mileage));
        } else {
          values.M = q;
          m = Q(to(q, "m2/kg"), "m2/kg");
          w = add("w", Q(1 / to(m, "m2/g"), "g/m2"));
          groups.push(group("mileage", m, notes.mileage), group("coat_weight", w, notes.coat_weight));
        }
        if (rho) {
          values.w = w;
          var t = add("t", Q(w.v / to(rho, "g/cm3"), "um"));
          groups.push(group("film_thickness", t, notes.film_thickness), group("volume_per_area", t, notes.volume_per_area));
        }
      } else if (kind === "line_screen") {
        values.S = q;
        groups.push(group("line_screen", q, notes.line_screen));
        var pitch = add("p", Q(1 / to(q, "1/um"), "um"));
        groups.push(group("cell_pitch", pitch, notes.cell_pitch));
      } else if (kind === "area") {
        values.A = q;
        groups.push(group("area", q, notes.area));
        if (share !== null) {
          values.c = share;
          var inked = add("A_ink", Q(to(q, "m2") * share, "m2"));
          groups.push(group("inked_area", inked, fill(notes.inked_area, { percent: percent0(share) })));
        }
      } else if (kind === "volume" || kind === "mass") {
        groups.push(group(kind, q, notes[kind]));
        if (rho) {
          var kgPerL = to(rho, "kg/l");
          if (kind === "volume") {
            values.V = q;
            groups.push(group("mass", add("m", Q(to(q, "l") * kgPerL, "kg")), notes.mass));
          } else {
            values.m = q;
            groups.push(group("volume", add("V", Q(to(q, "kg") / kgPerL, "l")), notes.volume));
          }
        }
      } else {
        groups.push(group("density", q, notes.density));
      }
      return { quantity: q, kind: kind, groups: groups, steps: steps, raw: raw };
    }

    function workedSteps(list, system) {
      return list.map(function (entry) {
        if (entry.done) return entry.done;
        return step(entry.template, entry.values, entry.result, system);
      });
    }

    // --- webapp/calculators/convert.py: form_body, page and present ---------------------
    function converterBody(form) {
      var amount = parseAmount(form, "value", "unit", "converter", false);
      if (amount === null) {
        choose(form.unit, forms.menus.converter, "unit");
        return null;
      }
      var body = { quantity: quantityText(amount), _amount: amount };
      var rho = parseAmount(form, "density", "density_unit", "density", false);
      if (rho !== null) { body.density = quantityText(rho); body._density = rho; }
      var coverage = parsePercent(form.coverage, "coverage", false);
      if (coverage !== null) body.coverage = coverage;
      return body;
    }
    function findValue(groups, spelling) {
      for (var i = 0; i < groups.length; i++) {
        var index = groups[i].units.indexOf(spelling);
        if (index >= 0) return groups[i].values[index];
      }
      return null;
    }
    function presentEquivalents(result, system, typed, answerIn) {
      var q = result.quantity, counterpart = eq.counterparts[typed];
      var leadUnit = counterpart, leadNote = null;
      if (answerIn && answerIn !== typed) {
        if (findValue(result.groups, answerIn) !== null) leadUnit = answerIn;
        else if (dimension(q.u) === dimension(answerIn)) leadUnit = answerIn;
        else leadNote = label(answerIn) + " is not a unit for " + eq.kinds[result.kind];
      }
      var symbol = eq.symbols[eq.volume_per_area_units.indexOf(typed) >= 0 ? "volume_per_area" : result.kind];
      var working = [{ done: conversionStep(q, typed, counterpart, symbol, system) }].concat(result.steps);
      var answer = null;
      if (leadUnit) {
        var value = findValue(result.groups, leadUnit);
        if (value === null) value = Q(to(q, leadUnit), leadUnit);
        answer = { typed: show(q, typed), shown: show(value, leadUnit), note: leadNote };
        if (leadUnit !== counterpart && dimension(q.u) === dimension(value.u)) {
          working.splice(0, 0, { done: conversionStep(q, typed, leadUnit, symbol, system) });
        }
      }
      var ordered = result.groups.filter(function (g) { return g.units.indexOf(typed) >= 0; })
        .concat(result.groups.filter(function (g) { return g.units.indexOf(typed) < 0; }));
      var groups = ordered.map(function (g) {
        var byUnit = {};
        g.units.forEach(function (spelling, index) { byUnit[spelling] = g.values[index]; });
        var entry = { key: g.key, title: g.title, note: g.note,
          values: inOrder(g.units, system).map(function (spelling) { return show(byUnit[spelling], spelling); }) };
        if (g.note === eq.emptied_note && eq.volume_per_area_units.indexOf(typed) >= 0) {
          var share = data.film.anilox_to_plate * data.film.plate_to_substrate;
          entry.substrate = show(Q(byUnit.um.v * share, "um"), roleUnits("film", system)[0]);
          entry.film_link = "/film?anilox_volume=" + encodeURIComponent(pyRepr(q.v).replace(/\.0$/, "")) +
            "&anilox_unit=" + encodeURIComponent(typed).replace(/%2F/g, "/");
        }
        return entry;
      });
      return { kind: result.kind, answer: answer, groups: groups, steps: workedSteps(working, system) };
    }

    function converter(posted, system) {
      var defaults = Object.assign({}, forms.converter.defaults);
      var form = formValues(defaults, posted);
      var out = { page: "/", form: form, errors: {}, result: null, body: null, numbers: [] };
      try {
        var answerIn = choose(form.answer_in, forms.menus.converter.concat([""]), "answer_in");
        var body = converterBody(form);
        if (body !== null) {
          var q = quantity(body._amount, "quantity");
          equivalents(q, null, null);  // "more than 0" is checked before the density
          var rho = body._density ? density(body._density, "density") : null;
          var result = equivalents(q, rho, body.coverage === undefined ? null : body.coverage);
          out.result = presentEquivalents(result, system, form.unit, answerIn);
          out.numbers = collectConverter(out.result);
          delete body._amount; delete body._density;
          out.body = body;
        }
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        var field = error.field || "_form";
        out.errors[forms.converter.form_fields[field] || field] = error.message;
      }
      out.html = renderConverter(out);
      return out;
    }
    function collectConverter(result) {
      var list = [];
      if (result.answer) list.push([result.answer.shown.spelling, result.answer.shown.value]);
      result.groups.forEach(function (g) {
        g.values.forEach(function (v) { list.push([g.key + ":" + v.spelling, v.value]); });
      });
      return list;
    }

    // --- webapp/calculators/film.py and calc/film.py -----------------------------------
    function filmBody(form) {
      var body = {};
      body._anilox = parseAmount(form, "anilox_volume", "anilox_unit", "anilox", true);
      body.anilox_volume = quantityText(body._anilox);
      body.anilox_to_plate = parsePercent(form.anilox_to_plate, "anilox_to_plate", true);
      body.plate_to_substrate = parsePercent(form.plate_to_substrate, "plate_to_substrate", true);
      var rho = parseAmount(form, "ink_density", "ink_density_unit", "density", false);
      if (rho !== null) { body.ink_density = quantityText(rho); body._density = rho; }
      ["solids_by_volume", "solids_by_weight"].forEach(function (share) {
        var value = parsePercent(form[share], share, false);
        if (value !== null) body[share] = value;
      });
      return body;
    }
    function filmChain(body) {
      var volume = quantity(body._anilox, "anilox_volume");
      var high = data.film.anilox_high, inHigh = to(volume, high[1]);
      if (inHigh <= 0 || inHigh > high[0]) throw new InputError("anilox_volume", messages.anilox_range);
      var rho = body._density ? density(body._density, "ink_density") : null;
      var sv = body.solids_by_volume, sw = body.solids_by_weight;
      if (sw !== undefined && !rho) throw new InputError("ink_density", messages.needs_density);
      var templates = data.film.steps, steps = [];
      function add(symbol, inputs, result) {
        var values = {}, template = stepFor(templates, symbol);
        template.inputs.forEach(function (name, index) { values[name] = inputs[index]; });
        steps.push({ template: template, values: values, result: result });
        return result;
      }
      var tap = body.anilox_to_plate, tps = body.plate_to_substrate;
      var t0um = to(volume, "cm3/m2");
      var t0 = add("t₀", [volume], Q(t0um, "um"));
      var t1 = add("t₁", [t0, tap], Q(t0um * tap, "um"));
      var t2um = t0um * tap * tps;
      var t2 = add("t₂", [t1, tps], Q(t2um, "um"));
      var chain = { anilox_volume: volume, theoretical_wet: t0, plate_wet: t1, substrate_wet: t2, steps: steps };
      if (sv !== undefined) chain.dry = add("t_d", [t2, sv], Q(t2um * sv, "um"));
      if (rho) {
        var r = to(rho, "g/cm3");
        chain.wet_coat_weight = add("w_wet", [t2, rho], Q(t2um * r, "g/m2"));
        if (sw !== undefined) chain.dry_coat_weight = add("w_dry", [chain.wet_coat_weight, sw], Q(t2um * r * sw, "g/m2"));
      }
      return chain;
    }
    function both(q, role, system) {
      var pair = roleUnits(role, system);
      return [show(q, pair[0]), show(q, pair[1])];
    }
    function presentFilm(chain, system) {
      var rows = [];
      forms.film.rows.forEach(function (row) {
        var q = chain[row[0]];
        if (!q) return;
        var pair = both(q, row[2], system);
        rows.push({ key: row[0], label: row[1], main: pair[0], also: pair[1], api: show(q, row[3]) });
      });
      var films = forms.film.layers.filter(function (layer) { return chain[layer[0]]; });
      var spelling = roleUnits("film", system)[0];
      var values = films.map(function (layer) { return to(chain[layer[0]], "um"); });
      var top = values.length ? Math.max.apply(null, values) : 0;
      var layers = films.map(function (layer, index) {
        var height = top > 0 ? 140 * values[index] / top : 0;
        height = Math.max(height, 1);
        return { key: layer[0], label: layer[1], shown: show(chain[layer[0]], spelling),
          height: round2(height), y: round2(170 - height) };
      });
      return {
        anilox: both(chain.anilox_volume, "anilox", system),
        rows: rows,
        headline: rows.filter(function (row) { return row.key === "substrate_wet"; })[0],
        layers: layers,
        steps: workedSteps(chain.steps, system),
      };
    }
    function film(posted, system) {
      var form = formValues(forms.film.defaults, posted);
      var out = { page: "/film", form: form, errors: {}, chain: null, body: null, numbers: [] };
      try {
        var body = filmBody(form);
        var chain = filmChain(body);
        out.chain = presentFilm(chain, system);
        out.numbers = out.chain.rows.map(function (row) { return [row.key, row.api.value]; });
        delete body._anilox; delete body._density;
        out.body = body;
      } catch (error) {
        if (!(error instanceof InputError)) throw error;
        out.errors[error.field || "_form"] = error.message;
      }
      out.html = renderFilm(out);
      return out;
    }

    // --- The fragments (the same markup as the server's templates) ----------------------
    function fid(name) { return name.replace(/\[/g, "-").replace(/\]/g, "").replace(/\./g, "-"); }
    function errorSlots(names, errors) {
      return names.map(function (name) {
        return '<div id="' + fid(name) + '-error" class="error-slot" aria-live="polite" hx-swap-oob="innerHTML">' +
          (errors[name] ? '<p class="field-error">' + escapeHtml(errors[name]) + "</p>" : "") + "</div>";
      }).join("\n");
    }
    function menuChoices(form) {
      return Object.keys(form.typed_units).map(function (field) {
        return '<span hidden data-set-menu="' + fid(field) + '" data-value="' + escapeHtml(form.typed_units[field]) + '"></span>';
      }).join("");
    }
    function numData(shown, withUnit) {
      return '<data class="num" value="' + pyRepr(shown.value) + '"' +
        (withUnit ? ' data-unit="' + escapeHtml(shown.spelling) + '"' : "") + ">" + escapeHtml(shown.number) + "</data>";
    }
    function workingHtml(steps) {
      if (!steps.length) return "";
      return '<details class="working">\n  <summary>How this was worked out</summary>\n  <ol class="steps">\n' +
        steps.map(function (s) {
          return "    <li>\n      <p class=\"step-label\">" + escapeHtml(s.label) + "</p>\n" +
            '      <p class="step-formula"><code>' + escapeHtml(s.formula) + "</code></p>\n" +
            (s.inputs.length ? '      <p class="step-inputs">' + s.inputs.map(function (input) {
              return "<span><var>" + escapeHtml(input[0]) + "</var> = " + escapeHtml(input[1]) + "</span>";
            }).join("") + "</p>\n" : "") +
            '      <p class="step-result"><strong>' + escapeHtml(s.result) + "</strong></p>\n    </li>\n";
        }).join("") + "  </ol>\n</details>\n";
    }
    function pyJson(body) {
      // Flask's tojson: keys sorted, numbers as Python writes them, HTML-safe.
      return "{" + Object.keys(body).sort().map(function (key) {
        var value = body[key];
        return JSON.stringify(key) + ": " + (typeof value === "number" ? pyRepr(value) : JSON.stringify(value));
      }).join(", ") + "}";
    }
    function saveButton(kind, body, token) {
      var json = pyJson(body).replace(/</g, "\\u003c").replace(/>/g, "\\u003e").replace(/&/g, "\\u0026").replace(/'/g, "\\u0027");
      // The same form as snippets/_save_button.html: the outbox keeps it when the server is out of reach.
      var saving = forms.saving, spec = saving.kinds[kind], main = spec && body[spec.main];
      // As webapp.common.formatting.shown writes it: the unit by its label (in², not in2).
      var typed = typeof main === "string" ? main.trim() : null, cut = typed ? typed.lastIndexOf(" ") : -1;
      if (cut > 0) main = typed.slice(0, cut) + " " + label(typed.slice(cut + 1));
      var title = typeof main === "string" ? Array.from(spec.name + ": " + main).slice(0, saving.title_limit).join("") : spec.name;
      return '<form method="post" action="/snippets/new" class="save-snippet" data-outbox>\n' +
        '  <input type="hidden" name="csrf_token" value="' + escapeHtml(token || "") + '">\n' +
        '  <input type="hidden" name="kind" value="' + kind + '">\n' +
        "  <input type=\"hidden\" name=\"inputs\" value='" + json + "'>\n" +
        '  <input type="hidden" name="title" value="' + escapeHtml(title) + '">\n' +
        '  <input type="hidden" name="client_id" value="">\n' +
        '  <button type="submit" class="button button-quiet">Save this…</button>\n</form>\n';
    }
    var NOTE_HTML = '<p class="offline-note" data-offline-note>' + escapeHtml(NOTE) + "</p>";

    var CONVERTER_SLOTS = ["value", "unit", "density", "density_unit", "coverage", "answer_in", "_form"];
    var NEEDS = { film: "coat weight and mileage", coat_weight: "the film thickness", mileage: "the film thickness",
      volume: "the mass", mass: "the volume" };
    function converterAnswer(result) {
      if (!result || !result.answer) return "";
      var a = result.answer;
      return '<p class="answer" data-answer-unit="' + escapeHtml(a.shown.spelling) + '">\n' +
        '  <span class="answer-label">' + escapeHtml(text(a.typed)) + " is</span>\n" +
        '  <span class="answer-value">' + numData(a.shown, true) + " " + escapeHtml(a.shown.unit) + "</span>\n" +
        (a.note ? '  <span class="answer-note">' + escapeHtml(a.note) + "; shown in the other system's unit.</span>\n" : "") +
        "</p>\n" + NOTE_HTML + "\n";
    }
    function renderConverter(out, token) {
      var result = out.result, html = [];
      html.push(errorSlots(CONVERTER_SLOTS, out.errors));
      html.push('<div id="converter-answer" hx-swap-oob="innerHTML">' + converterAnswer(result) + "</div>");
      html.push(menuChoices(out.form));
      if (result) {
        html.push('<div class="groups">');
        result.groups.forEach(function (g) {
          html.push('  <div class="group" data-group="' + g.key + '">\n' +
            '    <h2 class="group-title">' + escapeHtml(g.title) + (g.note ? " <small>" + escapeHtml(g.note) + "</small>" : "") + "</h2>\n" +
            '    <ul class="equiv">\n' + g.values.map(function (v) {
              return "      <li>" + numData(v, true) + ' <span class="unit">' + escapeHtml(v.unit) + "</span></li>\n";
            }).join("") + "    </ul>\n" +
            (g.substrate ? '    <p class="group-more">On the substrate about a quarter of that: about ' + escapeHtml(text(g.substrate)) +
              ' at typical transfer. <a href="' + escapeHtml(g.film_link) + '">Work it out on Film chain</a></p>\n' : "") +
            "  </div>");
        });
        html.push("</div>");
        if (NEEDS[result.kind] && !out.body.density) {
          html.push('<p class="hint">Give the ink\'s density (under "Ink density and coverage") to see ' + NEEDS[result.kind] + " as well.</p>");
        } else if (result.kind === "area" && out.body.coverage === undefined) {
          html.push('<p class="hint">Give a coverage (under "Ink density and coverage") to see the inked area.</p>');
        }
        html.push(workingHtml(result.steps));
        html.push(saveButton("equivalents", out.body, token));
      } else if (!Object.keys(out.errors).length) {
        html.push('<p class="hint">Type a value above: an anilox volume (4.5 BCM/in²), a film (0.6 mil), a line screen (800 lpi), a coat weight, a mileage, an area…</p>');
      }
      return html.join("\n");
    }

    var FILM_SLOTS = ["anilox_volume", "anilox_unit", "anilox_to_plate", "plate_to_substrate", "ink_density",
      "ink_density_unit", "solids_by_volume", "solids_by_weight", "_form"];
    function filmHeadline(chain) {
      if (!chain) return '<p class="film-sticky-line"><span class="film-sticky-label">Fix the value marked beside its field.</span></p>';
      return '<p class="film-sticky-line"><span class="film-sticky-label">' + escapeHtml(chain.headline.label) + "</span>\n" +
        '  <span class="film-sticky-value">' + escapeHtml(text(chain.headline.main)) + '</span> <span class="also">' +
        escapeHtml(text(chain.headline.also)) + "</span></p>";
    }
    function filmDrawing(chain) {
      var title = chain.layers.map(function (l) { return l.label + " " + text(l.shown); }).join(", ");
      return '<figure class="drawing">\n  <svg class="film-drawing" viewBox="0 0 340 200" width="100%" role="img" aria-labelledby="film-drawing-title">\n' +
        '    <title id="film-drawing-title">Film thickness at each step, drawn to scale: ' + escapeHtml(title) + "</title>\n" +
        '    <line class="baseline" x1="4" x2="336" y1="170" y2="170"></line>\n' +
        chain.layers.map(function (l, index) {
          var x = 12 + index * 82;
          return '    <rect class="layer layer-' + l.key + '" data-layer="' + l.key + '" x="' + x + '" y="' + pyRepr(l.y) +
            '" width="66" height="' + pyRepr(l.height) + '" rx="3"></rect>\n' +
            '    <text class="layer-value" x="' + (x + 33) + '" y="' + pyRepr(l.y - 6) + '" text-anchor="middle">' + escapeHtml(l.shown.number) + "</text>\n" +
            '    <text class="layer-label" x="' + (x + 33) + '" y="190" text-anchor="middle">' + escapeHtml(l.label) + "</text>\n";
        }).join("") +
        "  </svg>\n  <figcaption>Film thickness in " + escapeHtml(chain.layers[0].shown.unit) + ", to scale.</figcaption>\n</figure>";
    }
    function renderFilm(out, token) {
      var chain = out.chain, html = [];
      html.push(errorSlots(FILM_SLOTS, out.errors));
      html.push('<div id="film-headline" hx-swap-oob="innerHTML">' + filmHeadline(chain) + "</div>");
      html.push(menuChoices(out.form));
      if (chain) {
        html.push(NOTE_HTML);
        html.push('<p class="headline">\n  <span class="headline-label">' + escapeHtml(chain.headline.label) + "</span>\n" +
          '  <span class="headline-value"><data class="num" value="' + pyRepr(chain.headline.main.value) + '">' +
          escapeHtml(chain.headline.main.number) + "</data> " + escapeHtml(chain.headline.main.unit) + "</span>\n" +
          '  <span class="also">' + escapeHtml(text(chain.headline.also)) + "</span>\n</p>");
        html.push(filmDrawing(chain));
        html.push('<table class="data-table film-table">\n  <caption class="visually-hidden">Every film of the chain</caption>\n  <tbody>\n' +
          '    <tr><th scope="row">Anilox volume</th><td class="num"><span class="nowrap">' + escapeHtml(text(chain.anilox[0])) +
          '</span><br><span class="also">' + escapeHtml(text(chain.anilox[1])) + "</span></td></tr>\n" +
          chain.rows.map(function (row) {
            return '    <tr data-key="' + row.key + '" data-api-value="' + pyRepr(row.api.value) + '" data-api-unit="' + escapeHtml(row.api.spelling) + '">\n' +
              '      <th scope="row">' + escapeHtml(row.label) + "</th>\n" +
              '      <td class="num"><span class="nowrap">' + numData(row.main, true) + " " + escapeHtml(row.main.unit) +
              '</span><br><span class="also">' + escapeHtml(text(row.also)) + "</span></td>\n    </tr>\n";
          }).join("") + "  </tbody>\n</table>");
        html.push(workingHtml(chain.steps));
        html.push(saveButton("film", out.body, token));
      } else {
        html.push('<p class="hint">Fix the value marked beside its field to see the film chain.</p>');
      }
      return html.join("\n");
    }

    return {
      // fields: the form's fields (strings); system: "metric" or "imperial"; token: the CSRF token, if known.
      compute: function (page, fields, system, token) {
        system = system === "imperial" ? "imperial" : "metric";
        var out = page === "/film" ? film(fields || {}, system) : converter(fields || {}, system);
        if (token) out.html = page === "/film" ? renderFilm(out, token) : renderConverter(out, token);
        return out;
      },
      pages: ["/", "/film"],
      formatNumber: formatNumber,
      pyRepr: pyRepr,
    };
  }

  root.inkfilmOffline = { make: Offline, note: NOTE, pyRepr: pyRepr };
})(typeof self !== "undefined" ? self : this);
