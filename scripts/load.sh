#!/usr/bin/env bash
# The issue-13 performance figures for glycoweek, every row in one run:
#
#   scripts/load.sh
#
# Builds the release binary and examples/loadgen.rs, then
#  1. runs `glycoweek bench` (the engine on synthetic squads, and the first
#     API read after a session change, in-process on a temporary database);
#  2. starts the service on a temporary database with the fictional demo club
#     (--demo) and no rate limit, notes its idle memory (VmRSS), saves the
#     senior squad's summary and starts a bare axum server serving exactly
#     those bytes (`loadgen bare FILE`);
#  3. drives both on loopback with loadgen: the cached summary against the
#     bare server in interleaved rounds (medians), then a mixed load of 32
#     connections, 80 % summary reads and 20 % session writes;
#  4. reports the service's peak memory (VmHWM) and prints one Markdown table.
#
# GLYCOWEEK_BIN=path measures another build of the service (e.g. of main)
# with the same load generator, for a before/after comparison.
#
# Bounds (environment): ROUNDS (default 5) of ROUND_SECS (default 3) for the
# ratio, CONCURRENCY for it (default 8), MIX_CONCURRENCY (default 32),
# REQUESTS (default 20000) and DURATION_SECS (default 15) for the mix: about
# 1.5 minutes after the build. The load generator shares the machine's cores
# with the servers, so the figures are a floor for the service alone.
set -euo pipefail
cd "$(dirname "$0")/.."

REQUESTS="${REQUESTS:-20000}"
CONCURRENCY="${CONCURRENCY:-8}"
MIX_CONCURRENCY="${MIX_CONCURRENCY:-32}"
DURATION_SECS="${DURATION_SECS:-15}"
ROUNDS="${ROUNDS:-5}"
ROUND_SECS="${ROUND_SECS:-3}"

command -v curl >/dev/null || { echo "load.sh needs curl" >&2; exit 1; }

work="$(mktemp -d)"

echo "==> building (release)" >&2
# The binaries are copied out of target/ at once: another build sharing the
# target directory may relink target/release/glycoweek at any time. The copy
# must know --ceiling-endpoint, or it came from another build: link again.
for attempt in 1 2 3; do
  cargo build --release --locked --bin glycoweek --example loadgen >&2
  cp "${GLYCOWEEK_BIN:-${CARGO_TARGET_DIR:-target}/release/glycoweek}" "$work/glycoweek"
  cp "${CARGO_TARGET_DIR:-target}/release/examples/loadgen" "$work/loadgen"
  "$work/glycoweek" serve --help | grep -q -- '--ceiling-endpoint' && break
  [ "$attempt" -lt 3 ] || { echo "the release binary keeps changing under us" >&2; exit 1; }
done
service_pid=""
bare_pid=""
cleanup() {
  for pid in "$service_pid" "$bare_pid"; do
    if [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null; then
      kill -TERM "$pid" 2>/dev/null || true
      wait "$pid" 2>/dev/null || true
    fi
  done
  rm -rf "$work"
}
trap cleanup EXIT

echo "==> glycoweek bench (engine and in-process API rounds)" >&2
"$work/glycoweek" bench --athletes 10,40,160 --weeks 1,4,12 --repeats "$ROUNDS" >"$work/bench.md"

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

sleep 1
idle_kib="$(awk '/^VmRSS:/ {print $2}' "/proc/$service_pid/status")"

# The bare ceiling serves the very bytes of the summary.
curl -sf -H "Authorization: Bearer $token" "$base/v1/teams/$team/plan/summary" >"$work/summary.json"
"$work/loadgen" bare "$work/summary.json" 2>"$work/bare.log" &
bare_pid=$!
bare=""
for _ in $(seq 1 100); do
  bare="$(grep -o 'listening on http://[0-9.:]*' "$work/bare.log" | head -n1 | sed 's/listening on //' || true)"
  [ -n "$bare" ] && break
  sleep 0.1
done
[ -n "$bare" ] || { cat "$work/bare.log" >&2; echo "the bare server did not start" >&2; exit 1; }

echo "==> load: $base against $bare" >&2
status=0
"$work/loadgen" --base "$base" --token "$token" --team "$team" --bare "$bare" \
  --rounds "$ROUNDS" --round-secs "$ROUND_SECS" --concurrency "$CONCURRENCY" \
  --mix-concurrency "$MIX_CONCURRENCY" --requests "$REQUESTS" --duration-secs "$DURATION_SECS" \
  >"$work/figures.md" || status=$?

peak_kib="$(awk '/^VmHWM:/ {print $2}' "/proc/$service_pid/status")"
kill -TERM "$service_pid" "$bare_pid"
wait "$service_pid" 2>/dev/null || true
wait "$bare_pid" 2>/dev/null || true
service_pid=""
bare_pid=""

cpu="$(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
echo
echo '```text'
echo "glycoweek performance run, $(date -u +%Y-%m-%dT%H:%MZ), $(nproc) cores ($cpu), release build, loopback"
head -n1 "$work/figures.md"
echo '```'
echo
echo "| figure | measured |"
echo "|---|---|"
grep '^| cached `/plan/summary`' "$work/figures.md"
grep '^| 40-athlete week\|^| 160 athletes\|^| engine cost\|^| first API read\|^| the same read' "$work/bench.md"
grep '^| mixed load' "$work/figures.md"
echo "| peak RSS of the service under the loads above | $((peak_kib / 1024)) MiB ($((idle_kib / 1024)) MiB idle) |"
echo
sed -n '/^| phase/,$p' "$work/figures.md"
echo
sed -n '/^Engine time/,$p' "$work/bench.md"
if [ "$status" -ne 0 ]; then
  echo
  echo "**Some requests failed** (loadgen exit status $status)."
fi
exit "$status"
