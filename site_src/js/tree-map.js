// The whole-tree map (report.tree_map): attenuation from each point of the tree to the soma
// (V_soma / V_point for current injected at the point) against the point's path distance,
// one line per branch; the synapse is marked. Drawn with Observable Plot (see charts.js).
import "./charts.js";

const Plot = globalThis.Plot;
const MAX_LEGEND = 12;

export function renderTreeMap(root, report) {
  const el = root.querySelector("#plot-tree-map .plot");
  const m = report.tree_map;
  const rows = [];
  for (let i = 0; i < m.branch.length; i++) {
    const y = m.site_to_soma[i];
    if (Number.isFinite(m.path_distance_um[i]) && Number.isFinite(y)) rows.push({ x: m.path_distance_um[i], y, branch: m.branch[i] });
  }
  const branches = new Set(rows.map((r) => r.branch));
  const coloured = branches.size <= MAX_LEGEND;
  const width = Math.max(300, Math.min(900, el.clientWidth || 640));
  const site = report.site;
  const ss = report.attenuation.steady_state;
  const mark = m.frequency_hz === 0 ? [{ x: site.path_distance_um, y: ss.site_to_soma }] : [];
  const svg = Plot.plot({
    width,
    height: Math.round(Math.min(420, width * 0.5)),
    marginLeft: 56,
    marginBottom: 46,
    style: { fontSize: "12px", background: "transparent" },
    x: { label: "path distance of the point from the soma (µm) →", grid: true, labelOffset: 40 },
    y: { label: `↑ V_soma / V_point at ${m.frequency_hz} Hz`, domain: [0, 1], grid: true },
    color: coloured ? { legend: true, type: "categorical" } : undefined,
    marks: [
      Plot.line(rows, { x: "x", y: "y", z: "branch", stroke: coloured ? "branch" : "#1b6ca8", strokeWidth: 1.6 }),
      Plot.dot(mark, { x: "x", y: "y", r: 5, fill: "#c2571a", stroke: "white" }),
      Plot.text(mark, { x: "x", y: "y", text: () => "synapse", dy: -12, fill: "#c2571a" }),
      Plot.ruleY([0]),
    ],
    ariaLabel: "attenuation to the soma over the whole tree",
  });
  el.replaceChildren(svg);
  el.dataset.branches = String(branches.size);
}
