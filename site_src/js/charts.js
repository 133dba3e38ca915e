// SVG plots of the report, drawn with Observable Plot (vendored by build.py, pinned and
// checked by SHA-256). Both libraries are UMD builds; imported here for their side effect
// they define globalThis.d3 and globalThis.Plot, in this order.
import "../vendor/d3.min.js";
import "../vendor/plot.umd.min.js";

const Plot = globalThis.Plot;

// groups (optional): one label per point; a line is drawn per series and group (a tree's
// map has one run of points per branch, which must not be joined end to start).
function series(name, xs, ys, groups) {
  const rows = [];
  for (let i = 0; i < xs.length; i++) {
    if (Number.isFinite(xs[i]) && Number.isFinite(ys[i])) {
      rows.push({ x: xs[i], y: ys[i], series: name, z: groups ? `${name}\u0000${groups[i]}` : name });
    }
  }
  return rows;
}

// One colour per origin of the signal, the same in every plot: the synapse's series come
// first (orange), the soma's second (blue).
const PALETTE = ["#c2571a", "#1b6ca8", "#3d8b37"];

function chart(container, { rows, x, y, title, available }) {
  const names = [...new Set(rows.map((r) => r.series))];
  const width = Math.max(280, Math.min(640, available ?? (container.clientWidth || 480)));
  const svg = Plot.plot({
    width,
    height: Math.round(width * 0.58),
    marginLeft: 56,
    marginBottom: 46,
    style: { fontSize: "12px", background: "transparent" },
    x: { label: x.label, type: x.type || "linear", grid: true, labelOffset: 40,
      tickFormat: x.type === "log" ? "~g" : undefined },
    y: { label: y.label, type: y.type || "linear", grid: true, domain: y.domain, nice: true },
    color: { legend: true, domain: names, range: PALETTE.slice(0, names.length) },
    marks: [
      Plot.line(rows, { x: "x", y: "y", z: "z", stroke: "series", strokeWidth: 2 }),
      Plot.ruleY(y.rule === undefined ? [] : [y.rule]),
    ],
    ariaLabel: title,
  });
  container.replaceChildren(svg);
}

function profile(el, report, available) {
  const p = report.path_profile;
  chart(el, {
    available,
    title: "voltage along the path",
    rows: [
      ...series("input at the synapse", p.path_distance_um, p.input_at_site),
      ...series("input at the soma", p.path_distance_um, p.input_at_soma),
    ],
    x: { label: "distance from the soma along the path (µm) →" },
    y: { label: "↑ V / V at the input point", domain: [0, 1], rule: 0 },
  });
}

function map(el, report, available) {
  const m = report.tree_map;
  chart(el, {
    available,
    title: "attenuation versus distance",
    rows: [
      ...series("synapse here → soma", m.path_distance_um, m.site_to_soma, m.branch),
      ...series("soma → here", m.path_distance_um, m.soma_to_site, m.branch),
    ],
    x: { label: "distance of the point from the soma (µm) →" },
    y: { label: `↑ V_out / V_in at ${m.frequency_hz} Hz`, domain: [0, 1], rule: 0 },
  });
}

function gain(el, report, available) {
  const f = report.frequency_response;
  chart(el, {
    available,
    title: "attenuation versus frequency",
    rows: [
      ...series("synapse → soma", f.frequencies_hz, f.site_to_soma.magnitude),
      ...series("soma → synapse", f.frequencies_hz, f.soma_to_site.magnitude),
    ],
    x: { label: "frequency (Hz) →", type: "log" },
    y: { label: "↑ |V_out / V_in|", domain: [0, 1], rule: 0 },
  });
}

function delay(el, report, available) {
  const f = report.frequency_response;
  chart(el, {
    available,
    title: "delay versus frequency",
    rows: series("phase delay synapse → soma", f.frequencies_hz, f.site_to_soma.phase_delay_ms),
    x: { label: "frequency (Hz) →", type: "log" },
    y: { label: "↑ phase delay (ms)", rule: 0 },
  });
}

const PLOTS = { "plot-profile": profile, "plot-map": map, "plot-gain": gain, "plot-delay": delay };

export function renderPlots(root, report) {
  // Every width is read before any plot is replaced: one layout, not one per plot.
  const holders = Object.entries(PLOTS).map(([id, draw]) => {
    const el = root.querySelector(`#${id} .plot`);
    return [el, draw, el.clientWidth || 480];
  });
  for (const [el, draw, available] of holders) {
    try {
      draw(el, report, available);
    } catch (err) {
      el.textContent = `This plot could not be drawn: ${err.message}`;
    }
  }
}
