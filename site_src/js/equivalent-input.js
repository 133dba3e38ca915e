// The tolerance of the equivalent-cylinder check (section "equivalent"): one text field that goes
// into the scenario as equivalent_cylinder.tolerance. Small and chart-free, so that main.js can
// import it statically.
//
// Hooks for whoever builds the scenario: withTolerance(scenario) returns the scenario with the
// field's value added (without a tolerance when the field is empty); fillTolerance(scenario) puts
// a loaded scenario's tolerance into the field. Typing in the field fires an
// "input" event on the input form and Enter submits it, so the page's usual debounce and
// "compute now" paths run; the engine's message about the field is placed beside it by fields.js
// (the field carries its scenario path, data-path).
import { parseNumber } from "./quick-cable.js";

const INPUT_ID = "eq-tolerance";
const MESSAGE_ID = "eq-tolerance-msg";
const FORM_ID = "quick-cable-form";        // the form whose input and submit events recompute

// The field is the one place the tolerance lives on the page: a loaded scenario's value is put
// into it (fillTolerance), and what it holds goes into every scenario solved, saved, linked or
// exported. Empty means the engine's default, so a tolerance carried in from a file does not
// linger unseen once the field is cleared.
export function withTolerance(scenario) {
  const input = document.getElementById(INPUT_ID);
  if (!input) return scenario;
  const value = parseNumber(input.value);
  const { tolerance, ...rest } = scenario.equivalent_cylinder || {};
  if (value === null) {  // empty: the engine's default
    if (tolerance === undefined) return scenario;
    const out = { ...scenario, equivalent_cylinder: rest };
    if (!Object.keys(rest).length) delete out.equivalent_cylinder;
    return out;
  }
  return { ...scenario, equivalent_cylinder: { ...rest, tolerance: value } };
}

// Hook for whoever loads a scenario (a link, the autosave, a file, the demo): the field shows the
// scenario's equivalent_cylinder.tolerance, or is emptied when the scenario has none.
export function fillTolerance(scenario) {
  const input = document.getElementById(INPUT_ID);
  if (!input) return;
  const value = scenario?.equivalent_cylinder?.tolerance;
  input.value = value === undefined || value === null ? "" : String(value);
  showOwnMessage(input, "");
}

function showOwnMessage(input, text) {
  document.getElementById(MESSAGE_ID).textContent = text;
  if (text) input.setAttribute("aria-invalid", "true");
  else input.removeAttribute("aria-invalid");
}

function wire() {
  const input = document.getElementById(INPUT_ID);
  const form = document.getElementById(FORM_ID);
  if (!input || !form) return;
  input.addEventListener("input", () => form.dispatchEvent(new Event("input")));
  input.addEventListener("keydown", (event) => {
    if (event.key === "Enter") {
      event.preventDefault();
      form.requestSubmit();
    }
  });
}

wire();
