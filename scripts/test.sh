#!/usr/bin/env bash
# `npm test`: sets up everything it needs on a fresh clone (Debian packages, npm packages,
# PostgreSQL and Redis on loopback, a fresh test database, the local fakes), then runs lint,
# type checks, Vitest (unit + integration against the real PostgreSQL) and Playwright in
# Debian's Chromium against a production build.
set -euo pipefail
cd "$(dirname "$0")/.."

# Test settings win over .env: own database, own ports, own Redis database.
export PORT="${TEST_PORT:-4173}"
export ORIGIN="http://127.0.0.1:$PORT"
export DATABASE_URL="${TEST_DATABASE_URL:-postgres://postgres@127.0.0.1:54329/datumkeep_test}"
export REDIS_URL="${TEST_REDIS_URL:-redis://127.0.0.1:63799/1}"
export FAKE_SES_PORT="${TEST_FAKE_SES_PORT:-4589}"
export FAKE_STRIPE_PORT="${TEST_FAKE_STRIPE_PORT:-12121}"
export AUTH_SECRET="test-secret-not-for-production-0123456789"
export STRIPE_SECRET_KEY=sk_test_local_fake
export STRIPE_WEBHOOK_SECRET=whsec_test_local_fake
export STRIPE_WEBHOOK_URL="$ORIGIN/api/v1/stripe/webhook"
export BCRYPT_COST=8
export AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED=true
. scripts/env.sh
case "${DATABASE_URL##*/}" in
	*_test) ;;
	*) die "npm test drops and re-creates its database; DATABASE_URL must name a *_test database, not ${DATABASE_URL##*/}." ;;
esac

need_debian 'postgresql:/usr/lib/postgresql/*/bin/pg_ctl' 'redis-server:/usr/bin/redis-server' 'chromium:/usr/bin/chromium' \
	'haproxy:/usr/sbin/haproxy' 'pgbouncer:/usr/sbin/pgbouncer' # tests/e2e/cluster.spec.ts
need_node_modules
bash scripts/services.sh up

mkdir -p .data/test
export FAKE_SES_STORE="$ROOT/.data/test/fake-ses.jsonl"
rm -f "$FAKE_SES_STORE"

step() { printf '\n== %s\n' "$*"; }

step "lint (eslint, prettier)"
npm run --silent lint
step "type check (svelte-check)"
npm run --silent check

step "fresh test database"
npx tsx scripts/create-db.ts --fresh
npx tsx scripts/db-roles.ts
npx tsx scripts/migrate.ts
npx tsx scripts/seed.ts
redis-cli -p "$REDIS_PORT" -n "$(printf '%s' "$REDIS_URL" | sed -E 's#.*/([0-9]+)$#\1#')" flushdb >/dev/null

pids=()
cleanup() { for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; wait 2>/dev/null || true; }
trap cleanup EXIT INT TERM
for p in "$FAKE_SES_PORT" "$FAKE_STRIPE_PORT" "$PORT"; do
	port_in_use "$p" && die "port $p is already in use (an earlier run still going?); stop it or set TEST_PORT / TEST_FAKE_SES_PORT / TEST_FAKE_STRIPE_PORT."
done
node_modules/.bin/tsx fakes/index.ts > .data/test/fakes.log 2>&1 & pids+=($!)
for _ in $(seq 100); do port_in_use "$FAKE_SES_PORT" && port_in_use "$FAKE_STRIPE_PORT" && break; sleep 0.2; done
port_in_use "$FAKE_SES_PORT" || die "the fake SES did not start (see .data/test/fakes.log)"

step "unit and integration tests (Vitest)"
npx vitest run --reporter=default --reporter=json --outputFile.json=.data/test/vitest.json

step "production build"
npx vite build > .data/test/build.log 2>&1 || { tail -40 .data/test/build.log; die "vite build failed"; }

step "end-to-end tests (Playwright, Debian Chromium)"
npx playwright test

node scripts/test-summary.mjs .data/test/vitest.json .data/test/playwright.json
