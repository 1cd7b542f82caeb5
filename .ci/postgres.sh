#!/usr/bin/env bash
# A throwaway PostgreSQL cluster on loopback for the tests; sourced by
# .ci/run (and usable by hand: `source .ci/postgres.sh`). It exports
# GROUNDPROOF_TEST_POSTGRES=postgres://… and stops the cluster and removes
# its folder when the shell exits (trap). PostgreSQL 15 (Debian's package;
# installed with apt-get when absent). initdb refuses to run as root, so as
# root the cluster runs as the `postgres` user (made by the package) or
# `nobody`.

gp_pg_bin() {
  for d in /usr/lib/postgresql/*/bin /usr/local/bin /usr/bin; do
    if [ -x "$d/initdb" ] && [ -x "$d/pg_ctl" ]; then echo "$d"; return 0; fi
  done
  return 1
}

if ! gp_pg_bin >/dev/null && command -v apt-get >/dev/null 2>&1; then
  echo "== installing PostgreSQL"
  apt-get update -qq
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends postgresql >/dev/null
fi

if GP_PG_BIN=$(gp_pg_bin); then
  GP_PG_DIR=$(mktemp -d /tmp/gp-pg.XXXXXX)
  GP_PG_USER=$(id -un)
  gp_as() { "$@"; }
  if [ "$(id -u)" = 0 ]; then
    GP_PG_USER=$(id -un postgres 2>/dev/null || echo nobody)
    chown "$GP_PG_USER" "$GP_PG_DIR"
    gp_as() { runuser -u "$GP_PG_USER" -- "$@"; }
  fi
  # A free loopback port: ask the kernel for one.
  GP_PG_PORT=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')
  gp_as "$GP_PG_BIN/initdb" -D "$GP_PG_DIR/data" -U groundproof --auth=trust \
    --no-locale --encoding=UTF8 >"$GP_PG_DIR/initdb.log" 2>&1 \
    || { cat "$GP_PG_DIR/initdb.log"; exit 1; }
  gp_as "$GP_PG_BIN/pg_ctl" -D "$GP_PG_DIR/data" -l "$GP_PG_DIR/server.log" -w \
    -o "-c listen_addresses=127.0.0.1 -p $GP_PG_PORT -k $GP_PG_DIR -c fsync=off -c max_connections=300" start >/dev/null \
    || { cat "$GP_PG_DIR/server.log"; exit 1; }
  gp_pg_stop() {
    gp_as "$GP_PG_BIN/pg_ctl" -D "$GP_PG_DIR/data" -m immediate stop >/dev/null 2>&1 || true
    rm -rf "$GP_PG_DIR"
  }
  trap gp_pg_stop EXIT
  export GROUNDPROOF_TEST_POSTGRES="postgres://groundproof@127.0.0.1:$GP_PG_PORT/postgres"
  echo "== PostgreSQL $("$GP_PG_BIN/postgres" --version | awk '{print $NF}') for the tests on 127.0.0.1:$GP_PG_PORT"
else
  echo "== PostgreSQL is not installed: its tests will fail under CI=true"
fi
