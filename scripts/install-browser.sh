#!/usr/bin/env bash
# Install what the browser tests (tests/browser/) and bench/page.py need:
#   - Chromium from Debian's `chromium` package and Firefox ESR from Debian's `firefox-esr` package
#     (never a browser downloaded by a test tool),
#   - the Python drivers from PyPI: `playwright` for Chromium (its own browser download is never
#     run) and `marionette-driver` for Firefox's Marionette port.
# Idempotent: skips whatever is already there.
set -euo pipefail

find_chromium() {
    for c in /usr/bin/chromium /usr/bin/chromium-browser /usr/bin/google-chrome /usr/bin/google-chrome-stable; do
        if [ -x "$c" ]; then echo "$c"; return 0; fi
    done
    return 1
}

missing=""
[ -x /usr/bin/chromium ] || missing="chromium fonts-dejavu-core"
[ -x /usr/bin/firefox-esr ] || [ -x /usr/bin/firefox ] || missing="$missing firefox-esr"
if [ -n "$missing" ] && command -v apt-get >/dev/null 2>&1; then
    echo "install-browser: installing Debian's packages:$missing"
    SUDO=""
    if [ "$(id -u)" != 0 ]; then SUDO="sudo"; fi
    $SUDO apt-get update -qq
    # shellcheck disable=SC2086
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq $missing >/dev/null
fi
if [ -x /usr/bin/firefox-esr ]; then
    echo "install-browser: /usr/bin/firefox-esr present ($(/usr/bin/firefox-esr --version 2>/dev/null || echo 'version unknown'))"
elif [ -x /usr/bin/firefox ]; then
    echo "install-browser: using /usr/bin/firefox (set SOMAWARD_FIREFOX for another)"
else
    echo "install-browser: no Firefox found; install it and set SOMAWARD_FIREFOX=/path/to/firefox" >&2
    exit 1
fi

if [ -x /usr/bin/chromium ]; then
    echo "install-browser: /usr/bin/chromium present ($(/usr/bin/chromium --version 2>/dev/null || echo 'version unknown'))"
elif found=$(find_chromium); then
    echo "install-browser: using the installed $found"
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
if "$PY" -c "import marionette_driver" 2>/dev/null; then
    echo "install-browser: marionette-driver (Python driver for Firefox) present"
else
    echo "install-browser: installing marionette-driver from PyPI"
    "$PY" -m pip install -q "marionette-driver>=3.4"
fi
