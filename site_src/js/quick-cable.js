// The quick-cable form: its values → a scenario dict for somaward.solve (see DEVELOPERS.md).
// It sends only what the person typed: every default (frequencies, map spacing, the soma's Rm…)
// is the engine's, so the page computes what `somaward report` computes for the saved file.
// Engine messages are placed by fields.js (each field carries its scenario path, data-path).

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

// The numbers typed, by key; an empty field is left out, so that the engine's default applies
// (Cm) or the engine names the field that is needed (Ri: enter a number).
export function numbers(fields) {
  const out = {};
  for (const [key, text] of Object.entries(fields)) {
    const value = parseNumber(text ?? "");
    if (value !== null) out[key] = value;
  }
  return out;
}

export function readForm(form) {
  const values = {};
  // (not form.elements[name]: "length" is a property of the collection itself)
  for (const name of FIELDS) values[name] = form.querySelector(`#f-${name}`).value;
  values.end = form.querySelector("input[name=end]:checked")?.value ?? "sealed";
  return values;
}

// The synapse sits on the one dendrite at a path distance from the soma (or root), the quick
// form's own words (the schema's label of synapse.path_distance).
export function scenarioFromValues(values) {
  const somaText = values.soma_diameter.trim();
  return {
    membrane: numbers({ Rm: values.Rm, Ri: values.Ri, Cm: values.Cm }),
    soma: somaText === "" ? null : { diameter: parseNumber(somaText) },
    branches: [{
      id: BRANCH_ID,
      parent: null,
      ...numbers({ length: values.length, diameter: values.diameter }),
      end: values.end,
    }],
    synapse: { path: BRANCH_ID, ...numbers({ path_distance: values.distance }) },
  };
}
