#!/usr/bin/env bash
# Install what the browser tests (tests/browser/) and bench/page.py need:
#   - Chromium from Debian's `chromium` package (never a browser downloaded by a test tool),
#   - the Python driver `playwright` from PyPI (its own browser download is never run).
# Idempotent: skips whatever is already there.
set -euo pipefail

find_chromium() {
    for c in /usr/bin/chromium /usr/bin/chromium-browser /usr/bin/google-chrome /usr/bin/google-chrome-stable; do
        if [ -x "$c" ]; then echo "$c"; return 0; fi
    done
    return 1
}

if [ -x /usr/bin/chromium ]; then
    echo "install-browser: /usr/bin/chromium present ($(/usr/bin/chromium --version 2>/dev/null || echo 'version unknown'))"
elif command -v apt-get >/dev/null 2>&1; then
    echo "install-browser: installing Debian's chromium package"
    SUDO=""
    if [ "$(id -u)" != 0 ]; then SUDO="sudo"; fi
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq chromium fonts-dejavu-core >/dev/null
    /usr/bin/chromium --version
elif found=$(find_chromium); then
    echo "install-browser: no apt here; using the installed $found"
    echo "install-browser: point the tests at it with SOMAWARD_CHROMIUM=$found"
else
    echo "install-browser: no apt-get and no Chromium found." >&2
    echo "install-browser: install Chromium with your system's package manager and set SOMAWARD_CHROMIUM=/path/to/chromium" >&2
    exit 1
fi

PY="${PYTHON:-python}"
if "$PY" -c "import playwright" 2>/dev/null; then
    echo "install-browser: playwright (Python driver) present"
else
    echo "install-browser: installing the playwright Python driver from PyPI (no browser download)"
    PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1 "$PY" -m pip install -q "playwright>=1.45"
fi
