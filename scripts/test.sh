#!/usr/bin/env bash
# npm test: the same bootstrap as npm start with a throwaway database, then every runner.
# Ends with one line "N passed, N failed" summing all runners, and a non-zero exit on any failure.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib.sh

ensure_node
ensure_deps
ensure_chromium
ensure_socat
ensure_avr_tools

if [ -z "${TEST_DATABASE_URL:-}" ]; then
  ensure_postgres
  ensure_psql
  trap stop_cluster EXIT
  trap 'exit 130' INT TERM
  # A cluster of its own, beside the one npm start uses, so tests never touch demo data.
  PG_FSYNC=off start_cluster .data/pg-test "${PANELPROOF_TEST_PG_PORT:-54339}"
  recreate_database panelproof_test
  export TEST_DATABASE_URL="postgres://postgres@127.0.0.1:$PG_PORT/panelproof_test"
  export TEST_DATABASE_ADMIN_URL="postgres://postgres@127.0.0.1:$PG_PORT/postgres"
fi
export DATABASE_URL=$TEST_DATABASE_URL
say "applying migrations to the test database"
npx tsx server/cli/migrate.ts

RESULTS=.data/test-results
rm -rf "$RESULTS"; mkdir -p "$RESULTS"

set +e
say "type-check (tsc)"
npx tsc --noEmit -p tsconfig.json > "$RESULTS/tsc.txt" 2>&1
echo $? > "$RESULTS/tsc.exit"
cat "$RESULTS/tsc.txt"

say "unit and integration tests (Vitest)"
VITEST_PHASE=parallel npx vitest run --reporter=default --reporter=json --outputFile.json="$RESULTS/vitest.json"
echo $? > "$RESULTS/vitest.exit"
say "timing-sensitive tests, one file at a time (Vitest)"
VITEST_PHASE=timing npx vitest run --reporter=default --reporter=json --outputFile.json="$RESULTS/vitest-timing.json"
echo $? > "$RESULTS/vitest-timing.exit"

say "end-to-end tests (Playwright in Debian's Chromium)"
npx vite build --logLevel warn > "$RESULTS/build.txt" 2>&1 || cat "$RESULTS/build.txt"
PLAYWRIGHT_JSON_OUTPUT_NAME="$RESULTS/playwright.json" npx playwright test --reporter=list,json
echo $? > "$RESULTS/playwright.exit"
set -e

# Stop the database first so the summary line is the very last thing printed.
stop_cluster
node scripts/summarize-tests.mjs "$RESULTS"
