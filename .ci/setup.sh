#!/usr/bin/env bash
# Set up eaveline on a fresh machine: a virtualenv in .venv with the project installed editable.
#   bash .ci/setup.sh          runtime only (enough to start the planner)
#   bash .ci/setup.sh --test   runtime plus the test tools
# Safe to run again: it reuses the virtualenv and only installs what is missing.
set -euo pipefail
cd "$(dirname "$0")/.."

python=${PYTHON:-python3}
if [ ! -x .venv/bin/python ]; then
  "$python" -m venv .venv
fi
extras=""
if [ "${1:-}" = "--test" ]; then
  extras="[test]"
fi

if [ -n "$extras" ]; then
  # Browser tests drive Debian's Chromium through Playwright (Playwright's own browser
  # download does not work on these machines); the report tests render PDF pages with
  # poppler-utils' pdftoppm.
  missing=""
  command -v chromium >/dev/null 2>&1 || missing="$missing chromium"
  command -v pdftoppm >/dev/null 2>&1 || missing="$missing poppler-utils"
  if [ -n "$missing" ]; then
    sudo=""
    if [ "$(id -u)" -ne 0 ] && command -v sudo >/dev/null 2>&1; then sudo="sudo"; fi
    echo "setup: installing Debian's$missing for the tests (about a minute)"
    # shellcheck disable=SC2086
    if ! { $sudo apt-get update -qq && DEBIAN_FRONTEND=noninteractive \
           $sudo apt-get install -y -qq $missing >/dev/null; }; then
      echo "setup: could not install$missing; the browser or report tests will fail" >&2
    fi
  fi
fi

log=$(mktemp)
quiet_pip() {
  if ! .venv/bin/python -m pip --disable-pip-version-check "$@" >"$log" 2>&1; then
    cat "$log" >&2
    echo "setup: pip $* failed" >&2
    exit 1
  fi
}
quiet_pip install --quiet --upgrade pip
quiet_pip install --quiet -e ".${extras}"
# jsonschema's optional rfc3987-syntax builds dozens of parsers at import and triples Voila's
# start-up time; no Jupyter schema uses the "iri" formats it checks, so it goes.
if .venv/bin/python -m pip show --quiet rfc3987-syntax >/dev/null 2>&1; then
  quiet_pip uninstall --quiet --yes rfc3987-syntax
fi
rm -f "$log"
.venv/bin/python -c "import layout" # fail here, not in the first test, if the install broke
echo "setup: eaveline installed in .venv${extras:+ with test tools}"
