// Picking an ink from the shop's list (webapp/templates/inks/_pick.html) fills the ink fields of the form
// named by the select's data-ink-pick: density (g/cm3), solids by volume and by weight (%). The fields stay
// editable; an "input" event makes the page work the answer out again. The picked ink's caution is shown.
"use strict";

document.addEventListener("change", (event) => {
  const select = event.target.closest ? event.target.closest("select[data-ink-pick]") : null;
  if (!select) return;
  const owner = select.dataset.inkPick;
  const option = select.selectedOptions[0];
  for (const note of document.querySelectorAll("[data-ink-caution]")) {
    note.hidden = !option || note.dataset.inkCaution !== option.value;
  }
  if (!option || !option.value) return;
  const values = {
    ink_density: option.dataset.density,
    ink_density_unit: "g/cm3",
    solids_by_volume: option.dataset.solidsVolume,
    solids_by_weight: option.dataset.solidsWeight,
  };
  let last = null;
  for (const [name, value] of Object.entries(values)) {
    const field = document.querySelector(`[form="${owner}"][name="${name}"], #${owner} [name="${name}"]`);
    if (!field || value === undefined) continue;
    field.value = value;
    last = field;
  }
  if (last) last.dispatchEvent(new Event("input", { bubbles: true }));
});
