// The quick-cable form: its values → a scenario dict for somaward.solve (see
// DEVELOPERS.md), and the engine's error messages → the field they are about.

// Frequencies the page asks for (Hz): 0.1 … 1000, six a decade, exact decimal literals.
export const FREQUENCIES_HZ = [
  0.1, 0.15, 0.2, 0.3, 0.5, 0.7,
  1, 1.5, 2, 3, 5, 7,
  10, 15, 20, 30, 50, 70,
  100, 150, 200, 300, 500, 700,
  1000,
];

export const FIELDS = ["distance", "length", "diameter", "soma_diameter", "Rm", "Ri", "Cm"];
export const BRANCH_ID = "dendrite";

const NUMBER = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/;

// A finite number when the text is one; null when empty; otherwise the text itself
// (also for "1e999", which JSON cannot carry), so that the engine answers with its own
// message about it.
export function parseNumber(text) {
  const t = text.trim().replace(/\u2212/g, "-");
  if (t === "") return null;
  const n = NUMBER.test(t) ? Number(t) : NaN;
  return Number.isFinite(n) ? n : t;
}

export function readForm(form) {
  const values = {};
  // (not form.elements[name]: "length" is a property of the collection itself)
  for (const name of FIELDS) values[name] = form.querySelector(`#f-${name}`).value;
  values.end = form.querySelector("input[name=end]:checked")?.value ?? "sealed";
  return values;
}

export function scenarioFromValues(values) {
  const somaText = values.soma_diameter.trim();
  return {
    membrane: {
      Rm: parseNumber(values.Rm),
      Ri: parseNumber(values.Ri),
      Cm: parseNumber(values.Cm),
    },
    soma: somaText === "" ? null : { diameter: parseNumber(somaText) },
    branches: [{
      id: BRANCH_ID,
      parent: null,
      length: parseNumber(values.length),
      diameter: parseNumber(values.diameter),
      end: values.end,
    }],
    synapse: { branch: BRANCH_ID, distance: parseNumber(values.distance) },
    frequencies_hz: FREQUENCIES_HZ,
  };
}

// JSON path at the start of an engine message → the form field it names.
const PATHS = [
  [/^synapse(\.(distance|path_distance))?$/, "distance"],
  [/^branches\[[^\]]+\]\.length$/, "length"],
  [/^branches\[[^\]]+\]\.diameter$/, "diameter"],
  [/^branches\[[^\]]+\]\.end$/, "end"],
  [/^soma(\.diameter)?$/, "soma_diameter"],
  [/^membrane\.Rm$/, "Rm"],
  [/^membrane\.Ri$/, "Ri"],
  [/^membrane\.Cm$/, "Cm"],
];

export function fieldForMessage(message) {
  const path = message.split(":")[0].trim();
  for (const [pattern, field] of PATHS) if (pattern.test(path)) return field;
  return null;
}

export function clearMessages(form) {
  for (const el of form.querySelectorAll(".field-msg")) el.textContent = "";
  for (const el of form.querySelectorAll("[aria-invalid]")) el.removeAttribute("aria-invalid");
}

export function showMessage(form, message) {
  clearMessages(form);
  const field = fieldForMessage(message);
  const target = form.querySelector(field ? `#f-${field}-msg` : "#form-message");
  target.textContent = message;
  if (field && field !== "end") form.querySelector(`#f-${field}`).setAttribute("aria-invalid", "true");
  return field;
}
