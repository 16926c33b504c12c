#!/usr/bin/env bash
# npm start: everything Panelproof needs on one desk, then the app. Ctrl-C stops it all.
set -euo pipefail
cd "$(dirname "$0")/.."
source scripts/lib.sh

ensure_node
ensure_deps

PORT=${PORT:-5178}
if [ -z "${DATABASE_URL:-}" ]; then
  ensure_postgres
  ensure_psql
  trap stop_cluster EXIT
  trap 'exit 130' INT TERM
  start_cluster .data/pg "${PANELPROOF_PG_PORT:-54329}"
  create_database panelproof
  export DATABASE_URL="postgres://postgres@127.0.0.1:$PG_PORT/panelproof"
else
  say "using the database at DATABASE_URL; starting no PostgreSQL"
fi

say "building the client"
npx vite build --logLevel warn
say "applying migrations"
npx tsx server/cli/migrate.ts
say "loading the demo workshop"
npx tsx server/cli/seed.ts

export AUTH_SECRET=${AUTH_SECRET:-$(ensure_auth_secret)}
export CLIENT_DIR=dist NODE_ENV=${NODE_ENV:-production} PORT HOST=${HOST:-127.0.0.1}
if [ -z "${SMTP_HOST:-}" ]; then export MAIL_FAKE_PORT=${MAIL_FAKE_PORT:-5179}; fi

cat <<MSG

  Panelproof is starting at  http://${HOST}:${PORT}
  Demo sign-in:              demo@panelproof.example  /  bench-demo-2026
  (also builder@panelproof.example and viewer@panelproof.example, same password)
  Mail goes to the Outbox:   http://${HOST}:${PORT}/outbox
  Stop with Ctrl-C.

MSG
node --import tsx server/index.ts
