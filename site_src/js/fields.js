// The one registry from an engine error to the field a person sees, shared by every section
// (the quick cable, the branch table, the equivalent-cylinder tolerance). The engine names the
// field by its JSON path (error.path) and words the message for a form (error.plain, from the
// scenario schema's label of the field); this module only places it:
// - a field of a form carries data-path, the field's canonical scenario path
//   (membrane.Ri, branches[].length, synapse.path_distance); its message is the element its
//   aria-describedby names with an id ending in "-msg";
// - a cell of the branch table is found by its row (branches[i], cylinders[k]) and field, and its
//   message names that row as the table shows it (counted from 1, with the branch's id);
// - anything else goes to the general message of the input in use.
import { canonicalKey } from "./vocabulary.js";

const $ = (sel) => document.querySelector(sel);
const FORMS = { quick: "#quick-cable-form", tree: "#tree-form" };
const GENERAL = { quick: "#form-message", tree: "#tree-message" };
const SHARED = "#equivalent .eq-tolerance-field";   // fields of every input mode

function messageFor(field) {
  const ids = (field.getAttribute("aria-describedby") || "").split(/\s+/);
  const id = ids.find((x) => x.endsWith("-msg"));
  return id ? document.getElementById(id) : null;
}

function fieldsOf(mode) {
  return [FORMS[mode], SHARED].flatMap((sel) => [...($(sel)?.querySelectorAll("[data-path]") || [])]);
}

// The field of `path` in the input `mode`: its exact field, else the first field under it (a
// whole object such as "soma"), else the nearest field above it (branches[].end for its G).
function byPath(mode, path) {
  const fields = fieldsOf(mode);
  let canon = canonicalKey(path);
  while (canon) {
    const exact = fields.find((f) => f.dataset.path === canon);
    if (exact) return exact;
    const under = fields.find((f) => f.dataset.path.startsWith(`${canon}.`));
    if (under) return under;
    const cut = Math.max(canon.lastIndexOf("."), canon.lastIndexOf("["));
    canon = cut > 0 ? canon.slice(0, cut) : "";
  }
  return null;
}

const BRANCH = /^branches\[(\d+)\](?:\.cylinders\[(\d+)\])?(?:\.(\w+))?(?:\.(\w+))?/;

// A cell of the branch table and the words naming its row.
function tableCell(path) {
  const m = BRANCH.exec(path);
  const table = $("#branch-table");
  if (!m || !table?.querySelector(`tbody[data-b="${m[1]}"]`)) return null;
  const [i, k, field, sub] = [m[1], m[2] ?? "0", m[3], m[4]];
  const name = field === "end" && (sub === "G" || sub === "C") ? sub : field === "cylinders" || !field ? "id" : field;
  const body = table.querySelector(`tbody[data-b="${i}"]`);
  const input = body.querySelector(`[data-s="${k}"][data-f="${name}"]`) || body.querySelector('[data-f="id"]');
  const id = body.querySelector('[data-f="id"]')?.value ?? "";
  let where = `Branch ${Number(i) + 1}${id ? ` (${id})` : ""}`;
  if (m[2] !== undefined) where += `, cylinder ${Number(k) + 1}`;
  return { input, message: document.getElementById(`t-b${i}-msg`), where };
}

// Where the message about `path` goes in the input `mode`: {input, message, where}.
export function locate(mode, path) {
  if (path && mode === "tree") {
    const cell = tableCell(path);
    if (cell) return cell;
  }
  const field = path ? byPath(mode, path) : null;
  const message = field && messageFor(field);
  if (field && message) return { input: field, message, where: "" };
  return { input: null, message: $(GENERAL[mode]), where: "" };
}

// The engine's plain message, with any JSON path to a branch it quotes counted as the table
// counts its rows (from 1).
export function plainWords(error) {
  const text = error.plain || "The calculator could not compute these inputs. Change a value, or reload the page.";
  return text.replace(/\bbranches\[(\d+)\]/g, (m, i) => `branch ${Number(i) + 1}`);
}

export function clearMessages() {
  for (const sel of [...Object.values(FORMS), SHARED]) {
    const root = $(sel);
    if (!root) continue;
    for (const m of root.querySelectorAll(".field-msg")) m.textContent = "";
    for (const x of root.querySelectorAll("[aria-invalid]")) x.removeAttribute("aria-invalid");
  }
}

// Clear every message, then show `error` beside its field; returns where it went.
export function showError(mode, error) {
  clearMessages();
  const place = locate(mode, error.path ?? "");
  const text = plainWords(error);
  place.message.textContent = place.where ? `${place.where} — ${text}` : text;
  if (place.input && place.input.matches("input, select")) place.input.setAttribute("aria-invalid", "true");
  return place;
}
