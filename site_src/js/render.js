// The page's one renderer of quantities: every label, unit and rounded value the page shows is
// made here, from the engine's vocabulary (vocabulary.js) and the report. Each number sits in an
// element carrying its report key (data-key, the concrete path such as
// equivalent_cylinder.branch_points[0].ratio); labels carry data-label-for and units
// data-unit-for, so that a test can check every one against the engine's definitions.
//
// Labels come from the engine as HTML holding text, <sub> and <sup> only
// (somaward.quantities.render_markup); they are rebuilt here as DOM nodes, never through
// innerHTML, and a branch id ({item}) goes in as text.
import { canonicalKey, inputOf, quantityOf, term } from "./vocabulary.js";

const NS = "http://www.w3.org/2000/svg";
const ENTITIES = { "&lt;": "<", "&gt;": ">", "&amp;": "&", "&quot;": "\"", "&#x27;": "'", "&#39;": "'" };
const unescape = (text) => text.replace(/&(lt|gt|amp|quot|#x27|#39);/g, (m) => ENTITIES[m]);

// --- markup ---------------------------------------------------------------------------------

// The engine's label HTML → DOM nodes (HTML <sub>/<sup>, or SVG <tspan>s shifted up and down).
export function markup(html, { item = null, svg = false } = {}) {
  const frag = document.createDocumentFragment();
  const stack = [frag];
  for (const token of String(html ?? "").split(/(<\/?su[bp]>)/)) {
    if (!token) continue;
    const tag = /^<(su[bp])>$/.exec(token);
    if (tag) {
      let node;
      if (svg) {
        node = document.createElementNS(NS, "tspan");
        node.setAttribute("baseline-shift", tag[1] === "sub" ? "sub" : "super");
        node.setAttribute("font-size", "0.75em");
      } else node = document.createElement(tag[1]);
      stack[stack.length - 1].append(node);
      stack.push(node);
    } else if (/^<\/su[bp]>$/.test(token)) {
      if (stack.length > 1) stack.pop();
    } else {
      let text = unescape(token);
      if (item !== null && item !== undefined) text = text.replaceAll("{item}", String(item));
      stack[stack.length - 1].append(text);
    }
  }
  return frag;
}

// The same label as plain text (for aria-label and title attributes).
export function plainText(html, item = null) {
  const span = document.createElement("span");
  span.append(markup(html, { item }));
  return span.textContent;
}

// --- looking words up -----------------------------------------------------------------------

// The definition of a key: a report path, "scenario.<input path>" for an input field, or
// "terms.<name>" for one of the trade's terms.
export function definitionOf(vocab, key) {
  if (key.startsWith("scenario.")) return inputOf(key);
  if (key.startsWith("terms.")) {
    const t = term(vocab, key.slice(6));
    return t ? { key, label_html: t.label, unit: "", definition_html: t.definition, digits: 4, percent: false, item: null } : null;
  }
  // An item of a list of values is defined by its list (d_child of each child branch).
  return quantityOf(vocab, key) || (/\[\d+\]$/.test(key) ? definitionOf(vocab, key.replace(/\[\d+\]$/, "")) : null);
}

function must(vocab, key) {
  const q = definitionOf(vocab, key);
  if (!q) throw new Error(`the engine defines no quantity ${canonicalKey(key)}`);
  return q;
}

export function unitOf(vocab, key) {
  return must(vocab, key).unit;
}

// --- values ---------------------------------------------------------------------------------

// A number to `digits` significant digits, as Python's format(value, ".{digits}g") writes it
// (somaward.quantities.format_value): no trailing zeros, an exponent outside 1e-4 … 1e{digits},
// and an exact tie rounded to the even digit (JavaScript's toExponential rounds it up).
export function formatG(value, digits) {
  if (value === 0) return "0";
  if (!Number.isFinite(value)) return String(value);
  const sign = value < 0 ? "-" : "";
  const size = Math.abs(value);
  let [mant, exp] = size.toExponential(digits - 1).split("e");
  let e = Number(exp);
  let D = mant.replace(".", "");
  const [longMant, longExp] = size.toExponential(Math.min(100, digits + 24)).split("e");
  const long = longMant.replace(".", "");
  if (/^50*$/.test(long.slice(digits)) && Number(long[digits - 1]) % 2 === 0) {
    D = long.slice(0, digits);  // an exact tie: the even digit, as Python rounds
    e = Number(longExp);
  }
  const trim = (t) => (t.includes(".") ? t.replace(/0+$/, "").replace(/\.$/, "") : t);
  if (e < -4 || e >= digits) return `${sign}${trim(`${D[0]}.${D.slice(1)}`)}e${e}`;
  if (e >= 0) return sign + trim(`${D.slice(0, e + 1)}.${D.slice(e + 1)}`);
  return sign + trim(`0.${"0".repeat(-e - 1)}${D}`);
}

// A report value rounded for reading, as the engine's format_value writes it.
export function formatValue(value, q) {
  if (value === null || value === undefined) return "—";
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (typeof value === "string") return value;
  if (Array.isArray(value)) return value.map((v) => formatValue(v, q)).join(", ");
  const shown = q?.percent ? 100 * value : value;
  return formatG(shown, q?.digits ?? 4);
}

// Show `rounded` on the button; a click (or Enter) toggles to `full` and back.
export function toggleFull(button, rounded, full) {
  button.textContent = rounded;
  button.title = `full value: ${full}`;
  button.setAttribute("aria-pressed", "false");
  button.addEventListener("click", () => {
    const showFull = button.getAttribute("aria-pressed") !== "true";
    button.setAttribute("aria-pressed", String(showFull));
    button.textContent = showFull ? full : rounded;
  });
  return button;
}

// One value of the report at `key`: a number is a button (rounded; the full value one click or
// Enter away; data-value holds the report's own number, data-rounded and data-full the two texts
// shown, × 100 for a percentage), a yes/no a sign and a word, a text a span, a list one value per
// item.
export function valueNode(vocab, key, value) {
  const q = must(vocab, key);
  if (Array.isArray(value)) {
    const span = el("span", null, "values");
    span.dataset.key = key;
    value.forEach((v, j) => {
      if (j) span.append(", ");
      span.append(valueNode(vocab, `${key}[${j}]`, v));
    });
    return span;
  }
  if (typeof value === "number") {
    const button = el("button", null, "num");
    button.type = "button";
    const rounded = formatValue(value, q);
    const full = String(q.percent ? 100 * value : value);
    Object.assign(button.dataset, { key, value: String(value), rounded, full });
    return toggleFull(button, rounded, full);
  }
  if (typeof value === "boolean") {
    const span = el("span", `${value ? "✓" : "✗"} ${formatValue(value, q)}`, value ? "yes" : "no");
    span.dataset.key = key;
    span.dataset.value = String(value);
    return span;
  }
  const span = el("span", formatValue(value, q), value === null || value === undefined ? "num none" : "text-value");
  span.dataset.key = key;
  span.dataset.value = value === null || value === undefined ? "—" : String(value);
  return span;
}

// --- labels, units, definitions on demand ---------------------------------------------------

let tips = 0;

// The label of `key` (data-label-for). With define: a focusable term whose engine definition
// shows on hover or focus, tied to it by aria-describedby for screen readers.
export function labelNode(vocab, key, { define = false, item } = {}) {
  const q = must(vocab, key);
  const span = el("span", null, "label");
  span.dataset.labelFor = key;
  span.append(markup(q.label_html, { item: item ?? q.item }));
  if (!define || !q.definition_html) return span;
  const id = `definition-${++tips}`;
  span.classList.add("term");
  span.tabIndex = 0;
  span.setAttribute("aria-describedby", id);
  const tip = el("span", null, "definition");
  tip.id = id;
  tip.setAttribute("role", "tooltip");
  tip.dataset.definitionFor = key;
  tip.append(markup(q.definition_html, { item: item ?? q.item }));
  const holder = el("span", [span, tip], "term-holder");
  span.addEventListener("keydown", (event) => {
    if (event.key === "Escape") holder.classList.add("dismissed");
  });
  span.addEventListener("blur", () => holder.classList.remove("dismissed"));
  holder.addEventListener("mouseleave", () => holder.classList.remove("dismissed"));
  return holder;
}

// A label as it reads inside a sentence: its first letter small, unless it starts a symbol or
// an acronym (the element carries class "in-sentence", and the same data-label-for).
export function labelInSentence(vocab, key, options) {
  const node = labelNode(vocab, key, options);
  const label = node.matches("[data-label-for]") ? node : node.querySelector("[data-label-for]");
  label.classList.add("in-sentence");
  const first = label.firstChild;
  if (first && first.nodeType === Node.TEXT_NODE && /^[A-Z][a-z]/.test(first.textContent)) {
    first.textContent = first.textContent[0].toLowerCase() + first.textContent.slice(1);
  }
  return node;
}

export function unitNode(vocab, key) {
  const span = el("span", must(vocab, key).unit, "q-unit");
  span.dataset.unitFor = key;
  return span;
}

// "label: value unit" in one line (the unit left out when the quantity has none).
export function quantityLine(vocab, key, value, options = {}) {
  const parts = [labelNode(vocab, key, options), ": ", valueNode(vocab, key, value)];
  if (must(vocab, key).unit) parts.push(" ", unitNode(vocab, key));
  const span = el("span", parts, "quantity-line");
  return span;
}

// "value unit" (the unit left out when the quantity has none).
export function valueWithUnit(vocab, key, value) {
  const parts = [valueNode(vocab, key, value)];
  if (must(vocab, key).unit) parts.push(" ", unitNode(vocab, key));
  return el("span", parts, "value-unit");
}

// A column heading: the label, then the unit in brackets.
export function headingNode(vocab, key, options = {}) {
  const parts = [labelNode(vocab, key, options)];
  if (must(vocab, key).unit) parts.push(" (", unitNode(vocab, key), ")");
  return el("span", parts, "heading");
}

// --- tables ---------------------------------------------------------------------------------

export function pick(report, path) {
  let value = report;
  for (const [, name, index] of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) {
    if (value === null || value === undefined) return undefined;
    value = index !== undefined ? value[Number(index)] : value[name];
  }
  return value;
}

function scrollBox(table, caption) {
  // Wide tables scroll inside their box on narrow screens (and by keyboard: the box is focusable).
  const box = el("div", table, "table-scroll");
  box.tabIndex = 0;
  box.setAttribute("role", "region");
  box.setAttribute("aria-label", caption);
  return box;
}

function captionNode(content) {
  return el("caption", content);
}

// A table of quantities, one row per key: label, value, unit. A key ending in ".*" gives one row
// per entry of the report's per-branch object. Rows whose value the report does not hold
// (undefined), and keys listed in omitNull whose value is null, are left out.
// define: true, or the keys whose labels show their definition on demand.
// Returns the table in a box; the table has data-table = name when given.
export function keyTable(vocab, report, { caption, keys, name, define = false, omitNull = [] }) {
  const defined = (k) => define === true || (Array.isArray(define) && define.includes(k));
  const table = el("table", captionNode(caption), "numbers key-table");
  if (name) table.dataset.table = name;
  const tbody = el("tbody");
  const row = (k, value) => {
    if (value === undefined || (value === null && omitNull.includes(k))) return;
    if (value && typeof value === "object" && !Array.isArray(value)) {
      // An object value (a lumped end {G, C}): one row per entry.
      for (const [sub, v] of Object.entries(value)) row(`${k}.${sub}`, v);
      return;
    }
    const th = el("th", labelNode(vocab, k, { define: defined(k) }));
    th.scope = "row";
    const tr = el("tr", [th, el("td", valueNode(vocab, k, value), "value"), el("td", unitNode(vocab, k), "unit")]);
    tr.dataset.key = k;
    tbody.append(tr);
  };
  for (const key of keys) {
    if (key.endsWith(".*")) {
      const head = key.slice(0, -2);
      for (const [id, value] of Object.entries(pick(report, head) || {})) row(`${head}.${id}`, value);
    } else row(key, pick(report, key));
  }
  table.append(tbody);
  // Three narrow columns need no scrolling box, and a definition on demand must not be clipped by one.
  return el("div", table, "table-box");
}

// A table of a report list (e.g. equivalent_cylinder.branch_points): one row per item, one
// column per key of the item (`columns`, names under "<list>[]."); the first column heads its row.
// markRow(item) → false marks a row that fails (class eq-fail, data-ok), never by colour alone:
// yes/no cells carry a sign and a word.
export function listTable(vocab, report, { caption, list, columns, empty = "—", define = false, markRow = null, name }) {
  const items = pick(report, list) || [];
  const table = el("table", captionNode(caption), "numbers list-table");
  if (name) table.dataset.table = name;
  const head = el("tr");
  for (const c of columns) {
    const th = el("th", headingNode(vocab, `${list}[].${c}`, { define }));
    th.scope = "col";
    head.append(th);
  }
  table.append(el("thead", head));
  const tbody = el("tbody");
  items.forEach((item, i) => {
    const tr = el("tr");
    columns.forEach((c, j) => {
      const key = `${list}[${i}].${c}`;
      const cell = el(j === 0 ? "th" : "td", valueNode(vocab, key, item[c]), typeof item[c] === "number" ? "value" : "");
      if (j === 0) cell.scope = "row";
      if (typeof item[c] === "boolean") cell.className = item[c] ? "eq-ok" : "eq-bad";
      tr.append(cell);
    });
    if (markRow) {
      const ok = markRow(item);
      tr.dataset.ok = String(ok);
      if (!ok) tr.classList.add("eq-fail");
    }
    tbody.append(tr);
  });
  if (!items.length) {
    const td = el("td", empty, "eq-empty");
    td.colSpan = columns.length;
    tbody.append(el("tr", td));
  }
  table.append(tbody);
  return scrollBox(table, table.caption.textContent);
}

// --- plots ----------------------------------------------------------------------------------

// Replace the text of an Observable Plot axis label by the engine's label and unit of `key`,
// with the axis direction arrow: "↑ label (unit)" on y, "label (unit) →" on x. The drawing then
// carries the keys of both axes (data-key-x, data-key-y), which key its tick numbers too.
export function labelAxis(svg, axis, vocab, key) {
  const group = svg.querySelector(`g[aria-label="${axis}-axis label"]`);
  const text = group?.querySelector("text");
  if (!text) return;
  const q = must(vocab, key);
  const label = document.createElementNS(NS, "tspan");
  label.dataset.labelFor = key;
  label.append(markup(q.label_html, { svg: true, item: q.item }));
  const parts = [label];
  if (q.unit) {
    const unit = document.createElementNS(NS, "tspan");
    unit.dataset.unitFor = key;
    unit.textContent = q.unit;
    parts.push(" (", unit, ")");
  }
  text.replaceChildren(...(axis === "y" ? ["↑ ", ...parts] : [...parts, " →"]));
  svg.dataset[axis === "x" ? "keyX" : "keyY"] = key;
}

// A legend: one entry per series, a swatch of its colour (and dash) and the engine's label of
// what it draws (data-label-for), or a value of the report (data-key) such as a branch id.
export function legend(vocab, entries) {
  const list = el("ul", null, "legend");
  for (const e of entries) {
    const swatch = el("span", null, `swatch${e.dashed ? " dashed" : ""}${e.dot ? " dot" : ""}`);
    swatch.style.setProperty("--swatch", e.colour);
    swatch.dataset.colour = e.colour;
    swatch.setAttribute("aria-hidden", "true");
    let name;
    if (e.labelKey) name = labelNode(vocab, e.labelKey);
    else {
      name = el("span", e.text, "text-value");
      name.dataset.key = e.valueKey;
    }
    list.append(el("li", [swatch, " ", name]));
  }
  return list;
}

// A figure caption "<y label> against <x label>" from the engine's labels.
export function plotCaption(vocab, yKey, xKey, joiner = " against ") {
  return [labelNode(vocab, yKey), joiner, labelInSentence(vocab, xKey)];
}

// --- small DOM helper -----------------------------------------------------------------------

export function el(tag, content, className) {
  const node = document.createElement(tag);
  if (className) node.className = className;
  if (content === undefined || content === null) return node;
  for (const part of Array.isArray(content) ? content : [content]) {
    node.append(part instanceof Node ? part : String(part));
  }
  return node;
}
