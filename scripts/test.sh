#!/usr/bin/env bash
# Set up everything floatlift's tests need on this machine and run the whole suite.
#   bash scripts/test.sh [pytest options]
# - installs Debian's chromium (browser tests) and postgresql (team-store tests) when
#   missing and allowed (root, or sudo without a password);
# - creates .venv and installs floatlift with its test extras;
# - starts a throwaway PostgreSQL server on 127.0.0.1 for the run and stops it after;
# - runs pytest; "no tests collected" counts as a failure.
# With FLOATLIFT_REQUIRE_SERVICES=1 (set by CI) a missing chromium or PostgreSQL fails the
# run instead of skipping those tests.
set -euo pipefail
cd "$(dirname "$0")/.."
root_dir=$(pwd)

as_root() {
  if [ "$(id -u)" = 0 ]; then "$@"; elif sudo -n true 2>/dev/null; then sudo -n "$@"; else return 1; fi
}

need=()
[ -x /usr/bin/chromium ] || need+=(chromium)
compgen -G "/usr/lib/postgresql/*/bin/initdb" >/dev/null || need+=(postgresql)
if [ ${#need[@]} -gt 0 ]; then
  echo "scripts/test.sh: installing Debian packages: ${need[*]}"
  if ! { as_root apt-get update -q && as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -q "${need[@]}"; }; then
    echo "scripts/test.sh: could not install ${need[*]} (not root?); their tests will be skipped" >&2
  fi
fi

python_bin=${PYTHON:-python3}
if [ ! -x .venv/bin/python ]; then
  "$python_bin" -m venv .venv
fi
.venv/bin/python -m pip install -q --disable-pip-version-check -e ".[test]"

pg_dir=""
cleanup() {
  if [ -n "$pg_dir" ] && [ -d "$pg_dir" ]; then
    pg_run "$pg_bin/pg_ctl" -D "$pg_dir/data" -m immediate stop >/dev/null 2>&1 || true
    rm -rf "$pg_dir"
  fi
}
trap cleanup EXIT

pg_run() {
  if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi
}

pg_bin=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
if [ -n "$pg_bin" ] && [ -x "$pg_bin/initdb" ]; then
  pg_dir=$(mktemp -d)
  [ "$(id -u)" = 0 ] && chown postgres "$pg_dir"
  pg_port=$(.venv/bin/python -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')
  pg_run "$pg_bin/initdb" -D "$pg_dir/data" -U postgres --auth=trust -E UTF8 >"$pg_dir/initdb.log" 2>&1
  pg_run "$pg_bin/pg_ctl" -D "$pg_dir/data" -l "$pg_dir/server.log" -w -o \
    "-c listen_addresses=127.0.0.1 -p $pg_port -k $pg_dir -c fsync=off -c synchronous_commit=off -c full_page_writes=off -c max_connections=200" \
    start >/dev/null
  export FLOATLIFT_TEST_PG_URL="postgresql+psycopg://postgres@127.0.0.1:$pg_port/postgres"
  echo "scripts/test.sh: PostgreSQL $(basename "$(dirname "$pg_bin")") on 127.0.0.1:$pg_port for this run"
fi

mkdir -p "$root_dir/test-artifacts"
set +e
.venv/bin/python -m pytest "$@"
status=$?
set -e
if [ "$status" = 5 ]; then
  echo "scripts/test.sh: pytest collected no tests; that is a failure" >&2
  exit 1
fi
exit "$status"
