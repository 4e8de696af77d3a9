#!/usr/bin/env bash
# `npm start`: everything a newcomer needs, then the product as it ships.
# Installs what is missing (Debian's PostgreSQL and Redis, npm packages), starts the services
# on loopback, creates and migrates the database, loads the demo shops when it is empty,
# starts the local fakes (SES, Stripe) and the worker, builds the app when the build is
# missing or older than the sources, and serves it with `node build` (the production server:
# CSRF origin check on, no on-demand compiling). `npm run dev` (this script with --dev) runs
# the same with `vite dev` instead, for working on the code.
#
# Settings (besides scripts/env.sh and .env):
#   START_BUILD=auto|always|never   production build first: auto (default) builds when the
#                                   build is missing or older than the sources; never serves
#                                   the build as it is (tests/e2e/start.spec.ts, while another
#                                   server runs from the same build folder)
set -euo pipefail
cd "$(dirname "$0")/.."

# A .env with a fresh AUTH_SECRET on the first start (not when the environment brings its own
# secret, as tests/e2e/start.spec.ts does: it must leave no file behind).
if [ ! -f .env ] && [ -z "${AUTH_SECRET:-}" ]; then
	secret="$(node -e "process.stdout.write(require('crypto').randomBytes(33).toString('base64'))")"
	sed "s|^AUTH_SECRET=.*|AUTH_SECRET=$secret|" .env.example > .env
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
# npm exits on SIGTERM without passing it on to this script (which would keep the server, the
# worker and the fakes running): when the process that started us goes away, stop as if
# signalled (tests/e2e/start.spec.ts).
parent=$PPID
( while kill -0 "$parent" 2>/dev/null; do sleep 1; done; kill -TERM $$ 2>/dev/null ) &
pids+=($!)

node_modules/.bin/tsx fakes/index.ts & pids+=($!)
if [ -f workers/index.ts ]; then node_modules/.bin/tsx workers/index.ts & pids+=($!); fi

npx tsx scripts/banner.ts
if [ "${1:-}" = "--dev" ]; then
	node_modules/.bin/vite dev --host 127.0.0.1 --port "$PORT" --strictPort &
	pids+=($!)
else
	# Build when there is no build or any source is newer than it (START_BUILD above).
	stamp=build/handler.js
	build=0
	case "${START_BUILD:-auto}" in
		always) build=1 ;;
		never) [ -f "$stamp" ] || die "no production build (START_BUILD=never); run npx vite build first." ;;
		*)
			if [ ! -f "$stamp" ] || [ -n "$(find src migrations static svelte.config.js vite.config.ts package-lock.json -newer "$stamp" -print -quit 2>/dev/null)" ]; then
				build=1
			fi ;;
	esac
	if [ "$build" = 1 ]; then
		say "building the app (sources changed since the last build)…"
		node_modules/.bin/vite build > .data/build.log 2>&1 || { tail -40 .data/build.log; die "vite build failed (see .data/build.log)"; }
	else
		say "serving the existing build in build/"
	fi
	# Photos are up to 8 MB and programs larger: the production server's body limit is above both.
	HOST=127.0.0.1 BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-24M}" node build &
	pids+=($!)
fi
wait "${pids[-1]}"
