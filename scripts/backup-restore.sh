#!/usr/bin/env bash
# Backup and restore of a live, busy glycoweek database, end to end:
#
#   scripts/backup-restore.sh
#
# 1. start the service on a temporary database;
# 2. keep a writer importing weeks of sessions (20 per import, all or nothing);
# 3. while it writes, run `glycoweek backup` (a consistent copy: VACUUM INTO);
# 4. check the copy: PRAGMA integrity_check, and every import whole or absent;
# 5. stop the service, put the backup in place of the database (removing the
#    old -wal and -shm files), start it again;
# 6. verify through the API that the restored service serves exactly the
#    backup's sessions, and that writes made after the backup are gone.
#
# The same steps, by hand, on a real installation:
#   glycoweek backup --database /var/lib/glycoweek/glycoweek.db --to /backups/glycoweek-$(date +%F).db
#   sqlite3 /backups/glycoweek-….db 'PRAGMA integrity_check'      # prints ok
#   systemctl stop glycoweek   (or: docker compose stop)
#   rm -f /var/lib/glycoweek/glycoweek.db-wal /var/lib/glycoweek/glycoweek.db-shm
#   cp /backups/glycoweek-….db /var/lib/glycoweek/glycoweek.db
#   systemctl start glycoweek
#
# Needs curl and sqlite3. Set GLYCOWEEK_BIN to use a built binary instead of
# building the release one. Loopback only; everything lives in a temporary
# directory that is removed at the end.
set -euo pipefail
cd "$(dirname "$0")/.."

command -v curl >/dev/null || { echo "needs curl" >&2; exit 1; }
command -v sqlite3 >/dev/null || { echo "needs sqlite3 (apt-get install sqlite3)" >&2; exit 1; }

work="$(mktemp -d)"
service_pid=""
writer_pid=""
cleanup() {
  [ -n "$writer_pid" ] && kill "$writer_pid" 2>/dev/null || true
  if [ -n "$service_pid" ] && kill -0 "$service_pid" 2>/dev/null; then
    kill -TERM "$service_pid" 2>/dev/null || true
    wait "$service_pid" 2>/dev/null || true
  fi
  rm -rf "$work"
}
trap cleanup EXIT
step() { printf '\n==> %s\n' "$*"; }

if [ -n "${GLYCOWEEK_BIN:-}" ]; then
  cp "$GLYCOWEEK_BIN" "$work/glycoweek"
else
  step "building the release binary"
  cargo build --release --locked --bin glycoweek
  cp target/release/glycoweek "$work/glycoweek"   # a copy: target/ may be relinked by other builds
fi
gw="$work/glycoweek"
db="$work/live.db"

# Starts the service on $db; sets service_pid and base.
start() {
  : >"$work/service.log"
  env -u GLYCOWEEK_LISTEN -u GLYCOWEEK_DATABASE RUST_LOG=warn \
    "$gw" serve --database "$db" --listen 127.0.0.1:0 --rate-limit-per-minute 0 \
    2>>"$work/service.log" &
  service_pid=$!
  base=""
  for _ in $(seq 1 600); do   # at most 60 s
    base="$(grep -o 'listening on http://[0-9.:]*' "$work/service.log" | head -n1 | sed 's/listening on //' || true)"
    [ -n "$base" ] && return 0
    kill -0 "$service_pid" 2>/dev/null || break
    sleep 0.1
  done
  cat "$work/service.log" >&2
  echo "the service did not start" >&2
  exit 1
}

stop() {
  kill -TERM "$service_pid"
  wait "$service_pid" 2>/dev/null || true
  service_pid=""
}

# Counts the team's sessions through the API, page by page.
count_sessions() {
  local url="$base/v1/teams/$team/sessions?limit=200" total=0 page cursor
  while :; do
    page="$(curl -sf -H "Authorization: Bearer $token" "$url")"
    total=$((total + $(printf '%s' "$page" | grep -o '"local_date"' | wc -l)))
    cursor="$(printf '%s' "$page" | grep -o '"next_cursor":"[^"]*"' | cut -d'"' -f4 || true)"
    [ -n "$cursor" ] || break
    url="$base/v1/teams/$team/sessions?limit=200&cursor=$cursor"
  done
  echo "$total"
}

# An import of 20 sessions titled "batch N #i".
import_body() {
  local n="$1" i sessions=""
  for i in $(seq 0 19); do
    [ -n "$sessions" ] && sessions="$sessions,"
    sessions="$sessions{\"local_date\":\"2027-03-$(printf '%02d' $((1 + i)))\",\"start_time\":\"10:00\",\"kind\":\"training\",\"title\":\"batch $n #$i\",\"segments\":[{\"minutes\":60,\"intensity\":{\"form\":\"session_rpe\",\"rating\":5}}]}"
  done
  printf '{"sessions":[%s]}' "$sessions"
}

step "1. starting the service on $db"
start
token="$(grep -o 'gwk_[A-Za-z0-9_-]*' "$work/service.log" | head -n1)"
team="$(curl -sf -X POST -H "Authorization: Bearer $token" -H 'Content-Type: application/json' \
  -d '{"name": "Backup drill", "time_zone": "Europe/London"}' "$base/v1/teams" \
  | grep -o '"id":"[0-9a-f-]*"' | head -n1 | cut -d'"' -f4)"
echo "service at $base, team $team"

step "2. a writer imports batches of 20 sessions, without pause"
(
  n=0
  while :; do
    code="$(import_body "$n" | curl -s -o /dev/null -w '%{http_code}' -X POST \
      -H "Authorization: Bearer $token" -H 'Content-Type: application/json' \
      --data-binary @- "$base/v1/teams/$team/sessions/import")"
    [ "$code" = 201 ] || { echo "import $n answered $code" >&2; exit 1; }
    echo "$n" >"$work/acknowledged.new" && mv "$work/acknowledged.new" "$work/acknowledged"
    n=$((n + 1))
  done
) &
writer_pid=$!
for _ in $(seq 1 300); do   # wait (at most 30 s) for five imports to land
  [ "$(cat "$work/acknowledged" 2>/dev/null || echo -1)" -ge 4 ] && break
  sleep 0.1
done
before=$(( $(cat "$work/acknowledged") + 1 ))
echo "$before imports acknowledged so far"

step "3. backup while the writer runs"
"$gw" backup --database "$db" --to "$work/backup.db"
kill -0 "$writer_pid" || { echo "the writer stopped during the backup" >&2; exit 1; }
sleep 1   # let more writes land after the backup, so the restore is visible
kill "$writer_pid"; wait "$writer_pid" 2>/dev/null || true; writer_pid=""
live="$(count_sessions)"
echo "the live database holds $live sessions"

step "4. checking the backup"
integrity="$(sqlite3 "$work/backup.db" 'PRAGMA integrity_check')"
[ "$integrity" = ok ] || { echo "integrity_check: $integrity" >&2; exit 1; }
torn="$(sqlite3 "$work/backup.db" "SELECT COUNT(*) FROM (SELECT substr(title, 1, instr(title, '#')) AS b
  FROM sessions GROUP BY b HAVING COUNT(*) <> 20)")"
[ "$torn" = 0 ] || { echo "$torn imports are torn in the backup" >&2; exit 1; }
backed_up="$(sqlite3 "$work/backup.db" 'SELECT COUNT(*) FROM sessions')"
[ "$backed_up" -ge $((before * 20)) ] || { echo "the backup misses acknowledged imports" >&2; exit 1; }
echo "integrity_check: ok; $backed_up sessions in $((backed_up / 20)) whole imports, none torn"

step "5. stop, restore the backup, start"
stop
rm -f "$db-wal" "$db-shm"
cp "$work/backup.db" "$db"
start

step "6. verifying the restored service"
restored="$(count_sessions)"
[ "$restored" = "$backed_up" ] || { echo "restored $restored sessions, backup had $backed_up" >&2; exit 1; }
[ "$live" -gt "$backed_up" ] || { echo "no write landed after the backup; cannot tell the restore" >&2; exit 1; }
stop
echo "integrity_check: $(sqlite3 "$db" 'PRAGMA integrity_check')"

cat <<EOF

| step | sessions |
|---|---:|
| acknowledged before the backup started | $((before * 20)) |
| in the backup (taken during writes) | $backed_up |
| live when the writer stopped | $live |
| served after the restore | $restored |

Backup and restore on a busy database: OK.
EOF
