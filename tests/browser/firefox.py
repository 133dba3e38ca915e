"""Debian's Firefox ESR, headless, driven through its Marionette port by ``marionette-driver``.

``scripts/install-browser.sh`` installs both (the ``firefox-esr`` package and the PyPI driver);
no browser or driver is ever downloaded by a test tool. The browser starts with a fresh profile
whose ``user.js`` sets the Marionette port and turns off first-run pages, telemetry and updates
(the machine's network is closed, and the tests must not depend on it).
"""
from __future__ import annotations

import os
import shutil
import socket
import subprocess
import tempfile
import time

import pytest

FIREFOX_CANDIDATES = ("/usr/bin/firefox-esr", "/usr/bin/firefox")
PREFS = {
    "browser.shell.checkDefaultBrowser": False,
    "browser.aboutwelcome.enabled": False,
    "browser.startup.homepage_override.mstone": "ignore",
    "datareporting.policy.dataSubmissionEnabled": False,
    "toolkit.telemetry.reportingpolicy.firstRun": False,
    "app.update.disabledForTesting": True,
    "network.connectivity-service.enabled": False,
    "network.captive-portal-service.enabled": False,
    "extensions.getAddons.cache.enabled": False,
    "browser.safebrowsing.update.enabled": False,
    # Copy buttons: the page hands the text to the Clipboard API; headless Firefox cannot read it
    # back, so the tests read what the page selected or handed over instead.
    "dom.events.testing.asyncClipboard": True,
}


def firefox_path() -> str:
    wanted = os.environ.get("SOMAWARD_FIREFOX")
    for candidate in ([wanted] if wanted else []) + list(FIREFOX_CANDIDATES):
        if candidate and os.access(candidate, os.X_OK):
            return candidate
    pytest.fail("no Firefox found: run `bash scripts/install-browser.sh` (Debian's firefox-esr "
                "package), or set SOMAWARD_FIREFOX=/path/to/firefox", pytrace=False)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class Firefox:
    """One headless Firefox with a Marionette session; ``.m`` is the ``Marionette`` client."""

    def __init__(self, width: int = 1280, height: int = 800):
        from marionette_driver.marionette import Marionette

        self.profile = tempfile.mkdtemp(prefix="somaward-firefox-")
        self.port = _free_port()
        prefs = {**PREFS, "marionette.port": self.port}
        with open(os.path.join(self.profile, "user.js"), "w", encoding="utf-8") as fh:
            for key, value in prefs.items():
                text = "true" if value is True else "false" if value is False else (
                    str(value) if isinstance(value, int) else f'"{value}"')
                fh.write(f'user_pref("{key}", {text});\n')
        env = {"PATH": os.environ.get("PATH", "/usr/bin:/bin"), "HOME": self.profile,
               "MOZ_HEADLESS": "1", "MOZ_HEADLESS_WIDTH": str(width), "MOZ_HEADLESS_HEIGHT": str(height)}
        self.proc = subprocess.Popen([firefox_path(), "--headless", "--marionette", "--no-remote",
                                      "--profile", self.profile], env=env,
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        self.m = Marionette(host="127.0.0.1", port=self.port)
        self.m.start_session(timeout=60)
        self.m.set_window_rect(width=width, height=height)

    # --- small helpers, in the spirit of the Chromium tests' helpers.py ---
    def js(self, script: str, *args):
        """Run ``script`` (a function body; ``arguments`` holds ``args``) and return its value."""
        return self.m.execute_script(script, script_args=list(args), sandbox=None)

    def wait(self, script: str, *args, timeout: float = 60.0, what: str = "the page"):
        """Poll ``script`` until it returns a truthy value; that value is returned."""
        end = time.monotonic() + timeout
        while True:
            value = self.js(script, *args)
            if value:
                return value
            if time.monotonic() > end:
                raise AssertionError(f"timed out after {timeout:g} s waiting for {what}")
            time.sleep(0.1)

    def screenshot(self, path) -> None:
        with open(path, "wb") as fh:
            fh.write(self.m.screenshot(format="binary", full=True))

    def close(self) -> None:
        try:
            self.m.delete_session()
        except Exception:  # noqa: BLE001 (the browser may already be gone)
            pass
        self.proc.terminate()
        try:
            self.proc.wait(timeout=20)
        except subprocess.TimeoutExpired:
            self.proc.kill()
        shutil.rmtree(self.profile, ignore_errors=True)
