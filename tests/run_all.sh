#!/usr/bin/env bash
# Installs everything the tests need into a virtual environment of their own (.venv-test, beside
# this checkout's files: the user's own Python environment and any orbitdeck installed there are
# left alone), installs Debian's chromium for the browser tests when it is missing, then runs the
# whole suite. Exits non-zero on any failure, and when pytest collected no test.
set -euo pipefail
cd "$(dirname "$0")/.."

VENV=.venv-test
if [ ! -x "$VENV/bin/python" ]; then
    python3 -m venv "$VENV"
fi
"$VENV/bin/python" -m pip install --quiet --disable-pip-version-check -e ".[test]"

if ! command -v chromium >/dev/null 2>&1; then
    echo "installing Debian's chromium for the browser tests"
    if [ "$(id -u)" -eq 0 ]; then SUDO=""; else SUDO="sudo"; fi
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq chromium >/dev/null
fi

status=0
"$VENV/bin/python" -m pytest tests -q -p no:cacheprovider "$@" || status=$?
if [ "$status" -eq 5 ]; then
    echo "pytest collected no tests: failing on purpose" >&2
    exit 1
fi
exit "$status"
