#!/usr/bin/env bash
# The demo week as a dietitian reads it: per-day carbohydrate (g/kg), energy
# (kcal), protein and fat (g), energy availability and working-muscle
# glycogen for five athletes of the fictional senior squad: a starter, a
# substitute, a goalkeeper, the player on a body-mass reduction goal and the
# injured player. All figures are estimates.
#
#   scripts/demo-week.sh            # builds a debug binary unless GLYCOWEEK_BIN is set
#
# Starts the service on a temporary database and port, reads
# /v1/teams/{id}/plan/summary and stops it. Needs curl and jq.
set -euo pipefail
cd "$(dirname "$0")/.."
command -v jq >/dev/null || { echo "demo-week.sh needs jq" >&2; exit 1; }
bin="${GLYCOWEEK_BIN:-}"
if [ -z "$bin" ]; then
  cargo build --locked --bin glycoweek >&2
  bin=target/debug/glycoweek
fi
work="$(mktemp -d)"
port="${PORT:-18931}"
"$bin" --demo --database "$work/demo.db" --listen "127.0.0.1:$port" >"$work/log" 2>&1 &
pid=$!
trap 'kill $pid 2>/dev/null || true; rm -rf "$work"' EXIT
for _ in $(seq 1 100); do
  grep -q "listening" "$work/log" 2>/dev/null && break
  sleep 0.1
done
token=$(grep -o 'gwk_[0-9a-f]*' "$work/log" | head -1)
team=$(grep -o 'senior squad.*team id [0-9a-f-]*' "$work/log" | awk '{print $NF}')
summary=$(curl -sf -H "Authorization: Bearer $token" "http://127.0.0.1:$port/v1/teams/$team/plan/summary")
# The demo squad is generated in alphabetical order: 0 is the first
# goalkeeper (starts), 5 an outfield starter, 13 on a reduction goal (a
# substitute this week), 16 a substitute (25 min), 24 the injured player.
for pick in "5 starter" "16 substitute" "0 goalkeeper" "13 reduction goal" "24 injured (rehab)"; do
  n=${pick%% *}; role=${pick#* }
  name=$(jq -r "[.rows[].display_name] | unique | .[$n]" <<<"$summary")
  echo "### $name ($role)"
  echo "| date | g/kg | kcal | protein g | fat g | EA kcal/kg FFM | muscle glycogen start→end | warnings |"
  echo "|---|---|---|---|---|---|---|---|"
  jq -r --arg n "$name" '.rows[] | select(.display_name==$n) |
    "| \(.date) | \(.carbohydrate_g_per_kg) | \(.energy_kcal) | \(.protein_g) | \(.fat_g) | \(.energy_availability) | \(.muscle_glycogen_start)→\(.muscle_glycogen_end) | \(.warnings | join(", ")) |"' <<<"$summary"
  echo
done
jq -r '"Squad mean energy: \([.rows[].energy_kcal] | add / length | round) kcal/day over \(.rows | length) athlete-days (estimates)."' <<<"$summary"
jq -r '"Athlete-level warnings: \([.athlete_warnings[] | "\(.display_name): \(.code)"] | join("; "))"' <<<"$summary"
