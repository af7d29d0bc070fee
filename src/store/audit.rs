//! Append-only audit trail, written inside the transaction of the change it
//! records, so a change and its trail commit or vanish together.

use chrono::{DateTime, Utc};
use serde::Serialize;
use serde_json::Value;
use tracing::instrument;
use utoipa::ToSchema;
use uuid::Uuid;

use super::{Tx, now_text};

/// Who made a change: the token's id (none for the command line).
#[derive(Debug, Clone, Copy)]
pub struct Actor {
    pub token_id: Option<Uuid>,
}

#[derive(Debug, Clone, Copy, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Action {
    Create,
    Update,
    Delete,
    Import,
    Revoke,
}

pub struct Entry<'a> {
    pub team_id: Option<Uuid>,
    pub action: Action,
    pub entity_type: &'a str,
    pub entity_id: String,
    pub before: Option<Value>,
    pub after: Option<Value>,
}

#[instrument(skip_all, fields(entity = entry.entity_type))]
pub async fn record(tx: &mut Tx, actor: Actor, entry: Entry<'_>) -> Result<(), sqlx::Error> {
    let now = now_text();
    let token_id = actor.token_id.map(|t| t.to_string());
    let team_id = entry.team_id.map(|t| t.to_string());
    let action = crate::domain::label_of(&entry.action);
    let before = entry.before.map(|v| v.to_string());
    let after = entry.after.map(|v| v.to_string());
    sqlx::query!(
        "INSERT INTO audit_log (occurred_at, token_id, team_id, action, entity_type, entity_id, before_json, after_json)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
        now,
        token_id,
        team_id,
        action,
        entry.entity_type,
        entry.entity_id,
        before,
        after
    )
    .execute(&mut **tx)
    .await?;
    Ok(())
}

/// One recorded change.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct AuditEntry {
    pub seq: i64,
    pub occurred_at: DateTime<Utc>,
    /// The token that made the change; absent for the command line.
    pub token_id: Option<Uuid>,
    pub team_id: Option<Uuid>,
    pub action: String,
    pub entity_type: String,
    pub entity_id: String,
    #[schema(value_type = Option<Object>)]
    pub before: Option<Value>,
    #[schema(value_type = Option<Object>)]
    pub after: Option<Value>,
}

struct AuditRow {
    seq: i64,
    occurred_at: String,
    token_id: Option<String>,
    team_id: Option<String>,
    action: String,
    entity_type: String,
    entity_id: String,
    before_json: Option<String>,
    after_json: Option<String>,
}

impl AuditRow {
    fn into_entry(self) -> Result<AuditEntry, sqlx::Error> {
        Ok(AuditEntry {
            seq: self.seq,
            occurred_at: super::parse_instant(&self.occurred_at)?,
            token_id: self.token_id.as_deref().map(super::uuid).transpose()?,
            team_id: self.team_id.as_deref().map(super::uuid).transpose()?,
            action: self.action,
            entity_type: self.entity_type,
            entity_id: self.entity_id,
            before: self
                .before_json
                .as_deref()
                .map(super::from_json)
                .transpose()?,
            after: self
                .after_json
                .as_deref()
                .map(super::from_json)
                .transpose()?,
        })
    }
}

/// Entries after `after_seq`, oldest first; `team` limits to one team.
#[instrument(skip_all)]
pub async fn list(
    pool: &sqlx::SqlitePool,
    team: Option<Uuid>,
    after_seq: i64,
    limit: u32,
) -> Result<Vec<AuditEntry>, sqlx::Error> {
    let team = team.map(|t| t.to_string());
    let limit = i64::from(limit);
    sqlx::query_as!(
        AuditRow,
        r#"SELECT seq as "seq!", occurred_at, token_id, team_id, action, entity_type, entity_id, before_json, after_json
           FROM audit_log
           WHERE seq > ? AND (? IS NULL OR team_id = ?)
           ORDER BY seq LIMIT ?"#,
        after_seq,
        team,
        team,
        limit
    )
    .fetch_all(pool)
    .await?
    .into_iter()
    .map(AuditRow::into_entry)
    .collect()
}

/// Entity types whose changes never change a plan: access credentials.
/// Creating a token or a calendar-feed link must not throw away every
/// client's cached plan.
pub const NOT_PLAN_INPUTS: [&str; 2] = ["token", "calendar_feed"];
/// [`team_version`] through the read memo: no database round trip while
/// nothing was written since it was last read.
pub async fn team_version_memo(db: &super::Db, team: Uuid) -> Result<i64, sqlx::Error> {
    if let Some(version) = db.memo.version(team) {
        return Ok(version);
    }
    let ticket = db.memo.ticket();
    let version = team_version(&db.read, team).await?;
    db.memo.put_version(ticket, team, version);
    Ok(version)
}

/// The team's input version: the sequence number of its latest recorded
/// change to an input of its plan. Every write that can change a plan
/// records an entry with the team id, so a plan's ETag can be derived
/// without computing the plan.
#[instrument(skip_all)]
pub async fn team_version(pool: &sqlx::SqlitePool, team: Uuid) -> Result<i64, sqlx::Error> {
    let team = team.to_string();
    // Keep this list equal to NOT_PLAN_INPUTS (a unit test checks it).
    let seq = sqlx::query_scalar!(
        r#"SELECT COALESCE(MAX(seq), 0) as "seq!: i64" FROM audit_log
           WHERE team_id = ? AND entity_type NOT IN ('token', 'calendar_feed')"#,
        team
    )
    .fetch_one(pool)
    .await?;
    Ok(seq)
}

/// One change in a team's changes feed (what changed, never the values).
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct Change {
    /// Pass the last `seq` you processed as `since` to get what came after.
    pub seq: i64,
    pub occurred_at: DateTime<Utc>,
    pub action: String,
    pub entity_type: String,
    pub entity_id: String,
}

/// Changes of a team after `since`, oldest first.
#[instrument(skip_all)]
pub async fn changes(
    pool: &sqlx::SqlitePool,
    team: Uuid,
    since: i64,
    limit: u32,
) -> Result<Vec<Change>, sqlx::Error> {
    let team = team.to_string();
    let limit = i64::from(limit);
    let rows = sqlx::query!(
        r#"SELECT seq as "seq!", occurred_at, action, entity_type, entity_id
           FROM audit_log WHERE team_id = ? AND seq > ? ORDER BY seq LIMIT ?"#,
        team,
        since,
        limit
    )
    .fetch_all(pool)
    .await?;
    rows.into_iter()
        .map(|r| {
            Ok(Change {
                seq: r.seq,
                occurred_at: super::parse_instant(&r.occurred_at)?,
                action: r.action,
                entity_type: r.entity_type,
                entity_id: r.entity_id,
            })
        })
        .collect()
}

/// Audit entries about one athlete (the same entries erasure blanks).
#[instrument(skip_all)]
pub async fn about(
    pool: &sqlx::SqlitePool,
    athlete_id: &str,
) -> Result<Vec<AuditEntry>, sqlx::Error> {
    sqlx::query_as!(
        AuditRow,
        r#"SELECT seq as "seq!", occurred_at, token_id, team_id, action, entity_type, entity_id, before_json, after_json
           FROM audit_log
           WHERE entity_id = ?1 OR entity_id LIKE ?1 || '/%' OR entity_id LIKE '%/' || ?1
              OR json_extract(before_json, '$.athlete_id') = ?1 OR json_extract(after_json, '$.athlete_id') = ?1
           ORDER BY seq"#,
        athlete_id
    )
    .fetch_all(pool)
    .await?
    .into_iter()
    .map(AuditRow::into_entry)
    .collect()
}

#[cfg(test)]
mod tests {
    #[test]
    fn the_version_query_skips_exactly_the_non_plan_inputs() {
        let source = include_str!("audit.rs");
        let listed = super::NOT_PLAN_INPUTS
            .iter()
            .map(|t| format!("'{t}'"))
            .collect::<Vec<_>>()
            .join(", ");
        assert!(source.contains(&format!("NOT IN ({listed})")));
    }
}
