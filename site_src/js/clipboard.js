// Copying text: the Clipboard API where the browser offers it (https or localhost), else the
// text is put in a selected box and copied with the older select-and-copy command, and the
// page says why. Returns "clipboard" | "selection" | "manual" (the user still has to copy).
const box = () => document.getElementById("copy-fallback");

function fallback(text) {
  const panel = box();
  const area = document.getElementById("copy-fallback-text");
  area.value = text;
  panel.hidden = false;
  area.focus();
  area.select();
  let ok = false;
  try {
    ok = document.execCommand("copy");
  } catch {
    ok = false;
  }
  document.getElementById("copy-fallback-words").textContent = ok
    ? "Copied by selection. This page is on plain http, where the browser's direct clipboard is not available; " +
      "the text is also shown here, selected, if you want to copy it again."
    : "This browser copies directly only on https or localhost. The text is selected here: press Ctrl+C (⌘C on a Mac) to copy it.";
  panel.dataset.method = ok ? "selection" : "manual";
  return panel.dataset.method;
}

export async function copyText(text) {
  if (navigator.clipboard && window.isSecureContext) {
    try {
      await navigator.clipboard.writeText(text);
      document.body.dataset.copied = "clipboard";
      return "clipboard";
    } catch {
      // refused (no focus, no permission): select-and-copy below
    }
  }
  const how = fallback(text);
  document.body.dataset.copied = how;
  return how;
}

export function initClipboard() {
  document.getElementById("copy-fallback-close")?.addEventListener("click", () => { box().hidden = true; });
}
