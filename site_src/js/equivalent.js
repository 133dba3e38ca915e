// The equivalent-cylinder section: draws report.equivalent_cylinder (verdict, the 3/2-rule table,
// diameter steps, terminals, the cylinder, the full-tree-versus-cylinder comparison at the
// synapse) and a plot of soma→site attenuation versus X. Every number comes from the report;
// nothing here computes physics.
import "../vendor/d3.min.js";
import "../vendor/plot.umd.min.js";
import { numberButton, roundForReading, toggleFull } from "./format.js";

const Plot = globalThis.Plot;
const ROOT = "equivalent_cylinder";
const TREE_SERIES = "full tree (one line per branch)";
const CYL_SERIES = "equivalent cylinder";

function el(tag, content, className) {
  const node = document.createElement(tag);
  if (className) node.className = className;
  if (content === undefined || content === null) return node;
  for (const part of Array.isArray(content) ? content : [content]) {
    node.append(part instanceof Node ? part : String(part));
  }
  return node;
}

function num(value, key) {
  return numberButton(value, `${ROOT}.${key}`);
}

// A signed percentage of a fraction from the report, built like format.js's numberButton: the
// rounded value shown, the full value one click (or Enter) away; data-value keeps the report's
// own number (the fraction).
function percent(fraction, key) {
  if (fraction === null || fraction === undefined) return num(fraction, key);
  const p = 100 * fraction;
  const sign = p > 0 ? "+" : p < 0 ? "−" : "";
  const rounded = `${sign}${roundForReading(Math.abs(p))} %`;
  const full = `${p} %`;
  const button = el("button", rounded, "num");
  button.type = "button";
  Object.assign(button.dataset, { key: `${ROOT}.${key}`, value: String(fraction), rounded, unit: "percent" });
  return toggleFull(button, rounded, full);
}

// The tolerance as the person typed it, in per cent (5 %, 2.5 %), without rounding noise.
function tolText(tol) {
  return `${Number((100 * tol).toPrecision(6))} %`;
}

// Within tolerance: a word and a sign, never colour alone.
function okCell(ok, words = ["yes", "no"]) {
  const td = el("td", ok ? `✓ ${words[0]}` : `✗ ${words[1]}`, ok ? "eq-ok" : "eq-bad");
  return td;
}

function markRow(tr, ok) {
  tr.dataset.ok = String(ok);
  if (!ok) tr.classList.add("eq-fail");
  return tr;
}

function table(caption, headers, rows, emptyText, className = "") {
  const t = el("table", null, `numbers eq-table ${className}`.trim());
  t.append(el("caption", caption));
  const head = el("tr");
  for (const h of headers) {
    const th = el("th", h);
    th.scope = "col";
    head.append(th);
  }
  t.append(el("thead", head));
  const tbody = el("tbody");
  if (rows.length) tbody.append(...rows);
  else {
    const td = el("td", emptyText, "eq-empty");
    td.colSpan = headers.length;
    tbody.append(el("tr", td));
  }
  t.append(tbody);
  // Wide tables scroll inside their box on narrow screens (and by keyboard: the box is focusable).
  const box = el("div", t, "eq-scroll");
  box.tabIndex = 0;
  box.setAttribute("role", "region");
  box.setAttribute("aria-label", caption);
  return box;
}

function joinNodes(nodes, sep = ", ") {
  const out = [];
  nodes.forEach((n, i) => {
    if (i) out.push(sep);
    out.push(n);
  });
  return out;
}

function ratioHeader() {
  const th = el("span");
  th.append("d", el("sub", "parent"), el("sup", "3/2"), " / Σ d", el("sub", "child"), el("sup", "3/2"));
  return th;
}

const CONDITIONS = [
  ["three_halves_rule_at_branch_points", "3/2 power rule at every branch point"],
  ["three_halves_rule_at_cylinder_joins", "no diameter step inside a branch (a step is checked as a branch point with one child)"],
  ["equal_terminal_electrotonic_distance", "every terminal at the same electrotonic distance X from the soma"],
  ["uniform_membrane", "the same membrane and cytoplasm everywhere (this input has one set for the whole tree)"],
  ["like_ends", () => ["alike ends: all sealed, all killed, all going on for ever, or loads in proportion to d",
    el("sup", "3/2")]],
];

function verdict(eq) {
  const met = eq.meets_conditions;
  const box = el("div", null, `eq-verdict ${met ? "eq-verdict-met" : "eq-verdict-not"}`);
  box.id = "eq-verdict";
  box.dataset.verdict = met ? "met" : "not-met";
  const head = met
    ? `✓ Yes: within a tolerance of ${tolText(eq.tolerance)}, this tree meets every condition for the reduction.`
    : `✗ No: at a tolerance of ${tolText(eq.tolerance)}, this tree breaks the conditions for the reduction; ` +
      "the cylinder below is an approximation, and the comparison shows by how much.";
  box.append(el("p", head, "eq-verdict-head"));
  const list = el("ul", null, "eq-conditions");
  for (const [key, label] of CONDITIONS) {
    const ok = eq.conditions[key];
    const text = typeof label === "function" ? label() : [label];
    if (key === "equal_terminal_electrotonic_distance" && !eq.conditions.equal_terminal_electrotonic_distance_required) {
      text.push(" — not needed here, every end goes on for ever");
    }
    if (key === "like_ends") text.push(` — here: ${eq.end_condition}`);
    const li = el("li", [el("span", ok ? "✓ met" : "✗ broken", "eq-mark"), " ", ...text]);
    li.dataset.condition = key;
    li.dataset.ok = String(ok);
    if (!ok) li.classList.add("eq-fail");
    list.append(li);
  }
  box.append(list);
  if (eq.messages.length) {
    const msgs = el("ul", null, "eq-messages");
    msgs.id = "eq-messages";
    for (const m of eq.messages) msgs.append(el("li", m));
    box.append(el("p", "What breaks them:", "eq-sub"), msgs);
  }
  return box;
}

// A table row whose first cell is a row header naming it.
function headedRow(name) {
  const tr = el("tr");
  const th = el("th", name);
  th.scope = "row";
  tr.append(th);
  return tr;
}

function branchPointTable(eq) {
  const rows = eq.branch_points.map((r, i) => {
    const k = `branch_points[${i}]`;
    const tr = headedRow(r.parent);
    tr.append(el("td", r.children.join(", ")),
      el("td", num(r.parent_diameter_um, `${k}.parent_diameter_um`), "value"),
      el("td", joinNodes(r.child_diameters_um.map((d, j) => num(d, `${k}.child_diameters_um[${j}]`))), "value"),
      el("td", num(r.ratio, `${k}.ratio`), "value"),
      el("td", percent(r.departure, `${k}.departure`), "value"),
      okCell(r.ok));
    return markRow(tr, r.ok);
  });
  const box = table(`3/2 power rule at each branch point (tolerance ${tolText(eq.tolerance)})`,
    ["at the end of", "children", "d parent (µm)", "d children (µm)", ratioHeader(), "departure from 1",
      "within tolerance"], rows, "none: an unbranched cable has no branch points to check");
  box.id = "eq-branch-points";
  return box;
}

function cylinderJoinTable(eq) {
  const rows = eq.cylinder_joins.map((r, i) => {
    const k = `cylinder_joins[${i}]`;
    const tr = headedRow(r.branch);
    tr.append(el("td", `cylinder ${r.cylinder - 1} → ${r.cylinder}`),
      el("td", [num(r.diameter_before_um, `${k}.diameter_before_um`), " → ",
        num(r.diameter_after_um, `${k}.diameter_after_um`)], "value"),
      el("td", num(r.ratio, `${k}.ratio`), "value"),
      el("td", percent(r.departure, `${k}.departure`), "value"),
      okCell(r.ok));
    return markRow(tr, r.ok);
  });
  const box = table("Diameter steps inside a branch (tapers)",
    ["branch", "where", "d before → after (µm)", ["ratio of d", el("sup", "3/2")], "departure from 1",
      "within tolerance"],
    rows, "none: every branch keeps one diameter");
  box.id = "eq-cylinder-joins";
  return box;
}

function terminalTable(eq) {
  const rows = eq.terminals.map((r, i) => {
    const k = `terminals[${i}]`;
    const tr = headedRow(r.branch);
    tr.append(el("td", num(r.electrotonic_distance, `${k}.electrotonic_distance`), "value"),
      el("td", percent(r.departure, `${k}.departure`), "value"),
      el("td", r.end_ok ? r.end : `${r.end} (unlike the others)`),
      okCell(r.ok));
    return markRow(tr, r.ok);
  });
  const box = table("Terminals: electrotonic distance X of each end from the soma",
    ["terminal", "X at its end", "X / L − 1", "end", "within tolerance"], rows, "no terminals");
  box.id = "eq-terminals";
  const spread = el("p", ["Terminal X runs from ",
    num(eq.terminal_electrotonic_distance_min, "terminal_electrotonic_distance_min"), " to ",
    num(eq.terminal_electrotonic_distance_max, "terminal_electrotonic_distance_max"), ": a spread of ",
    num(eq.terminal_electrotonic_distance_spread, "terminal_electrotonic_distance_spread"), " (",
    percent(eq.terminal_electrotonic_distance_relative_spread, "terminal_electrotonic_distance_relative_spread"),
    " of L)."], "eq-spread");
  spread.id = "eq-spread";
  return [box, spread];
}

function cylinderTable(eq) {
  const c = eq.cylinder;
  const rows = [
    [["Diameter d", el("sub", "eq"), " = (Σ d", el("sub", "stem"), el("sup", "3/2"), ")", el("sup", "2/3")],
      num(c.diameter_um, "cylinder.diameter_um"), "µm"],
    ["Electrotonic length L", num(c.electrotonic_length, "cylinder.electrotonic_length"), ""],
    ["  range of the terminals' X", [num(c.electrotonic_length_min, "cylinder.electrotonic_length_min"), " – ",
      num(c.electrotonic_length_max, "cylinder.electrotonic_length_max")], ""],
    ["Space constant λ of the cylinder", num(c.lambda_um, "cylinder.lambda_um"), "µm"],
    ["Length L·λ", num(c.length_um, "cylinder.length_um"), "µm"],
    ["Far end", c.end, ""],
    ["Stems joined at the soma", c.stems.join(", "), ""],
  ].map(([label, value, unit]) => {
    const th = el("th", label);
    th.scope = "row";
    return el("tr", [th, el("td", value, "value"), el("td", unit, "unit")]);
  });
  const box = table("The equivalent cylinder", ["quantity", "value", "unit"], rows, "");
  box.id = "eq-cylinder";
  return [box, el("p", `How L is chosen: ${c.length_rule}`, "hint"), el("p", `Tapers: ${c.taper_rule}`, "hint")];
}

const COMPARED = [
  ["soma_to_site", "Attenuation soma → synapse, V_synapse / V_soma", ""],
  ["transfer_resistance_Mohm", "Transfer resistance synapse ↔ soma", "MΩ"],
  ["soma_input_resistance_Mohm", "Input resistance at the soma", "MΩ"],
];

function comparisonTable(eq) {
  const cmp = eq.comparison;
  const rows = COMPARED.map(([key, label, unit]) => {
    const v = cmp[key];
    const th = el("th", label);
    th.scope = "row";
    const tr = el("tr", [th, el("td", num(v.tree, `comparison.${key}.tree`), "value"),
      el("td", num(v.cylinder, `comparison.${key}.cylinder`), "value"),
      el("td", percent(v.relative_error, `comparison.${key}.relative_error`), "value"),
      el("td", unit, "unit")]);
    tr.dataset.key = key;
    return tr;
  });
  const caption = `Full tree versus cylinder at the synapse (X = ${roundForReading(cmp.electrotonic_distance)}, steady state)`;
  const box = table(caption, ["quantity", "full tree", "cylinder", "error of the shortcut", "unit"], rows, "");
  box.id = "eq-comparison";
  const parts = [box, el("p", "Error of the shortcut = (cylinder − full tree) / full tree.", "hint")];
  if (cmp.site_beyond_cylinder) {
    const p = el("p", `The synapse lies at X = ${roundForReading(cmp.electrotonic_distance)}, beyond the end of ` +
      `the cylinder at L = ${roundForReading(eq.cylinder.electrotonic_length)}: the cylinder has no point there, so ` +
      "it gives no soma → synapse attenuation and no transfer resistance for this synapse. Only the input " +
      "resistance at the soma can be compared.", "eq-beyond");
    p.id = "eq-beyond";
    parts.push(p);
  }
  return parts;
}

function notGiven(eq) {
  const ng = eq.comparison.not_given_by_cylinder;
  const box = el("div", null, "eq-not-given");
  box.id = "eq-not-given";
  box.append(el("h3", "What the cylinder does not give"),
    el("p", "A point at distance X on the cylinder stands for the same input spread over every branch at that X, " +
      "not for one synapse on one branch. So the cylinder gives neither the synapse's own input resistance nor the " +
      "attenuation from the synapse to the soma; use the full tree's values:"),
    el("ul", [
      el("li", ["Attenuation synapse → soma, V_soma / V_synapse: ",
        num(ng.site_to_soma, "comparison.not_given_by_cylinder.site_to_soma")]),
      el("li", ["Input resistance at the synapse: ",
        num(ng.site_input_resistance_Mohm, "comparison.not_given_by_cylinder.site_input_resistance_Mohm"), " MΩ"]),
    ]));
  return box;
}

// --- the plot: soma→site attenuation versus X, tree branches against the cylinder ---------------

function treeRows(report) {
  const m = report.tree_map;
  const byBranch = new Map();
  for (let i = 0; i < m.branch.length; i++) {
    const x = m.electrotonic_distance[i], y = m.soma_to_site[i];
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    if (!byBranch.has(m.branch[i])) byBranch.set(m.branch[i], []);
    byBranch.get(m.branch[i]).push({ x, y, branch: m.branch[i], series: TREE_SERIES });
  }
  // Drawing order only: each branch's points from its proximal to its distal end.
  return [...byBranch.values()].flatMap((pts) => pts.sort((a, b) => a.x - b.x));
}

function cylinderRows(curve) {
  const rows = [];
  curve.electrotonic_distance.forEach((x, i) => {
    const y = curve.soma_to_site[i];
    if (Number.isFinite(x) && Number.isFinite(y)) rows.push({ x, y, series: CYL_SERIES });
  });
  return rows;
}

function plotFigure(report, eq) {
  const fig = el("figure", null, "eq-plot");
  fig.id = "eq-plot";
  fig.append(el("figcaption", "Soma → site attenuation versus electrotonic distance X: the tree's branches " +
    "against the equivalent cylinder"), el("div", null, "plot"));
  if (!eq.cylinder.curve) {
    fig.append(el("p", "The report carries no curve for the cylinder (equivalent_cylinder.cylinder.curve), so only " +
      "the tree is drawn.", "hint eq-plot-note"));
  }
  const freq = report.tree_map.frequency_hz;
  if (freq !== 0) {
    fig.append(el("p", `The tree's map is at ${freq} Hz and the cylinder's curve at 0 Hz, so they are not ` +
      "comparable here.", "hint eq-plot-note"));
  }
  fig.append(el("p", "Each grey line is one branch of the tree; the dashed line is the cylinder. The round dot " +
    "marks the synapse on the tree, the diamond the cylinder's value at the same X. Where the tree meets the " +
    "conditions, the lines fall on one another.", "hint"));
  return fig;
}

// Drawn once the figure is in the page, so that its width is known.
function drawPlot(holder, report, eq, available) {
  const curve = eq.cylinder.curve;
  const cmp = eq.comparison;
  const syn = [{ x: cmp.electrotonic_distance, y: cmp.soma_to_site.tree, label: "synapse", symbol: "circle" }];
  if (cmp.soma_to_site.cylinder !== null) {
    syn.push({ x: cmp.electrotonic_distance, y: cmp.soma_to_site.cylinder, label: "", symbol: "diamond" });
  }
  const tree = treeRows(report);
  const cyl = curve ? cylinderRows(curve) : [];
  // The y axis starts at the tenth below the lowest value drawn, so that the gap between tree and
  // cylinder can be seen; it always ends at 1.
  const lowest = Math.min(1, ...tree.map((d) => d.y), ...cyl.map((d) => d.y), ...syn.map((d) => d.y));
  const w = Math.max(280, Math.min(720, available || holder.clientWidth || 560));
  const svg = Plot.plot({
    width: w,
    height: Math.round(w * 0.6),
    marginLeft: 56,
    marginBottom: 46,
    style: { fontSize: "12px", background: "transparent" },
    x: { label: "electrotonic distance X from the soma →", grid: true, labelOffset: 40 },
    y: { label: "↑ V_site / V_soma (input at the soma, 0 Hz)", grid: true,
      domain: [Math.max(0, Math.floor(10 * lowest - 0.5) / 10), 1] },
    color: { legend: true, domain: [TREE_SERIES, CYL_SERIES], range: ["#6f7a8a", "#c2571a"] },
    marks: [
      Plot.line(tree, { x: "x", y: "y", z: "branch", stroke: "series", strokeWidth: 1.6 }),
      ...(curve ? [Plot.line(cyl, { x: "x", y: "y", stroke: "series", strokeWidth: 2.6,
        strokeDasharray: "7,4" })] : []),
      Plot.dot(syn, { x: "x", y: "y", r: 4.5, fill: "#1d2330", symbol: "symbol" }),
      Plot.text(syn.slice(0, 1), { x: "x", y: "y", text: "label", dy: 14, fill: "#1d2330" }),
      Plot.tip(tree, Plot.pointer({ x: "x", y: "y",
        title: (d) => `${d.branch}\nX ${roundForReading(d.x)}\nV ratio ${roundForReading(d.y)}` })),
    ],
    ariaLabel: "soma to site attenuation versus electrotonic distance, tree and equivalent cylinder",
  });
  holder.replaceChildren(svg);
}

export function renderEquivalent(container, report) {
  const eq = report[ROOT];
  if (!eq) {
    container.replaceChildren(el("p", "This report has no equivalent-cylinder block."));
    return;
  }
  const used = document.getElementById("eq-tolerance-used");
  if (used) used.textContent = `in use: ${eq.tolerance}`;
  // The plot's width from the one drawn before, read before the tables are replaced (reading it
  // after would lay out the whole page again).
  const available = container.querySelector("#eq-plot .plot")?.clientWidth || 0;
  const fig = plotFigure(report, eq);
  const synapse = el("div", [el("h3", "At your synapse"), ...comparisonTable(eq), notGiven(eq)], "eq-cell");
  const rules = el("div", [branchPointTable(eq)], "eq-cell eq-wide");
  const joins = el("div", [cylinderJoinTable(eq)], "eq-cell");
  const ends = el("div", terminalTable(eq), "eq-cell");
  const cylinder = el("div", cylinderTable(eq), "eq-cell");
  container.replaceChildren(el("div", [el("div", verdict(eq), "eq-cell"), synapse, rules, joins, ends,
    el("div", fig, "eq-cell"), cylinder], "eq-grid"));
  const holder = fig.querySelector(".plot");
  try {
    drawPlot(holder, report, eq, available);
  } catch (err) {
    holder.textContent = `The plot could not be drawn: ${err.message}`;
  }
}
