#!/usr/bin/env bash
# `npm start`: everything a newcomer needs, then the product as it ships.
# Installs what is missing (Debian's PostgreSQL and Redis, npm packages), starts the services
# on loopback, creates and migrates the database, loads the demo shops when it is empty,
# starts the local fakes (SES, Stripe) and the worker, builds the app when the build is
# missing or older than the sources, and serves it with `node build` (the production server:
# CSRF origin check on, no on-demand compiling). `npm run dev` (this script with --dev) runs
# the same with `vite dev` instead, for working on the code.
set -euo pipefail
cd "$(dirname "$0")/.."

if [ ! -f .env ]; then
	secret="$(node -e "process.stdout.write(require('crypto').randomBytes(33).toString('base64'))")"
	sed "s|^AUTH_SECRET=.*|AUTH_SECRET=$secret|; s|^DATUMKEEP_DEV_MAILBOX=.*|DATUMKEEP_DEV_MAILBOX=1|" .env.example > .env
	echo "datumkeep: wrote .env from .env.example with a fresh AUTH_SECRET"
fi
. scripts/env.sh

port_in_use "$PORT" && die "port $PORT is already in use (is Datumkeep already running?). Stop it or set PORT in .env."

need_node_modules
bash scripts/services.sh up
npx tsx scripts/create-db.ts
npx tsx scripts/db-roles.ts
npx tsx scripts/migrate.ts
npx tsx scripts/seed.ts

mkdir -p .data
export FAKE_SES_STORE="${FAKE_SES_STORE:-$ROOT/.data/fake-ses.jsonl}"
export STRIPE_WEBHOOK_URL="${STRIPE_WEBHOOK_URL:-http://127.0.0.1:$PORT/api/v1/stripe/webhook}"
pids=()
cleanup() { for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; wait 2>/dev/null || true; }
trap cleanup EXIT INT TERM

node_modules/.bin/tsx fakes/index.ts & pids+=($!)
if [ -f workers/index.ts ]; then node_modules/.bin/tsx workers/index.ts & pids+=($!); fi

npx tsx scripts/banner.ts
if [ "${1:-}" = "--dev" ]; then
	node_modules/.bin/vite dev --host 127.0.0.1 --port "$PORT" --strictPort &
	pids+=($!)
else
	# Build when there is no build or any source is newer than it.
	stamp=build/handler.js
	if [ ! -f "$stamp" ] || [ -n "$(find src migrations static svelte.config.js vite.config.ts package-lock.json -newer "$stamp" -print -quit 2>/dev/null)" ]; then
		say "building the app (sources changed since the last build)…"
		node_modules/.bin/vite build > .data/build.log 2>&1 || { tail -40 .data/build.log; die "vite build failed (see .data/build.log)"; }
	fi
	# Photos are up to 8 MB and programs larger: the production server's body limit is above both.
	HOST=127.0.0.1 BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-24M}" node build &
	pids+=($!)
fi
wait "${pids[-1]}"
