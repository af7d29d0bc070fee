#!/usr/bin/env bash
# A generated client builds and calls the API: generates a Python client from
# the committed openapi/openapi.json with a general-purpose, open-source
# generator (openapi-python-client, pinned, default settings, warnings are
# errors), installs it into its own virtual environment, starts the service
# on a fresh demo database and calls a few endpoints through the client,
# checking that every answer parses into the generated models.
#
#   scripts/client-check.sh                          # the CI run (release build)
#   GLYCOWEEK_BIN=target/debug/glycoweek scripts/client-check.sh   # reuse a build
set -euo pipefail
cd "$(dirname "$0")/.."

GENERATOR_VERSION=0.29.1
# The generated client's own dependencies, pinned for a reproducible run.
CLIENT_DEPENDENCIES=(httpx==0.28.1 attrs==26.1.0)
target_dir=${CARGO_TARGET_DIR:-target}
venv=$target_dir/client-venv

step() { printf '\n==> %s\n' "$*"; }

if ! "$venv/bin/openapi-python-client" --version 2>/dev/null | grep -qF "$GENERATOR_VERSION"; then
  step "installing openapi-python-client $GENERATOR_VERSION into $venv"
  rm -rf "$venv"
  python3 -m venv "$venv"
  "$venv/bin/pip" install --quiet --disable-pip-version-check \
    "openapi-python-client==$GENERATOR_VERSION" "${CLIENT_DEPENDENCIES[@]}"
fi

work=$(mktemp -d)
service_pid=
cleanup() {
  if [ -n "$service_pid" ] && kill -0 "$service_pid" 2>/dev/null; then
    kill -TERM "$service_pid" 2>/dev/null || true
    wait "$service_pid" 2>/dev/null || true
  fi
  rm -rf "$work"
}
trap cleanup EXIT

step "generating a Python client from openapi/openapi.json"
# Default generator settings, except: no formatter hook (ruff is not part of
# the check), and fixed names for the package.
cat >"$work/config.yml" <<'YAML'
project_name_override: glycoweek-client
package_name_override: glycoweek_client
post_hooks: []
YAML
"$venv/bin/openapi-python-client" generate --path openapi/openapi.json \
  --output-path "$work/client" --meta setup --config "$work/config.yml" --fail-on-warning
"$venv/bin/pip" install --quiet --disable-pip-version-check --no-deps "$work/client"
"$venv/bin/python" -c "import glycoweek_client.api, compileall, sys; sys.exit(0)"
"$venv/bin/python" -m compileall -q "$work/client/glycoweek_client" >/dev/null

binary=${GLYCOWEEK_BIN:-}
if [ -z "$binary" ]; then
  step "cargo build --release"
  SQLX_OFFLINE=true DATABASE_URL='' cargo build --release --locked --quiet
  binary=$target_dir/release/glycoweek
fi

step "starting the service on a fresh demo database"
log=$work/service.log
GLYCOWEEK_RATE_LIMIT_PER_MINUTE=0 RUST_LOG=warn "$binary" --demo \
  --database "$work/demo.db" --listen 127.0.0.1:0 2>"$log" &
service_pid=$!
addr=
for _ in $(seq 1 300); do
  addr=$(grep -o 'listening on http://127\.0\.0\.1:[0-9]*' "$log" | head -n 1 | cut -d' ' -f3 || true)
  [ -n "$addr" ] && break
  kill -0 "$service_pid" 2>/dev/null || { cat "$log" >&2; exit 1; }
  sleep 0.1
done
[ -n "$addr" ] || { echo "the service did not start" >&2; cat "$log" >&2; exit 1; }
token=$(grep -o 'gwk_[A-Za-z0-9_-]*' "$log" | head -n 1)

step "calling the API through the generated client"
"$venv/bin/python" - "$addr" "$token" <<'PY'
import sys

from glycoweek_client import AuthenticatedClient, Client
from glycoweek_client.api.athletes import list_athletes
from glycoweek_client.api.engine import list_activities
from glycoweek_client.api.plans import athlete_plan, changes_feed, team_plan, team_summary
from glycoweek_client.api.service import health
from glycoweek_client.api.teams import create_team, list_teams
from glycoweek_client.models import Problem, TeamInput

base, token = sys.argv[1], sys.argv[2]
anonymous = Client(base_url=base, raise_on_unexpected_status=True)
client = AuthenticatedClient(base_url=base, token=token, raise_on_unexpected_status=True)
calls = 0

def check(label, value, model_name):
    global calls
    calls += 1
    name = type(value).__name__
    assert name == model_name, f"{label}: got {name}, expected {model_name}: {value!r}"
    print(f"ok  {label}: {name}")
    return value

check("GET /health", health.sync(client=anonymous), "Health")

# Lists: one shape, paged with limit and cursor until next_cursor is null.
teams, cursor, pages = [], None, 0
while True:
    page = check("GET /v1/teams", list_teams.sync(client=client, limit=1, cursor=cursor), "PageTeam")
    teams += page.items
    pages += 1
    cursor = page.next_cursor
    if cursor is None:
        break
assert len(teams) == pages >= 2, (len(teams), pages)
team = next(t for t in teams if "senior" in t.name)

athletes = check("GET /v1/teams/{id}/athletes",
                 list_athletes.sync(team.id, client=client, limit=5), "PageAthlete")
assert len(athletes.items) == 5 and isinstance(athletes.next_cursor, str)
activities = check("GET /v1/activities", list_activities.sync(client=client, limit=3), "PageActivity")
assert len(activities.items) == 3
changes = check("GET /v1/teams/{id}/changes", changes_feed.sync(team.id, client=client, limit=2), "PageChange")
assert len(changes.items) == 2

summary = check("GET /v1/teams/{id}/plan/summary", team_summary.sync(team.id, client=client), "TeamSummary")
assert summary.rows and summary.day_totals
plan = check("GET /v1/teams/{id}/plan", team_plan.sync(team.id, client=client), "TeamPlan")
assert plan.sources, "sources table"
one = check("GET /v1/athletes/{id}/plan",
            athlete_plan.sync(athletes.items[0].id, client=client), "AthletePlan")
assert one.time_zone == team.time_zone
occasion = one.plan.days[0].plan.eating_occasions[0]
assert occasion.time[-6] in "+-", f"local time with its offset: {occasion.time}"

created = check("POST /v1/teams",
                create_team.sync(client=client, body=TeamInput(name="Client check", time_zone="Pacific/Auckland")),
                "Team")
assert created.time_zone == "Pacific/Auckland"
refused = create_team.sync(client=client, body=TeamInput(name="Nowhere", time_zone="Mars/Olympus_Mons"))
check("POST /v1/teams with an unknown zone", refused, "Problem")
assert refused.status == 422 and refused.errors[0].field == "time_zone"
print(f"generated client: {calls} calls, every answer parsed into its model")
PY
echo "client check passed"
