// The results section: a headline, the engine's steady-state and constants tables
// (somaward.quantities.TABLES), the report's cautions and warnings. Every label, unit and
// rounding comes from the engine's vocabulary (render.js); nothing here is computed.
import { vocabularyFor } from "./vocabulary.js";
import { el, keyTable, labelInSentence, labelNode, plainText, unitNode, valueNode, definitionOf } from "./render.js";

const SS = "attenuation.steady_state";
// Labels that show their engine definition on hover or focus.
const DEFINED = ["rho", "rho_inf", "soma_input_resistance_Mohm", "site_input_resistance_Mohm",
  "transfer_resistance_Mohm", "centroid_delay_ms", "site.electrotonic_distance"];
// Without a soma the report holds no ρ: those rows are left out, as in the exports.
const OMIT_NULL = ["rho", "rho_inf"];

// One sentence, in a live region that stays in place, so that a screen reader reads it on every
// new result (and not the whole table): the percentage reaching the soma (or root), with the
// engine's label of it, and the attenuation factor.
function headline(vocab, report) {
  const ss = report.attenuation.steady_state;
  const percent = `${SS}.site_to_soma_percent`;
  const q = definitionOf(vocab, percent);
  const parts = [valueNode(vocab, percent, ss[`site_to_soma_percent`]), " "];
  // The label may start with its unit (it does for a percentage); otherwise the unit goes first.
  if (q.unit && !plainText(q.label_html).startsWith(q.unit)) parts.push(unitNode(vocab, percent), " ");
  parts.push(labelNode(vocab, percent));
  if (ss.site_to_soma_fold !== null && ss.site_to_soma_fold !== undefined) {
    parts.push(" — ", labelInSentence(vocab, "terms.attenuation_factor"), " ",
      valueNode(vocab, `${SS}.site_to_soma_fold`, ss.site_to_soma_fold));
  }
  return parts;
}

// Text the engine wrote (cautions, warnings): one item each, keyed by its place in the report.
function textList(items, key, className) {
  const list = el("ul", null, className);
  items.forEach((item, i) => {
    const li = el("li", typeof item === "string" ? item : (item?.message ?? JSON.stringify(item)));
    li.dataset.key = `${key}[${i}]`;
    list.append(li);
  });
  return list;
}

export function renderResults(container, report) {
  const vocab = vocabularyFor(report);
  document.getElementById("results-summary").replaceChildren(...headline(vocab, report));
  const parts = [];
  for (const name of ["steady_state", "constants"]) {
    const table = vocab.tables[name];
    parts.push(keyTable(vocab, report, { caption: table.caption, keys: table.keys, name, define: DEFINED, omitNull: OMIT_NULL }));
  }
  if ((report.warnings || []).length) {
    const list = textList(report.warnings, "warnings", "warnings");
    list.id = "warnings";
    parts.push(el("h3", "Warnings"), list);
  }
  const cautions = textList(report.caution || [], "caution", "cautions");
  cautions.id = "cautions";
  parts.push(el("div", [el("h3", labelNode(vocab, "caution")), cautions], "caution-box"));
  container.replaceChildren(...parts);
}
