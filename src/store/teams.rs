use tracing::instrument;
use uuid::Uuid;

use super::audit::{self, Action, Actor, Entry};
use super::{Db, Precondition, Write, now_text, parse_instant};
use crate::domain::team::{Team, TeamInput};

fn to_json(t: &Team) -> serde_json::Value {
    serde_json::to_value(t).unwrap_or_default()
}

#[instrument(skip_all)]
pub async fn create(db: &Db, actor: Actor, input: &TeamInput) -> Result<Team, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let now = now_text();
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT INTO teams (id, name, time_zone, version, created_at, updated_at) VALUES (?, ?, ?, 1, ?, ?)",
        id_text,
        input.name,
        input.time_zone,
        now,
        now
    )
    .execute(&mut *tx)
    .await?;
    let team = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(id),
            action: Action::Create,
            entity_type: "team",
            entity_id: id_text,
            before: None,
            after: Some(to_json(&team)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(team)
}

struct TeamRow {
    id: String,
    name: String,
    time_zone: String,
    version: i64,
    created_at: String,
    updated_at: String,
}

impl TeamRow {
    fn into_team(self) -> Result<Team, sqlx::Error> {
        Ok(Team {
            id: super::uuid(&self.id)?,
            name: self.name,
            time_zone: self.time_zone,
            version: self.version,
            created_at: parse_instant(&self.created_at)?,
            updated_at: parse_instant(&self.updated_at)?,
        })
    }
}

async fn fetch_in(
    conn: &mut sqlx::SqliteConnection,
    id: Uuid,
) -> Result<Option<Team>, sqlx::Error> {
    let id = id.to_string();
    sqlx::query_as!(
        TeamRow,
        "SELECT id, name, time_zone, version, created_at, updated_at FROM teams WHERE id = ?",
        id
    )
    .fetch_optional(conn)
    .await?
    .map(TeamRow::into_team)
    .transpose()
}

#[instrument(skip_all)]
pub async fn get(db: &Db, id: Uuid) -> Result<Option<Team>, sqlx::Error> {
    if let Some(team) = db.memo.team(id) {
        return Ok(team);
    }
    let ticket = db.memo.ticket();
    let mut conn = db.read.acquire().await?;
    let team = fetch_in(&mut conn, id).await?;
    db.memo.put_team(ticket, id, team.clone());
    Ok(team)
}

/// Teams ordered by id (creation order), after `after`; `only` limits to one team.
#[instrument(skip_all)]
pub async fn list(
    db: &Db,
    only: Option<Uuid>,
    after: Option<Uuid>,
    limit: u32,
) -> Result<Vec<Team>, sqlx::Error> {
    let only = only.map(|t| t.to_string());
    let after = after.map(|t| t.to_string()).unwrap_or_default();
    let limit = i64::from(limit) + 1;
    sqlx::query_as!(
        TeamRow,
        "SELECT id, name, time_zone, version, created_at, updated_at FROM teams
         WHERE id > ? AND (? IS NULL OR id = ?) ORDER BY id LIMIT ?",
        after,
        only,
        only,
        limit
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(TeamRow::into_team)
    .collect()
}

/// Applies `input` if the stored version still equals `expected` (when given).
#[instrument(skip_all)]
pub async fn update<E: From<sqlx::Error>>(
    db: &Db,
    actor: Actor,
    id: Uuid,
    expected: &Precondition,
    build: impl FnOnce(&Team) -> Result<TeamInput, E>,
) -> Result<Write<Team>, E> {
    // The new state is built from the row read inside the write transaction,
    // so a merge patch never overwrites a concurrent change.
    let mut tx = db.begin_write().await?;
    let Some(before) = fetch_in(&mut tx, id).await? else {
        return Ok(Write::NotFound);
    };
    if !expected.allows(Some(before.version)) {
        return Ok(Write::Stale);
    }
    let input = &build(&before)?;
    let id_text = id.to_string();
    let now = now_text();
    sqlx::query!(
        "UPDATE teams SET name = ?, time_zone = ?, version = version + 1, updated_at = ? WHERE id = ?",
        input.name,
        input.time_zone,
        now,
        id_text
    )
    .execute(&mut *tx)
    .await?;
    let after = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(id),
            action: Action::Update,
            entity_type: "team",
            entity_id: id_text,
            before: Some(to_json(&before)),
            after: Some(to_json(&after)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

/// Deletes a team with everything it holds (athletes, sessions, tokens).
#[instrument(skip_all)]
pub async fn delete(
    db: &Db,
    actor: Actor,
    id: Uuid,
    expected: &Precondition,
) -> Result<Write<()>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let Some(before) = fetch_in(&mut tx, id).await? else {
        return Ok(Write::NotFound);
    };
    if !expected.allows(Some(before.version)) {
        return Ok(Write::Stale);
    }
    let id_text = id.to_string();
    sqlx::query!("DELETE FROM teams WHERE id = ?", id_text)
        .execute(&mut *tx)
        .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(id),
            action: Action::Delete,
            entity_type: "team",
            entity_id: id_text,
            before: Some(to_json(&before)),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(()))
}
