// Keeping work: the inputs as a link (URL fragment "#s1.<base64url(deflate-raw(JSON))>"),
// an autosave in localStorage (with the version it replaced kept beside it), and scenario files.
// A snapshot is {mode, scenario}.
// Nothing read here is trusted: a link is unpacked and a file read only up to a stated size
// (LIMITS), each into text; the engine then parses and checks that text (somaward_page.read_input)
// before anything on the page changes. What this module refuses, it refuses with an InputError
// whose message is a plain sentence part, never an exception's text.
import { saveBlob } from "./format.js";
export const PREFIX = "s1.";
const SAVE_KEY = "somaward.work.v1";
const PREVIOUS_KEY = "somaward.previous.v1";

// Sizes in bytes, stated in decimal megabytes in the messages. A link unpacks to at most
// linkBytes (a 5,000-branch tree's link unpacks to about 0.4 MB); a file is at most fileBytes
// (room for a large reconstruction). The branch table's own limit is tree-table.js MAX_BRANCHES.
export const LIMITS = { linkBytes: 5_000_000, fileBytes: 50_000_000 };
const FEED_BYTES = 1024;   // packed bytes handed to the unpacker at a time (≤ about 1 MB unpacked)

export const megabytes = (n) => `${Math.round(n / 1e5) / 10} MB`;
// A name (a file's) as one line of text: control characters shown as "?".
export const oneLine = (text) => String(text).replace(/[\u0000-\u001f\u007f]/g, "?");

// A link or a file the page does not take; the message is plain words.
export class InputError extends Error {
  constructor(message, kind = "input") {
    super(message);
    this.kind = kind;
  }
}

function toBase64url(bytes) {
  let bin = "";
  for (let i = 0; i < bytes.length; i += 0x8000) bin += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(bin).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
}

function fromBase64url(text) {
  if (!/^[A-Za-z0-9_-]*$/.test(text)) throw new InputError("the link holds characters that are not base64url (was it cut or changed?)");
  const bin = atob(text.replace(/-/g, "+").replace(/_/g, "/") + "===".slice((text.length + 3) % 4));
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

async function through(bytes, stream) {
  const piped = new Blob([bytes]).stream().pipeThrough(stream);
  return new Uint8Array(await new Response(piped).arrayBuffer());
}

export async function encodeFragment(snapshot) {
  const json = new TextEncoder().encode(JSON.stringify(snapshot));
  return PREFIX + toBase64url(await through(json, new CompressionStream("deflate-raw")));
}

// deflate-raw bytes → the unpacked bytes, stopping as soon as they pass `cap`. The packed bytes
// go in FEED_BYTES at a time while the output is read and counted, so a small link that would
// unpack to hundreds of megabytes is stopped after a few megabytes, whatever the browser's
// unpacker does with one input chunk.
export async function inflateCapped(bytes, cap) {
  const unpacker = new DecompressionStream("deflate-raw");
  const writer = unpacker.writable.getWriter();
  const reader = unpacker.readable.getReader();
  let stopped = false;
  const feeding = (async () => {
    for (let i = 0; i < bytes.length && !stopped; i += FEED_BYTES) {
      await writer.ready;
      await writer.write(bytes.subarray(i, i + FEED_BYTES));
    }
    if (!stopped) await writer.close();
  })();
  feeding.catch(() => {});   // its failure shows up on the reading side
  const parts = [];
  let size = 0;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      size += value.length;
      if (size > cap) {
        stopped = true;
        throw new InputError(`its data unpack to more than ${megabytes(cap)}, the most the page reads from a link`, "too-big");
      }
      parts.push(value);
    }
    await feeding;
  } catch (err) {
    stopped = true;
    reader.cancel().catch(() => {});
    writer.abort().catch(() => {});
    if (err instanceof InputError) throw err;
    throw new InputError("the link's data do not unpack (the link was probably cut short or changed)");
  }
  const out = new Uint8Array(size);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

// Where (line and column, from 1) the first byte that is not UTF-8 sits.
function badBytePlace(bytes) {
  const text = new TextDecoder("utf-8").decode(bytes);
  const at = Math.max(text.indexOf("\uFFFD"), 0);
  let line = 1, start = 0;
  for (let i = text.indexOf("\n"); i !== -1 && i < at; i = text.indexOf("\n", i + 1)) {
    line++;
    start = i + 1;
  }
  return `line ${line} column ${at - start + 1}`;
}

// UTF-8 bytes → text (a UTF-8 byte-order mark is dropped). `subject` begins the message ("the
// file is"), `advice` ends it.
export function utf8Text(bytes, subject, advice = "") {
  if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
    throw new InputError(`${subject} UTF-16 text (it starts with a UTF-16 byte-order mark)${advice}`);
  }
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw new InputError(`${subject} not UTF-8 text (the first bad byte is at ${badBytePlace(bytes)})${advice}`);
  }
}

// A fragment → the text it packs (JSON of a snapshot, for the engine to read); throws an
// InputError saying in plain words what is wrong with the link.
export async function unpackFragment(fragment, cap = LIMITS.linkBytes) {
  const text = fragment.replace(/^#/, "");
  if (!text.startsWith(PREFIX)) {
    const v = /^s(\d+)\./.exec(text);
    throw new InputError(v ? `the link was made by a newer version of this page (format s${v[1]}); this page reads s1`
      : "the part after # is not a Somaward link");
  }
  const bytes = await inflateCapped(fromBase64url(text.slice(PREFIX.length)), cap);
  return utf8Text(bytes, "the link's data are", " (was it changed?)");
}

// A scenario file is refused before it is read when it is larger than the cap.
export function checkFileSize(file, cap = LIMITS.fileBytes) {
  if (file.size > cap) {
    throw new InputError(`the file is ${megabytes(file.size)}, more than the ${megabytes(cap)} the page opens ` +
      `(the command line reads any size: somaward report ${oneLine(file.name)})`, "too-big");
  }
}

// A scenario file → its text (an InputError in plain words when it cannot be had).
export async function readFile(file, cap = LIMITS.fileBytes) {
  checkFileSize(file, cap);
  let bytes;
  try {
    bytes = new Uint8Array(await file.arrayBuffer());
  } catch {
    throw new InputError("the file could not be read (was it moved or deleted?)");
  }
  return utf8Text(bytes, "the file is", "; save it as UTF-8");
}

export function checkSnapshot(value) {
  if (!value || typeof value !== "object" || !["quick", "tree"].includes(value.mode) ||
      !value.scenario || typeof value.scenario !== "object" || Array.isArray(value.scenario)) {
    throw new InputError("it does not hold a Somaward input (mode and scenario)");
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

function entry(key) {
  try {
    const raw = storage()?.getItem(key);
    return raw ? JSON.parse(raw) : null;
  } catch {
    return null;
  }
}

export function loadSaved(key = SAVE_KEY) {
  try {
    return checkSnapshot(entry(key)?.snapshot);
  } catch {
    return null;
  }
}

// `opened`: the snapshot is a link, file or demo as opened, not yet edited (so it is not work of
// the person's that a later replacement must keep; the previous version stays what it was).
export function save(snapshot, key = SAVE_KEY, opened = false) {
  try {
    storage()?.setItem(key, JSON.stringify({ savedAt: new Date().toISOString(), snapshot, ...(opened ? { opened } : {}) }));
    return true;
  } catch {
    return false;
  }
}

export const savedOpened = () => entry(SAVE_KEY)?.opened === true;

// Before the inputs are replaced wholesale (a link, a file, the demo, the previous work): the
// inputs being replaced become the previous version, one click away.
export const savePrevious = (snapshot) => save(snapshot, PREVIOUS_KEY);
export const loadPrevious = () => loadSaved(PREVIOUS_KEY);
export const hasSaved = () => loadSaved() !== null;

// --- files ---
export function downloadJSON(scenario, name) {
  saveBlob(new Blob([JSON.stringify(scenario, null, 1) + "\n"], { type: "application/json" }), name);
}
