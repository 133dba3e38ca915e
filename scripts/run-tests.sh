#!/usr/bin/env bash
# Install everything the tests need (Python packages, Debian's chromium for the browser tests;
# build.py fetches Pyodide through npm/PyPI), lint with ruff, and run every test. Extra arguments
# go to pytest.
set -uo pipefail
cd "$(dirname "$0")/.."
python3 -m pip install --quiet --disable-pip-version-check -e '.[test]' || { echo "run-tests: pip install failed" >&2; exit 1; }
# Lint first (rules in pyproject.toml, [tool.ruff]): a finding fails the run before any test starts.
python3 -m ruff check . || { echo "run-tests: ruff found problems (listed above); fix them or give a targeted noqa with its reason" >&2; exit 1; }
if [ -f scripts/install-browser.sh ]; then
  bash scripts/install-browser.sh || { echo "run-tests: installing the browser failed" >&2; exit 1; }
fi
# Two pytest sessions: the page in the browsers, then the engine, the CLI and the doctests. A
# session's memory is its own (the browser session holds a served site, browser drivers and very
# large generated links for its whole run), so the engine's fuzz test starts in a clean process.
run() {
  python3 -m pytest "$@"
  local rc=$?
  if [ "$rc" -eq 5 ]; then
    echo "run-tests: pytest collected no tests ($*): that is a failure here" >&2
    return 1
  fi
  return "$rc"
}
run tests/browser "$@"; rc_page=$?
run --ignore=tests/browser "$@"; rc_engine=$?
echo "run-tests: page tests exit $rc_page, engine tests exit $rc_engine"
[ "$rc_page" -eq 0 ] && [ "$rc_engine" -eq 0 ]
