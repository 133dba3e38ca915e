// Somaward's page: boots the worker, keeps the form and the results in step.
// body[data-state] = loading | ready | error; body[data-results] = none | fresh | stale;
// body[data-input] = pending | valid | invalid (the newest request's fate).
// Timings (performance.now(), ms) are left on body for bench/page.py:
// data-t-first-result, data-t-input, data-t-sent, data-t-shown.
import { EngineClient } from "./worker-client.js";
import { Inputs } from "./inputs.js";  // quick cable or branch table; autosave, links, files
import { withTolerance } from "./equivalent-input.js";  // equivalent_cylinder.tolerance (section "equivalent")

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
const VIEWS = [
  { module: "./results.js", render: "renderResults", target: "#results-body" },
  { module: "./charts.js", render: "renderPlots", target: "#plots" },
  { module: "./equivalent.js", render: "renderEquivalent", target: "#equivalent-body" },
  { module: "./tree-map.js", render: "renderTreeMap", target: "#tree-map" },
  { module: "./paper.js", render: "renderPaper", target: "#paper", init: "initPaper" },
  { module: "./figures.js", render: "addFigureButtons", target: "#sections" },
];

function draw(view, report) {
  const el = document.querySelector(view.target);
  try {
    view.fn(el, report, { client, json: lastJSON });
  } catch (err) {
    el.textContent = `This part could not be drawn: ${err.message}`;
  }
}

function loadViews() {
  for (const view of VIEWS) {
    import(view.module).then((mod) => {
      view.fn = mod[view.render];
      if (view.init) mod[view.init](document.querySelector(view.target));
      if (lastReport) draw(view, lastReport);
    }, (err) => {
      document.querySelector(view.target).textContent = `Not available: ${err.message}`;
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
  for (const view of VIEWS) if (view.fn) draw(view, report);
  reportHolder.textContent = json;
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
  const input = inputs.current();
  const scenario = inputs.scenario();
  body.dataset.tSent = performance.now().toFixed(2);
  body.dataset.input = "pending";
  try {
    const { value, json } = await client.call("solve", scenario);
    if (mine !== latest) return;
    input.clearMessages();
    body.dataset.input = "valid";
    show(value, json);
    askBackground();
  } catch (err) {
    if (mine !== latest) return;
    if (err.type === "BootError") return;  // the boot error notice says it all
    body.dataset.input = "invalid";
    markStale();
    input.showMessage(err.message);
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
    readyText = `Ready (engine ${msg.versions.engine ?? "?"}, numpy ${msg.versions.numpy}).`;
    setStatus(readyText);
  },
  bootError: (message) => fail(message),
  scipy: (msg) => {
    body.dataset.scipy = msg.ok ? "ready" : "error";
    if (!msg.ok) setStatus(`${readyText} scipy could not load (${msg.message}); results that need it will fail.`);
    else setStatus(`${readyText} scipy loaded.`);
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
  inputs = new Inputs(client, { compute: () => { clearTimeout(timer); recompute(); }, decorate: withTolerance });
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
