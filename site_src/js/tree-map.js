// The whole-tree map (report.tree_map): the voltage ratio from each point of the tree to the
// soma or root (current injected at the point) against the point's path distance, one line per
// branch; the synapse is marked in its colour. Drawn with Observable Plot (see charts.js); every
// label from the engine's vocabulary, every colour from palette.js.
import { plotSVG, points, setCaption } from "./charts.js";
import { vocabularyFor } from "./vocabulary.js";
import { el, labelAxis, legend, quantityLine } from "./render.js";
import { branchColour, COLOURS } from "./palette.js";
import { stampFigure } from "./figures.js";

const Plot = globalThis.Plot;
const MAX_LEGEND = 12;   // branches; above this they are drawn alike, without a legend

export function renderTreeMap(root, report) {
  const figure = root.querySelector("#plot-tree-map");
  const holder = figure.querySelector(".plot");
  const vocab = vocabularyFor(report);
  const m = report.tree_map;
  const rows = points(m.path_distance_um, m.site_to_soma, m.branch);
  const branches = [...new Set(rows.map((r) => r.z))];
  const coloured = branches.length <= MAX_LEGEND;
  const colourOf = new Map(branches.map((b, i) => [b, coloured ? branchColour(i) : COLOURS.tree]));
  const width = Math.max(300, Math.min(900, holder.clientWidth || 640));
  const site = report.site;
  const mark = m.frequency_hz === 0 ? [{ x: site.path_distance_um, y: report.attenuation.steady_state.site_to_soma }] : [];
  setCaption(figure, vocab, "tree_map.site_to_soma", "tree_map.path_distance_um",
    { extra: [" (", quantityLine(vocab, "tree_map.frequency_hz", m.frequency_hz), ")"] });
  try {
    const svg = plotSVG({
      width,
      height: Math.round(Math.min(420, width * 0.5)),
      y: { domain: [0, 1] },
      marks: [
        Plot.line(rows, { x: "x", y: "y", z: "z", stroke: (d) => colourOf.get(d.z), strokeWidth: 1.6 }),
        Plot.dot(mark, { x: "x", y: "y", r: 5, fill: COLOURS.synapse, stroke: "white" }),
        Plot.text(mark, { x: "x", y: "y", text: () => "synapse", dy: -12, fill: COLOURS.synapse }),
        Plot.ruleY([0]),
      ],
      title: figure.querySelector(".caption-text").textContent,
    });
    labelAxis(svg, "x", vocab, "tree_map.path_distance_um");
    labelAxis(svg, "y", vocab, "tree_map.site_to_soma");
    const entries = coloured
      ? branches.map((b) => ({ colour: colourOf.get(b), text: b, valueKey: "tree_map.branch" }))
      : [{ colour: COLOURS.tree, labelKey: "tree_map.branch" }];
    holder.replaceChildren(legend(vocab, entries), svg);
    holder.dataset.branches = String(branches.length);
    stampFigure(figure, report);
  } catch (err) {
    console.error(err);
    stampFigure(figure, null);
    holder.replaceChildren(el("p", "This plot could not be drawn; reload the page to try again.", "hint"));
  }
}
