// Which input the page computes from (the quick cable or the branch table), and keeping that
// input: autosave, the link in the URL fragment, scenario files, the demo. Links and files are
// checked by the engine (somaward.validate) before they replace anything; a bad one is named
// and the saved work stays as it was.
import { readForm, scenarioFromValues } from "./quick-cable.js";
import { TreeTable } from "./tree-table.js";
import { plainWords } from "./fields.js";
import { copyText } from "./clipboard.js";
import * as keep from "./keep.js";

const SAVE_DELAY_MS = 400;
const $ = (sel) => document.querySelector(sel);

// The quick form holds one stem branch without tapers, the synapse on it, and nothing else the
// scenario may carry; anything more opens in the branch table. (Links and autosaves of the
// quick form made before it left the frequencies to the engine hold the page's old grid in
// frequencies_hz; it is dropped for the engine's own.)
const QUICK_KEYS = new Set(["membrane", "soma", "branches", "synapse", "equivalent_cylinder", "frequencies_hz"]);

function quickAdapter(form) {
  return {
    form,
    scenario: () => scenarioFromValues(readForm(form)),
    fits: (s) => Array.isArray(s.branches) && s.branches.length === 1 && !s.branches[0].cylinders &&
      (typeof s.branches[0].end === "string" || s.branches[0].end === undefined) &&
      Object.keys(s).every((k) => QUICK_KEYS.has(k)) && !(s.soma && Object.keys(s.soma).some((k) => k !== "diameter")) &&
      s.synapse && s.synapse.current === undefined &&
      (s.synapse.path === s.branches[0].id || s.synapse.branch === s.branches[0].id),
    load(s) {
      const b = s.branches[0];
      const text = (v) => (v === null || v === undefined ? "" : String(v));
      // On a single stem the distance along the branch is the path distance.
      const values = { distance: s.synapse.path_distance ?? s.synapse.distance, length: b.length, diameter: b.diameter,
        soma_diameter: s.soma ? s.soma.diameter : "", Rm: s.membrane?.Rm, Ri: s.membrane?.Ri, Cm: s.membrane?.Cm };
      for (const [k, v] of Object.entries(values)) form.querySelector(`#f-${k}`).value = text(v);
      const end = typeof b.end === "string" ? b.end : "sealed";
      const radio = form.querySelector(`input[name=end][value="${CSS.escape(end)}"]`) || form.querySelector("input[name=end][value=sealed]");
      radio.checked = true;
    },
  };
}

// An engine error about a scenario read from a link or a file: the plain words, and where in the
// file (its JSON path, as `somaward report` names it).
function fileError(err) {
  if (err.type !== "ScenarioError") return err.message;
  return err.path ? `${plainWords(err)} (at ${err.path} in the file)` : plainWords(err);
}

export class Inputs {
  // decorate(scenario): what main.js adds to every scenario it solves, saves, links or exports
  // (other sections' fields); fill(scenario): puts a loaded scenario's values into those fields.
  constructor(client, { compute, decorate = (s) => s, fill = () => {} }) {
    this.client = client;
    this.decorate = decorate;
    this.fill = fill;
    this.compute = compute;
    this.quick = quickAdapter($("#quick-cable-form"));
    this.tree = new TreeTable($("#tree-table"));
    this.modeForm = $("#mode-form");
    this.demo = JSON.parse($("#demo-scenario").textContent);
    this.timer = null;
    this.saves = 0;
    this.forms = [this.quick.form, this.tree.form, this.modeForm];
    this.tree.load(this.demo);
    for (const f of this.forms) f.addEventListener("input", () => this.scheduleSave());
    this.modeForm.addEventListener("input", () => this.setMode(this.modeForm.querySelector("input[name=mode]:checked").value));
    this.wireTools();
    window.addEventListener("hashchange", () => this.openLink(location.hash, true));
  }

  get mode() {
    return document.body.dataset.mode === "tree" ? "tree" : "quick";
  }

  current() {
    return this.mode === "tree" ? this.tree : this.quick;
  }

  setMode(mode) {
    document.body.dataset.mode = mode;
    this.modeForm.querySelector(`input[name=mode][value=${mode}]`).checked = true;
  }

  snapshot() {
    return { mode: this.mode, scenario: this.scenario() };
  }

  // The scenario the page solves for the current inputs.
  scenario() {
    return this.decorate(this.current().scenario());
  }

  apply(snapshot) {
    const mode = snapshot.mode === "quick" && this.quick.fits(snapshot.scenario) ? "quick" : "tree";
    (mode === "quick" ? this.quick : this.tree).load(snapshot.scenario);
    this.fill(snapshot.scenario);
    this.setMode(mode);
  }

  // At start: the saved work (or the demo), then a link in the URL if there is one. The saved
  // work is shown at once; once the engine is up, it rewrites keys of older versions
  // (somaward's rename_old_keys), and the work is shown again if anything was renamed.
  async restore() {
    this.setMode("quick");
    const saved = keep.loadSaved();
    if (saved) {
      try {
        this.apply(saved);
        this.status("Your saved inputs are back (kept in this browser).");
      } catch {
        this.setMode("quick");
      }
      try {
        const up = await this.upgrade(saved.scenario);
        if (up.warnings.length) {
          this.apply({ mode: saved.mode, scenario: up.scenario });
          this.status("Your saved inputs are back (kept in this browser). ", up.warnings);
        }
      } catch {
        // not a scenario the engine can read: the inputs stay as shown, and the result says why
      }
    }
    if (location.hash.length > 1) await this.openLink(location.hash, false);
  }

  // The scenario with the keys of older versions renamed by the engine: {scenario, warnings}.
  async upgrade(scenario) {
    const { value } = await this.client.call("upgrade", scenario);
    return value;
  }

  // A status line; `notes` are the engine's own sentences (renamed keys), shown after it.
  status(text, notes = []) {
    const holder = $("#keep-status");
    holder.replaceChildren(text);
    notes.forEach((note, i) => {
      const span = document.createElement("span");
      span.dataset.key = `upgrade.warnings[${i}]`;
      span.textContent = plainWords({ plain: note });
      holder.append(" ", span);
    });
  }

  error(text) {
    $("#keep-error").textContent = text;
  }

  async validated(scenario) {
    const { value } = await this.client.call("validate", scenario);
    return value;
  }

  async openLink(hash, recompute) {
    let snap, up;
    try {
      snap = await keep.decodeFragment(hash);
      if (this.lastFragment === hash.replace(/^#/, "")) return;
      up = await this.upgrade(snap.scenario);
      await this.validated(up.scenario);
      this.apply({ mode: snap.mode, scenario: up.scenario });
    } catch (err) {
      this.error(`This link could not be opened: ${fileError(err).replace(/ in the file\)$/, " in the link)")}. ` +
        "The inputs shown are your saved work (or the demo), unchanged; nothing was overwritten.");
      document.body.dataset.link = "bad";
      return;
    }
    document.body.dataset.link = "opened";
    this.error("");
    this.replaceSaved("Opened the inputs from the link.", up.warnings);
    if (recompute) this.compute();
  }

  // The inputs were replaced wholesale: save them, keeping the previous save one click away.
  replaceSaved(words, notes = []) {
    const had = keep.keepPrevious();
    $("#back-to-previous").hidden = !had;
    this.status(words + (had ? " Your previous work is kept: “Back to my previous work” returns to it." : ""), notes);
    this.saveNow();
  }

  scheduleSave() {
    clearTimeout(this.timer);
    this.timer = setTimeout(() => this.saveNow(), SAVE_DELAY_MS);
  }

  async saveNow() {
    clearTimeout(this.timer);
    const snap = this.snapshot();
    const ok = keep.save(snap);
    try {
      const fragment = await keep.encodeFragment(snap);
      this.lastFragment = fragment;
      history.replaceState(null, "", `${location.pathname}${location.search}#${fragment}`);
    } catch {
      // no CompressionStream: the link button says so
    }
    document.body.dataset.saved = String(++this.saves);
    if (!ok) this.status("This browser does not let the page save (private mode?); use “Save the scenario as JSON”.");
  }

  async openFile(file) {
    let up;
    try {
      const scenario = keep.parseFile(file.name, await file.text());
      up = await this.upgrade(scenario);
      await this.validated(up.scenario);
      this.tree.load(up.scenario);
      this.fill(up.scenario);
      this.setMode("tree");
    } catch (err) {
      this.error(`Not opened: ${err.type === "ScenarioError" ? `${file.name}: ` : ""}${fileError(err)}. ` +
        "Your inputs and your saved work are unchanged.");
      document.body.dataset.imported = "bad";
      return;
    }
    this.error("");
    document.body.dataset.imported = "ok";
    this.replaceSaved(`Opened ${file.name}.`, up.warnings);
    this.compute();
  }

  wireTools() {
    $("#copy-link").addEventListener("click", async () => {
      await this.saveNow();
      if (!location.hash.startsWith(`#${keep.PREFIX}`)) {
        this.status("This browser cannot pack the inputs into a link (it lacks CompressionStream); save the scenario as JSON instead.");
        return;
      }
      const how = await copyText(location.href);
      this.status(`${how === "manual" ? "Link ready to copy" : "Link copied"} (${location.href.length} characters); it reopens exactly these inputs.`);
    });
    $("#export-json").addEventListener("click", () => {
      keep.downloadJSON(this.scenario(), "somaward-scenario.json");
    });
    $("#import-json").addEventListener("change", (event) => {
      const file = event.target.files[0];
      event.target.value = "";
      if (file) this.openFile(file);
    });
    $("#back-to-demo").addEventListener("click", () => {
      this.tree.load(this.demo);
      this.fill(this.demo);
      this.setMode("tree");
      this.error("");
      this.replaceSaved("The invented demo cell is back.");
      this.compute();
    });
    $("#back-to-previous").addEventListener("click", () => {
      const prev = keep.loadPrevious();
      if (!prev) return;
      this.apply(prev);
      keep.save(prev);
      this.saveNow();
      $("#back-to-previous").hidden = true;
      this.status("Your previous work is back.");
      this.compute();
    });
    $("#copy-rows").addEventListener("click", async () => {
      const how = await copyText(this.tree.copyText());
      $("#paste-msg").textContent = how === "manual" ? "Rows ready to copy (see the box)." : "Rows copied as tab-separated text.";
    });
  }
}
