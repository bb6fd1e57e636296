#!/usr/bin/env bash
# Start a throw-away PostgreSQL server for the history store's tests: installs Debian's
# server package if it is missing, makes a cluster under /tmp owned by the `postgres` user,
# listens on 127.0.0.1 only, and prints the connection URL the tests take
# (REMANENT_TEST_PG_URL). Stop it with: .ci/postgres.sh stop
set -euo pipefail
PORT=${REMANENT_PG_PORT:-54329}
DATA=/tmp/remanent-pg
bin_dir() { ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -1; }
as_pg() { if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi; }

if [ "${1:-}" = stop ]; then
  as_pg "$(bin_dir)/pg_ctl" -D "$DATA" stop -m fast >/dev/null 2>&1 || true
  exit 0
fi
if [ -z "$(bin_dir)" ]; then
  echo "installing Debian's PostgreSQL server" >&2
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq >&2
  apt-get install -y -qq postgresql >&2
fi
BIN=$(bin_dir)
as_pg "$BIN/pg_ctl" -D "$DATA" stop -m fast >/dev/null 2>&1 || true
rm -rf "$DATA"
mkdir -p "$DATA"
[ "$(id -u)" = 0 ] && chown postgres:postgres "$DATA"
as_pg "$BIN/initdb" -D "$DATA" -U postgres --auth=trust -E UTF8 >/dev/null
as_pg "$BIN/pg_ctl" -D "$DATA" -l "$DATA/server.log" -w \
  -o "-p $PORT -c listen_addresses=127.0.0.1 -k $DATA -c fsync=off" start >/dev/null
echo "postgres://postgres@127.0.0.1:$PORT/postgres"
