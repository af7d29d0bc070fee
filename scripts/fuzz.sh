#!/usr/bin/env bash
# API fuzzing: runs schemathesis against the OpenAPI document the service
# itself serves, with every check, authenticated as the first administrator,
# on a fresh database loaded with the fictional demo club.
#
# It builds the release binary, starts it on a free loopback port (the service
# binds 127.0.0.1:0 and prints the port it got), waits for /health, fuzzes,
# stops the service and exits non-zero on any finding.
#
#   scripts/fuzz.sh                      # the CI run
#   FUZZ_EXAMPLES=200 scripts/fuzz.sh    # a longer hunt
#   FUZZ_SEED=1234 scripts/fuzz.sh       # replay a run
#
# Environment:
#   FUZZ_EXAMPLES      test cases per operation and phase (default 40)
#   FUZZ_SEED          schemathesis seed (default: random, printed by schemathesis)
#   FUZZ_TIMEOUT_SECS  hard limit on the whole schemathesis run (default 600)
#   FUZZ_REPORT_DIR    JUnit report and a cassette of every request (default target/fuzz-report)
# Anything after the script's arguments goes to `st run` as is, e.g.
#   scripts/fuzz.sh --include-path-regex '^/v1/sessions'
set -euo pipefail
cd "$(dirname "$0")/.."

SCHEMATHESIS_VERSION=4.32.5
examples=${FUZZ_EXAMPLES:-40}
timeout_secs=${FUZZ_TIMEOUT_SECS:-600}
target_dir=${CARGO_TARGET_DIR:-target}
report_dir=${FUZZ_REPORT_DIR:-$target_dir/fuzz-report}
venv=$target_dir/fuzz-venv

step() { printf '\n==> %s\n' "$*"; }

# 1. schemathesis, pinned, in its own virtual environment.
if ! "$venv/bin/st" --version 2>/dev/null | grep -qF "$SCHEMATHESIS_VERSION"; then
  step "installing schemathesis $SCHEMATHESIS_VERSION into $venv"
  rm -rf "$venv"
  python3 -m venv "$venv"
  "$venv/bin/pip" install --quiet --disable-pip-version-check "schemathesis==$SCHEMATHESIS_VERSION"
fi

# 2. The service, from the committed offline query data.
step "cargo build --release"
SQLX_OFFLINE=true DATABASE_URL='' cargo build --release --locked --quiet
binary=$target_dir/release/glycoweek

# 3. A fresh database with the demo club, on a port the kernel picks.
work=$(mktemp -d)
service_pid=
stop_service() {
  if [ -n "$service_pid" ] && kill -0 "$service_pid" 2>/dev/null; then
    kill -TERM "$service_pid" 2>/dev/null || true
    # Graceful shutdown finishes in-flight requests; give it 10 s, then SIGKILL.
    for _ in $(seq 1 100); do
      kill -0 "$service_pid" 2>/dev/null || break
      sleep 0.1
    done
    kill -KILL "$service_pid" 2>/dev/null || true
    wait "$service_pid" 2>/dev/null || true
  fi
  rm -rf "$work"
}
trap stop_service EXIT

log=$work/service.log
step "starting the service on a fresh demo database"
# Flags win over any GLYCOWEEK_* variables in the caller's environment.
# Rate limiting is off: one token sends thousands of requests here, and 429
# has its own tests; fuzzing looks for what the handlers do.
GLYCOWEEK_RATE_LIMIT_PER_MINUTE=0 RUST_LOG=${RUST_LOG:-warn,glycoweek=info} "$binary" --demo \
  --database "$work/fuzz.db" --listen 127.0.0.1:0 --log-format json 2>"$log" &
service_pid=$!

addr=
for _ in $(seq 1 300); do # up to 30 s for migrations and the demo load
  addr=$(grep -o 'listening on http://127\.0\.0\.1:[0-9]*' "$log" | head -n 1 | cut -d' ' -f3 || true)
  [ -n "$addr" ] && break
  if ! kill -0 "$service_pid" 2>/dev/null; then
    echo "the service exited before listening:" >&2
    cat "$log" >&2
    exit 1
  fi
  sleep 0.1
done
if [ -z "$addr" ]; then
  echo "the service did not start listening within 30 s:" >&2
  cat "$log" >&2
  exit 1
fi
token=$(grep -o 'gwk_[A-Za-z0-9_-]*' "$log" | head -n 1 || true)
if [ -z "$token" ]; then
  echo "no administrator token in the service's first-start output" >&2
  exit 1
fi

healthy=
for _ in $(seq 1 100); do # up to 10 s
  if "$binary" probe --url "$addr/health" 2>/dev/null; then
    healthy=1
    break
  fi
  sleep 0.1
done
if [ -z "$healthy" ]; then
  echo "$addr/health did not answer 200 within 10 s:" >&2
  cat "$log" >&2
  exit 1
fi
echo "service at $addr (pid $service_pid)"

# 4. Real ids for the path parameters. Random UUIDs only ever reach the 404
# branch; binding each id parameter, half of the time, to ids of the demo club
# lets every operation reach its real logic. Deleting operations get ids of
# their own (a scratch team, and a few athletes and sessions set aside) so they
# cannot empty the club that the other operations work on. The 412 note below
# is explained where it is used.
config=$work/schemathesis.toml
"$venv/bin/python" - "$addr" "$token" >"$config" <<'PY'
import json, sys, urllib.request

base, token = sys.argv[1], sys.argv[2]

def call(method, path, body=None):
    data = None if body is None else json.dumps(body).encode()
    request = urllib.request.Request(base + path, data=data, method=method, headers={
        "Authorization": "Bearer " + token, "Content-Type": "application/json"})
    with urllib.request.urlopen(request, timeout=10) as response:
        return json.load(response)

teams = [t["id"] for t in call("GET", "/v1/teams?limit=200")["items"]]
athletes, sessions = [], []
for team in teams:
    athletes += [a["id"] for a in call("GET", f"/v1/teams/{team}/athletes?limit=200")["items"]]
    sessions += [s["id"] for s in call("GET", f"/v1/teams/{team}/sessions?limit=200")["items"]]
if not (teams and athletes and sessions):
    sys.exit("the demo club is missing: no teams, athletes or sessions")
scratch_team = call("POST", "/v1/teams", {"name": "Fuzzing scratch team", "time_zone": "Europe/London"})["id"]
scratch_token = call("POST", "/v1/tokens", {"label": "fuzzing scratch token", "role": "reader", "team_id": teams[0]})["id"]
expendable_athletes, athletes = athletes[::5], [a for i, a in enumerate(athletes) if i % 5]
expendable_sessions, sessions = sessions[::5], [s for i, s in enumerate(sessions) if i % 5]

def values(name, ids):
    print(f"[dictionaries.{name}]\nvalues = {json.dumps(ids)}\n")

def bind(parameter, dictionary):
    print(f'"path.{parameter}" = {{ dictionary = "{dictionary}", probability = 0.5 }}')

# A valid but stale If-Match is indistinguishable from a fresh one in the
# schema, so `412 Precondition Failed` is a correct answer to schema-valid data,
# exactly like 409 (which schemathesis already expects). Adding it keeps every
# other status the check flags.
# Every check is on (set here, not with --checks on the command line, which
# would override the per-operation settings below).
print('[checks]\nenabled = true\n')
print('[checks.positive_data_acceptance]')
print('expected-statuses = ["2xx", "3xx", "401", "403", "404", "409", "412", "429", "5xx"]\n')
# An If-Match that is not a list of our entity tags can never match, so the
# precondition is false: 412 is the rejection RFC 9110 prescribes for it.
print('[checks.negative_data_rejection]')
print('expected-statuses = ["400", "401", "403", "404", "405", "406", "409", "412", "415", "422", "428", "429", "5xx"]\n')
values("teams", teams)
values("athletes", athletes)
values("sessions", sessions)
values("scratch_teams", [scratch_team])
values("scratch_tokens", [scratch_token])
values("expendable_athletes", expendable_athletes)
values("expendable_sessions", expendable_sessions)
print("[parameters]")
bind("team_id", "teams")
bind("athlete_id", "athletes")
bind("session_id", "sessions")
print()
for operation, parameter, dictionary in [
    ("DELETE /v1/teams/{team_id}", "team_id", "scratch_teams"),
    ("DELETE /v1/athletes/{athlete_id}", "athlete_id", "expendable_athletes"),
    ("DELETE /v1/sessions/{session_id}", "session_id", "expendable_sessions"),
    # Revoking the fuzzer's own token would turn the rest of the run into 401s.
    ("DELETE /v1/tokens/{token_id}", "token_id", "scratch_tokens"),
]:
    print(f'[[operations]]\ninclude-name = "{operation}"\n[operations.parameters]')
    bind(parameter, dictionary)
    print()
# Deleting a team deletes its athletes, sessions and tokens with it, on purpose.
# ensure_resource_availability only knows about a DELETE of the resource's own
# path, so a stateful sequence "create token for team T, delete T, read token"
# looks like a lost resource. Team deletion stays in every other phase.
print('[[operations]]\ninclude-name = "DELETE /v1/teams/{team_id}"\nphases.stateful.enabled = false\n')
# positive_data_acceptance expects every schema-valid request to succeed.
# These operations have rules that JSON Schema cannot state, so schema-valid
# requests can rightly get 422 (the problem names the field and the rule):
# - opaque cursors are valid only when this API issued them; `to` not before `from`;
# - `week` excludes `from`/`to`, and `since_version` needs a computed plan;
# - dates relative to today (no future readings, ages 8-90);
# - rules across fields: hr_rest < hr_max, fat-free mass < body mass, goal and
#   rate, carbohydrate loading only for a match, participation modes, at least
#   one pin, sessions inside the planned day, a shortened part shorter than
#   the session;
# - references to other records (a token's team) must exist;
# - time zones must be in the IANA database (a string, see item 1 of issue 11).
# Every other check, including not_a_server_error and the negative checks,
# still runs on them.
for operation in [
    "GET /v1/teams", "GET /v1/teams/{team_id}/athletes", "GET /v1/teams/{team_id}/sessions",
    "GET /v1/athletes/{athlete_id}/body-mass", "GET /v1/tokens", "GET /v1/athletes/{athlete_id}/pins",
    "GET /v1/teams/{team_id}/plan", "GET /v1/teams/{team_id}/plan/summary",
    "GET /v1/teams/{team_id}/plan/summary.csv", "GET /v1/teams/{team_id}/plan/changes",
    "GET /v1/athletes/{athlete_id}/plan",
    "POST /v1/athletes/{athlete_id}/body-mass", "POST /v1/athletes/{athlete_id}/sweat-tests",
    "POST /v1/teams/{team_id}/athletes", "PATCH /v1/athletes/{athlete_id}",
    "POST /v1/teams/{team_id}/sessions", "POST /v1/teams/{team_id}/sessions/import",
    "PATCH /v1/sessions/{session_id}", "PUT /v1/sessions/{session_id}/participation/{athlete_id}",
    "PUT /v1/athletes/{athlete_id}/pins/{date}", "POST /v1/estimate/day", "POST /v1/estimate/session",
    "POST /v1/estimate/sweat-rate", "PUT /v1/teams/{team_id}/plan-settings", "POST /v1/tokens",
    # Every list takes an opaque cursor; date filters follow the one 2000-2100 rule.
    "GET /v1/activities", "GET /v1/teams/{team_id}/audit", "GET /v1/teams/{team_id}/changes",
    "GET /v1/sessions/{session_id}/participation", "GET /v1/athletes/{athlete_id}/sweat-tests",
    "GET /v1/athletes/{athlete_id}/calendar-feeds", "GET /v1/teams/{team_id}/plan/totals.csv",
    # The public feed's optional from/to follow the same `to` not before `from` rule.
    "GET /v1/calendar/{secret}",
    # A time zone is any string the IANA database knows, which a pattern cannot list.
    "POST /v1/teams", "PATCH /v1/teams/{team_id}",
]:
    print(f'[[operations]]\ninclude-name = "{operation}"\nchecks.positive_data_acceptance.enabled = false\n')
PY

# 5. Fuzz. Phases: the documented examples, coverage (boundary and negative
# values derived from the schemas), random fuzzing, and stateful sequences
# that schemathesis infers from the Location headers and ids in responses.
# No --max-time: in schemathesis 4 it makes fuzzing and stateful testing
# repeat until the budget is spent, so the run is bounded by the example
# count, and `timeout` is only a safety net.
# One worker: with two, Python 3.11's `ast` module (used by hypothesis) can
# fail with "AST constructor recursion depth mismatch", a tool error.
st_args=(
  --config-file "$config"
  run "$addr/openapi.json"
  --header "Authorization: Bearer $token"
  --phases examples,coverage,fuzzing,stateful
  --max-examples "$examples"
  --workers 1
  --request-timeout 30
  --generation-database none
  --suppress-health-check too_slow,filter_too_much
  --report junit,vcr
  --report-dir "$report_dir"
  --no-color
)
[ -n "${FUZZ_SEED:-}" ] && st_args+=(--seed "$FUZZ_SEED")

step "schemathesis: $examples examples per operation, every check"
mkdir -p "$report_dir"
status=0
timeout --signal=INT --kill-after=30 "$timeout_secs" "$venv/bin/st" "${st_args[@]}" "$@" || status=$?

# Internal errors are logged with their cause (never sent to the client): show
# them beside schemathesis's 5xx findings.
if grep -q '"level":"ERROR"' "$log"; then
  echo
  echo "internal errors the service logged during the run:"
  grep '"level":"ERROR"' "$log" | head -n 20
fi
if [ "$status" -eq 124 ]; then
  echo "schemathesis did not finish within ${timeout_secs}s" >&2
fi
if [ "$status" -ne 0 ]; then
  echo "API fuzzing found problems (exit $status); reports in $report_dir" >&2
  exit "$status"
fi
echo "API fuzzing: no findings"
