// A small drawing of the branch table (a dendrogram): each branch a horizontal line whose
// length is the branch length to scale, drawn from its parent's far end; line width follows each
// cylinder's diameter; the synapse is a marked dot. Drawing only — nothing here is physics.
// While the table is edited it is drawn from the typed inputs (no stamp); each result redraws it
// from the report's own scenario and stamps it with that report (for its download).
import { COLOURS } from "./palette.js";
import { definitionOf } from "./render.js";
import { stampFigure } from "./figures.js";

const NS = "http://www.w3.org/2000/svg";
const LENGTH_KEY = "scenario.branches[].length";   // the scale bar's number is a length of a branch

function svgEl(tag, attrs = {}, text) {
  const node = document.createElementNS(NS, tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

const num = (v) => (typeof v === "number" && Number.isFinite(v) && v > 0 ? v : 0);

function cylindersOf(b) {
  const list = Array.isArray(b.cylinders) ? b.cylinders : [{ length: b.length, diameter: b.diameter }];
  return list.map((s) => ({ length: num(s?.length), diameter: num(s?.diameter) }));
}

const lengthOf = (b) => cylindersOf(b).reduce((a, s) => a + s.length, 0);

// x of each branch's start (path distance), y slot of each branch. Iterative (an explicit stack,
// depth-first, children in table order, each leaf the next slot and a branch point midway
// between its children's slots), so that a chain thousands of branches deep lays out like any
// other tree; O(branches).
function layout(branches) {
  const n = branches.length;
  const index = new Map();
  branches.forEach((b, i) => { if (!index.has(b.id)) index.set(b.id, i); });
  const children = branches.map(() => []);
  const roots = [];
  branches.forEach((b, i) => {
    const p = b.parent === null || b.parent === undefined ? undefined : index.get(b.parent);
    if (p === undefined || p === i) roots.push(i);
    else children[p].push(i);
  });
  const start = new Array(n).fill(0);
  const y = new Array(n).fill(0);
  const seen = new Uint8Array(n);
  let slot = 0;
  const place = (root, x0) => {
    if (seen[root]) return;
    seen[root] = 1;
    start[root] = x0;
    const stack = [root];
    const next = [0];            // per stacked branch: its next child to visit
    while (stack.length) {
      const top = stack.length - 1;
      const i = stack[top];
      if (next[top] < children[i].length) {
        const c = children[i][next[top]++];
        if (seen[c]) continue;   // reached twice (a loop of parents): keep its first place
        seen[c] = 1;
        start[c] = start[i] + lengthOf(branches[i]);
        stack.push(c);
        next.push(0);
        continue;
      }
      stack.pop();
      next.pop();
      if (!children[i].length) {
        y[i] = slot++;
        continue;
      }
      let lo = Infinity, hi = -Infinity;
      for (const c of children[i]) {
        lo = Math.min(lo, y[c]);
        hi = Math.max(hi, y[c]);
      }
      y[i] = (lo + hi) / 2;
    }
  };
  roots.forEach((r) => place(r, 0));
  branches.forEach((_, i) => place(i, 0));  // anything left over (a loop of parents)
  return { start, y, slots: Math.max(slot, 1), children, index };
}

function synapsePoint(scenario, lay) {
  const syn = scenario.synapse || {};
  const bs = scenario.branches;
  if (syn.path !== undefined) {
    let i = lay.index.get(syn.path);
    const d = num(syn.path_distance);
    for (let steps = 0; i !== undefined && steps <= bs.length; steps++) {   // a loop of parents ends too
      const len = lengthOf(bs[i]);
      if (d >= lay.start[i] || bs[i].parent === null) return { i, x: Math.min(d, lay.start[i] + len) };
      i = lay.index.get(bs[i].parent);
    }
    return null;
  }
  const i = lay.index.get(syn.branch);
  return i === undefined ? null : { i, x: lay.start[i] + num(syn.distance) };
}

// The drawing of a scenario's branches as a detached SVG element (nothing on the page changes).
export function schematicSVG(scenario) {
  const bs = Array.isArray(scenario.branches) ? scenario.branches : [];
  const lay = layout(bs);
  const ends = bs.map((b, i) => lay.start[i] + lengthOf(b));
  const total = ends.reduce((a, e) => Math.max(a, e), 1);
  const W = 460, left = 34, right = 86, rowH = 22, top = 16;
  const H = top * 2 + lay.slots * rowH + 18;
  const sx = (x) => left + (x / total) * (W - left - right);
  const sy = (s) => top + s * rowH + rowH / 2;
  const width = (d) => Math.max(1, Math.min(9, d * 1.6));
  const svg = svgEl("svg", { viewBox: `0 0 ${W} ${H}`, width: W, height: H, role: "img", class: "schematic-svg" });
  svg.append(svgEl("title", {}, "Schematic of the branch table: lengths to scale, line width follows diameter"));
  const g = svgEl("g", { stroke: COLOURS.ink, "stroke-linecap": "butt", fill: "none" });
  bs.forEach((b, i) => {
    const p = b.parent === null || b.parent === undefined ? undefined : lay.index.get(b.parent);
    const y = sy(lay.y[i]);
    const y0 = p === undefined ? sy((lay.slots - 1) / 2) : sy(lay.y[p]);
    if (p === undefined && b.parent !== null && b.parent !== undefined && b.parent !== "") {
      g.append(svgEl("line", { x1: sx(0), y1: y0, x2: sx(0), y2: y, "stroke-dasharray": "3 3", "stroke-width": 1, stroke: COLOURS.error }));
    } else if (y0 !== y) {
      g.append(svgEl("line", { x1: sx(lay.start[i]), y1: y0, x2: sx(lay.start[i]), y2: y, "stroke-width": 1, stroke: COLOURS.rule }));
    }
    let x = lay.start[i];
    for (const s of cylindersOf(b)) {
      g.append(svgEl("line", { x1: sx(x), y1: y, x2: sx(x + s.length), y2: y, "stroke-width": width(s.diameter) }));
      x += s.length;
    }
    svg.append(svgEl("text", { x: sx(ends[i]) + 4, y: y + 4, "font-size": 11, fill: COLOURS.muted, "data-key": `scenario.branches[${i}].id` }, String(b.id ?? "")));
  });
  svg.append(g);
  const soma = scenario.soma;
  const r = soma && num(soma.diameter) ? Math.max(4, Math.min(12, num(soma.diameter) / 2)) : 0;
  const mid = sy((lay.slots - 1) / 2);
  if (r) svg.append(svgEl("circle", { cx: sx(0) - r, cy: mid, r, fill: COLOURS.soma, "fill-opacity": 0.3, stroke: COLOURS.soma, class: "soma-mark" }));
  else svg.append(svgEl("text", { x: 2, y: mid + 4, "font-size": 10, fill: COLOURS.muted }, "root"));
  const syn = synapsePoint(scenario, lay);
  if (syn) {
    const cx = sx(Math.min(syn.x, ends[syn.i])), cy = sy(lay.y[syn.i]);
    svg.append(svgEl("circle", { cx, cy, r: 5, fill: COLOURS.synapse, stroke: "#fff", "stroke-width": 1.5, class: "synapse-mark" }));
    svg.append(svgEl("text", { x: cx - 4, y: cy - 8, "font-size": 10, fill: COLOURS.synapse }, "synapse"));
  }
  const bar = Math.pow(10, Math.floor(Math.log10(total / 3)));
  svg.append(svgEl("line", { x1: sx(0), y1: H - 10, x2: sx(bar), y2: H - 10, stroke: COLOURS.ink, "stroke-width": 2 }));
  const scale = svgEl("text", { x: sx(bar) + 4, y: H - 6, "font-size": 10, fill: COLOURS.muted, class: "scale-bar" });
  const number = svgEl("tspan", { "data-key": LENGTH_KEY }, String(bar));
  const unit = svgEl("tspan", { "data-unit-for": LENGTH_KEY }, definitionOf(null, LENGTH_KEY).unit);
  scale.append(number, " ", unit);
  svg.append(scale);
  return svg;
}

// Draw the typed table into `container` (no stamp); `svg`: a drawing made beforehand.
export function drawSchematic(container, scenario, svg = schematicSVG(scenario)) {
  container.replaceChildren(svg);
  stampFigure(container.closest("figure"), null);
}

// The view of a result (main.js VIEWS): the drawing of the scenario the report solved, stamped.
export function renderSchematic(figure, report) {
  drawSchematic(figure.querySelector("#schematic"), report.scenario);
  stampFigure(figure, report);
}
