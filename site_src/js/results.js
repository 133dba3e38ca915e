// The results section: the report's numbers in a table, rounded, full value on click.
import { numberButton, roundForReading } from "./format.js";

export function pick(report, path) {
  let value = report;
  for (const key of path.split(".")) {
    if (value === null || value === undefined) return undefined;
    value = value[key];
  }
  return value;
}

// A value of the synapse's branch: a number, or a list with one number per section (then
// the section that holds the synapse, found from the section lengths in the report).
function branchValue(report, key) {
  const branch = report.site.branch;
  const v = pick(report, key)?.[branch];
  if (!Array.isArray(v)) return v;
  const sections = report.cylinders?.[branch] || [];
  let end = 0;
  for (let k = 0; k < sections.length; k++) {
    end += sections[k].length_um;
    if (report.site.distance_um <= end) return v[k];
  }
  return v[v.length - 1];
}

const ROWS = [
  ["Space constant λ at the synapse", (r) => branchValue(r, "lambda_um"), "µm", "lambda_um"],
  ["Membrane time constant τm", (r) => r.tau_m_ms, "ms", "tau_m_ms"],
  ["Electrotonic length L of the synapse's branch", (r) => branchValue(r, "electrotonic_length"), "", "electrotonic_length"],
  ["Electrotonic distance X of the synapse", (r) => r.electrotonic_distance, "", "electrotonic_distance"],
  ["Dendrite-to-soma conductance ratio ρ", (r) => r.rho, "", "rho"],
  ["Input resistance at the soma", (r) => r.soma_input_resistance_Mohm, "MΩ", "soma_input_resistance_Mohm"],
  ["Input resistance at the synapse", (r) => r.site_input_resistance_Mohm, "MΩ", "site_input_resistance_Mohm"],
  ["Transfer resistance synapse ↔ soma", (r) => r.transfer_resistance_Mohm, "MΩ", "transfer_resistance_Mohm"],
  ["Centroid delay synapse → soma", (r) => r.centroid_delay_ms, "ms", "centroid_delay_ms"],
];

const DIRECTIONS = [
  ["synapse → soma", "site_to_soma", "reaches the soma"],
  ["soma → synapse", "soma_to_site", "reaches the synapse"],
];

function cell(tag, content, className) {
  const el = document.createElement(tag);
  if (className) el.className = className;
  if (content instanceof Node) el.append(content);
  else el.textContent = content;
  return el;
}

function row(label, value, unit, key) {
  const tr = document.createElement("tr");
  tr.append(cell("th", label), cell("td", numberButton(value, key), "value"), cell("td", unit, "unit"));
  tr.dataset.key = key;
  return tr;
}

// One sentence, in a live region that stays in place, so a screen reader reads it on
// every new result (and not the whole table).
function headline(report) {
  const ss = report.attenuation.steady_state;
  let text = `${roundForReading(ss.site_to_soma_percent)} % of the steady synaptic voltage reaches the soma`;
  if (ss.site_to_soma_fold !== null && ss.site_to_soma_fold !== undefined) {
    text += ` — a ${roundForReading(ss.site_to_soma_fold)}-fold attenuation.`;
  }
  return text;
}

function attenuationTable(report) {
  const table = document.createElement("table");
  table.className = "numbers attenuation";
  table.innerHTML = "<caption>Steady-state attenuation</caption><thead><tr><th scope=col>direction</th>" +
    "<th scope=col>ratio V<sub>out</sub>/V<sub>in</sub></th><th scope=col>fold</th><th scope=col>% reaching</th></tr></thead>";
  const tbody = document.createElement("tbody");
  for (const [label, key, reach] of DIRECTIONS) {
    const ss = report.attenuation.steady_state;
    const tr = document.createElement("tr");
    tr.dataset.key = key;
    tr.append(cell("th", label),
      cell("td", numberButton(ss[key], `attenuation.steady_state.${key}`), "value"),
      cell("td", numberButton(ss[`${key}_fold`], `attenuation.steady_state.${key}_fold`), "value"),
      cell("td", numberButton(ss[`${key}_percent`], `attenuation.steady_state.${key}_percent`), "value"));
    tr.lastChild.title = `% of the voltage that ${reach}`;
    tbody.append(tr);
  }
  table.append(tbody);
  return table;
}

function warningsList(report) {
  const list = document.createElement("ul");
  list.className = "warnings";
  list.id = "warnings";
  for (const w of report.warnings || []) {
    const text = typeof w === "string" ? w : (w.message ?? JSON.stringify(w));
    list.append(cell("li", text));
  }
  return list;
}

export function renderResults(container, report) {
  const table = document.createElement("table");
  table.className = "numbers constants";
  table.innerHTML = "<caption>Cable constants and resistances</caption>";
  const tbody = document.createElement("tbody");
  for (const [label, get, unit, key] of ROWS) tbody.append(row(label, get(report), unit, key));
  table.append(tbody);
  document.getElementById("results-summary").textContent = headline(report);
  const parts = [attenuationTable(report), table];
  if ((report.warnings || []).length) {
    parts.push(cell("h3", "Warnings"), warningsList(report));
  }
  container.replaceChildren(...parts);
}
