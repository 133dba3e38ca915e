"""Fixtures for the page tests: a fresh build, a local static server, Debian's Chromium.

The site is built once per session into a temporary folder by ``build.build`` (the same
function ``python build.py`` runs), served by a threaded ``http.server`` on 127.0.0.1 from
this process, and driven by playwright's Python driver with the system Chromium
(``scripts/install-browser.sh`` installs both; playwright's own browser download is never
used).
"""
from __future__ import annotations

import os
import shutil
import sys
import threading
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import build  # noqa: E402  (the repo's build.py)

ARTIFACTS = ROOT / "test-artifacts"
CHROMIUM_CANDIDATES = ("/usr/bin/chromium", "/usr/bin/chromium-browser",
                       "/usr/bin/google-chrome", "/usr/bin/google-chrome-stable")
# Without the background-networking flags Chromium keeps calling home on a closed network.
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def chromium_path() -> str:
    wanted = os.environ.get("SOMAWARD_CHROMIUM")
    for candidate in ([wanted] if wanted else []) + list(CHROMIUM_CANDIDATES):
        if candidate and os.access(candidate, os.X_OK):
            return candidate
    pytest.fail("no Chromium found: run `bash scripts/install-browser.sh` (Debian's chromium "
                "package), or set SOMAWARD_CHROMIUM=/path/to/chromium", pytrace=False)


class Served:
    """A folder served on 127.0.0.1 from a background thread; ``.url`` ends with '/'."""

    def __init__(self, directory: Path):
        self.server = build.make_server(directory)
        self.url = f"http://127.0.0.1:{self.server.server_address[1]}/"
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.thread.start()

    def stop(self):
        self.server.shutdown()
        self.server.server_close()


@pytest.fixture(scope="session")
def site_dir(tmp_path_factory) -> Path:
    """A fresh build; SOMAWARD_TEST_SITE=DIR reuses one made by ``python build.py --out DIR``."""
    reuse = os.environ.get("SOMAWARD_TEST_SITE")
    if reuse:
        return Path(reuse).resolve()
    out = tmp_path_factory.mktemp("site") / "site"
    try:
        build.build(out)
    except build.BuildError as exc:
        pytest.fail(f"build.py failed: {exc}", pytrace=False)
    return out


@pytest.fixture(scope="session")
def served(site_dir):
    s = Served(site_dir)
    yield s
    s.stop()


@pytest.fixture
def serve():
    """Serve another folder for one test: ``serve(path) -> Served``."""
    started = []

    def start(directory: Path) -> Served:
        started.append(Served(directory))
        return started[-1]

    yield start
    for s in started:
        s.stop()


@pytest.fixture(scope="session")
def browser():
    pytest.importorskip("playwright", reason="run `bash scripts/install-browser.sh`")
    from playwright.sync_api import sync_playwright

    executable = chromium_path()
    pw = sync_playwright().start()
    b = pw.chromium.launch(executable_path=executable, args=CHROMIUM_ARGS, headless=True)
    yield b
    b.close()
    pw.stop()


class PageLog:
    """Console errors, page errors and requests seen by one page."""

    def __init__(self, page):
        self.errors: list[str] = []
        self.requests: list[dict] = []
        page.on("console", lambda m: m.type == "error" and self.errors.append(m.text))
        page.on("pageerror", lambda e: self.errors.append(f"pageerror: {e}"))
        page.context.on("requestfinished", self.finished)
        page.context.on("requestfailed", self.finished)

    def finished(self, req):
        self.requests.append({"url": req.url, "start_epoch_ms": req.timing.get("startTime")})

    def urls(self, needle: str) -> list[str]:
        return [r["url"] for r in self.requests if needle in r["url"]]


@pytest.fixture
def context(browser):
    ctx = browser.new_context(viewport={"width": 1280, "height": 800})
    yield ctx
    ctx.close()


@pytest.fixture
def page(context):
    p = context.new_page()
    p.log = PageLog(p)
    yield p


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS


@pytest.fixture
def site_copy(site_dir, tmp_path) -> Path:
    """A private copy of the built site that a test may damage."""
    dest = tmp_path / "site"
    shutil.copytree(site_dir, dest)
    return dest
