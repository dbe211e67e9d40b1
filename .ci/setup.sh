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
rm -f "$log"
.venv/bin/python -c "import layout" # fail here, not in the first test, if the install broke
echo "setup: eaveline installed in .venv${extras:+ with test tools}"
