#!/usr/bin/env bash
# Regenerates the committed offline query data in .sqlx/ (what `cargo sqlx
# prepare` does), or with --check verifies it is current. Needs only sqlite3
# and cargo: the query macros write their data when SQLX_OFFLINE_DIR is set
# and they are compiled against a live, migrated database.
set -euo pipefail
cd "$(dirname "$0")/.."

mode=${1:-write}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

db="$work/schema.db"
for m in migrations/*.sql; do sqlite3 "$db" < "$m"; done

out="$work/sqlx"
mkdir -p "$out"
# Force the crate's macros to expand again, against the live schema.
touch src/lib.rs
SQLX_OFFLINE=false SQLX_OFFLINE_DIR="$out" DATABASE_URL="sqlite:$db" \
  cargo check --quiet --lib

if [ "$mode" = "--check" ]; then
  if diff -r -q "$out" .sqlx >/dev/null; then
    echo "sqlx offline data is current ($(ls "$out" | wc -l) queries)"
  else
    echo "sqlx offline data in .sqlx/ is stale: run scripts/sqlx-prepare.sh and commit .sqlx/" >&2
    diff -r -q "$out" .sqlx >&2 || true
    exit 1
  fi
else
  rm -rf .sqlx
  cp -r "$out" .sqlx
  echo "wrote $(ls .sqlx | wc -l) queries to .sqlx/"
fi
