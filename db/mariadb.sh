#!/usr/bin/env bash
# Private MariaDB server for Drumline development and tests.
#   bash db/mariadb.sh start   # idempotent: installs mariadb-server if absent, reuses a running server
#   bash db/mariadb.sh stop    # clean shutdown of the server this script started
#   bash db/mariadb.sh status
#   bash db/mariadb.sh env     # prints the connection variables (sourced by the start and test scripts)
# Data lives in .data/mariadb (git-ignored). Credentials are generated at first start into
# .data/db.env (git-ignored); nothing secret is committed.
# Port: DRUMLINE_DB_PORT (default 3307), bound to 127.0.0.1 only.
set -euo pipefail
ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
BASE="$ROOT/.data/mariadb"
DATA="$BASE/data"
SOCK="$BASE/mysqld.sock"
PIDF="$BASE/mysqld.pid"
ENVF="$ROOT/.data/db.env"
PORT="${DRUMLINE_DB_PORT:-3307}"
PORT_GIVEN="${DRUMLINE_DB_PORT:+yes}"

log() { echo "[mariadb] $*" >&2; }

ensure_installed() {
  if ! command -v mariadbd >/dev/null 2>&1 && [ ! -x /usr/sbin/mariadbd ]; then
    log "mariadb-server is not installed; installing it from Debian's packages"
    if [ "$(id -u)" != "0" ]; then log "need root to install mariadb-server (apt-get)"; exit 1; fi
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >/dev/null
    apt-get install -y -qq mariadb-server >/dev/null
  fi
}

# True when something already listens on 127.0.0.1:$1.
port_busy() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

ensure_env() {
  mkdir -p "$ROOT/.data"
  if [ ! -f "$ENVF" ]; then
    # Another checkout's server (or anything else) on the default port: take a free one instead,
    # recorded in .data/db.env, so two checkouts on one machine never collide.
    if [ -z "$PORT_GIVEN" ] && port_busy "$PORT"; then
      PORT="$(node -e "const s=require('net').createServer();s.listen(0,'127.0.0.1',()=>{console.log(s.address().port);s.close()})")"
      log "port 3307 is in use; this checkout's MariaDB takes 127.0.0.1:$PORT (see .data/db.env)"
    fi
    local owner_pw app_pw
    owner_pw="$(head -c 18 /dev/urandom | base64 | tr -dc 'A-Za-z0-9' | head -c 20)"
    app_pw="$(head -c 18 /dev/urandom | base64 | tr -dc 'A-Za-z0-9' | head -c 20)"
    umask 077
    cat > "$ENVF" <<ENV
DRUMLINE_DB_HOST=127.0.0.1
DRUMLINE_DB_PORT=$PORT
DRUMLINE_DB_NAME=drumline
DRUMLINE_DB_OWNER_USER=drumline_owner
DRUMLINE_DB_OWNER_PASSWORD=$owner_pw
DRUMLINE_DB_USER=drumline_app
DRUMLINE_DB_PASSWORD=$app_pw
ENV
  fi
}

ping_ok() { mariadb-admin --no-defaults --socket="$SOCK" -uroot ping >/dev/null 2>&1; }

start() {
  ensure_installed
  ensure_env
  # shellcheck disable=SC1090
  set -a; . "$ENVF"; set +a
  mkdir -p "$BASE"
  if ping_ok; then log "already running on 127.0.0.1:$DRUMLINE_DB_PORT"; else
    if [ ! -d "$DATA/mysql" ]; then
      log "initialising data directory"
      mariadb-install-db --no-defaults --user=root --datadir="$DATA" \
        --auth-root-authentication-method=socket --skip-test-db >"$BASE/install.log" 2>&1
    fi
    log "starting on 127.0.0.1:$DRUMLINE_DB_PORT"
    nohup mariadbd --no-defaults --user=root --datadir="$DATA" --bind-address=127.0.0.1 \
      --port="$DRUMLINE_DB_PORT" --socket="$SOCK" --pid-file="$PIDF" --log-error="$BASE/mysqld.err" \
      --skip-name-resolve --max-allowed-packet=64M --character-set-server=utf8mb4 \
      --collation-server=utf8mb4_unicode_ci --innodb-buffer-pool-size=512M >/dev/null 2>&1 &
    for _ in $(seq 600); do ping_ok && break; sleep 0.1; done
    ping_ok || { log "MariaDB did not answer; see $BASE/mysqld.err"; exit 1; }
  fi
  # Accounts: the owner runs migrations (and may grant on Drumline's databases);
  # the runtime account gets table-level grants after each migration (db/grants.ts).
  mariadb --no-defaults --socket="$SOCK" -uroot <<SQL
CREATE DATABASE IF NOT EXISTS \`$DRUMLINE_DB_NAME\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
CREATE USER IF NOT EXISTS '$DRUMLINE_DB_OWNER_USER'@'127.0.0.1' IDENTIFIED BY '$DRUMLINE_DB_OWNER_PASSWORD';
CREATE USER IF NOT EXISTS '$DRUMLINE_DB_USER'@'127.0.0.1' IDENTIFIED BY '$DRUMLINE_DB_PASSWORD';
GRANT ALL PRIVILEGES ON \`drumline%\`.* TO '$DRUMLINE_DB_OWNER_USER'@'127.0.0.1' WITH GRANT OPTION;
FLUSH PRIVILEGES;
SQL
}

stop() {
  if ping_ok; then
    mariadb-admin --no-defaults --socket="$SOCK" -uroot shutdown && log "stopped"
  else log "not running"; fi
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  status) if ping_ok; then echo running; else echo stopped; exit 1; fi ;;
  env) ensure_env; cat "$ENVF" ;;
  *) echo "usage: $0 start|stop|status|env" >&2; exit 2 ;;
esac
