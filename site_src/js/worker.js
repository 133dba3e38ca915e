// Somaward's compute worker (a module Web Worker).
// Loads Pyodide, numpy and the engine once, then answers {id, fn, args} with
// {id, ok, value | error}; args and value are JSON strings, never proxies.
// scipy loads in the background only when the page says its first answer is on screen
// ({type: "background"}), so it never delays the first result.
// Other messages it sends: {type: "progress", stage, text}, {type: "ready", versions},
// {type: "boot-error", message}, {type: "scipy", ok, message}.

let ready = null;         // promise of the bridge's call function
let scipyStarted = false;
let lockPackages = {};    // lock-file name -> {file, url, sha256}, to name the file in errors

const post = (msg) => self.postMessage(msg);
const progress = (stage, text) => post({ type: "progress", stage, text });

async function fetchLock(lockURL) {
  let response;
  try {
    response = await fetch(lockURL);
  } catch (err) {
    throw new Error(`could not fetch ${lockURL}: ${err.message}`);
  }
  if (!response.ok) throw new Error(`could not fetch ${lockURL}: HTTP ${response.status}`);
  return response.json();
}

// In --cdn mode the science packages come from the CDN but our wheels from this site:
// give our wheels absolute URLs and hand Pyodide the patched lock as a blob URL.
function lockForPyodide(lock, lockURL, config) {
  if (!config.cdn) return lockURL;
  const patched = structuredClone(lock);
  for (const entry of Object.values(patched.packages)) {
    if (!/^https?:/.test(entry.file_name)) {
      entry.file_name = new URL(entry.file_name, lockURL).href;
    }
  }
  const blob = new Blob([JSON.stringify(patched)], { type: "application/json" });
  return URL.createObjectURL(blob);
}

// Why a package file failed: missing, or different from what the lock file says.
async function diagnose(name) {
  const entry = lockPackages[name];
  if (!entry) return "";
  try {
    const response = await fetch(entry.url, { cache: "no-store" });
    if (!response.ok) return `${entry.file}: HTTP ${response.status} (missing from the folder?)`;
    if (!self.crypto?.subtle) return `${entry.file}: could not be fetched or failed its checksum`;
    const digest = await crypto.subtle.digest("SHA-256", await response.arrayBuffer());
    const hex = Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, "0")).join("");
    return hex === entry.sha256 ? "" :
      `${entry.file}: SHA-256 ${hex.slice(0, 12)}… differs from the lock file's ${entry.sha256.slice(0, 12)}… (file changed or damaged)`;
  } catch (err) {
    return `${entry.file}: ${err.message}`;
  }
}

// loadPackage does not reject on a 404 or a checksum mismatch: collect its error
// messages and fail loudly, naming the files.
async function loadChecked(pyodide, names) {
  const errors = [];
  await pyodide.loadPackage(names, {
    messageCallback: () => {},
    errorCallback: (m) => errors.push(m),
    checkIntegrity: true,
  });
  const missing = names.filter((n) => !(n in pyodide.loadedPackages));
  if (errors.length || missing.length) {
    const files = names.map((n) => lockPackages[n]?.file || n).join(", ");
    const found = (await Promise.all(names.map(diagnose))).filter(Boolean);
    const detail = errors.join(" ").replace(/\s+/g, " ").trim() || "not installed";
    throw new Error(`could not load ${files}: ${found.length ? found.join("; ") : detail}`);
  }
}

async function boot(config) {
  const base = self.location.href;
  const indexURL = new URL(config.indexURL, base).href;
  const lockURL = new URL(config.lockURL, base).href;
  progress("python", "Starting the calculator…");
  const modPromise = import(indexURL + "pyodide.mjs");
  modPromise.catch(() => {});
  const lock = await fetchLock(lockURL);
  for (const [name, entry] of Object.entries(lock.packages)) {
    const url = new URL(entry.file_name, config.cdn && !/^https?:/.test(entry.file_name) ? lockURL : indexURL).href;
    lockPackages[name] = { file: entry.file_name.split("/").pop(), url, sha256: entry.sha256 };
  }
  let mod;
  try {
    mod = await modPromise;
  } catch (err) {
    throw new Error(`could not load ${indexURL}pyodide.mjs: ${err.message}`);
  }
  const stderr = [];
  let pyodide;
  try {
    pyodide = await mod.loadPyodide({
      indexURL,
      lockFileURL: lockForPyodide(lock, lockURL, config),
      stdout: () => {},
      stderr: (line) => stderr.push(line),
    });
  } catch (err) {
    const tail = stderr.slice(-2).join(" ");
    throw new Error(`Python did not start (pyodide.asm.wasm, python_stdlib.zip): ${err.message} ${tail}`.trim());
  }
  progress("numpy", "Loading the numerical library…");
  await loadChecked(pyodide, ["numpy"]);
  progress("engine", "Loading the cable engine…");
  await loadChecked(pyodide, ["somaward", "somaward-page"]);
  const bridge = pyodide.pyimport("somaward_page");
  const versions = JSON.parse(bridge.versions());
  versions.bootMs = Math.round(performance.now());
  post({ type: "ready", versions });
  return { pyodide, bridge };
}

async function loadScipy() {
  if (scipyStarted) return;
  scipyStarted = true;
  try {
    const { pyodide } = await ready;
    progress("scipy", "Loading the rest in the background…");
    await loadChecked(pyodide, ["scipy"]);
    post({ type: "scipy", ok: true, message: "scipy loaded" });
  } catch (err) {
    post({ type: "scipy", ok: false, message: err.message });
  }
}

function answer(bridge, id, fn, args) {
  let result = null;
  try {
    result = bridge.call(fn, args);
    const [ok, payload] = result.toJs();
    if (ok) post({ id, ok: true, value: payload });
    else post({ id, ok: false, error: JSON.parse(payload) });
  } catch (err) {
    post({ id, ok: false, error: { type: "WorkerError", message: String(err.message || err) } });
  } finally {
    if (result) result.destroy();
  }
}

self.onmessage = async (event) => {
  const msg = event.data;
  if (msg.type === "init") {
    ready = boot(msg.config);
    ready.catch((err) => post({ type: "boot-error", message: err.message }));
    return;
  }
  if (msg.type === "background") {
    loadScipy();
    return;
  }
  const { id, fn, args } = msg;
  let bridge;
  try {
    ({ bridge } = await ready);
  } catch (err) {
    post({ id, ok: false, error: { type: "BootError", message: err.message } });
    return;
  }
  answer(bridge, id, fn, args);
};
