// The engine's words, embedded in the page by build.py from somaward.quantities.vocabulary():
// for each recording site ("soma", "root") every reported quantity's label (HTML with <sub>/<sup>
// only), unit, definition, display precision and percent flag, the trade's terms, the end
// conditions, the shared tables, the cautions, and the scenario's input fields (from the schema).
// Nothing here is a word of the page's own: the page only looks words up.

let data = null;

// build.py packs the root's vocabulary as the words that differ from the soma's; merged here.
function all() {
  if (data) return data;
  const packed = JSON.parse(document.getElementById("somaward-vocabulary").textContent);
  data = { soma: packed.soma };
  for (const [rec, diff] of Object.entries(packed)) {
    if (rec === "soma") continue;
    data[rec] = { ...packed.soma, recording_site: rec, quantities: { ...packed.soma.quantities, ...diff.quantities },
      terms: { ...packed.soma.terms, ...diff.terms } };
  }
  return data;
}

// The vocabulary of a report: its labels name the report's recording site.
export function vocabularyFor(report) {
  const words = all();
  return words[report?.recording_site] || words.soma;
}

// The scenario's input fields: canonical path (membrane.Ri, branches[].length) → {label,
// label_html, unit, description}.
export function inputFields() {
  return all().soma.inputs;
}

export function endConditions() {
  return all().soma.end_conditions;
}

const INDEX = /\[\d+\]/g;

// A concrete report path → its vocabulary key: list indices become [].
export function canonicalKey(key) {
  return key.replace(INDEX, "[]");
}

// The definition of a report path (concrete or canonical), or null. A per-branch entry
// (lambda_um.trunk) matches its wildcard key (lambda_um.*); `item` is then the branch id, to put
// in the label's {item}.
const found = new WeakMap();   // vocabulary → canonical key → definition (keys without an item)

export function quantityOf(vocab, key) {
  const k = canonicalKey(key);
  if (!found.has(vocab)) found.set(vocab, new Map());
  const cache = found.get(vocab);
  if (cache.has(k)) return cache.get(k);
  const q = vocab.quantities[k];
  if (q) {
    cache.set(k, { key: k, ...q, item: null });
    return cache.get(k);
  }
  for (const [wild, def] of Object.entries(vocab.quantities)) {
    const star = wild.indexOf(".*");
    if (star < 0) continue;
    const head = wild.slice(0, star), tail = wild.slice(star + 2);
    if (k.startsWith(`${head}.`) && k.endsWith(tail) && k.length > head.length + 1 + tail.length) {
      // The item is read from the concrete key, so that an id holding "[1]" stays whole.
      const tailPattern = new RegExp(`${tail.replace(/[.*+?^${}()|[\]\\]/g, "\\$&").replace(/\\\[\\\]/g, "\\[\\d+\\]")}$`);
      const item = key.slice(head.length + 1).replace(tailPattern, "");
      return { key: wild, ...def, item };
    }
  }
  cache.set(k, null);
  return null;
}

// The input field of a scenario path (membrane.Ri, branches[2].cylinders[0].length, with or
// without a leading "scenario."), or null.
export function inputOf(path) {
  const k = canonicalKey(path.replace(/^scenario\./, ""));
  const f = inputFields()[k];
  return f ? { key: k, ...f, digits: 4, percent: false, definition_html: f.description, item: null } : null;
}

export function term(vocab, name) {
  return vocab.terms[name] || null;
}
