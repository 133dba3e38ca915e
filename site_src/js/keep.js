// Keeping work: the inputs as a link (URL fragment "#s1.<base64url(deflate-raw(JSON))>"),
// an autosave in localStorage, and scenario files. A snapshot is {mode, scenario}.
// Nothing read here is trusted: it is parsed, checked, and only ever set as values.
import { saveBlob } from "./format.js";
export const PREFIX = "s1.";
const SAVE_KEY = "somaward.work.v1";
const PREVIOUS_KEY = "somaward.previous.v1";

function toBase64url(bytes) {
  let bin = "";
  for (let i = 0; i < bytes.length; i += 0x8000) bin += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(bin).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

function fromBase64url(text) {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) throw new Error("the link holds characters that are not base64url (was it cut or changed?)");
  const bin = atob(text.replace(/-/g, "+").replace(/_/g, "/") + "===".slice((text.length + 3) % 4));
  return Uint8Array.from(bin, (c) => c.charCodeAt(0));
}

async function through(bytes, stream) {
  const piped = new Blob([bytes]).stream().pipeThrough(stream);
  return new Uint8Array(await new Response(piped).arrayBuffer());
}

export async function encodeFragment(snapshot) {
  const json = new TextEncoder().encode(JSON.stringify(snapshot));
  return PREFIX + toBase64url(await through(json, new CompressionStream("deflate-raw")));
}

// A fragment → snapshot; throws an Error saying in plain words what is wrong with it.
export async function decodeFragment(fragment) {
  const text = fragment.replace(/^#/, "");
  if (!text.startsWith(PREFIX)) {
    const v = /^s(\d+)\./.exec(text);
    throw new Error(v ? `the link was made by a newer version of this page (format s${v[1]}); this page reads s1`
      : "the part after # is not a Somaward link");
  }
  let bytes;
  try {
    bytes = await through(fromBase64url(text.slice(PREFIX.length)), new DecompressionStream("deflate-raw"));
  } catch (err) {
    throw new Error(err.message.startsWith("the link") ? err.message : "the link's data do not unpack (the link was probably cut short or changed)");
  }
  let value;
  try {
    value = JSON.parse(new TextDecoder("utf-8", { fatal: true }).decode(bytes));
  } catch {
    throw new Error("the link's data are not valid JSON");
  }
  return checkSnapshot(value);
}

export function checkSnapshot(value) {
  if (!value || typeof value !== "object" || !["quick", "tree"].includes(value.mode) ||
      !value.scenario || typeof value.scenario !== "object" || Array.isArray(value.scenario)) {
    throw new Error("it does not hold a Somaward input (mode and scenario)");
  }
  return { mode: value.mode, scenario: value.scenario };
}

// --- autosave ---
function storage() {
  try {
    return window.localStorage;
  } catch {
    return null;
  }
}

export function loadSaved(key = SAVE_KEY) {
  const raw = storage()?.getItem(key);
  if (!raw) return null;
  try {
    return checkSnapshot(JSON.parse(raw).snapshot);
  } catch {
    return null;
  }
}

export function save(snapshot, key = SAVE_KEY) {
  try {
    storage()?.setItem(key, JSON.stringify({ savedAt: new Date().toISOString(), snapshot }));
    return true;
  } catch {
    return false;
  }
}

// Before the inputs are replaced wholesale (a link, a file, the demo): keep what was saved.
export function keepPrevious() {
  const raw = storage()?.getItem(SAVE_KEY);
  if (raw) storage()?.setItem(PREVIOUS_KEY, raw);
  return Boolean(raw);
}

export const loadPrevious = () => loadSaved(PREVIOUS_KEY);

// --- files ---
export function downloadJSON(scenario, name) {
  saveBlob(new Blob([JSON.stringify(scenario, null, 1) + "\n"], { type: "application/json" }), name);
}

export function parseFile(name, text) {
  try {
    return JSON.parse(text);
  } catch {
    throw new Error(`${name} is not valid JSON (is it cut short, or not a scenario file?)`);
  }
}
