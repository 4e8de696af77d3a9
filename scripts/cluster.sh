#!/usr/bin/env bash
# `npm run cluster`: Datumkeep as several processes on loopback, the way it scales out
# (docs/DEPLOYMENT.md): HAProxy → N app nodes (`node build`), M workers, PgBouncer in
# transaction pooling between them and PostgreSQL (each node's change-feed LISTEN goes
# direct: LISTEN needs a session), Redis, the local fakes. Installs HAProxy and PgBouncer from
# Debian when missing, builds the app when the build is missing or older than the sources,
# prints the load balancer's URL and stops everything on Ctrl-C. `npm start` is unaffected.
#
# Configuration, all in this one place (environment wins):
#   CLUSTER_NODES=2 CLUSTER_WORKERS=2       app nodes behind HAProxy, workers
#   CLUSTER_PORT_BASE=4700                  HAProxy = base, PgBouncer = base+1, HAProxy stats
#                                           = base+2, app nodes = base+11, base+12, …
#   CLUSTER_POOL_SIZE=20                    PgBouncer server connections per database/user
#   CLUSTER_DIR=<data>/cluster-<base>       generated configs, logs, pids (one `name=pid` a line)
#   CLUSTER_BUILD=auto|always|never         production build before starting
#   DATABASE_URL, REDIS_URL, FAKE_*_PORT    as for `npm start` (scripts/env.sh, .env)
#   CLUSTER_DIRECT_URL                      the feed's session connection (default DATABASE_URL;
#                                           the cluster test puts a slow proxy here)
#   CLUSTER_WORKER_ENV                      extra `KEY=value …` for the workers only
#   CLUSTER_NODE_ENV_<i>                    extra `KEY=value …` for app node i only (the cluster
#                                           test slows one node's change feed this way)
# A request with `x-datumkeep-pin: node-<i>` goes to node i (for tests and for looking at one
# node); everything else is round robin. Each node answers with `x-datumkeep-node`.
# PgBouncer also serves `single_<database>`: the same database with ONE server connection
# (pool_size=1), which tests/e2e/cluster.spec.ts uses to interleave two shops on it.
set -euo pipefail
cd "$(dirname "$0")/.."

if [ ! -f .env ] && [ -z "${AUTH_SECRET:-}" ]; then
	secret="$(node -e "process.stdout.write(require('crypto').randomBytes(33).toString('base64'))")"
	sed "s|^AUTH_SECRET=.*|AUTH_SECRET=$secret|; s|^DATUMKEEP_DEV_MAILBOX=.*|DATUMKEEP_DEV_MAILBOX=1|" .env.example > .env
	echo "datumkeep: wrote .env from .env.example with a fresh AUTH_SECRET"
fi
. scripts/env.sh

NODES="${CLUSTER_NODES:-2}"
WORKERS="${CLUSTER_WORKERS:-2}"
BASE="${CLUSTER_PORT_BASE:-4700}"
POOL_SIZE="${CLUSTER_POOL_SIZE:-20}"
LB_PORT="$BASE"
PGB_PORT=$((BASE + 1))
STATS_PORT=$((BASE + 2))
node_port() { echo $((BASE + 10 + $1)); }
DIR="${CLUSTER_DIR:-$(data_dir)/cluster-$BASE}"
LB_URL="http://127.0.0.1:$LB_PORT"

# The app and workers log in as the least-privilege app role (docs/SECURITY.md), through PgBouncer
# for queries and directly for the feed's LISTEN; DATABASE_URL (the superuser locally) migrates.
# (Made from this DATABASE_URL, not an inherited DATABASE_APP_URL that may name another database.)
APP_URL="$(printf '%s' "$DATABASE_URL" | sed -E 's#^([a-z]+://)([^@/]*@)?#\1datumkeep_app@#')"
DIRECT_URL="${CLUSTER_DIRECT_URL:-$APP_URL}"
APP_USER="$(printf '%s' "$APP_URL" | sed -E 's#^[a-z]+://(([^:@/]*)(:[^@/]*)?@)?.*#\2#')"
DB_NAME="${DATABASE_URL##*/}"
DB_USERINFO="$(printf '%s' "$DATABASE_URL" | sed -E 's#^[a-z]+://(([^@/]*)@)?.*#\2#')"
DB_USER="${DB_USERINFO%%:*}"; DB_USER="${DB_USER:-postgres}"
DB_PASSWORD=""; case "$DB_USERINFO" in *:*) DB_PASSWORD="${DB_USERINFO#*:}" ;; esac
# The same URL with PgBouncer's address in place of PostgreSQL's.
POOLED_URL="$(printf '%s' "$DATABASE_URL" | sed -E "s#^([a-z]+://([^@/]*@)?)[^/]*(/.*)\$#\\1127.0.0.1:$PGB_PORT\\3#")"
POOLED_APP_URL="$(printf '%s' "$APP_URL" | sed -E "s#^([a-z]+://([^@/]*@)?)[^/]*(/.*)\$#\\1127.0.0.1:$PGB_PORT\\3#")"

need_debian 'haproxy:/usr/sbin/haproxy' 'pgbouncer:/usr/sbin/pgbouncer'
need_node_modules
for p in "$LB_PORT" "$PGB_PORT" "$STATS_PORT" $(for i in $(seq "$NODES"); do node_port "$i"; done); do
	port_in_use "$p" && die "port $p is already in use (a cluster still running?); stop it or set CLUSTER_PORT_BASE."
done

bash scripts/services.sh up
npx tsx scripts/create-db.ts
npx tsx scripts/db-roles.ts
npx tsx scripts/migrate.ts
npx tsx scripts/seed.ts

case "${CLUSTER_BUILD:-auto}" in
	always) build=1 ;;
	never) build=0 ;;
	*) build=0
		if [ ! -f build/index.js ] || [ -n "$(find src migrations -newer build/index.js -print -quit)" ]; then build=1; fi ;;
esac
if [ "$build" = 1 ]; then
	say "building the app (vite build)"
	npx vite build > /tmp/datumkeep-cluster-build.log 2>&1 || { tail -30 /tmp/datumkeep-cluster-build.log; die "vite build failed"; }
fi

mkdir -p "$DIR"
rm -f "$DIR/pids"
pids=()
cleanup() {
	trap - EXIT INT TERM
	for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done
	wait 2>/dev/null || true
	rm -f "$DIR/pids"
}
trap cleanup EXIT
trap 'say "stopping the cluster"; exit 0' INT TERM
started() { pids+=("$2"); echo "$1=$2" >> "$DIR/pids"; }
wait_port() { for _ in $(seq 150); do port_in_use "$1" && return 0; sleep 0.2; done; die "$2 did not start (see $3)"; }

# PgBouncer: transaction pooling. It refuses to run as root, hence the postgres user.
cat > "$DIR/pgbouncer.ini" <<EOF
[databases]
* = host=127.0.0.1 port=$PGPORT
single_$DB_NAME = host=127.0.0.1 port=$PGPORT dbname=$DB_NAME pool_size=1

[pgbouncer]
listen_addr = 127.0.0.1
listen_port = $PGB_PORT
unix_socket_dir =
auth_type = trust
auth_file = $DIR/userlist.txt
admin_users = $DB_USER
pool_mode = transaction
default_pool_size = $POOL_SIZE
max_client_conn = 1000
ignore_startup_parameters = extra_float_digits
logfile = $DIR/pgbouncer.log
EOF
{
	printf '"%s" "%s"\n' "$DB_USER" "$DB_PASSWORD"
	if [ -n "$APP_USER" ] && [ "$APP_USER" != "$DB_USER" ]; then printf '"%s" ""\n' "$APP_USER"; fi
} > "$DIR/userlist.txt"
chmod 600 "$DIR/userlist.txt"
if [ "$(id -u)" = 0 ] && id postgres >/dev/null 2>&1; then
	chown -R postgres "$DIR"
	runuser -u postgres -- pgbouncer -q "$DIR/pgbouncer.ini" & started pgbouncer $!
else
	pgbouncer -q "$DIR/pgbouncer.ini" & started pgbouncer $!
fi
wait_port "$PGB_PORT" PgBouncer "$DIR/pgbouncer.log"

export FAKE_SES_STORE="${FAKE_SES_STORE:-$ROOT/.data/fake-ses.jsonl}"
export STRIPE_WEBHOOK_URL="${STRIPE_WEBHOOK_URL:-$LB_URL/api/v1/stripe/webhook}"
if port_in_use "$FAKE_SES_PORT" || port_in_use "$FAKE_STRIPE_PORT"; then
	say "fakes already listening on $FAKE_SES_PORT / $FAKE_STRIPE_PORT: using them"
else
	node_modules/.bin/tsx fakes/index.ts > "$DIR/fakes.log" 2>&1 & started fakes $!
fi

# Every app process: the pooled URL for queries, the direct one for the change feed.
export DATABASE_URL="$POOLED_URL" DATABASE_APP_URL="$POOLED_APP_URL" DATABASE_DIRECT_URL="$DIRECT_URL"
for i in $(seq "$WORKERS"); do
	# shellcheck disable=SC2086
	# `node --import tsx` rather than the tsx CLI: one process per worker, so its pid is the worker.
	env WORKER_NAME="worker-$i" ${CLUSTER_WORKER_ENV:-} node --import tsx workers/index.ts \
		> "$DIR/worker-$i.log" 2>&1 & started "worker-$i" $!
done
for i in $(seq "$NODES"); do
	extra="CLUSTER_NODE_ENV_$i"
	# shellcheck disable=SC2086
	env PORT="$(node_port "$i")" HOST=127.0.0.1 ORIGIN="$LB_URL" NODE_NAME="node-$i" \
		BODY_SIZE_LIMIT="${BODY_SIZE_LIMIT:-24M}" ${!extra:-} node build > "$DIR/node-$i.log" 2>&1 & started "node-$i" $!
done
for i in $(seq "$NODES"); do wait_port "$(node_port "$i")" "app node $i" "$DIR/node-$i.log"; done

# HAProxy: round robin, a node counts as up while its /healthz says the database is reachable
# (with Redis down the app still serves reads, so Redis alone must not take every node out).
{
	cat <<EOF
global
	maxconn 4000

defaults
	mode http
	option httplog
	timeout connect 2s
	timeout client 60s
	timeout server 60s
	timeout check 3s
	retries 2
	option redispatch

frontend web
	bind 127.0.0.1:$LB_PORT
	default_backend nodes

backend nodes
	balance roundrobin
	option httpchk GET /healthz
	http-check expect rstring database....ok..true
	default-server inter 1s fall 3 rise 1
EOF
	for i in $(seq "$NODES"); do printf '\tuse-server node-%s if { req.hdr(x-datumkeep-pin) -m str node-%s }\n' "$i" "$i"; done
	for i in $(seq "$NODES"); do printf '\tserver node-%s 127.0.0.1:%s check\n' "$i" "$(node_port "$i")"; done
	cat <<EOF

listen stats
	bind 127.0.0.1:$STATS_PORT
	stats enable
	stats uri /
EOF
} > "$DIR/haproxy.cfg"
haproxy -W -db -f "$DIR/haproxy.cfg" > "$DIR/haproxy.log" 2>&1 & started haproxy $!
wait_port "$LB_PORT" HAProxy "$DIR/haproxy.log"
for _ in $(seq 300); do
	curl -fsS -o /dev/null "$LB_URL/healthz" 2>/dev/null && break
	sleep 0.2
done
curl -fsS -o /dev/null "$LB_URL/healthz" || die "the load balancer has no healthy node (see $DIR/node-*.log)"

say "cluster ready at $LB_URL — $NODES app nodes, $WORKERS workers, PgBouncer 127.0.0.1:$PGB_PORT (transaction pooling), HAProxy stats http://127.0.0.1:$STATS_PORT"
say "logs and configs in $DIR; Ctrl-C stops everything"
# A worker or app node that ends is reported and the rest carry on (as behind a supervisor
# that would restart it; HAProxy takes a dead node out). Without HAProxy or PgBouncer, stop.
left=("${pids[@]}")
while [ ${#left[@]} -gt 0 ]; do
	ended=""; code=0
	wait -n -p ended "${left[@]}" || code=$?
	[ -n "$ended" ] || break
	name="$(grep "=$ended\$" "$DIR/pids" | cut -d= -f1)"
	say "$name ended (exit $code; see $DIR/$name.log)"
	case "$name" in haproxy | pgbouncer) break ;; esac
	next=(); for p in "${left[@]}"; do [ "$p" = "$ended" ] || next+=("$p"); done; left=("${next[@]}")
done
say "stopping the cluster"
