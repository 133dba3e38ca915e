// The "Into the paper" section: the engine's own tables (TSV, Markdown, LaTeX, CSV) and
// methods paragraph for the shown report, fetched from the worker once per result, copied
// on a click. The text is the engine's (somaward.export); nothing is formatted here.
import { copyText, initClipboard } from "./clipboard.js";

let texts = null;      // {table: {fmt: text}, rule_table: {...}, methods, stamp} for the shown report
let asked = 0;
const FORMAT_NAMES = { tsv: "TSV", md: "Markdown", latex: "LaTeX", csv: "CSV" };

export function currentStamp() {
  return texts?.stamp ?? "";
}

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
  root.querySelector("#paper-stamp").textContent = value.stamp;
  setReady(root, true);
}

export function renderPaper(root, report, ctx) {
  const mine = ++asked;
  setReady(root, false);
  if (!ctx?.client) return;
  ctx.client.call("paper", ctx.json || report).then(({ value }) => {
    if (mine === asked) showTexts(root, value);
  }, (err) => {
    if (mine === asked) root.querySelector("#paper-copied").textContent = `The paper texts could not be made: ${err.message}`;
  });
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
