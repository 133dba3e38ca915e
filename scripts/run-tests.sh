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
python3 -m pytest "$@"
rc=$?
if [ "$rc" -eq 5 ]; then
  echo "run-tests: pytest collected no tests: that is a failure here" >&2
  exit 1
fi
exit "$rc"
