//! Snapshots of computed squad summaries, for "what changed" comparisons.

use chrono::NaiveDate;
use tracing::instrument;
use uuid::Uuid;

use super::{Db, now_text};

/// Snapshots kept per team; older ones are pruned on insert.
pub const SNAPSHOTS_KEPT: i64 = 200;

/// Stores a snapshot unless one exists for the same version and span.
#[instrument(skip_all)]
pub async fn save_snapshot(
    db: &Db,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
    rows_json: &str,
) -> Result<(), sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    let now = now_text();
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT OR IGNORE INTO plan_snapshots (team_id, version, span_from, span_to, rows, created_at)
         VALUES (?, ?, ?, ?, ?, ?)",
        team,
        version,
        from,
        to,
        rows_json,
        now
    )
    .execute(&mut *tx)
    .await?;
    sqlx::query!(
        "DELETE FROM plan_snapshots WHERE team_id = ?1 AND rowid NOT IN (
             SELECT rowid FROM plan_snapshots WHERE team_id = ?1 ORDER BY version DESC, span_from DESC, span_to DESC LIMIT ?2)",
        team,
        SNAPSHOTS_KEPT
    )
    .execute(&mut *tx)
    .await?;
    // The order above is the primary key's, so the pruning reads only that
    // index: ordering by a column stored after the large `rows` text would
    // walk every kept snapshot's overflow pages (about 24 MB for 200 squad
    // summaries) on every insert.
    // Snapshots are no input of any plan: the memo of versions stays valid.
    tx.commit_outside_memo().await
}

/// Whether a snapshot of a version and span is stored (without reading it).
#[instrument(skip_all)]
pub async fn has_snapshot(
    db: &Db,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
) -> Result<bool, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    let found = sqlx::query_scalar!(
        r#"SELECT EXISTS(SELECT 1 FROM plan_snapshots WHERE team_id = ? AND version = ? AND span_from = ? AND span_to = ?) AS "found!: bool""#,
        team,
        version,
        from,
        to
    )
    .fetch_one(&db.read)
    .await?;
    Ok(found)
}

/// The snapshot of a version and span, as stored JSON.
#[instrument(skip_all)]
pub async fn snapshot(
    db: &Db,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
) -> Result<Option<String>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    sqlx::query_scalar!(
        "SELECT rows FROM plan_snapshots WHERE team_id = ? AND version = ? AND span_from = ? AND span_to = ?",
        team,
        version,
        from,
        to
    )
    .fetch_optional(&db.read)
    .await
}

/// Whether any snapshot is the known state of the team just before `version`
/// (the latest snapshot with a version at most `version`), for a span.
#[instrument(skip_all)]
pub async fn latest_before(
    db: &Db,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
) -> Result<Option<(i64, String)>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    let row = sqlx::query!(
        "SELECT version, rows FROM plan_snapshots WHERE team_id = ? AND version < ? AND span_from = ? AND span_to = ?
         ORDER BY version DESC LIMIT 1",
        team,
        version,
        from,
        to
    )
    .fetch_optional(&db.read)
    .await?;
    Ok(row.map(|r| (r.version, r.rows)))
}
