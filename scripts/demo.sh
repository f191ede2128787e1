#!/usr/bin/env bash
# Starts phasebound on loopback with the embedded default catalog, runs the
# demo scenario's queries against it, prints the report, and stops it.
set -euo pipefail
cd "$(dirname "$0")/.."
bin=bin/phasebound
addr=${PHASEBOUND_DEMO_ADDR:-127.0.0.1:50551}
log=$(mktemp)
"$bin" serve --listen "$addr" 2>"$log" &
pid=$!
cleanup() { kill -TERM "$pid" 2>/dev/null || true; wait "$pid" 2>/dev/null || true; rm -f "$log"; }
trap cleanup EXIT
for _ in $(seq 1 300); do
  if "$bin" substances --server "$addr" >/dev/null 2>&1; then break; fi
  if ! kill -0 "$pid" 2>/dev/null; then echo "demo: the server did not start:" >&2; cat "$log" >&2; exit 1; fi
  sleep 0.1
done
"$bin" demo --server "$addr"
