#!/usr/bin/env bash
# Size of the demo senior squad's week plan, plain and gzip, and the time of
# a computed read against cached reads (plain and gzip), measured with curl
# over loopback on a fresh demo database. Reruns the README's figures.
#
#   scripts/plan-size.sh                                   # release build
#   GLYCOWEEK_BIN=target/debug/glycoweek scripts/plan-size.sh
set -euo pipefail
cd "$(dirname "$0")/.."

binary=${GLYCOWEEK_BIN:-}
if [ -z "$binary" ]; then
  SQLX_OFFLINE=true DATABASE_URL='' cargo build --release --locked --quiet
  binary=${CARGO_TARGET_DIR:-target}/release/glycoweek
fi
work=$(mktemp -d)
service_pid=
cleanup() {
  [ -n "$service_pid" ] && kill -TERM "$service_pid" 2>/dev/null && wait "$service_pid" 2>/dev/null
  rm -rf "$work"
}
trap cleanup EXIT

GLYCOWEEK_RATE_LIMIT_PER_MINUTE=0 RUST_LOG=warn "$binary" --demo --database "$work/demo.db" \
  --listen 127.0.0.1:0 2>"$work/log" &
service_pid=$!
addr=
for _ in $(seq 1 300); do
  addr=$(grep -o 'listening on http://127\.0\.0\.1:[0-9]*' "$work/log" | head -n 1 | cut -d' ' -f3 || true)
  [ -n "$addr" ] && break
  sleep 0.1
done
[ -n "$addr" ] || { cat "$work/log" >&2; exit 1; }
token=$(grep -o 'gwk_[A-Za-z0-9_-]*' "$work/log" | head -n 1)
auth="Authorization: Bearer $token"
team=$(curl -s -H "$auth" "$addr/v1/teams?limit=200" |
  python3 -c 'import json,sys; print(next(t["id"] for t in json.load(sys.stdin)["items"] if "senior" in t["name"]))')
plan="$addr/v1/teams/$team/plan"

measure() { # label, extra curl arguments...
  local label=$1
  shift
  curl -s -o /dev/null -H "$auth" "$@" -w "$label: %{size_download} bytes in %{time_total} s\n" "$plan"
}
measure "computed, plain"
for f in 0.91 0.92 0.93; do
  curl -s -o /dev/null -H "$auth" -w "computed again (start_glycogen_fraction=$f): %{size_download} bytes in %{time_total} s\n" "$plan?start_glycogen_fraction=$f"
done
measure "cached, plain"
measure "cached, gzip" -H "Accept-Encoding: gzip"
for i in 1 2 3 4 5; do measure "cached, gzip ($i)" -H "Accept-Encoding: gzip"; done
curl -s -H "$auth" "$plan" | python3 -c '
import json, sys
plan = json.load(sys.stdin)
refs = 0
def walk(v):
    global refs
    if isinstance(v, dict):
        refs += "source_id" in v
        for x in v.values(): walk(x)
    elif isinstance(v, list):
        for x in v: walk(x)
walk(plan)
n = len(plan.get("sources", []))
print(f"sources: {n} distinct, cited {refs} times")'
