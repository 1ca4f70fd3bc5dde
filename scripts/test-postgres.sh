#!/usr/bin/env bash
# A throwaway PostgreSQL for tests and local trials: initdb into a temp folder, pg_ctl on a free loopback port,
# trust authentication on 127.0.0.1 only, unix socket inside the folder; no system service is started or touched.
#
#   scripts/test-postgres.sh start   prints `export BRINKWATCH_TEST_POSTGRES_URL=…` and `export BRINKWATCH_TEST_POSTGRES_DIR=…`
#   scripts/test-postgres.sh stop    stops the server of $BRINKWATCH_TEST_POSTGRES_DIR and removes the folder
#   scripts/test-postgres.sh run CMD…  starts one, runs CMD with the URL exported, stops it on exit
#
# Debian's `postgresql` package provides the binaries (/usr/lib/postgresql/<version>/bin). PostgreSQL refuses to run
# as root, so when started as root the cluster belongs to the `postgres` user (created by the package).
set -euo pipefail

pg_bin() {
  local dir
  dir=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
  if [ -z "$dir" ] || [ ! -x "$dir/initdb" ]; then
    echo "test-postgres: no /usr/lib/postgresql/*/bin/initdb (apt-get install postgresql)" >&2
    exit 1
  fi
  echo "$dir"
}

as_owner() {
  if [ "$(id -u)" = "0" ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

free_port() {
  node -e "const s=require('net').createServer();s.listen(0,'127.0.0.1',()=>{console.log(s.address().port);s.close()})"
}

start() {
  local bin dir port
  bin=$(pg_bin)
  dir=$(mktemp -d "${TMPDIR:-/tmp}/brinkwatch-pg.XXXXXX")
  if [ "$(id -u)" = "0" ]; then chown postgres: "$dir"; fi
  chmod 700 "$dir"
  as_owner "$bin/initdb" -D "$dir/data" -U postgres --auth=trust --encoding=UTF8 --locale=C.UTF-8 >"$dir/initdb.log" 2>&1 ||
    { cat "$dir/initdb.log" >&2; exit 1; }
  port=$(free_port)
  # fsync off: a test cluster is thrown away, and durability costs most of a small write's time.
  as_owner "$bin/pg_ctl" -D "$dir/data" -l "$dir/server.log" -w -t 60 \
    -o "-c listen_addresses=127.0.0.1 -p $port -k $dir -c fsync=off -c synchronous_commit=off -c full_page_writes=off -c max_connections=300" \
    start >/dev/null || { cat "$dir/server.log" >&2; exit 1; }
  echo "export BRINKWATCH_TEST_POSTGRES_URL=postgres://postgres@127.0.0.1:$port/postgres"
  echo "export BRINKWATCH_TEST_POSTGRES_DIR=$dir"
}

stop() {
  local bin dir="${1:-${BRINKWATCH_TEST_POSTGRES_DIR:-}}"
  [ -n "$dir" ] && [ -d "$dir/data" ] || return 0
  bin=$(pg_bin)
  # What the server itself complained of (not the routine FATALs of databases dropped WITH (FORCE)) outlives it.
  grep -E "PANIC|too many clients|out of memory|could not fork|server process .* was terminated" "$dir/server.log" 2>/dev/null | tail -n 20 >&2 || true
  as_owner "$bin/pg_ctl" -D "$dir/data" -m fast -w stop >/dev/null 2>&1 || true
  rm -rf "$dir"
}

case "${1:-}" in
  start) start ;;
  stop) stop "${2:-}" ;;
  run)
    shift
    eval "$(start)"
    trap 'stop "$BRINKWATCH_TEST_POSTGRES_DIR"' EXIT
    "$@"
    ;;
  *)
    echo "usage: $0 start | stop [dir] | run command…" >&2
    exit 2
    ;;
esac
