// The tolerance of the equivalent-cylinder check (section "equivalent"): one text field that goes
// into the scenario as equivalent_cylinder.tolerance. Small and chart-free, so that main.js can
// import it statically.
//
// Hook for whoever builds the scenario: withTolerance(scenario) returns the scenario with the
// field's value added (unchanged when the field is empty or absent). Typing in the field fires an
// "input" event on the input form and Enter submits it, so the page's usual debounce and
// "compute now" paths run; the engine's message about the field is shown beside it as well.
import { parseNumber } from "./quick-cable.js";

const INPUT_ID = "eq-tolerance";
const MESSAGE_ID = "eq-tolerance-msg";
const FORM_ID = "quick-cable-form";        // the form whose input and submit events recompute
// Where the input modules put a message that names no field of theirs (quick cable, branch table).
const GENERAL_MESSAGE_IDS = ["form-message", "tree-message"];
const PATH = "equivalent_cylinder.tolerance";

export function withTolerance(scenario) {
  const input = document.getElementById(INPUT_ID);
  if (!input) return scenario;
  const value = parseNumber(input.value);
  if (value === null) return scenario;  // empty: the engine's default
  return { ...scenario, equivalent_cylinder: { ...(scenario.equivalent_cylinder || {}), tolerance: value } };
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
  const general = GENERAL_MESSAGE_IDS.map((id) => document.getElementById(id)).filter(Boolean);
  const mirror = () => {
    const mine = general.map((m) => m.textContent).find((text) => text.startsWith(`${PATH}:`));
    showOwnMessage(input, mine ?? "");
  };
  const watcher = new MutationObserver(mirror);
  for (const m of general) watcher.observe(m, { childList: true, characterData: true, subtree: true });
}

wire();
