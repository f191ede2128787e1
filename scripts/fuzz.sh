#!/usr/bin/env bash
# Runs every fuzz target in the module for a short time each.
# Usage: scripts/fuzz.sh [SECONDS]   (default 4; use more locally, e.g. 60)
set -euo pipefail
secs=${1:-4}
cd "$(dirname "$0")/.."
status=0
for dir in $(go list -f '{{.Dir}}' ./...); do
  targets=$(grep -hoE '^func (Fuzz[A-Za-z0-9_]+)\(' "$dir"/*_test.go 2>/dev/null | sed -E 's/^func (Fuzz[A-Za-z0-9_]+)\(/\1/' | sort -u || true)
  for t in $targets; do
    echo "fuzz: $t in ${dir#$PWD/} for ${secs}s"
    if ! go test -run='^$' -fuzz="^${t}\$" -fuzztime="${secs}s" -fuzzminimizetime=2s "$dir" >/tmp/fuzz-$t.log 2>&1; then
      cat /tmp/fuzz-$t.log
      status=1
    fi
  done
done
exit $status
