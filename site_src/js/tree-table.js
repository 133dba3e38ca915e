// The branch-table editor: rows of branches (each with one or more cylinders), the synapse,
// the soma and the membrane. Holds the table state as typed text; branch-rows.js turns it into
// a scenario. Every user text goes into the page through value / textContent only.
// A scenario is loaded in two steps: stage() builds the new rows and the drawing off the page
// (and throws, changing nothing, when it cannot), commit() puts them in; so a file or link that
// fails half-way leaves the table as it was.
import { emptyBranch, ENDS, rowsFromTSV, rowsToTSV, scenarioFromState, stateFromScenario, terminalFlags } from "./branch-rows.js";
import { drawSchematic, schematicSVG } from "./schematic.js";
import { endConditions, inputFields } from "./vocabulary.js";
import { plainText } from "./render.js";
import { InputError } from "./keep.js";

const EAGER_PARENT_LISTS = 60;  // branches; above this a parent list is filled when reached
// The most branches the table takes (each is a row of fields on the page); a larger cell is
// computed on the command line. Links and files are held to it before the engine checks them.
export const MAX_BRANCHES = 5000;
const MANY = MAX_BRANCHES.toLocaleString("en-US");

export function tooManyBranches(n) {
  return new InputError(`the cell has ${n.toLocaleString("en-US")} branches, too many for the page's branch table, ` +
    `which holds at most ${MANY}; compute it on the command line: somaward report FILE`, "too-many");
}

// Ids in table order without repeats, and the terminal ones (the synapse's choices).
function synapseChoices(branches) {
  const terminal = terminalFlags(branches);
  const ids = [...new Set(branches.map((b) => b.id).filter((id) => id !== ""))];
  const terminals = [...new Set(branches.filter((b, i) => b.id !== "" && terminal[i]).map((b) => b.id))];
  return { ids, terminals, terminal };
}

// An empty synapse choice becomes the first one offered (as its list on the page shows it).
function settleSynapse(state, choices) {
  const syn = state.synapse;
  if (syn.branch === "") syn.branch = choices.ids[0] ?? "";
  if (syn.path === "") syn.path = choices.terminals[0] ?? "";
}

// A field's name as the schema labels it, with its unit in brackets.
function fieldName(path) {
  const f = inputFields()[path];
  const name = plainText(f.label_html);
  return f.unit ? `${name} (${f.unit})` : name;
}

function el(tag, props = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(props)) {
    if (k === "dataset") Object.assign(node.dataset, v);
    else if (k in node) node[k] = v;
    else node.setAttribute(k, v);
  }
  node.append(...children);
  return node;
}

function option(value, label, selected) {
  const o = el("option", { value, textContent: label });
  if (selected) o.selected = true;
  return o;
}

export class TreeTable {
  constructor(root) {
    this.form = root.querySelector("#tree-form");
    this.table = root.querySelector("#branch-table");
    this.message = root.querySelector("#tree-message");
    this.schematic = root.querySelector("#schematic");
    this.carriedNote = root.querySelector("#tree-carried");
    this.pasteMsg = root.querySelector("#paste-msg");
    this.undo = null;
    this.state = null;
    this.table.addEventListener("input", (e) => this.onCellInput(e));
    this.table.addEventListener("click", (e) => this.onAction(e));
    this.table.addEventListener("paste", (e) => this.onPaste(e));
    for (const kind of ["focusin", "pointerdown", "mousedown", "keydown"]) this.table.addEventListener(kind, (e) => this.onParentReached(e), true);
    root.querySelector("#add-branch").addEventListener("click", () => this.addBranch());
    root.querySelector("#paste-replace").addEventListener("click", () => this.pasteFromBox(true));
    root.querySelector("#paste-append").addEventListener("click", () => this.pasteFromBox(false));
    root.querySelector("#paste-undo").addEventListener("click", () => this.undoPaste());
    this.form.addEventListener("input", (e) => this.onFormInput(e));
  }

  // --- state in and out ---
  scenario() {
    this.readSide();
    return scenarioFromState(this.state);
  }

  // A scenario → everything the table will show, built off the page: {state, bodies, svg}.
  // Throws (a plain InputError above MAX_BRANCHES) without changing anything.
  stage(scenario) {
    return this.layOut(stateFromScenario(scenario));
  }

  layOut(state) {
    if (state.branches.length > MAX_BRANCHES) throw tooManyBranches(state.branches.length);
    settleSynapse(state, synapseChoices(state.branches));
    const bodies = document.createDocumentFragment();
    state.branches.forEach((b, i) => bodies.append(this.branchBody(b, i)));
    return { state, bodies, svg: schematicSVG(scenarioFromState(state)) };
  }

  // Put a staged table on the page.
  commit(staged) {
    this.state = staged.state;
    for (const tb of [...this.table.tBodies]) tb.remove();
    this.table.append(staged.bodies);
    const s = this.state;
    const f = this.form;
    f.querySelector(`input[name=t-syn-mode][value=${s.synapse.mode === "path" ? "path" : "branch"}]`).checked = true;
    f.querySelector("#t-syn-distance").value = s.synapse.distance;
    f.querySelector("#t-syn-path_distance").value = s.synapse.path_distance;
    for (const k of ["soma_diameter", "Rm", "Ri", "Cm"]) f.querySelector(`#t-${k}`).value = s[k];
    this.refreshDerived(staged.svg);
    this.showCarried();
  }

  load(scenario) {
    this.commit(this.stage(scenario));
  }

  changed() {
    this.refreshDerived();
    this.form.dispatchEvent(new Event("input", { bubbles: true }));
  }

  readSide() {
    const f = this.form;
    const s = this.state;
    s.synapse.mode = f.querySelector("input[name=t-syn-mode]:checked")?.value ?? "branch";
    s.synapse.branch = f.querySelector("#t-syn-branch").value;
    s.synapse.distance = f.querySelector("#t-syn-distance").value;
    s.synapse.path = f.querySelector("#t-syn-path").value;
    s.synapse.path_distance = f.querySelector("#t-syn-path_distance").value;
    for (const k of ["soma_diameter", "Rm", "Ri", "Cm"]) s[k] = f.querySelector(`#t-${k}`).value;
  }

  // --- rendering ---
  render() {
    this.commit(this.layOut(this.state));
  }

  // What a loaded scenario holds that the table does not edit: each value keyed by its path.
  showCarried() {
    const c = this.state.carried || {};
    const parts = [];
    const value = (path, v, words) => {
      const span = el("span", { dataset: { key: `scenario.${path}` }, textContent: words ?? String(v) });
      const f = inputFields()[path];
      return [`${plainText(f.label_html)}: `, span, f.unit && words === undefined ? ` ${f.unit}` : ""];
    };
    if (c.title) parts.push(value("title", c.title));
    if (c.current) parts.push(value("synapse.current", null, c.current.shape ?? "given"));
    if (c.soma_Rm !== undefined) parts.push(value("soma.Rm", c.soma_Rm));
    for (const k of ["map_spacing_um", "map_frequency_hz"]) if (c[k] !== undefined) parts.push(value(k, c[k]));
    if (c.frequencies_hz) parts.push(value("frequencies_hz", null, c.frequencies_hz.join(", ")));
    const note = this.carriedNote;
    note.replaceChildren();
    if (!parts.length) return;
    note.append("Also kept from the loaded scenario (not edited here): ");
    parts.forEach((p, n) => note.append(...(n ? ["; "] : []), ...p));
    note.append(".");
  }

  branchBody(b, i) {
    const tb = el("tbody", { className: "branch", dataset: { b: String(i) } });
    b.cylinders.forEach((sec, k) => tb.append(this.cylinderRow(b, i, sec, k)));
    tb.append(el("tr", { className: "row-msg" }, el("td", { colSpan: 8 }, el("p", { className: "field-msg", id: `t-b${i}-msg` }))));
    return tb;
  }

  input(i, k, field, value, label) {
    return el("input", {
      type: "text", value, inputmode: field === "id" ? "text" : "decimal", className: `cell cell-${field}`,
      dataset: { b: String(i), s: String(k), f: field }, ariaLabel: label, spellcheck: false,
    });
  }

  cylinderRow(b, i, sec, k) {
    const tr = el("tr", { className: k === 0 ? "branch-row" : "cylinder-row" });
    const first = k === 0;
    const name = first ? "" : ` cylinder ${k + 1}`;
    if (first) {
      tr.append(el("td", {}, this.input(i, 0, "id", b.id, `branch ${i + 1}: ${fieldName("branches[].id")}`)));
      const sel = el("select", { className: "cell cell-parent", dataset: { b: String(i), s: "0", f: "parent" }, ariaLabel: `branch ${i + 1}: ${fieldName("branches[].parent")}` });
      tr.append(el("td", {}, sel));
    } else {
      tr.append(el("td", { colSpan: 2, className: "cylinder-label", textContent: `↳ cylinder ${k + 1} of this branch`,
        dataset: { key: `scenario.branches[${i}].cylinders[${k}]` } }));
    }
    tr.append(el("td", {}, this.input(i, k, "length", sec.length, `branch ${i + 1}${name}: ${fieldName("branches[].length")}`)));
    tr.append(el("td", {}, this.input(i, k, "diameter", sec.diameter, `branch ${i + 1}${name}: ${fieldName("branches[].diameter")}`)));
    if (first) {
      const end = el("select", { className: "cell cell-end", dataset: { b: String(i), s: "0", f: "end" }, ariaLabel: `branch ${i + 1}: ${fieldName("branches[].end")}` },
        ...ENDS.map((e) => {
          const o = option(e, e, e === b.end);
          o.title = endConditions()[e] ?? "";
          return o;
        }));
      const G = this.input(i, 0, "G", b.G, `branch ${i + 1}: ${fieldName("branches[].end.G")}`);
      const C = this.input(i, 0, "C", b.C, `branch ${i + 1}: ${fieldName("branches[].end.C")}`);
      G.placeholder = fieldName("branches[].end.G").replace(/^.* (\S+ \()/, "$1");
      C.placeholder = fieldName("branches[].end.C").replace(/^.* (\S+ \()/, "$1");
      tr.append(el("td", { className: "end-cell" }, end, el("span", { className: "load" }, G, C), el("span", { className: "not-terminal", textContent: "branch point" })));
    } else {
      tr.append(el("td"));
    }
    const actions = el("td", { className: "row-actions" });
    const button = (act, label, title) => el("button", { type: "button", textContent: label, title, ariaLabel: `${title} (branch ${i + 1})`, dataset: { act, b: String(i), s: String(k) } });
    if (first) {
      actions.append(button("up", "↑", "move up"), button("down", "↓", "move down"),
        button("add-cylinder", "+ cylinder", "add a cylinder to this branch (taper)"),
        button("add-child", "+ child", "add a branch leaving this one"), button("remove", "✕", "remove this branch"));
    } else {
      actions.append(button("remove-cylinder", "✕", `remove cylinder ${k + 1}`));
    }
    tr.append(actions);
    return tr;
  }

  // Parent choices, end cells, synapse choices and the drawing follow the ids and parents.
  // In a big table every parent list would hold every id (n² options, which makes each
  // layout of the page slow), so there a list holds only its current choice until the person
  // reaches it (focus or pointer), when fillParentChoices gives it every id. Every pass here is
  // O(branches) (a 5,000-branch table would take seconds with a pass per row).
  // `svg`: the drawing staged with the rows, else it is drawn from the table.
  refreshDerived(svg) {
    const s = this.state;
    const lazy = s.branches.length > EAGER_PARENT_LISTS;
    const idCount = new Map();
    for (const b of s.branches) idCount.set(b.id, (idCount.get(b.id) ?? 0) + 1);
    for (const sel of this.table.querySelectorAll("select.cell-parent")) {
      if (lazy && sel !== document.activeElement) this.fillParentChoices(sel, true, idCount);
      else this.fillParentChoices(sel, false);
    }
    const choices = synapseChoices(s.branches);
    for (const tb of this.table.tBodies) {
      const i = Number(tb.dataset.b);
      const b = s.branches[i];
      tb.classList.toggle("terminal", choices.terminal[i]);
      tb.classList.toggle("load", b.end === "load");
    }
    this.fillSynapseChoices(choices);
    if (svg) drawSchematic(this.schematic, null, svg);
    else drawSchematic(this.schematic, this.scenarioForDrawing());
  }

  fillParentChoices(sel, onlyCurrent, idCount = null) {
    const s = this.state;
    const i = Number(sel.dataset.b);
    const current = s.branches[i].parent;
    const choices = onlyCurrent ? (current === "" ? [] : [current])
      : s.branches.map((b) => b.id).filter((id, j) => j !== i && id !== "");
    const others = (id) => (idCount ? (idCount.get(id) ?? 0) - (s.branches[i].id === id ? 1 : 0) > 0
      : s.branches.some((b, j) => j !== i && b.id === id));
    const known = onlyCurrent ? others(current) : choices.includes(current);
    const opts = [option("", "(soma)", current === "")];
    for (const id of new Set(choices)) if (id !== current || known) opts.push(option(id, id, id === current));
    if (current !== "" && !known) opts.push(option(current, `${current} (not in the table)`, true));
    sel.replaceChildren(...opts);
    sel.value = current;
    sel.dataset.choices = onlyCurrent ? "current" : "all";
  }

  onParentReached(event) {
    const sel = event.target.closest?.("select.cell-parent");
    if (sel && sel.dataset.choices === "current") this.fillParentChoices(sel, false);
  }

  scenarioForDrawing() {
    this.readSideSafe();
    return scenarioFromState(this.state);
  }

  readSideSafe() {
    if (this.form.querySelector("#t-syn-branch").options.length) this.readSide();
  }

  fillSynapseChoices({ ids, terminals } = synapseChoices(this.state.branches)) {
    const s = this.state;
    const f = this.form;
    const fill = (sel, list, current) => {
      const opts = list.map((id) => option(id, id, id === current));
      if (current !== "" && !list.includes(current)) opts.push(option(current, `${current} (not in the table)`, true));
      if (!opts.length) opts.push(option("", "(no branch yet)", true));
      sel.replaceChildren(...opts);
      sel.value = current !== "" ? current : (list[0] ?? "");
    };
    fill(f.querySelector("#t-syn-branch"), ids, s.synapse.branch);
    fill(f.querySelector("#t-syn-path"), terminals, s.synapse.path);
    s.synapse.branch = f.querySelector("#t-syn-branch").value;
    s.synapse.path = f.querySelector("#t-syn-path").value;
  }

  // --- editing ---
  onCellInput(event) {
    const t = event.target;
    const { b, s: k, f } = t.dataset;
    if (f === undefined) return;
    const branch = this.state.branches[Number(b)];
    if (f === "length" || f === "diameter") branch.cylinders[Number(k)][f] = t.value;
    else if (f === "id") {
      const old = branch.id;
      branch.id = t.value;
      // Children and the synapse follow a renamed branch.
      for (const other of this.state.branches) if (other !== branch && old !== "" && other.parent === old) other.parent = t.value;
      if (old !== "" && this.state.synapse.branch === old) this.state.synapse.branch = t.value;
      if (old !== "" && this.state.synapse.path === old) this.state.synapse.path = t.value;
      this.refreshDerived();
    } else {
      branch[f] = t.value;
      this.refreshDerived();
    }
    if (f === "length" || f === "diameter") this.redrawSoon();
  }

  // While typing, the drawing follows at the next frame (one redraw per frame), so that the
  // input's own path to the engine does not wait for a big tree's drawing.
  redrawSoon() {
    if (this.frame) return;
    const go = () => {
      this.frame = 0;
      drawSchematic(this.schematic, this.scenarioForDrawing());
    };
    this.frame = typeof requestAnimationFrame === "function" ? requestAnimationFrame(go) : setTimeout(go, 0);
  }

  onFormInput(event) {
    if (event.target.closest?.("#branch-table")) return;
    if (event.target.name === "t-syn-mode" || event.target.id?.startsWith("t-syn")) {
      this.readSide();
      this.redrawSoon();
    }
  }

  onAction(event) {
    const button = event.target.closest("button[data-act]");
    if (!button) return;
    const i = Number(button.dataset.b);
    const k = Number(button.dataset.s);
    const list = this.state.branches;
    this.readSide();
    const act = button.dataset.act;
    if (act === "add-child" && this.full()) return;
    if (act === "up" && i > 0) [list[i - 1], list[i]] = [list[i], list[i - 1]];
    else if (act === "down" && i < list.length - 1) [list[i + 1], list[i]] = [list[i], list[i + 1]];
    else if (act === "add-cylinder") list[i].cylinders.push({ ...list[i].cylinders[list[i].cylinders.length - 1] });
    else if (act === "remove-cylinder") list[i].cylinders.splice(k, 1);
    else if (act === "add-child") list.splice(i + 1, 0, emptyBranch(this.freshId(), list[i].id));
    else if (act === "remove") list.splice(i, 1);
    else return;
    this.render();
    const focusIndex = act === "up" ? i - 1 : act === "down" ? i + 1 : act === "add-child" ? i + 1 : Math.min(i, list.length - 1);
    this.table.querySelector(`tbody[data-b="${Math.max(0, focusIndex)}"] button[data-act="${act === "add-child" ? "remove" : act}"]`)?.focus();
    this.changed();
  }

  freshId() {
    const ids = new Set(this.state.branches.map((b) => b.id));
    let n = this.state.branches.length + 1;
    while (ids.has(`b${n}`)) n++;
    return `b${n}`;
  }

  // At MAX_BRANCHES, adding a branch is refused with a line saying why.
  full() {
    if (this.state.branches.length < MAX_BRANCHES) return false;
    this.message.textContent = `The branch table holds at most ${MANY} branches; compute a larger cell on the command line: somaward report FILE.`;
    return true;
  }

  addBranch() {
    if (this.full()) return;
    this.readSide();
    const last = this.state.branches[this.state.branches.length - 1];
    this.state.branches.push(emptyBranch(this.freshId(), last ? last.id : ""));
    this.render();
    this.table.querySelector(`tbody[data-b="${this.state.branches.length - 1}"] input[data-f=length]`)?.focus();
    this.changed();
  }

  // --- spreadsheet rows ---
  copyText() {
    return rowsToTSV(this.state.branches);
  }

  applyRows(text, replace) {
    let rows;
    try {
      rows = rowsFromTSV(text);
    } catch (err) {
      this.pasteMsg.textContent = `Not pasted: ${err.message}.`;
      return false;
    }
    const count = replace ? rows.length : this.state.branches.length + rows.length;
    if (count > MAX_BRANCHES) {
      this.pasteMsg.textContent = `Not pasted: the table would have ${count.toLocaleString("en-US")} branches; it holds at most ${MANY} ` +
        "(compute a larger cell on the command line: somaward report FILE).";
      return false;
    }
    this.readSide();
    this.undo = structuredClone(this.state.branches);
    this.state.branches = replace ? rows : [...this.state.branches, ...rows];
    const n = rows.reduce((a, b) => a + b.cylinders.length, 0);
    this.pasteMsg.textContent = `${replace ? "Replaced the table with" : "Added"} ${rows.length} branches (${n} rows).`;
    this.form.ownerDocument.getElementById("paste-undo").hidden = false;
    this.render();
    this.changed();
    return true;
  }

  pasteFromBox(replace) {
    const box = this.form.ownerDocument.getElementById("paste-text");
    if (this.applyRows(box.value, replace)) box.value = "";
  }

  undoPaste() {
    if (!this.undo) return;
    this.state.branches = this.undo;
    this.undo = null;
    this.form.ownerDocument.getElementById("paste-undo").hidden = true;
    this.pasteMsg.textContent = "The table is back as it was before the paste.";
    this.render();
    this.changed();
  }

  // Several cells pasted into the table (tabs or line breaks): they become the table.
  onPaste(event) {
    const text = event.clipboardData?.getData("text/plain") ?? "";
    if (!/[\t\n]/.test(text.trim())) return;
    event.preventDefault();
    this.applyRows(text, true);
  }

  // Engine messages are placed beside their cell by fields.js (one registry for every section).
}
