#!/usr/bin/env bash
# The whole test suite, from a fresh clone: makes .venv, installs the project with its
# test extra, installs the system packages the tests need when missing (chromium for the
# browser tests, poppler-utils for PDF pages, postgresql for the store tests), starts a
# throwaway PostgreSQL cluster on loopback, runs pytest (two workers), and stops the
# cluster.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)

py=${PYTHON:-python3}
if [ ! -x .venv/bin/python ]; then
  "$py" -m venv .venv
fi
.venv/bin/python -m pip install -q --upgrade pip >/dev/null
.venv/bin/python -m pip install -q -e ".[test]"

need=()
command -v chromium >/dev/null 2>&1 || need+=(chromium)
command -v pdftoppm >/dev/null 2>&1 || need+=(poppler-utils)
ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1 || need+=(postgresql)
if [ ${#need[@]} -gt 0 ]; then
  if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
    echo "installing system packages: ${need[*]}"
    apt-get update -qq >/dev/null
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${need[@]}" >/dev/null
  else
    echo "NOTE: cannot install ${need[*]} (not root or no apt-get); the tests that need them will say so"
  fi
fi

pg_stop() { :; }
if [ -z "${TRIALS_TEST_PG_URL:-}" ]; then
  if source scripts/pg-throwaway.sh; then
    trap pg_stop EXIT
  else
    echo "NOTE: no PostgreSQL server could be started; PostgreSQL store tests will report it"
  fi
fi

export PYTHONPATH="$root${PYTHONPATH:+:$PYTHONPATH}"
# Two workers (pytest-xdist): the browser and multi-process tests mostly wait on a
# server or a page, so two at once nearly halve the run on a 2-core machine (17 min to
# 12.5 min, measured). TRIALS_TEST_WORKERS=0 runs in one process.
.venv/bin/python -m pytest -n "${TRIALS_TEST_WORKERS:-2}" "$@"
