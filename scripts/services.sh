#!/usr/bin/env bash
# PostgreSQL and Redis from Debian's packages, on loopback, in the project's data folder.
# usage: services.sh up|down [postgres|redis]   (both when no name is given)
# Idempotent: `up` reuses a server that is already running from the same data folder.
set -euo pipefail
. "$(dirname "$0")/env.sh"

action="${1:-up}"; only="${2:-all}"
DATA="$(data_dir)"
PGDATA="$DATA/pg"
REDIS_DIR="$DATA/redis"
[ "$DATA" = "$ROOT/.data" ] || say "data folder is $DATA (the project folder is not reachable by the postgres user)"

pg_bin() { compgen -G '/usr/lib/postgresql/*/bin/pg_ctl' | sort -V | tail -1 | xargs -r dirname; }
as_pg() { if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi; }

postgres_up() {
	need_debian 'postgresql:/usr/lib/postgresql/*/bin/pg_ctl'
	local bin; bin="$(pg_bin)"
	mkdir -p "$PGDATA"
	[ "$(id -u)" = 0 ] && chown postgres:postgres "$PGDATA" "$DATA" 2>/dev/null || true
	chmod 700 "$PGDATA"
	if [ ! -f "$PGDATA/PG_VERSION" ]; then
		say "creating the PostgreSQL cluster in $PGDATA"
		as_pg "$bin/initdb" -D "$PGDATA" -U postgres --auth=trust -E UTF8 --locale=C.UTF-8 >"$DATA/initdb.log" 2>&1 \
			|| die "initdb failed (see $DATA/initdb.log). Remove $PGDATA and try again."
	fi
	if as_pg "$bin/pg_ctl" -D "$PGDATA" status >/dev/null 2>&1; then
		say "PostgreSQL already running on 127.0.0.1:$PGPORT"; return 0
	fi
	if port_in_use "$PGPORT"; then
		die "port $PGPORT is already in use by another program; stop it or set DATABASE_URL to another port."
	fi
	local extra=()
	if [ "${DATUMKEEP_FAST_PG:-}" = 1 ]; then extra=(-c fsync=off -c synchronous_commit=off -c full_page_writes=off); fi
	as_pg "$bin/pg_ctl" -D "$PGDATA" -l "$PGDATA/server.log" -w -t 30 \
		-o "-c listen_addresses=127.0.0.1 -p $PGPORT -k $PGDATA ${extra[*]}" start >/dev/null \
		|| die "PostgreSQL did not start (see $PGDATA/server.log)."
	say "PostgreSQL running on 127.0.0.1:$PGPORT"
}

postgres_down() {
	local bin; bin="$(pg_bin)"
	[ -n "$bin" ] && [ -f "$PGDATA/PG_VERSION" ] || return 0
	if as_pg "$bin/pg_ctl" -D "$PGDATA" status >/dev/null 2>&1; then
		as_pg "$bin/pg_ctl" -D "$PGDATA" -m fast -w stop >/dev/null && say "PostgreSQL stopped"
	fi
}

redis_up() {
	need_debian 'redis-server:/usr/bin/redis-server'
	mkdir -p "$REDIS_DIR"
	if [ -f "$REDIS_DIR/redis.pid" ] && kill -0 "$(cat "$REDIS_DIR/redis.pid")" 2>/dev/null; then
		say "Redis already running on 127.0.0.1:$REDIS_PORT"; return 0
	fi
	if port_in_use "$REDIS_PORT"; then
		die "port $REDIS_PORT is already in use by another program; stop it or set REDIS_URL to another port."
	fi
	local persist=(--appendonly yes)
	if [ "${DATUMKEEP_FAST_REDIS:-}" = 1 ]; then persist=(--save '' --appendonly no); fi
	redis-server --bind 127.0.0.1 --port "$REDIS_PORT" --dir "$REDIS_DIR" "${persist[@]}" \
		--daemonize yes --pidfile "$REDIS_DIR/redis.pid" --logfile "$REDIS_DIR/redis.log" \
		|| die "Redis did not start (see $REDIS_DIR/redis.log)."
	for _ in $(seq 50); do port_in_use "$REDIS_PORT" && break; sleep 0.1; done
	port_in_use "$REDIS_PORT" || die "Redis did not start (see $REDIS_DIR/redis.log)."
	say "Redis running on 127.0.0.1:$REDIS_PORT"
}

redis_down() {
	if [ -f "$REDIS_DIR/redis.pid" ] && kill -0 "$(cat "$REDIS_DIR/redis.pid")" 2>/dev/null; then
		kill "$(cat "$REDIS_DIR/redis.pid")"
		for _ in $(seq 50); do kill -0 "$(cat "$REDIS_DIR/redis.pid" 2>/dev/null)" 2>/dev/null || break; sleep 0.1; done
		say "Redis stopped"
	fi
}

case "$action:$only" in
	up:all) postgres_up; redis_up ;;
	up:postgres) postgres_up ;;
	up:redis) redis_up ;;
	down:all) postgres_down; redis_down ;;
	down:postgres) postgres_down ;;
	down:redis) redis_down ;;
	*) die "usage: services.sh up|down [postgres|redis]" ;;
esac
