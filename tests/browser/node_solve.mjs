// Runs the bundled engine under Pyodide in Node.js, from a built site folder:
//   node node_solve.mjs SITE_DIR SCENARIO_JSON_FILE
// Prints one JSON line: {"ok": true, "report": ...} or {"ok": false, "error": ...}.
// Loads the same files the page loads (site/pyodide/*, its trimmed lock file, our wheels).
import { readFile } from "node:fs/promises";
import path from "node:path";

const [siteDir, scenarioFile] = process.argv.slice(2);
const indexURL = path.resolve(siteDir, "pyodide") + path.sep;
const { loadPyodide } = await import(path.join(indexURL, "pyodide.mjs"));
const errors = [];
const pyodide = await loadPyodide({
  indexURL,
  lockFileURL: path.join(indexURL, "pyodide-lock.json"),
  stdout: () => {},
  stderr: (line) => errors.push(line),
});
await pyodide.loadPackage(["numpy", "somaward", "somaward-page"], {
  messageCallback: () => {},
  errorCallback: (m) => errors.push(m),
});
if (!("somaward" in pyodide.loadedPackages)) {
  console.log(JSON.stringify({ ok: false, error: errors.join(" ") || "somaward not loaded" }));
  process.exit(1);
}
const bridge = pyodide.pyimport("somaward_page");
const scenario = await readFile(scenarioFile, "utf8");
const result = bridge.call("solve", JSON.stringify([JSON.parse(scenario)]));
const [ok, payload] = result.toJs();
result.destroy();
console.log(JSON.stringify(ok ? { ok, report: JSON.parse(payload) } : { ok, error: JSON.parse(payload) }));
