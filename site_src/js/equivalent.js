// The equivalent-cylinder section: draws report.equivalent_cylinder (verdict and conditions, the
// 3/2-rule table, diameter steps, terminals, the cylinder, the full tree against the cylinder at
// the synapse) and a plot of the voltage ratio against X, tree branches against the cylinder.
// Every number, label and unit comes from the report and the engine's vocabulary (render.js);
// nothing here computes physics.
import { plotSVG, points } from "./charts.js";
import { vocabularyFor } from "./vocabulary.js";
import {
  definitionOf, el, formatValue, keyTable, labelAxis, labelInSentence, labelNode, legend, listTable, plainText, quantityLine,
  valueWithUnit,
} from "./render.js";
import { COLOURS } from "./palette.js";
import { stampFigure } from "./figures.js";

const Plot = globalThis.Plot;
const EQ = "equivalent_cylinder";
const CMP = `${EQ}.comparison`;

// Marked by a sign and a word, never by colour alone.
function mark(ok) {
  return el("span", ok ? "✓ met" : "✗ broken", "eq-mark");
}

const CONDITIONS = ["three_halves_rule_at_branch_points", "three_halves_rule_at_cylinder_joins",
  "equal_terminal_electrotonic_distance", "uniform_membrane", "like_ends"];

function verdict(vocab, report) {
  const eq = report[EQ];
  const met = eq.meets_conditions;
  const box = el("div", null, `eq-verdict ${met ? "eq-verdict-met" : "eq-verdict-not"}`);
  box.id = "eq-verdict";
  box.dataset.verdict = met ? "met" : "not-met";
  box.append(el("p", [quantityLine(vocab, `${EQ}.meets_conditions`, met), el("br"),
    quantityLine(vocab, `${EQ}.tolerance`, eq.tolerance)], "eq-verdict-head"));
  const list = el("ul", null, "eq-conditions");
  for (const name of CONDITIONS) {
    const key = `${EQ}.conditions.${name}`;
    const ok = eq.conditions[name];
    const li = el("li", [mark(ok), " ", labelNode(vocab, key, { define: true })]);
    if (name === "equal_terminal_electrotonic_distance" && !eq.conditions.equal_terminal_electrotonic_distance_required) {
      li.append(" — ", quantityLine(vocab, `${EQ}.conditions.equal_terminal_electrotonic_distance_required`, false));
    }
    if (name === "like_ends") li.append(" — ", quantityLine(vocab, `${EQ}.end_condition`, eq.end_condition));
    li.dataset.condition = name;
    li.dataset.ok = String(ok);
    if (!ok) li.classList.add("eq-fail");
    list.append(li);
  }
  box.append(list);
  if (eq.messages.length) {
    const msgs = el("ul", null, "eq-messages");
    msgs.id = "eq-messages";
    eq.messages.forEach((m, i) => {
      const li = el("li", m);
      li.dataset.key = `${EQ}.messages[${i}]`;
      msgs.append(li);
    });
    box.append(el("p", labelNode(vocab, `${EQ}.messages`), "eq-sub"), msgs);
  }
  return box;
}

function withId(node, id) {
  node.id = id;
  return node;
}

function caption(vocab, key) {
  return labelNode(vocab, key);
}

function branchPointTable(vocab, report) {
  return withId(listTable(vocab, report, {
    caption: caption(vocab, `${EQ}.branch_points`), list: `${EQ}.branch_points`, name: "branch_points",
    columns: ["parent", "children", "parent_diameter_um", "child_diameters_um", "ratio", "departure", "ok"],
    markRow: (r) => r.ok, empty: "—",
  }), "eq-branch-points");
}

function cylinderJoinTable(vocab, report) {
  return withId(listTable(vocab, report, {
    caption: caption(vocab, `${EQ}.cylinder_joins`), list: `${EQ}.cylinder_joins`, name: "cylinder_joins",
    columns: ["branch", "cylinder", "diameter_before_um", "diameter_after_um", "ratio", "departure", "ok"],
    markRow: (r) => r.ok, empty: "—",
  }), "eq-cylinder-joins");
}

function terminalTable(vocab, report) {
  const eq = report[EQ];
  const box = withId(listTable(vocab, report, {
    caption: caption(vocab, `${EQ}.terminals`), list: `${EQ}.terminals`, name: "terminals",
    columns: ["branch", "electrotonic_distance", "departure", "end", "end_ok", "ok"],
    markRow: (r) => r.ok, empty: "—",
  }), "eq-terminals");
  const spread = el("p", null, "eq-spread");
  spread.id = "eq-spread";
  ["terminal_electrotonic_distance_min", "terminal_electrotonic_distance_max", "terminal_electrotonic_distance_spread",
    "terminal_electrotonic_distance_relative_spread"].forEach((k, i) => {
    if (i) spread.append(el("br"));
    spread.append(quantityLine(vocab, `${EQ}.${k}`, eq[k]));
  });
  return [box, spread];
}

function ruleText(vocab, report, key) {
  const value = report[EQ].cylinder[key];
  return value ? el("p", quantityLine(vocab, `${EQ}.cylinder.${key}`, value), "hint") : null;
}

function cylinderTable(vocab, report) {
  const keys = ["diameter_um", "electrotonic_length", "electrotonic_length_min", "electrotonic_length_max", "lambda_um",
    "length_um", "end", "stems"].map((k) => `${EQ}.cylinder.${k}`);
  const box = withId(keyTable(vocab, report, { caption: caption(vocab, `${EQ}.cylinder`), keys, name: "cylinder" }), "eq-cylinder");
  return [box, ruleText(vocab, report, "length_rule"), ruleText(vocab, report, "taper_rule")].filter(Boolean);
}

function comparisonTable(vocab, report) {
  const cmp = report[EQ].comparison;
  const keys = [`${CMP}.electrotonic_distance`];
  for (const q of ["soma_to_site", "transfer_resistance_Mohm", "soma_input_resistance_Mohm"]) {
    for (const c of ["tree", "cylinder", "relative_error"]) keys.push(`${CMP}.${q}.${c}`);
  }
  const parts = [withId(keyTable(vocab, report, { caption: caption(vocab, CMP), keys,
    name: "comparison", define: [`${CMP}.transfer_resistance_Mohm.tree`, `${CMP}.soma_input_resistance_Mohm.tree`] }),
  "eq-comparison")];
  if (cmp.note) {
    const p = el("p", cmp.note, "hint");
    p.dataset.key = `${CMP}.note`;
    parts.push(p);
  }
  if (cmp.site_beyond_cylinder) {
    parts.push(withId(el("p", quantityLine(vocab, `${CMP}.site_beyond_cylinder`, true), "eq-beyond"), "eq-beyond"));
  }
  return parts;
}

function notGiven(vocab, report) {
  const ng = report[EQ].comparison.not_given_by_cylinder;
  const keys = ["site_to_soma", "site_input_resistance_Mohm"].map((k) => `${CMP}.not_given_by_cylinder.${k}`);
  const box = el("div", null, "eq-not-given");
  box.id = "eq-not-given";
  const note = el("p", ng.note ?? "");
  note.dataset.key = `${CMP}.not_given_by_cylinder.note`;
  box.append(el("h3", labelNode(vocab, `${CMP}.not_given_by_cylinder.note`)), note,
    keyTable(vocab, report, { caption: caption(vocab, `${CMP}.not_given_by_cylinder`), keys, name: "not_given" }));
  return box;
}

// --- the plot: voltage ratio against X, tree branches against the cylinder -----------------------

const TREE_KEY = "tree_map.soma_to_site";
const CURVE_KEY = `${EQ}.cylinder.curve.soma_to_site`;

function plotFigure(vocab, report) {
  const fig = el("figure", null, "eq-plot");
  fig.id = "eq-plot";
  const text = el("span", [labelNode(vocab, "terms.voltage_ratio"), " against ",
    labelInSentence(vocab, "terms.electrotonic_distance")], "caption-text");
  fig.append(el("figcaption", text), el("div", null, "plot"));
  if (report.tree_map.frequency_hz !== 0) {
    fig.append(el("p", [quantityLine(vocab, "tree_map.frequency_hz", report.tree_map.frequency_hz),
      ": the tree's map is not for a steady current, so it does not compare with the cylinder's curve here."],
    "hint eq-plot-note"));
  }
  fig.append(el("p", "Where the tree meets the conditions, its branches' lines fall on the cylinder's.", "hint"));
  return fig;
}

// Drawn once the figure is in the page, so that its width is known.
function drawPlot(holder, vocab, report, available) {
  const eq = report[EQ];
  const curve = eq.cylinder.curve;
  const cmp = eq.comparison;
  // Drawing order only: each branch's points from its proximal to its distal end.
  const byBranch = new Map();
  for (const p of points(report.tree_map.electrotonic_distance, report.tree_map.soma_to_site, report.tree_map.branch)) {
    if (!byBranch.has(p.z)) byBranch.set(p.z, []);
    byBranch.get(p.z).push(p);
  }
  const tree = [...byBranch.values()].flatMap((pts) => pts.sort((a, b) => a.x - b.x));
  const cyl = curve ? points(curve.electrotonic_distance, curve.soma_to_site) : [];
  const syn = [{ x: cmp.electrotonic_distance, y: cmp.soma_to_site.tree, symbol: "circle" }];
  if (cmp.soma_to_site.cylinder !== null) syn.push({ x: cmp.electrotonic_distance, y: cmp.soma_to_site.cylinder, symbol: "diamond" });
  // The y axis starts at the tenth below the lowest value drawn, so that the gap between tree and
  // cylinder can be seen; it always ends at 1.
  // (a loop, not Math.min(...points): a big tree's map has more points than a call takes arguments)
  let lowest = 1;
  for (const list of [tree, cyl, syn]) for (const d of list) lowest = Math.min(lowest, d.y);
  const w = Math.max(280, Math.min(720, available || holder.clientWidth || 560));
  const qx = definitionOf(vocab, "terms.electrotonic_distance"), qy = definitionOf(vocab, TREE_KEY);
  const xName = plainText(qx.label_html), yName = plainText(qy.label_html);
  const svg = plotSVG({
    width: w,
    height: Math.round(w * 0.6),
    y: { domain: [Math.max(0, Math.floor(10 * lowest - 0.5) / 10), 1] },
    marks: [
      Plot.line(tree, { x: "x", y: "y", z: "z", stroke: COLOURS.tree, strokeWidth: 1.6 }),
      ...(curve ? [Plot.line(cyl, { x: "x", y: "y", stroke: COLOURS.cylinder, strokeWidth: 2.6, strokeDasharray: "7,4" })] : []),
      Plot.dot(syn, { x: "x", y: "y", r: 4.5, fill: COLOURS.synapse, stroke: "white", symbol: "symbol" }),
      Plot.tip(tree, Plot.pointer({ x: "x", y: "y",
        title: (d) => `${d.z}\n${xName}: ${formatValue(d.x, qx)}\n${yName}: ${formatValue(d.y, qy)}` })),
    ],
    title: holder.closest("figure").querySelector(".caption-text").textContent,
  });
  labelAxis(svg, "x", vocab, "terms.electrotonic_distance");
  labelAxis(svg, "y", vocab, "terms.voltage_ratio");
  const entries = [{ colour: COLOURS.tree, labelKey: TREE_KEY }];
  if (curve) entries.push({ colour: COLOURS.cylinder, labelKey: CURVE_KEY, dashed: true });
  entries.push({ colour: COLOURS.synapse, labelKey: `${CMP}.soma_to_site.tree`, dot: true });
  holder.replaceChildren(legend(vocab, entries), svg);
}

export function renderEquivalent(container, report) {
  const eq = report[EQ];
  if (!eq) {
    container.replaceChildren(el("p", "This result has no equivalent-cylinder check."));
    return;
  }
  const vocab = vocabularyFor(report);
  const used = document.getElementById("eq-tolerance-used");
  if (used) used.replaceChildren("in use: ", valueWithUnit(vocab, `${EQ}.tolerance`, eq.tolerance));
  // The plot's width from the one drawn before, read before the tables are replaced (reading it
  // after would lay out the whole page again).
  const available = container.querySelector("#eq-plot .plot")?.clientWidth || 0;
  const fig = plotFigure(vocab, report);
  const synapse = el("div", [el("h3", "At your synapse"), ...comparisonTable(vocab, report), notGiven(vocab, report)], "eq-cell");
  const rules = el("div", [branchPointTable(vocab, report)], "eq-cell eq-wide");
  const joins = el("div", [cylinderJoinTable(vocab, report)], "eq-cell eq-wide");
  const ends = el("div", terminalTable(vocab, report), "eq-cell");
  const cylinder = el("div", cylinderTable(vocab, report), "eq-cell");
  container.replaceChildren(el("div", [el("div", verdict(vocab, report), "eq-cell"), synapse, rules, joins, ends,
    el("div", fig, "eq-cell"), cylinder], "eq-grid"));
  const holder = fig.querySelector(".plot");
  try {
    drawPlot(holder, vocab, report, available);
    stampFigure(fig, report);
  } catch (err) {
    console.error(err);
    holder.replaceChildren(el("p", "The plot could not be drawn; reload the page to try again.", "hint"));
  }
}
