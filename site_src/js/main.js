// Somaward's page: boots the worker, keeps the form and the results in step.
// body[data-state] = loading | ready | error; body[data-results] = none | fresh | stale;
// body[data-input] = pending | valid | invalid (the newest request's fate).
// Timings (performance.now(), in milliseconds) are left on body for bench/page.py:
// data-t-first-result, data-t-input, data-t-sent, data-t-shown (the views on screen drawn),
// data-t-drawn (every view drawn; see VIEWS).
import { EngineClient } from "./worker-client.js";
import { Inputs } from "./inputs.js";  // quick cable or branch table; autosave, links, files
import { fillTolerance, withTolerance } from "./equivalent-input.js";  // equivalent_cylinder.tolerance (section "equivalent")
import { clearMessages, showError } from "./fields.js";  // engine messages beside their fields

const DEBOUNCE_MS = 250;
const body = document.body;
const config = JSON.parse(document.getElementById("somaward-config").textContent);
const status = document.getElementById("status");
const reportHolder = document.createElement("script");
reportHolder.type = "application/json";
reportHolder.id = "report-json";
document.body.append(reportHolder);

let client = null;
let inputs = null;
let lastReport = null;
let lastJSON = "";

// Views of the report: each section that draws it names its module, the module's render
// function and its element. They load while Python boots (the charting code is the largest
// script) and redraw on every result. A new section adds one line here.
// A view marked lazy whose element is off screen is drawn when the page is idle (or when it
// scrolls into view), so that a big tree's tables and plots do not hold up the part the person
// is looking at; body[data-views] = pending | drawn says whether every view shows the newest
// report (and data-t-drawn when they all do). "after" views run again once the lazy ones are in.
const VIEWS = [
  { module: "./results.js", render: "renderResults", target: "#results-body" },
  { module: "./charts.js", render: "renderPlots", target: "#plots", lazy: true },
  { module: "./equivalent.js", render: "renderEquivalent", target: "#equivalent-body", lazy: true },
  { module: "./tree-map.js", render: "renderTreeMap", target: "#tree-map", lazy: true },
  { module: "./schematic.js", render: "renderSchematic", target: "#schematic-figure", lazy: true },
  { module: "./paper.js", render: "renderPaper", target: "#paper", init: "initPaper" },
  { module: "./figures.js", render: "addFigureButtons", target: "#sections", after: true },
];
const onScreen = new Map();   // view element → is it (nearly) in the viewport?
const deferred = new Set();   // lazy views not yet drawn for the newest report
let idleHandle = 0;
const observer = typeof IntersectionObserver === "function" ? new IntersectionObserver((entries) => {
  for (const entry of entries) {
    onScreen.set(entry.target, entry.isIntersecting);
    if (!entry.isIntersecting) continue;
    const view = [...deferred].find((v) => document.querySelector(v.target) === entry.target);
    if (view) drawDeferred(view);
  }
}, { rootMargin: "300px" }) : null;
const idle = (fn) => (typeof requestIdleCallback === "function" ? requestIdleCallback(fn, { timeout: 1500 }) : setTimeout(fn, 50));
const cancelIdle = (h) => (typeof cancelIdleCallback === "function" ? cancelIdleCallback(h) : clearTimeout(h));

function drawDeferred(view) {
  deferred.delete(view);
  if (lastReport && view.fn) draw(view, lastReport);
  if (deferred.size) return;
  cancelIdle(idleHandle);
  for (const v of VIEWS) if (v.after && v.fn && lastReport) draw(v, lastReport);
  body.dataset.views = "drawn";
  body.dataset.tDrawn = performance.now().toFixed(2);
}

function drawNextDeferred() {
  idleHandle = 0;
  const next = deferred.values().next().value;
  if (next) drawDeferred(next);
  if (deferred.size) idleHandle = idle(drawNextDeferred);
}

function drawAll(report) {
  cancelIdle(idleHandle);
  deferred.clear();
  for (const view of VIEWS) {
    if (!view.fn) continue;
    const el = document.querySelector(view.target);
    if (view.lazy && el && onScreen.get(el) === false) deferred.add(view);
    else draw(view, report);
  }
  if (deferred.size) {
    body.dataset.views = "pending";
    idleHandle = idle(drawNextDeferred);
  } else {
    body.dataset.views = "drawn";
    body.dataset.tDrawn = performance.now().toFixed(2);
  }
}

function draw(view, report) {
  const el = document.querySelector(view.target);
  const t0 = performance.now();
  try {
    view.fn(el, report, { client, json: lastJSON });
  } catch (err) {
    console.error(err);
    el.textContent = "This part could not be drawn; reload the page to try again.";
  }
  performance.measure(`view ${view.module}`, { start: t0 });
}

function loadViews() {
  for (const view of VIEWS) {
    import(view.module).then((mod) => {
      view.fn = mod[view.render];
      if (view.init) mod[view.init](document.querySelector(view.target));
      if (view.lazy && observer) observer.observe(document.querySelector(view.target));
      if (lastReport) draw(view, lastReport);
    }, (err) => {
      console.error(err);
      document.querySelector(view.target).textContent = "This part could not be loaded; reload the page to try again.";
    });
  }
}
let latest = 0;       // sequence number of the newest request
let timer = null;
let haveResult = false;
let backgroundAsked = false;
let readyText = "";

function setStatus(text) {
  status.textContent = text;
}

function fail(message) {
  body.dataset.state = "error";
  document.getElementById("boot-error-text").textContent = message;
  document.getElementById("boot-error").hidden = false;
  setStatus("Stopped: the calculator could not start.");
  if (client) client.terminate();
}

function markStale() {
  if (haveResult) body.dataset.results = "stale";
}

function show(report, json) {
  lastReport = report;
  lastJSON = json;
  reportHolder.textContent = json;
  drawAll(report);
  body.dataset.results = "fresh";
  body.dataset.tShown = performance.now().toFixed(2);
  if (!haveResult) {
    haveResult = true;
    body.dataset.tFirstResult = body.dataset.tShown;
    body.dataset.tFirstResultEpoch = (performance.timeOrigin + Number(body.dataset.tShown)).toFixed(1);
    registerServiceWorker();
  }
}

// After the first answer is on screen (a result or an error message).
function askBackground() {
  if (backgroundAsked) return;
  backgroundAsked = true;
  setTimeout(() => client.loadBackground(), 0);
}

async function recompute() {
  const mine = ++latest;
  const mode = inputs.mode;
  const scenario = inputs.scenario();
  body.dataset.tSent = performance.now().toFixed(2);
  body.dataset.input = "pending";
  try {
    const t0 = performance.now();
    const { value, json } = await client.call("solve", scenario);
    performance.measure("solve round trip", { start: t0 });
    if (mine !== latest) return;
    clearMessages();
    body.dataset.input = "valid";
    show(value, json);
    askBackground();
  } catch (err) {
    if (mine !== latest) return;
    if (err.type === "BootError") return;  // the boot error notice says it all
    body.dataset.input = "invalid";
    markStale();
    if (err.type !== "ScenarioError") console.error(err.message);
    showError(mode, err);
    askBackground();
  }
}

function onInput(event) {
  body.dataset.tInput = (event.timeStamp || performance.now()).toFixed(2);
  markStale();
  clearTimeout(timer);
  timer = setTimeout(recompute, DEBOUNCE_MS);
}

function registerServiceWorker() {
  const note = document.getElementById("offline-status");
  if (!("serviceWorker" in navigator) || !window.isSecureContext) {
    note.textContent = "offline use needs https or localhost";
    return;
  }
  navigator.serviceWorker.register("sw.js").then(() => navigator.serviceWorker.ready).then(() => {
    note.textContent = "works offline on this device";
    body.dataset.offline = "ready";
  }).catch((err) => {
    note.textContent = `offline use not available (${err.message})`;
  });
}

const handlers = {
  progress: (msg) => setStatus(readyText ? `${readyText} ${msg.text}` : msg.text),
  ready: (msg) => {
    body.dataset.state = "ready";
    body.dataset.tReady = performance.now().toFixed(2);
    readyText = "Ready.";
    setStatus(readyText);
  },
  bootError: (message) => fail(message),
  scipy: (msg) => {
    body.dataset.scipy = msg.ok ? "ready" : "error";
    if (!msg.ok) {
      console.error(msg.message);
      setStatus(`${readyText} Part of the calculator did not load; if a result is missing, reload the page.`);
    } else setStatus(readyText);
  },
};

function start() {
  if (location.protocol === "file:") return;  // js/file-notice.js explains what to do
  client = new EngineClient(new URL(`./worker.js?v=${config.build}`, import.meta.url), config, handlers);
  loadViews();
  setTimeout(() => {
    if (body.dataset.state === "loading") {
      fail(`Python did not start within ${config.bootTimeoutMs / 1000} s (${status.textContent}). ` +
        "The connection may be slow, or the browser blocked WebAssembly.");
    }
  }, config.bootTimeoutMs);
  inputs = new Inputs(client, { compute: () => { clearTimeout(timer); recompute(); }, decorate: withTolerance, fill: fillTolerance });
  for (const form of inputs.forms) {
    form.addEventListener("input", onInput);
    form.addEventListener("submit", (event) => {
      event.preventDefault();
      clearTimeout(timer);
      recompute();
    });
  }
  inputs.restore().then(recompute);
}

start();
