"""Benchmark the page against a bare Pyodide + numpy boot, side by side, in headless Chromium.

    python bench/page.py [--runs 5] [--site DIR] [--recomputes 20]

Builds the site (or takes ``--site DIR``), copies it to a temporary folder, adds a bare page
that only starts Pyodide with numpy in a module worker (same CSP, same files), serves both on
127.0.0.1, and runs them interleaved:
- cold: a new browser context per load (empty HTTP cache, no service worker);
- warm: the second load in the same context (the page's service worker is then active);
measuring time from navigation start to the first result (page) or to numpy imported (bare),
and the bytes transferred. Then, on a warm page, the recompute latency of the quick-cable form
from the input event to the DOM update, minus the debounce, median of ``--recomputes``.
Prints a table of medians and ratios to the bare boot; asserts nothing.
Then the same for the branch table holding a 10³-section tree (opened as a scenario file),
the synapse distance typed (issue 4): to the views on screen, and to every view drawn (views
off screen are drawn when the page is idle).
Targets (issue 3): first result ≤ 1.25 × bare boot; recompute ≤ 1/100 of the bare boot;
(issue 4) tree recompute ≤ 1/25 of the bare boot.
"""
from __future__ import annotations

import argparse
import shutil
import statistics
import sys
import tempfile
import threading
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "browser"))

import build  # noqa: E402
from conftest import CHROMIUM_ARGS  # noqa: E402

DEBOUNCE_MS = 250  # site_src/js/main.js
TIMEOUT_MS = 180_000

BARE_HTML = """<!doctype html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{csp}">
<title>bare Pyodide + numpy boot</title>
<script type="module" src="bare.js"></script></head>
<body data-state="loading"></body></html>
"""
BARE_JS = """const worker = new Worker("bare-worker.js", { type: "module" });
worker.onmessage = (event) => {
  document.body.dataset.tReady = performance.now().toFixed(2);
  document.body.dataset.state = event.data.ok ? "ready" : "error";
};
"""
BARE_WORKER = """import { loadPyodide } from "./pyodide/pyodide.mjs";
const indexURL = new URL("./pyodide/", self.location.href).href;
const pyodide = await loadPyodide({ indexURL, lockFileURL: indexURL + "pyodide-lock.json" });
await pyodide.loadPackage(["numpy"], { messageCallback: () => {} });
pyodide.runPython("import numpy");
self.postMessage({ ok: "numpy" in pyodide.loadedPackages });
"""


def add_bare_page(site: Path) -> None:
    (site / "bare.html").write_text(BARE_HTML.format(csp=build.csp(False)))
    (site / "bare.js").write_text(BARE_JS)
    (site / "bare-worker.js").write_text(BARE_WORKER)


class Bytes:
    """Response bytes (headers + body) seen by one browser context."""

    def __init__(self, context):
        self.total = 0
        context.on("requestfinished", self.add)

    def add(self, request):
        try:
            sizes = request.sizes()
        except Exception:  # noqa: BLE001 (a request torn down with its page)
            return
        self.total += sizes["responseBodySize"] + sizes["responseHeadersSize"]


def load(page, url: str, marker: str, attr: str) -> float:
    page.goto(url)
    page.wait_for_selector(marker, state="attached", timeout=TIMEOUT_MS)
    return float(page.get_attribute("body", attr))


PAGES = {"page": ("index.html", "body[data-results=fresh]", "data-t-first-result"),
         "bare": ("bare.html", "body[data-state=ready]", "data-t-ready")}


def cold(browser, base: str, kind: str) -> tuple[float, int]:
    ctx = browser.new_context()
    try:
        counter = Bytes(ctx)
        path, marker, attr = PAGES[kind]
        ms = load(ctx.new_page(), base + path, marker, attr)
        return ms, counter.total
    finally:
        ctx.close()


def warm(browser, base: str, kind: str) -> float:
    ctx = browser.new_context()
    try:
        page = ctx.new_page()
        path, marker, attr = PAGES[kind]
        load(page, base + path, marker, attr)
        if kind == "page":
            page.wait_for_selector("body[data-offline]", state="attached", timeout=TIMEOUT_MS)
            page.wait_for_selector("body[data-scipy]", state="attached", timeout=TIMEOUT_MS)
        return load(page, base + path, marker, attr)
    finally:
        ctx.close()


def recompute_latencies(browser, base: str, n: int) -> tuple[list[float], list[float]]:
    ctx = browser.new_context()
    try:
        page = ctx.new_page()
        load(page, base + "index.html", "body[data-results=fresh]", "data-t-first-result")
        page.wait_for_selector("body[data-scipy]", state="attached", timeout=TIMEOUT_MS)
        from_input, from_send = [], []
        for i in range(n):
            page.fill("#f-distance", str(100 + 10 * i))
            page.wait_for_selector("body[data-results=fresh]", state="attached", timeout=30_000)
            t = {k: float(page.get_attribute("body", f"data-t-{k}")) for k in ("input", "sent", "shown")}
            from_input.append(t["shown"] - t["input"] - DEBOUNCE_MS)
            from_send.append(t["shown"] - t["sent"])
        return from_input, from_send
    finally:
        ctx.close()


def big_tree(n_sections: int = 1000) -> dict:
    """An invented tree of n_sections/2 branches of two sections each (a binary tree)."""
    branches = []
    for i in range(n_sections // 2):
        parent = None if i == 0 else f"b{(i - 1) // 2}"
        branches.append({"id": f"b{i}", "parent": parent,
                         "cylinders": [{"length": 30 + i % 17, "diameter": 2.0 / (1 + i % 5) + 0.3},
                                      {"length": 20 + i % 11, "diameter": 1.5 / (1 + i % 5) + 0.2}]})
    return {"membrane": {"Rm": 20000, "Ri": 150, "Cm": 1.0}, "soma": {"diameter": 20},
            "branches": branches, "synapse": {"branch": f"b{len(branches) - 1}", "distance": 10}}


def tree_latencies(browser, base: str, n: int, tmp: Path) -> list[float]:
    import json

    path = tmp / "big-tree.json"
    path.write_text(json.dumps(big_tree()))
    ctx = browser.new_context()
    try:
        page = ctx.new_page()
        load(page, base + "index.html", "body[data-results=fresh]", "data-t-first-result")
        page.wait_for_selector("body[data-scipy]", state="attached", timeout=TIMEOUT_MS)
        page.set_input_files("#import-json", str(path))
        page.wait_for_selector("body[data-imported=ok]", state="attached", timeout=TIMEOUT_MS)
        page.wait_for_selector("body[data-results=fresh][data-input=valid]", state="attached", timeout=TIMEOUT_MS)
        page.check("input[name=t-syn-mode][value=branch]")
        out, drawn = [], []
        for i in range(n):
            page.fill("#t-syn-distance", str(5 + (i % 10)))
            page.wait_for_selector("body[data-results=fresh][data-input=valid]", state="attached", timeout=60_000)
            t = {k: float(page.get_attribute("body", f"data-t-{k}")) for k in ("input", "shown")}
            out.append(t["shown"] - t["input"] - DEBOUNCE_MS)
            # Off-screen views are drawn when idle: also the time until every view is drawn.
            page.wait_for_selector("body[data-views=drawn]", state="attached", timeout=60_000)
            drawn.append(float(page.get_attribute("body", "data-t-drawn")) - t["input"] - DEBOUNCE_MS)
        return out, drawn
    finally:
        ctx.close()


def run(site: Path, runs: int, recomputes: int) -> None:
    from playwright.sync_api import sync_playwright

    server = build.make_server(site)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    base = f"http://127.0.0.1:{server.server_address[1]}/"
    results = {k: {"cold": [], "warm": [], "bytes": []} for k in PAGES}
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path="/usr/bin/chromium", args=CHROMIUM_ARGS)
        for i in range(runs):
            order = ("page", "bare") if i % 2 == 0 else ("bare", "page")
            for kind in order:
                ms, nbytes = cold(browser, base, kind)
                results[kind]["cold"].append(ms)
                results[kind]["bytes"].append(nbytes)
            for kind in order:
                results[kind]["warm"].append(warm(browser, base, kind))
            print(f"run {i + 1}/{runs}: " + ", ".join(
                f"{k} cold {results[k]['cold'][-1]:.0f} ms warm {results[k]['warm'][-1]:.0f} ms"
                for k in PAGES), flush=True)
        lat_input, lat_send = recompute_latencies(browser, base, recomputes)
        lat_tree, lat_tree_all = tree_latencies(browser, base, recomputes, site)
        browser.close()
    server.shutdown()
    report(results, lat_input, lat_send, runs, recomputes)
    lt = statistics.median(lat_tree)
    b = {m: statistics.median(results["bare"][m]) for m in ("cold", "warm")}
    print(f"{f'tree of 10³ sections: recompute, input→DOM − debounce, ms (n={recomputes})':44} {lt:12.1f} "
          f"{'':12} {lt / b['warm']:8.4f}  (÷ bare warm boot)")
    print(f"{'  same, ÷ bare cold boot':44} {'':12} {'':12} {lt / b['cold']:8.4f}")
    la = statistics.median(lat_tree_all)
    print(f"{'  until every view is drawn (off-screen: idle)':44} {la:12.1f} {'':12} {la / b['warm']:8.4f}"
          "  (÷ bare warm boot)")
    print("target (issue 4): tree recompute ≤ 0.04 × bare boot")


def report(results, lat_input, lat_send, runs, recomputes) -> None:
    med = {k: {m: statistics.median(v[m]) for m in ("cold", "warm", "bytes")} for k, v in results.items()}
    print()
    print(f"{'measure (median of ' + str(runs) + ')':44} {'page':>12} {'bare boot':>12} {'ratio':>8}")
    for m, label in (("cold", "to first result / numpy ready, cold (ms)"),
                     ("warm", "to first result / numpy ready, warm (ms)")):
        p, b = med["page"][m], med["bare"][m]
        print(f"{label:44} {p:12.0f} {b:12.0f} {p / b:8.3f}")
    p, b = med["page"]["bytes"], med["bare"]["bytes"]
    print(f"{'bytes transferred, cold (MB)':44} {p / 1e6:12.2f} {b / 1e6:12.2f} {p / b:8.3f}")
    li, ls = statistics.median(lat_input), statistics.median(lat_send)
    print(f"{f'recompute, input→DOM − debounce, ms (n={recomputes})':44} {li:12.1f} "
          f"{'':12} {li / med['bare']['warm']:8.4f}  (÷ bare warm boot)")
    print(f"{'  same, ÷ bare cold boot':44} {'':12} {'':12} {li / med['bare']['cold']:8.4f}")
    print(f"{'recompute, request sent → DOM (ms)':44} {ls:12.1f}")
    print("targets: first result ≤ 1.25 × bare boot; recompute ≤ 0.01 × bare boot")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--recomputes", type=int, default=20)
    parser.add_argument("--site", type=Path, help="a built site folder (default: build one)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        site = Path(tmp) / "site"
        if args.site:
            shutil.copytree(args.site, site)
        else:
            build.build(site)
        add_bare_page(site)
        run(site, args.runs, args.recomputes)
    return 0


if __name__ == "__main__":
    sys.exit(main())
