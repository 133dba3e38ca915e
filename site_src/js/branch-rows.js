// The branch table's rows as data: the table state (text as typed) ⇄ a scenario dict for
// somaward.solve (DEVELOPERS.md, "The scenario"), and rows ⇄ tab-separated text for
// spreadsheets. No physics here: numbers are only parsed, never computed with.
import { numbers, parseNumber } from "./quick-cable.js";

export const ENDS = ["sealed", "killed", "infinite", "load"];
// Scenario keys the table does not edit but keeps, so that a file or link comes back whole.
const CARRIED = ["title", "notes", "map_spacing_um", "map_frequency_hz", "equivalent_cylinder"];

const text = (v) => (v === null || v === undefined ? "" : String(v));

export function emptyBranch(id = "", parent = "") {
  return { id, parent, cylinders: [{ length: "", diameter: "" }], end: "sealed", G: "", C: "" };
}

// Ids of branches that some other branch names as its parent.
export function parentIds(branches) {
  return new Set(branches.map((b) => b.parent).filter((p) => p !== ""));
}

export function isTerminal(branches, i) {
  const id = branches[i].id;
  return !branches.some((b, j) => j !== i && b.parent === id);
}

// isTerminal for every row at once, in one pass (a big table would take n² with isTerminal).
export function terminalFlags(branches) {
  const naming = new Map();   // id → rows naming it as their parent
  for (const b of branches) naming.set(b.parent, (naming.get(b.parent) ?? 0) + 1);
  return branches.map((b) => (naming.get(b.id) ?? 0) - (b.parent === b.id ? 1 : 0) === 0);
}

function endFor(branch) {
  if (branch.end !== "load") return branch.end;
  return numbers({ G: branch.G, C: branch.C });
}

// The scenario the table stands for: branches in table order (so the engine's
// branches[i] is the table's i-th branch), `end` on every terminal branch.
export function scenarioFromState(state) {
  const terminal = terminalFlags(state.branches);
  const branches = state.branches.map((b, i) => {
    const out = { id: b.id, parent: b.parent === "" ? null : b.parent };
    if (b.cylinders.length === 1) {
      Object.assign(out, numbers({ length: b.cylinders[0].length, diameter: b.cylinders[0].diameter }));
    } else {
      out.cylinders = b.cylinders.map((s) => numbers({ length: s.length, diameter: s.diameter }));
    }
    if (terminal[i]) out.end = endFor(b);
    return out;
  });
  const c = state.carried || {};
  const soma = state.soma_diameter.trim() === "" ? null : { diameter: parseNumber(state.soma_diameter) };
  if (soma && c.soma_Rm !== undefined) soma.Rm = c.soma_Rm;
  const syn = state.synapse;
  const synapse = syn.mode === "path"
    ? { path: syn.path, ...numbers({ path_distance: syn.path_distance }) }
    : { branch: syn.branch, ...numbers({ distance: syn.distance }) };
  if (c.current !== undefined) synapse.current = c.current;
  const scenario = {};
  if (c.title !== undefined) scenario.title = c.title;
  if (c.notes !== undefined) scenario.notes = c.notes;
  Object.assign(scenario, {
    membrane: numbers({ Rm: state.Rm, Ri: state.Ri, Cm: state.Cm }),
    soma,
    branches,
    synapse,
  });
  // Only what the loaded scenario held: otherwise the engine's own frequencies apply.
  if (c.frequencies_hz !== undefined) scenario.frequencies_hz = c.frequencies_hz;
  for (const key of CARRIED.slice(2)) if (c[key] !== undefined) scenario[key] = c[key];
  return scenario;
}

function branchState(b) {
  const cylinders = Array.isArray(b.cylinders) && b.cylinders.length
    ? b.cylinders.map((s) => ({ length: text(s?.length), diameter: text(s?.diameter) }))
    : [{ length: text(b.length), diameter: text(b.diameter) }];
  const out = { id: text(b.id), parent: text(b.parent), cylinders, end: "sealed", G: "", C: "" };
  if (b.end && typeof b.end === "object") Object.assign(out, { end: "load", G: text(b.end.G), C: text(b.end.C) });
  else if (ENDS.includes(b.end)) out.end = b.end;
  return out;
}

// A (validated or not) scenario → table state. Throws with a plain message when the shape
// is not one the table can hold.
export function stateFromScenario(s) {
  if (!s || typeof s !== "object" || Array.isArray(s)) throw new Error("the scenario is not a JSON object");
  if (!Array.isArray(s.branches) || !s.branches.length) throw new Error("branches: must be a non-empty list");
  const mem = s.membrane || {};
  const syn = s.synapse || {};
  const carried = {};
  for (const key of CARRIED) if (s[key] !== undefined) carried[key] = s[key];
  if (s.frequencies_hz !== undefined) carried.frequencies_hz = s.frequencies_hz;
  if (s.soma && s.soma.Rm !== undefined) carried.soma_Rm = s.soma.Rm;
  if (syn.current !== undefined) carried.current = syn.current;
  const byPath = syn.path !== undefined;
  return {
    branches: s.branches.map((b) => branchState(b || {})),
    synapse: {
      mode: byPath ? "path" : "branch",
      branch: byPath ? "" : text(syn.branch),
      distance: byPath ? "" : text(syn.distance),
      path: byPath ? text(syn.path) : "",
      path_distance: byPath ? text(syn.path_distance) : "",
    },
    soma_diameter: s.soma ? text(s.soma.diameter) : "",
    Rm: text(mem.Rm), Ri: text(mem.Ri), Cm: text(mem.Cm),
    carried,
  };
}

// --- rows as tab-separated text -------------------------------------------------------
export const TSV_COLUMNS = ["id", "parent", "length_um", "diameter_um", "end", "G_nS", "C_pF"];

// One line per cylinder; a branch's further cylinders repeat its id and parent.
export function rowsToTSV(branches) {
  const clean = (v) => String(v).replace(/[\t\r\n]+/g, " ");
  const lines = [TSV_COLUMNS.join("\t")];
  for (const b of branches) {
    b.cylinders.forEach((s, k) => {
      const end = k === 0 ? [b.end, b.end === "load" ? b.G : "", b.end === "load" ? b.C : ""] : ["", "", ""];
      lines.push([b.id, b.parent, s.length, s.diameter, ...end].map(clean).join("\t"));
    });
  }
  return lines.join("\n") + "\n";
}

const HEADER_NAMES = {
  id: /^(branch[ _]?)?id$|^branch$|^name$/, parent: /^parent/, length: /^length/,
  diameter: /^diam/, end: /^(far[ _])?end|^terminal/, G: /^g(_ns)?$|^g[ _(]|conductance/, C: /^c(_pf)?$|^c[ _(]|capacitance/,
};
const FIXED_ORDER = ["id", "parent", "length", "diameter", "end", "G", "C"];
const ROOT_WORDS = new Set(["", "-", "—", "none", "null", "soma", "(soma)", "root"]);

function headerMap(cells) {
  const lower = cells.map((c) => c.trim().toLowerCase());
  if (!lower.some((c) => HEADER_NAMES.id.test(c)) || !lower.some((c) => HEADER_NAMES.length.test(c))) return null;
  const map = {};
  lower.forEach((c, i) => {
    for (const [name, re] of Object.entries(HEADER_NAMES)) if (map[name] === undefined && re.test(c)) { map[name] = i; break; }
  });
  return map;
}

// Text pasted from a spreadsheet → branches (table state). Header optional: with one, the
// columns are found by name; without, they are id, parent, length, diameter, end, G, C.
// Consecutive lines with the same id are the cylinders of one branch (a taper).
export function rowsFromTSV(textIn) {
  const lines = textIn.replace(/\r\n?/g, "\n").split("\n").filter((l) => l.trim() !== "");
  if (!lines.length) throw new Error("nothing to paste: no rows found");
  const split = (l) => (l.includes("\t") ? l.split("\t") : l.split(/ {2,}|,(?=\S)/)).map((c) => c.trim().replace(/^"(.*)"$/, "$1"));
  let map = headerMap(split(lines[0]));
  const body = map ? lines.slice(1) : lines;
  if (!map) map = Object.fromEntries(FIXED_ORDER.map((n, i) => [n, i]));
  const branches = [];
  body.forEach((line) => {
    const cells = split(line);
    const get = (name) => (map[name] === undefined ? "" : (cells[map[name]] ?? "").trim());
    const id = get("id");
    const parentText = get("parent");
    const parent = ROOT_WORDS.has(parentText.toLowerCase()) ? "" : parentText;
    const cylinder = { length: get("length"), diameter: get("diameter") };
    const last = branches[branches.length - 1];
    let b = last;
    if (!last || last.id !== id || id === "") {
      b = emptyBranch(id, parent);
      b.cylinders = [];
      branches.push(b);
    }
    b.cylinders.push(cylinder);
    const end = get("end").toLowerCase();
    const G = get("G"), C = get("C");
    if (G !== "" || end === "load" || end.startsWith("lumped")) Object.assign(b, { end: "load", G, C });
    else if (ENDS.includes(end)) b.end = end;
  });
  if (!branches.length) throw new Error("only a header line was pasted; no rows");
  return branches;
}
