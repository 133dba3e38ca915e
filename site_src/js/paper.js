// The "Into the paper" section: the engine's own tables (TSV, Markdown, LaTeX, CSV) and
// methods paragraph for the shown report, fetched from the worker once per result (when idle), copied
// on a click. The text is the engine's (somaward.export); nothing is formatted here.
import { copyText, initClipboard } from "./clipboard.js";

let texts = null;      // {table: {fmt: text}, rule_table: {...}, methods, stamp} for the shown report
let asked = 0;
const FORMAT_NAMES = { tsv: "TSV", md: "Markdown", latex: "LaTeX", csv: "CSV" };

function setReady(root, ready) {
  for (const b of root.querySelectorAll("button[data-copy]")) b.disabled = !ready;
  root.dataset.texts = ready ? "ready" : "pending";
}

function showTexts(root, value) {
  texts = value;
  const holder = root.querySelector("#methods-text");
  const [paragraph, refs = ""] = value.methods.split("\n\nReferences\n");
  const parts = [document.createElement("p")];
  parts[0].textContent = paragraph;
  if (refs) {
    parts.push(Object.assign(document.createElement("h4"), { textContent: "References" }));
    const list = document.createElement("ul");
    for (const line of refs.trim().split("\n")) list.append(Object.assign(document.createElement("li"), { textContent: line }));
    parts.push(list);
  }
  holder.replaceChildren(...parts);
  holder.dataset.text = value.methods;
  setReady(root, true);
}

// The texts take the worker a while for a big tree, and the worker answers one request at a
// time, so they are asked for only once the inputs have been still for a moment and the page is
// idle: a person typing never waits behind texts for a report already replaced. The report goes
// across as its own JSON text, so nothing is solved again.
const PAPER_QUIET_MS = 700;
let pending = null;

function cancelPending() {
  if (!pending) return;
  clearTimeout(pending.timer);
  if (pending.idle && globalThis.cancelIdleCallback) cancelIdleCallback(pending.idle);
  pending = null;
}

function fetchTexts(root, report, ctx, mine) {
  ctx.client.call("paper", ctx.json || report).then(({ value }) => {
    if (mine === asked) showTexts(root, value);
  }, (err) => {
    console.error(err.message);
    if (mine === asked) root.querySelector("#paper-copied").textContent = "The texts for the paper could not be made; change a value or reload the page.";
  });
}

export function renderPaper(root, report, ctx) {
  const mine = ++asked;
  setReady(root, false);
  // The stamp of the report shown, at once: the texts that follow carry the same one.
  root.querySelector("#paper-stamp").textContent = report.stamp?.text ?? "";
  cancelPending();
  if (!ctx?.client) return;
  const job = { timer: 0, idle: 0 };
  pending = job;
  job.timer = setTimeout(() => {
    const go = () => {
      if (pending === job) pending = null;
      if (mine === asked) fetchTexts(root, report, ctx, mine);
    };
    if (globalThis.requestIdleCallback) job.idle = requestIdleCallback(go, { timeout: 1000 });
    else go();
  }, PAPER_QUIET_MS);
}

function textFor(button) {
  if (!texts) return null;
  if (button.dataset.copy === "methods") return texts.methods;
  return texts[button.dataset.copy][button.dataset.fmt];
}

export function initPaper(root) {
  initClipboard();
  setReady(root, false);
  root.addEventListener("click", async (event) => {
    const button = event.target.closest("button[data-copy]");
    const text = button && textFor(button);
    if (!text) return;
    const how = await copyText(text);
    const what = button.dataset.copy === "methods" ? "the methods paragraph"
      : `the ${button.dataset.copy === "rule_table" ? "3/2-rule" : "results"} table as ${FORMAT_NAMES[button.dataset.fmt]}`;
    root.querySelector("#paper-copied").textContent = how === "clipboard" ? `Copied ${what}.`
      : how === "selection" ? `Copied ${what} by selection (see the box below).` : `Select-and-copy ${what} from the box below.`;
  });
}
