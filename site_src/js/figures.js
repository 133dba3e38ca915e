// Figure downloads: every figure on the page with a drawing gets "SVG" and "PNG" buttons.
// The SVG is the drawing itself plus its legend and the engine's stamp; the PNG is that SVG
// drawn on a canvas at twice the size. Nothing is recomputed.
import { currentStamp } from "./paper.js";
import { saveBlob } from "./format.js";

const NS = "http://www.w3.org/2000/svg";

function mainSVG(figure) {
  return [...figure.querySelectorAll(".plot svg")].find((s) => !s.closest("span") && !s.parentElement.closest("svg")) || null;
}

function legendItems(figure) {
  return [...figure.querySelectorAll(".plot span[class$='-swatch']")].map((span) => ({
    color: span.querySelector("svg")?.getAttribute("fill") || span.querySelector("rect")?.getAttribute("fill") || "#000",
    label: span.textContent.trim(),
  }));
}

export function figureSVG(figure) {
  const svg = mainSVG(figure);
  if (!svg) return null;
  const box = svg.viewBox?.baseVal;
  const w = Number(svg.getAttribute("width")) || box?.width || svg.clientWidth || 480;
  const h = Number(svg.getAttribute("height")) || box?.height || svg.clientHeight || 300;
  const items = legendItems(figure);
  const title = figure.querySelector("figcaption")?.firstChild?.textContent?.trim() || "";
  const top = 22 + (items.length ? 18 * Math.ceil(items.length / 3) : 0);
  const H = top + h + 20;
  const out = document.createElementNS(NS, "svg");
  for (const [k, v] of Object.entries({ xmlns: NS, width: w, height: H, viewBox: `0 0 ${w} ${H}`, "font-family": "sans-serif" })) out.setAttribute(k, String(v));
  const text = (x, y, s, size, fill = "#1d2330") => {
    const t = document.createElementNS(NS, "text");
    for (const [k, v] of Object.entries({ x, y, "font-size": size, fill })) t.setAttribute(k, String(v));
    t.textContent = s;
    return t;
  };
  const bg = document.createElementNS(NS, "rect");
  for (const [k, v] of Object.entries({ width: w, height: H, fill: "#fff" })) bg.setAttribute(k, String(v));
  out.append(bg, text(4, 15, title, 13));
  items.forEach((it, n) => {
    const x = 8 + (n % 3) * (w / 3), y = 22 + 18 * Math.floor(n / 3) + 10;
    const r = document.createElementNS(NS, "rect");
    for (const [k, v] of Object.entries({ x, y: y - 9, width: 12, height: 10, fill: it.color })) r.setAttribute(k, String(v));
    out.append(r, text(x + 16, y, it.label, 11));
  });
  const inner = svg.cloneNode(true);
  inner.setAttribute("x", "0");
  inner.setAttribute("y", String(top));
  inner.setAttribute("width", String(w));
  inner.setAttribute("height", String(h));
  out.append(inner, text(4, H - 6, `${currentStamp()}; passive-cable estimate`, 10, "#5a6270"));
  return new XMLSerializer().serializeToString(out);
}


function fileName(figure, ext) {
  const fp = (currentStamp().match(/scenario (\w+)/) || [])[1];
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
    note.textContent = "Nothing drawn yet.";
    return;
  }
  try {
    if (kind === "svg") saveBlob(new Blob([text], { type: "image/svg+xml" }), fileName(figure, "svg"));
    else saveBlob(await toPNG(text), fileName(figure, "png"));
    note.textContent = "";
  } catch (err) {
    note.textContent = `Could not make the ${kind.toUpperCase()}: ${err.message}`;
  }
}

export function addFigureButtons(root = document) {
  for (const figure of root.querySelectorAll("figure[id]")) {
    if (figure.querySelector(".figure-tools") || !figure.querySelector(".plot")) continue;
    const tools = document.createElement("span");
    tools.className = "figure-tools";
    const note = document.createElement("span");
    note.className = "figure-note";
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
