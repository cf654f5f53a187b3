#!/usr/bin/env bash
# Sets up everything the tests need on a fresh machine, then runs every test:
# on SQLite, and again on PostgreSQL when FLAREBOOK_TEST_DATABASE_URL is set.
set -euo pipefail
cd "$(dirname "$0")/.."

python3 -m venv .venv
.venv/bin/python -m pip install --quiet --upgrade pip
.venv/bin/python -m pip install --quiet -e '.[test]'

# Page tests drive Debian's chromium (Playwright cannot download its own browser here).
if [ ! -x /usr/bin/chromium ]; then
  SUDO=""; [ "$(id -u)" -ne 0 ] && SUDO="sudo"
  $SUDO apt-get update -qq
  $SUDO apt-get install -y -qq --no-install-recommends chromium fonts-liberation fonts-dejavu-core >/dev/null
fi
# axe-core for the accessibility checks, from the npm registry, served locally by the tests.
if [ ! -f .cache/npm/node_modules/axe-core/axe.min.js ]; then
  npm install --silent --no-audit --no-fund --prefix .cache/npm axe-core@4.11.0 >/dev/null
fi

postgres_url="${FLAREBOOK_TEST_DATABASE_URL:-}"

if [ -z "$postgres_url" ]; then
  echo "== all tests on SQLite"
  exec env -u FLAREBOOK_TEST_DATABASE_URL .venv/bin/pytest "$@"
fi

# Both passes at once, one per core: PostgreSQL's in the background, its report printed after SQLite's.
# The pure computations in tests/compute have no database and run in the SQLite pass only.
postgres_log="$(mktemp)"
FLAREBOOK_TEST_DATABASE_URL="$postgres_url" .venv/bin/pytest --ignore=tests/compute "$@" >"$postgres_log" 2>&1 &
postgres_pid=$!
echo "== all tests on SQLite (the PostgreSQL pass runs beside it)"
sqlite_status=0
env -u FLAREBOOK_TEST_DATABASE_URL .venv/bin/pytest "$@" || sqlite_status=$?
postgres_status=0
wait "$postgres_pid" || postgres_status=$?
echo "== all tests that touch the database, on PostgreSQL"
cat "$postgres_log"
rm -f "$postgres_log"
echo "== SQLite pass exit $sqlite_status, PostgreSQL pass exit $postgres_status"
[ "$sqlite_status" -eq 0 ] && [ "$postgres_status" -eq 0 ]
