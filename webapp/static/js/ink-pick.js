// Picking an ink from the shop's list (webapp/templates/inks/_pick.html, and each station of the job ink
// estimate) fills the ink fields of the form named by the select's data-ink-pick, each field's name
// prefixed by data-ink-prefix ("stations[2]." on the estimate): density (g/cm3), solids by volume and by
// weight (%), price and what it is per, where the form has those fields. The fields stay editable; an
// "input" event makes the page work the answer out again. The picked ink's caution is shown, within the
// select's own [data-ink-scope] where it has one.
"use strict";

document.addEventListener("change", (event) => {
  const select = event.target.closest ? event.target.closest("select[data-ink-pick]") : null;
  if (!select) return;
  const owner = select.dataset.inkPick;
  const prefix = select.dataset.inkPrefix || "";
  const option = select.selectedOptions[0];
  const scope = select.closest("[data-ink-scope]") || document;
  for (const note of scope.querySelectorAll("[data-ink-caution]")) {
    note.hidden = !option || note.dataset.inkCaution !== option.value;
  }
  if (!option || !option.value) return;
  const values = {
    ink_density: option.dataset.density,
    ink_density_unit: "g/cm3",
    solids_by_volume: option.dataset.solidsVolume,
    solids_by_weight: option.dataset.solidsWeight,
    price_per_kg: option.dataset.price,
    price_unit: option.dataset.pricePer,
  };
  let last = null;
  for (const [key, value] of Object.entries(values)) {
    const name = CSS.escape(prefix + key);
    const field = document.querySelector(`[form="${owner}"][name="${name}"], #${owner} [name="${name}"]`);
    if (!field || value === undefined) continue;
    field.value = value;
    last = field;
  }
  if (last) last.dispatchEvent(new Event("input", { bubbles: true }));
});
