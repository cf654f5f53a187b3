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

echo "== all tests on SQLite"
env -u FLAREBOOK_TEST_DATABASE_URL .venv/bin/pytest "$@"

if [ -n "$postgres_url" ]; then
  echo "== all tests that touch the database, on PostgreSQL"
  # The pure computations in tests/compute have no database and ran above.
  FLAREBOOK_TEST_DATABASE_URL="$postgres_url" .venv/bin/pytest --ignore=tests/compute "$@"
fi
