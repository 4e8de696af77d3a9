# Shared settings for the shell scripts: sourced, never run. Reads .env when present, then
# fills in loopback defaults. Every value can be overridden from the environment.
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
# .env fills in what the environment does not already set (the environment wins, as with
# dotenv), so `npm test`'s own database and ports are never replaced by the development ones.
if [ -f "$ROOT/.env" ]; then
	while IFS= read -r line || [ -n "$line" ]; do
		case "$line" in '' | \#*) continue ;; esac
		key="${line%%=*}"
		case "$key" in *[!A-Za-z0-9_]* | '') continue ;; esac
		[ -n "${!key+x}" ] || eval "export $line"
	done < "$ROOT/.env"
fi

export PORT="${PORT:-5173}"
export ORIGIN="${ORIGIN:-http://127.0.0.1:$PORT}"
export DATABASE_URL="${DATABASE_URL:-postgres://postgres@127.0.0.1:54329/datumkeep}"
# The app and the worker log in as the least-privilege role (src/lib/server/db/roles.ts);
# scripts that migrate and seed use DATABASE_URL. Same server and database, user datumkeep_app.
export DATABASE_APP_URL="${DATABASE_APP_URL:-$(printf '%s' "$DATABASE_URL" | sed -E 's#^([a-z]+://)([^@/]*@)?#\1datumkeep_app@#')}"
export REDIS_URL="${REDIS_URL:-redis://127.0.0.1:63799/0}"
export FAKE_SES_PORT="${FAKE_SES_PORT:-4579}"
export FAKE_STRIPE_PORT="${FAKE_STRIPE_PORT:-12111}"

# Ports the services listen on come from the URLs, so there is one place to change them.
PGPORT="$(printf '%s' "$DATABASE_URL" | sed -E 's#^[a-z]+://([^@/]*@)?[^:/]+:([0-9]+)/.*#\2#')"
case "$PGPORT" in ''|*[!0-9]*) PGPORT=5432 ;; esac
REDIS_PORT="$(printf '%s' "$REDIS_URL" | sed -E 's#^redis://([^@/]*@)?[^:/]+:([0-9]+).*#\2#')"
case "$REDIS_PORT" in ''|*[!0-9]*) REDIS_PORT=6379 ;; esac
export PGPORT REDIS_PORT

say() { printf 'datumkeep: %s\n' "$*"; }
die() { printf 'datumkeep: %s\n' "$*" >&2; exit 1; }
port_in_use() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

# Where service data lives. Inside the project when the postgres user can reach it; otherwise
# (a clone under a mode-700 folder such as /root) under /var/tmp, named after the project path
# so two clones never share one.
data_dir() {
	local inside="$ROOT/.data"
	if [ "$(id -u)" != 0 ] || ! id postgres >/dev/null 2>&1; then printf '%s' "$inside"; return; fi
	if runuser -u postgres -- test -x "$ROOT" 2>/dev/null; then printf '%s' "$inside"; return; fi
	local key
	key="$(printf '%s' "$ROOT" | sha1sum | cut -c1-12)"
	printf '/var/tmp/datumkeep/%s-%s' "$(basename "$ROOT")" "$key"
}

# Installs Debian packages when missing (root only; one clear message otherwise).
need_debian() {
	local missing=()
	for spec in "$@"; do
		local pkg="${spec%%:*}" probe="${spec#*:}"
		if ! compgen -G "$probe" >/dev/null; then missing+=("$pkg"); fi
	done
	[ ${#missing[@]} -eq 0 ] && return 0
	if [ "$(id -u)" != 0 ]; then
		die "missing Debian packages: ${missing[*]}. Install them with: sudo apt-get install -y ${missing[*]}"
	fi
	say "installing Debian packages: ${missing[*]} (once)"
	if ! { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${missing[@]}"; } >/tmp/datumkeep-apt.log 2>&1; then
		die "could not install ${missing[*]} with apt-get (see /tmp/datumkeep-apt.log). Check the package mirror, then run again."
	fi
}

# Installs npm dependencies when node_modules is missing or older than the lock file.
need_node_modules() {
	if [ ! -f "$ROOT/node_modules/.package-lock.json" ] || [ "$ROOT/package-lock.json" -nt "$ROOT/node_modules/.package-lock.json" ]; then
		say "installing npm dependencies (npm ci)"
		(cd "$ROOT" && npm ci --no-audit --no-fund) || die "npm ci failed; see the output above."
	fi
}
