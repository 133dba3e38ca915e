// Which input the page computes from (the quick cable or the branch table), and keeping that
// input: autosave, the link in the URL fragment, scenario files, the demo.
// A link or a file replaces the inputs only whole: it is unpacked or read within keep.LIMITS,
// read and checked by the engine (somaward_page.read_input: JSON limits, the table's number of
// branches, somaward.validate), and laid out off the page (the branch table's rows and the
// schematic) before anything changes. Any failure is named in a plain sentence and changes
// nothing: not the inputs, not the results, not the autosave. A replacement keeps the work it
// replaced one click away ("Back to my previous work"), across reloads too.
import { readForm, scenarioFromValues } from "./quick-cable.js";
import { MAX_BRANCHES, TreeTable } from "./tree-table.js";
import { plainWords } from "./fields.js";
import { copyText } from "./clipboard.js";
import * as keep from "./keep.js";

const SAVE_DELAY_MS = 400;
// history.state of a URL whose fragment the autosave wrote (a link typed or followed has none).
const AUTOSAVE_STATE = "autosave";
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

// Why a link or a file was not taken, in plain words: the page's own (keep.InputError), the
// engine's (a field's plain message and where in the input, its JSON path as `somaward report`
// names it), or, for anything unforeseen, a sentence saying what a person can do (the details
// go to the console, never onto the page).
const UNFORESEEN = "the page could not read it (a fault of the page, not necessarily of the input); reload the page " +
  "and try again, or compute it on the command line: somaward report FILE";

function refusal(err, where) {
  if (err instanceof keep.InputError) return err.message;
  if (err?.type === "ScenarioError") return err.path ? `${plainWords(err)} (at ${err.path} in ${where})` : plainWords(err);
  console.error(err);
  if (err?.plain) return err.plain.replace(/\.$/, "");
  return UNFORESEEN;
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
    this.refused = null;   // the text of a link too large for the table, offered as a file
    this.opened = false;   // the inputs are a link, file or demo as opened, not edited since
    this.forms = [this.quick.form, this.tree.form, this.modeForm];
    this.tree.load(this.demo);
    for (const f of this.forms) {
      f.addEventListener("input", () => {
        this.opened = false;
        this.scheduleSave();
      });
    }
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

  // A snapshot → what the page will show, built off the page; throws without changing anything.
  // `mode`: the input to show it in (a file always opens in the branch table).
  stage(snapshot, mode = snapshot.mode === "quick" && this.quick.fits(snapshot.scenario) ? "quick" : "tree") {
    return { mode, scenario: snapshot.scenario, table: mode === "tree" ? this.tree.stage(snapshot.scenario) : null };
  }

  commit(staged) {
    if (staged.table) this.tree.commit(staged.table);
    else this.quick.load(staged.scenario);
    this.fill(staged.scenario);
    this.setMode(staged.mode);
  }

  // At start: the saved work (or the demo), then a link in the URL if there is one. The saved
  // work is shown at once; once the engine is up, it rewrites keys of older versions
  // (somaward's rename_old_keys), and the work is shown again if anything was renamed.
  async restore() {
    this.setMode("quick");
    $("#back-to-previous").hidden = !keep.loadPrevious();
    const saved = keep.loadSaved();
    if (saved) {
      try {
        this.commit(this.stage(saved));
        this.opened = keep.savedOpened();
        this.status("Your saved inputs are back (kept in this browser).");
      } catch (err) {
        this.setMode("quick");
        this.error(`Your saved work could not be shown: ${refusal(err, "it")}. Save it with “Save that cell's scenario as JSON” ` +
          "before you change the inputs: a change is saved in its place.");
        this.offerRefused(JSON.stringify(saved));
      }
      try {
        const up = await this.upgrade(saved.scenario);
        if (up.warnings.length) {
          this.commit(this.stage({ mode: saved.mode, scenario: up.scenario }));
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
    if (!text) this.offerRefused(null);
  }

  // A link too large for the table can still be saved as a file for the command line.
  offerRefused(text) {
    this.refused = text;
    $("#save-refused").hidden = text === null;
  }

  // Text of a scenario file or of a link → {mode, scenario, warnings}, read and checked by the engine.
  async read(text, name, kind) {
    const { value } = await this.client.call("read_input", text, name, kind, MAX_BRANCHES);
    return value;
  }

  async openLink(hash, recompute) {
    let text, read, staged;
    try {
      if (this.lastFragment === hash.replace(/^#/, "")) return;
      // The page's own link to the saved work (a reload; the link may lag the last save by the
      // time it takes to pack), or a link that holds exactly the saved work: nothing to replace,
      // and the previous version stays as it is.
      const saved = keep.loadSaved();
      const own = () => {
        this.lastFragment = hash.replace(/^#/, "");
        document.body.dataset.link = "saved";
      };
      if (saved && history.state?.somaward === AUTOSAVE_STATE) return own();
      text = await keep.unpackFragment(hash);
      if (saved && text === JSON.stringify(saved)) return own();
      read = await this.read(text, "the link", "link");
      staged = this.stage(read);
    } catch (err) {
      this.error(`This link could not be opened: ${refusal(err, "the link")}. ` +
        "The inputs shown are your saved work (or the demo), unchanged; nothing was overwritten.");
      this.offerRefused(err?.type === "TooLarge" || err?.kind === "too-many" ? text : null);
      document.body.dataset.link = "bad";
      return;
    }
    this.replaceWith(staged, "Opened the inputs from the link.", { notes: read.warnings });
    document.body.dataset.link = "opened";
    if (recompute) this.compute();
  }

  async openFile(file) {
    const name = keep.oneLine(file.name);
    let read, staged;
    try {
      const text = await keep.readFile(file);
      read = await this.read(text, name, "file");
      staged = this.stage(read, "tree");
    } catch (err) {
      this.error(`Not opened: ${name}: ${refusal(err, "the file")}. Your inputs and your saved work are unchanged.`);
      document.body.dataset.imported = "bad";
      return;
    }
    this.replaceWith(staged, `Opened ${name}.`, { notes: read.warnings });
    document.body.dataset.imported = "ok";
    this.compute();
  }

  // The inputs are replaced wholesale by a staged snapshot: what they held becomes the previous
  // version, then the new inputs are saved. `outside`: the new inputs come from a link, a file or
  // the demo; replacing such inputs before they were edited keeps the previous version as it
  // was (opening two files in a row leaves the person's own work one click away, not the first file).
  replaceWith(staged, words, { notes = [], outside = true,
    kept = " Your previous work is kept: “Back to my previous work” returns to it." } = {}) {
    const work = (keep.hasSaved() || this.saves > 0) && !(outside && this.opened);
    if (work) keep.savePrevious(this.snapshot());
    this.commit(staged);
    this.opened = outside;
    this.error("");
    const previous = Boolean(keep.loadPrevious());
    $("#back-to-previous").hidden = !previous;
    this.status(words + (previous ? kept : ""), notes);
    this.saveNow();
  }

  scheduleSave() {
    clearTimeout(this.timer);
    this.timer = setTimeout(() => this.saveNow(), SAVE_DELAY_MS);
  }

  async saveNow() {
    clearTimeout(this.timer);
    const snap = this.snapshot();
    const ok = keep.save(snap, undefined, this.opened);
    try {
      const fragment = await keep.encodeFragment(snap);
      this.lastFragment = fragment;
      history.replaceState({ somaward: AUTOSAVE_STATE }, "", `${location.pathname}${location.search}#${fragment}`);
    } catch {
      // no CompressionStream: the link button says so
    }
    document.body.dataset.saved = String(++this.saves);
    if (!ok) this.status("This browser does not let the page save (private mode?); use “Save the scenario as JSON”.");
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
    $("#save-refused").addEventListener("click", () => {
      if (this.refused === null) return;
      try {
        keep.downloadJSON(JSON.parse(this.refused).scenario, "somaward-link-scenario.json");
      } catch (err) {
        console.error(err);
      }
    });
    $("#back-to-demo").addEventListener("click", () => {
      this.replaceWith(this.stage({ mode: "tree", scenario: this.demo }, "tree"), "The invented demo cell is back.");
      this.compute();
    });
    // The previous work and the inputs it replaces swap places: one more click brings these back.
    $("#back-to-previous").addEventListener("click", () => {
      const prev = keep.loadPrevious();
      if (!prev) return;
      let staged;
      try {
        staged = this.stage(prev);
      } catch (err) {
        this.error(`Your previous work could not be shown: ${refusal(err, "it")}. Your inputs are unchanged.`);
        return;
      }
      this.replaceWith(staged, "Your previous work is back.", { outside: false,
        kept: " What it replaced is kept in its place: “Back to my previous work” returns to that." });
      this.compute();
    });
    $("#copy-rows").addEventListener("click", async () => {
      const how = await copyText(this.tree.copyText());
      $("#paste-msg").textContent = how === "manual" ? "Rows ready to copy (see the box)." : "Rows copied as tab-separated text.";
    });
  }
}
