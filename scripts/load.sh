#!/usr/bin/env bash
# Load figures for glycoweek, reproducible with one command:
#
#   scripts/load.sh
#
# Builds the release binary and examples/loadgen.rs, starts the service on a
# temporary database with the fictional demo club (--demo), the ceiling
# endpoint (--ceiling-endpoint) and no rate limit, and drives it on loopback:
# a 90 % plan read / 10 % session write mix, the squad plan alone, and the
# ceiling endpoint with a response of the squad plan's size. It then reports
# the service's peak memory (VmHWM), stops it and prints a Markdown block.
#
# Bounds (environment): REQUESTS per phase (default 3000), CONCURRENCY
# (default 8), DURATION_SECS per phase (default 15): three phases, so well
# under two minutes after the build. The load generator shares the machine's
# cores with the service, so the figures are a floor for the service alone.
set -euo pipefail
cd "$(dirname "$0")/.."

REQUESTS="${REQUESTS:-3000}"
CONCURRENCY="${CONCURRENCY:-8}"
DURATION_SECS="${DURATION_SECS:-15}"

command -v curl >/dev/null || { echo "load.sh needs curl" >&2; exit 1; }

work="$(mktemp -d)"

echo "==> building (release)" >&2
# The binaries are copied out of target/ at once: another build sharing the
# target directory may relink target/release/glycoweek at any time. The copy
# must know --ceiling-endpoint, or it came from another build: link again.
for attempt in 1 2 3; do
  cargo build --release --locked --bin glycoweek --example loadgen >&2
  cp target/release/glycoweek "$work/glycoweek"
  cp target/release/examples/loadgen "$work/loadgen"
  "$work/glycoweek" serve --help | grep -q -- '--ceiling-endpoint' && break
  [ "$attempt" -lt 3 ] || { echo "target/release/glycoweek keeps changing under us" >&2; exit 1; }
done
service_pid=""
cleanup() {
  if [ -n "$service_pid" ] && kill -0 "$service_pid" 2>/dev/null; then
    kill -TERM "$service_pid" 2>/dev/null || true
    wait "$service_pid" 2>/dev/null || true
  fi
  rm -rf "$work"
}
trap cleanup EXIT

echo "==> starting the service on a temporary demo database" >&2
# Port 0: the kernel picks a free port and the service prints it.
env -u GLYCOWEEK_LISTEN -u GLYCOWEEK_DATABASE RUST_LOG=warn \
  "$work/glycoweek" serve --database "$work/load.db" --listen 127.0.0.1:0 \
  --demo --ceiling-endpoint --rate-limit-per-minute 0 2>"$work/service.log" &
service_pid=$!

base=""
for _ in $(seq 1 600); do   # at most 60 s
  base="$(grep -o 'listening on http://[0-9.:]*' "$work/service.log" | head -n1 | sed 's/listening on //' || true)"
  [ -n "$base" ] && break
  kill -0 "$service_pid" 2>/dev/null || { cat "$work/service.log" >&2; echo "the service exited" >&2; exit 1; }
  sleep 0.1
done
[ -n "$base" ] || { cat "$work/service.log" >&2; echo "the service did not start" >&2; exit 1; }
token="$(grep -o 'gwk_[A-Za-z0-9_-]*' "$work/service.log" | head -n1)"
[ -n "$token" ] || { echo "no first-start token in the service log" >&2; exit 1; }
team="$(curl -sf -H "Authorization: Bearer $token" "$base/v1/teams" \
  | grep -o '"id":"[0-9a-f-]*"' | head -n1 | cut -d'"' -f4)"
[ -n "$team" ] || { echo "no team in the demo database" >&2; exit 1; }

echo "==> load: $REQUESTS requests or $DURATION_SECS s per phase, concurrency $CONCURRENCY, $base" >&2
status=0
"$work/loadgen" --base "$base" --token "$token" --team "$team" \
  --requests "$REQUESTS" --concurrency "$CONCURRENCY" --duration-secs "$DURATION_SECS" \
  >"$work/figures.md" || status=$?

peak_kib="$(awk '/^VmHWM:/ {print $2}' "/proc/$service_pid/status")"
kill -TERM "$service_pid"
wait "$service_pid" 2>/dev/null || true
service_pid=""

cpu="$(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
echo
echo '```text'
echo "glycoweek load run, $(date -u +%Y-%m-%dT%H:%MZ), $(nproc) cores ($cpu), release build, loopback"
echo '```'
echo
cat "$work/figures.md"
echo
echo "Peak memory of the service (VmHWM): $((peak_kib / 1024)) MiB ($peak_kib KiB)"
if [ "$status" -ne 0 ]; then
  echo
  echo "**Some requests failed** (loadgen exit status $status)."
fi
exit "$status"
