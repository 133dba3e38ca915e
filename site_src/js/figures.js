// Figure downloads: every figure on the page with a drawing gets "SVG" and "PNG" buttons.
// The SVG is the drawing itself plus its caption, its legend, the first caution and the stamp
// (engine version and scenario fingerprint) of the very report the figure was drawn from: the
// view that draws a figure stamps it (stampFigure), so a figure saved right after a change
// carries its own report's stamp, never the previous one's. The PNG is that SVG drawn on a
// canvas at twice the size. Nothing is recomputed.
import { saveBlob } from "./format.js";
import { COLOURS } from "./palette.js";

const NS = "http://www.w3.org/2000/svg";

// Called by the view that has just drawn `figure` from `report` (null: the drawing shows inputs
// not yet computed, so it has no stamp).
export function stampFigure(figure, report) {
  if (!figure) return;
  const ds = figure.dataset;
  if (report?.stamp) {
    ds.stamp = report.stamp.text;
    ds.fingerprint = report.stamp.fingerprint;
    ds.caution = (report.caution || [])[0] || "";
  } else {
    delete ds.stamp;
    delete ds.fingerprint;
    delete ds.caution;
  }
}

function mainSVG(figure) {
  return [...figure.querySelectorAll(".plot svg")].find((s) => !s.closest(".legend") && !s.parentElement.closest("svg")) || null;
}

function legendItems(figure) {
  return [...figure.querySelectorAll(".plot .legend li")].map((li) => ({
    colour: li.querySelector("[data-colour]")?.dataset.colour || "#000",
    dashed: Boolean(li.querySelector(".swatch.dashed")),
    label: li,
  }));
}

// The text of an HTML element as SVG text content: <sub>/<sup> become shifted <tspan>s; the
// figure buttons and definitions on demand are left out.
function svgText(node, out = []) {
  for (const child of node.childNodes) {
    if (child.nodeType === Node.TEXT_NODE) out.push(child.textContent);
    else if (child.nodeType !== Node.ELEMENT_NODE || child.matches(".figure-tools, .definition")) continue;
    else if (child.matches("sub, sup")) {
      const t = document.createElementNS(NS, "tspan");
      t.setAttribute("baseline-shift", child.matches("sub") ? "sub" : "super");
      t.setAttribute("font-size", "0.75em");
      t.append(...svgText(child));
      out.push(t);
    } else svgText(child, out);
  }
  return out;
}

// Words split into lines of at most `width` characters.
function wrap(text, width) {
  const lines = [];
  let line = "";
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (line && line.length + 1 + word.length > width) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(line);
  return lines;
}

export function figureSVG(figure) {
  const svg = mainSVG(figure);
  if (!svg || !figure.dataset.stamp) return null;
  const box = svg.viewBox?.baseVal;
  const w = Number(svg.getAttribute("width")) || box?.width || svg.clientWidth || 480;
  const h = Number(svg.getAttribute("height")) || box?.height || svg.clientHeight || 300;
  const items = legendItems(figure);
  const caption = figure.querySelector(".caption-text") || figure.querySelector("figcaption");
  const perLine = Math.max(30, Math.floor(w / 6));
  // A caption longer than one line is written as plain text over several; a short one keeps its
  // sub- and superscripts.
  const plain = caption ? [...svgText(caption)].map((p) => (typeof p === "string" ? p : p.textContent)).join("").trim() : "";
  const titleLines = wrap(plain, Math.floor(w / 7.2));
  const legendRows = items.length ? Math.ceil(items.length / 2) : 0;
  const top = 8 + 16 * titleLines.length + 18 * legendRows;
  const footer = [...wrap(figure.dataset.caution || "", perLine), figure.dataset.stamp];
  const H = top + h + 6 + 13 * footer.length;
  const out = document.createElementNS(NS, "svg");
  for (const [k, v] of Object.entries({ xmlns: NS, width: w, height: H, viewBox: `0 0 ${w} ${H}`, "font-family": "sans-serif" })) out.setAttribute(k, String(v));
  const text = (x, y, s, size, fill = COLOURS.ink) => {
    const t = document.createElementNS(NS, "text");
    for (const [k, v] of Object.entries({ x, y, "font-size": size, fill })) t.setAttribute(k, String(v));
    if (typeof s === "string") t.textContent = s;
    else t.append(...svgText(s));
    return t;
  };
  const bg = document.createElementNS(NS, "rect");
  for (const [k, v] of Object.entries({ width: w, height: H, fill: "#fff" })) bg.setAttribute(k, String(v));
  out.append(bg);
  if (titleLines.length === 1) out.append(text(4, 20, caption, 13));
  else titleLines.forEach((line, n) => out.append(text(4, 20 + 16 * n, line, 13)));
  items.forEach((it, n) => {
    const x = 8 + (n % 2) * (w / 2), y = 8 + 16 * titleLines.length + 18 * Math.floor(n / 2) + 10;
    const r = document.createElementNS(NS, "line");
    for (const [k, v] of Object.entries({ x1: x, x2: x + 16, y1: y - 4, y2: y - 4, stroke: it.colour, "stroke-width": 3 })) r.setAttribute(k, String(v));
    if (it.dashed) r.setAttribute("stroke-dasharray", "5,3");
    out.append(r, text(x + 20, y, it.label, 11));
  });
  const inner = svg.cloneNode(true);
  inner.setAttribute("x", "0");
  inner.setAttribute("y", String(top));
  inner.setAttribute("width", String(w));
  inner.setAttribute("height", String(h));
  out.append(inner);
  footer.forEach((line, n) => out.append(text(4, top + h + 16 + 13 * n, line, 10, COLOURS.muted)));
  return new XMLSerializer().serializeToString(out);
}

function fileName(figure, ext) {
  const fp = figure.dataset.fingerprint;
  return `somaward-${figure.id.replace(/^plot-/, "")}${fp ? `-${fp}` : ""}.${ext}`;
}

async function toPNG(svgText) {
  const img = new Image();
  img.src = "data:image/svg+xml;charset=utf-8," + encodeURIComponent(svgText);
  await img.decode();
  const canvas = document.createElement("canvas");
  canvas.width = img.naturalWidth * 2;
  canvas.height = img.naturalHeight * 2;
  const g = canvas.getContext("2d");
  g.scale(2, 2);
  g.drawImage(img, 0, 0);
  return new Promise((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error("no PNG"))), "image/png"));
}

async function download(figure, kind, note) {
  const text = figureSVG(figure);
  if (!text) {
    note.textContent = mainSVG(figure) ? "Wait for the result: a figure is saved with the stamp of the inputs it shows."
      : "Nothing drawn yet.";
    return;
  }
  try {
    if (kind === "svg") saveBlob(new Blob([text], { type: "image/svg+xml" }), fileName(figure, "svg"));
    else saveBlob(await toPNG(text), fileName(figure, "png"));
    note.textContent = "";
  } catch (err) {
    console.error(err);
    note.textContent = `The ${kind.toUpperCase()} could not be made in this browser; try the other format.`;
  }
}

export function addFigureButtons(root = document) {
  for (const figure of root.querySelectorAll("figure[id]")) {
    if (figure.querySelector(".figure-tools") || !figure.querySelector(".plot")) continue;
    const tools = document.createElement("span");
    tools.className = "figure-tools";
    const note = document.createElement("span");
    note.className = "figure-note";
    note.setAttribute("aria-live", "polite");
    for (const kind of ["svg", "png"]) {
      const b = document.createElement("button");
      b.type = "button";
      b.textContent = kind.toUpperCase();
      b.title = `download this figure as ${kind.toUpperCase()}`;
      b.dataset.download = kind;
      b.addEventListener("click", () => download(figure, kind, note));
      tools.append(b);
    }
    tools.append(note);
    (figure.querySelector("figcaption") || figure).append(tools);
  }
}
