#!/usr/bin/env bash
# `npm run bench [-- fleet | program | scale]`: starts what the benchmarks need, as `npm test`
# does (Debian packages and npm packages when missing, PostgreSQL and Redis on loopback), then
# runs bench/index.ts. The benches make and drop their own databases (`*_bench`).
set -euo pipefail
cd "$(dirname "$0")/.."
. scripts/env.sh
need_debian 'postgresql:/usr/lib/postgresql/*/bin/pg_ctl' 'redis-server:/usr/bin/redis-server'
# The scale bench runs behind `npm run cluster` (HAProxy, PgBouncer).
[ "${1:-}" = scale ] && need_debian 'haproxy:/usr/sbin/haproxy' 'pgbouncer:/usr/sbin/pgbouncer'
need_node_modules
bash scripts/services.sh up
exec node_modules/.bin/tsx bench/index.ts "$@"
