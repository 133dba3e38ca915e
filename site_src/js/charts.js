// SVG plots of the report, drawn with Observable Plot (vendored by build.py, pinned and
// checked by SHA-256). Both libraries are UMD builds; imported here for their side effect
// they define globalThis.d3 and globalThis.Plot, in this order.
// Every axis label, legend entry and caption is the engine's label of the key plotted
// (render.js); every colour has one meaning (palette.js); each figure keeps the stamp and the
// caution of the report it was drawn from, for its download (figures.js).
import "../vendor/d3.min.js";
import "../vendor/plot.umd.min.js";
import { vocabularyFor } from "./vocabulary.js";
import { el, labelAxis, labelInSentence, labelNode, legend, pick, quantityLine } from "./render.js";
import { COLOURS } from "./palette.js";
import { stampFigure } from "./figures.js";

const Plot = globalThis.Plot;

// Points of one series: x and y lists of the report; groups (optional): one label per point,
// a line is drawn per group (a tree's map has one run of points per branch, which must not be
// joined end to start).
export function points(xs, ys, groups) {
  const rows = [];
  for (let i = 0; i < xs.length; i++) {
    if (Number.isFinite(xs[i]) && Number.isFinite(ys[i])) rows.push({ x: xs[i], y: ys[i], z: groups ? groups[i] : "" });
  }
  return rows;
}

// An Observable Plot drawing with the page's style; axis labels set afterwards from the
// vocabulary (labelAxis), so Plot gets a placeholder.
export function plotSVG({ width, height, x = {}, y = {}, marks, title }) {
  return Plot.plot({
    width,
    height,
    marginLeft: 56,
    marginBottom: 46,
    style: { fontSize: "12px", background: "transparent" },
    x: { label: "x", grid: true, labelOffset: 40, labelAnchor: "right", ...x },
    y: { label: "y", grid: true, labelAnchor: "top", ...y },
    color: { type: "identity" },
    marks,
    ariaLabel: title,
  });
}

// Draw `series` (each {xs, ys, groups?, colour, labelKey, dashed?}) into `holder`, with the
// axes labelled from xKey and yKey and a legend of the series' labels.
function chart(holder, vocab, { series, xKey, yKey, xType, yDomain, rule, available }) {
  const width = Math.max(280, Math.min(640, available ?? (holder.clientWidth || 480)));
  const marks = series.map((s) => Plot.line(points(s.xs, s.ys, s.groups), { x: "x", y: "y", z: "z", stroke: s.colour,
    strokeWidth: 2, strokeDasharray: s.dashed ? "7,4" : undefined }));
  if (rule !== undefined) marks.push(Plot.ruleY([rule]));
  const svg = plotSVG({
    width,
    height: Math.round(width * 0.58),
    x: { type: xType || "linear", tickFormat: xType === "log" ? "~g" : undefined },
    y: { domain: yDomain, nice: true },
    marks,
    title: holder.closest("figure")?.querySelector(".caption-text")?.textContent || "",
  });
  labelAxis(svg, "x", vocab, xKey);
  labelAxis(svg, "y", vocab, yKey);
  holder.replaceChildren(legend(vocab, series.map((s) => ({ colour: s.colour, labelKey: s.labelKey, dashed: s.dashed }))), svg);
}

// "<what> against <x>" from the engine's labels; `define`: the y label shows its definition.
export function setCaption(figure, vocab, yKey, xKey, { define = false, extra = [] } = {}) {
  const text = figure.querySelector(".caption-text");
  text.replaceChildren(labelNode(vocab, yKey, { define }), " against ", labelInSentence(vocab, xKey), ...extra);
}

const FR = "frequency_response";

const PLOTS = {
  "plot-profile": (holder, vocab, report, available) => {
    const p = report.path_profile;
    setCaption(holder.closest("figure"), vocab, "terms.voltage_ratio", "path_profile.path_distance_um");
    chart(holder, vocab, {
      available, xKey: "path_profile.path_distance_um", yKey: "terms.voltage_ratio", yDomain: [0, 1], rule: 0,
      series: [
        { xs: p.path_distance_um, ys: p.input_at_site, colour: COLOURS.synapse, labelKey: "path_profile.input_at_site" },
        { xs: p.path_distance_um, ys: p.input_at_soma, colour: COLOURS.soma, labelKey: "path_profile.input_at_soma" },
      ],
    });
  },
  "plot-map": (holder, vocab, report, available) => {
    const m = report.tree_map;
    setCaption(holder.closest("figure"), vocab, "terms.voltage_ratio", "tree_map.path_distance_um",
      { extra: [" (", quantityLine(vocab, "tree_map.frequency_hz", m.frequency_hz), ")"] });
    chart(holder, vocab, {
      available, xKey: "tree_map.path_distance_um", yKey: "terms.voltage_ratio", yDomain: [0, 1], rule: 0,
      series: [
        { xs: m.path_distance_um, ys: m.site_to_soma, groups: m.branch, colour: COLOURS.point, labelKey: "tree_map.site_to_soma" },
        { xs: m.path_distance_um, ys: m.soma_to_site, groups: m.branch, colour: COLOURS.soma, labelKey: "tree_map.soma_to_site" },
      ],
    });
  },
  "plot-gain": (holder, vocab, report, available) => {
    const f = report[FR];
    setCaption(holder.closest("figure"), vocab, "terms.voltage_ratio", `${FR}.frequencies_hz`);
    chart(holder, vocab, {
      available, xKey: `${FR}.frequencies_hz`, yKey: "terms.voltage_ratio", xType: "log", yDomain: [0, 1], rule: 0,
      series: [
        { xs: f.frequencies_hz, ys: f.site_to_soma.magnitude, colour: COLOURS.synapse, labelKey: `${FR}.site_to_soma.magnitude` },
        { xs: f.frequencies_hz, ys: f.soma_to_site.magnitude, colour: COLOURS.soma, labelKey: `${FR}.soma_to_site.magnitude` },
      ],
    });
  },
  "plot-delay": (holder, vocab, report, available) => {
    const f = report[FR];
    const key = `${FR}.site_to_soma.phase_delay_ms`;
    setCaption(holder.closest("figure"), vocab, key, `${FR}.frequencies_hz`, { define: true });
    chart(holder, vocab, {
      available, xKey: `${FR}.frequencies_hz`, yKey: key, xType: "log", rule: 0,
      series: [{ xs: f.frequencies_hz, ys: pick(report, key), colour: COLOURS.synapse, labelKey: key }],
    });
  },
};

export function renderPlots(root, report) {
  const vocab = vocabularyFor(report);
  // Every width is read before any plot is replaced: one layout, not one per plot.
  const holders = Object.entries(PLOTS).map(([id, draw]) => {
    const holder = root.querySelector(`#${id} .plot`);
    return [holder, draw, holder.clientWidth || 480];
  });
  for (const [holder, draw, available] of holders) {
    const figure = holder.closest("figure");
    try {
      draw(holder, vocab, report, available);
      stampFigure(figure, report);
    } catch (err) {
      console.error(err);
      stampFigure(figure, null);
      holder.replaceChildren(el("p", "This plot could not be drawn; reload the page to try again.", "hint"));
    }
  }
}
