//! Planned sessions, bulk week imports, and participation exceptions.

use chrono::{NaiveDate, NaiveTime};
use tracing::instrument;
use uuid::Uuid;

use super::audit::{self, Action, Actor, Entry};
use super::{Db, Precondition, Tx, Write, from_json, label, now_text, parse_instant, to_json};
use crate::domain::label_of;
use crate::domain::session::{
    DateSpan, ImportResult, Participation, ParticipationInput, Session, SessionInput, total_minutes,
};

struct SessionRow {
    id: String,
    team_id: String,
    local_date: String,
    start_time: String,
    kind: String,
    title: String,
    key_session: i64,
    train_low: i64,
    carbohydrate_loading: i64,
    notes: Option<String>,
    segments: String,
    version: i64,
    created_at: String,
    updated_at: String,
}

impl SessionRow {
    fn into_session(self) -> Result<Session, sqlx::Error> {
        let segments: Vec<crate::engine::profile::Segment> = from_json(&self.segments)?;
        Ok(Session {
            id: super::uuid(&self.id)?,
            team_id: super::uuid(&self.team_id)?,
            local_date: super::date(&self.local_date)?,
            start_time: NaiveTime::parse_from_str(&self.start_time, "%H:%M")
                .map_err(|e| sqlx::Error::Decode(Box::new(e)))?,
            kind: label(&self.kind)?,
            title: self.title,
            key_session: self.key_session != 0,
            train_low: self.train_low != 0,
            carbohydrate_loading: self.carbohydrate_loading != 0,
            notes: self.notes,
            total_minutes: total_minutes(&segments),
            segments,
            version: self.version,
            created_at: parse_instant(&self.created_at)?,
            updated_at: parse_instant(&self.updated_at)?,
        })
    }
}

fn audit_view(s: &Session) -> serde_json::Value {
    serde_json::to_value(s).unwrap_or_default()
}

async fn fetch_in(
    conn: &mut sqlx::SqliteConnection,
    id: Uuid,
) -> Result<Option<Session>, sqlx::Error> {
    let id = id.to_string();
    sqlx::query_as!(
        SessionRow,
        "SELECT id, team_id, local_date, start_time, kind, title, key_session, train_low, carbohydrate_loading,
                notes, segments, version, created_at, updated_at
         FROM sessions WHERE id = ?",
        id
    )
    .fetch_optional(conn)
    .await?
    .map(SessionRow::into_session)
    .transpose()
}

#[instrument(skip_all)]
pub async fn get(db: &Db, id: Uuid) -> Result<Option<Session>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_in(&mut conn, id).await
}

/// Sort key of the session list: date, start time, id.
pub type SessionKey = (NaiveDate, String, Uuid);

pub fn key_of(s: &Session) -> SessionKey {
    (s.local_date, s.start_time.format("%H:%M").to_string(), s.id)
}

/// A team's sessions in a date span, in calendar order, after `after`.
#[instrument(skip_all)]
pub async fn list(
    db: &Db,
    team_id: Uuid,
    span: (NaiveDate, NaiveDate),
    kind: Option<String>,
    after: Option<SessionKey>,
    limit: u32,
) -> Result<Vec<Session>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    let (after_date, after_time, after_id) = after
        .map(|(d, t, i)| (d.to_string(), t, i.to_string()))
        .unwrap_or_else(|| (String::new(), String::new(), String::new()));
    let limit = i64::from(limit) + 1;
    sqlx::query_as!(
        SessionRow,
        "SELECT id, team_id, local_date, start_time, kind, title, key_session, train_low, carbohydrate_loading,
                notes, segments, version, created_at, updated_at
         FROM sessions
         WHERE team_id = ? AND local_date >= ? AND local_date <= ? AND (? IS NULL OR kind = ?)
           AND (local_date, start_time, id) > (?, ?, ?)
         ORDER BY local_date, start_time, id LIMIT ?",
        team,
        from,
        to,
        kind,
        kind,
        after_date,
        after_time,
        after_id,
        limit
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(SessionRow::into_session)
    .collect()
}

/// Every session of a team in a date span (for planning), in calendar order.
#[instrument(skip_all)]
pub async fn all_in_span(
    db: &Db,
    team_id: Uuid,
    span: (NaiveDate, NaiveDate),
) -> Result<Vec<Session>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    sqlx::query_as!(
        SessionRow,
        "SELECT id, team_id, local_date, start_time, kind, title, key_session, train_low, carbohydrate_loading,
                notes, segments, version, created_at, updated_at
         FROM sessions WHERE team_id = ? AND local_date >= ? AND local_date <= ?
         ORDER BY local_date, start_time, id",
        team,
        from,
        to
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(SessionRow::into_session)
    .collect()
}

async fn insert(tx: &mut Tx, team_id: Uuid, input: &SessionInput) -> Result<Uuid, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let team = team_id.to_string();
    let date = input.local_date.to_string();
    let start = input.start_time.format("%H:%M").to_string();
    let kind = label_of(&input.kind);
    let segments = to_json(&input.segments);
    let now = now_text();
    sqlx::query!(
        "INSERT INTO sessions (id, team_id, local_date, start_time, kind, title, key_session, train_low,
             carbohydrate_loading, notes, segments, version, created_at, updated_at)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?)",
        id_text,
        team,
        date,
        start,
        kind,
        input.title,
        input.key_session,
        input.train_low,
        input.carbohydrate_loading,
        input.notes,
        segments,
        now,
        now
    )
    .execute(&mut **tx)
    .await?;
    Ok(id)
}

#[instrument(skip_all)]
pub async fn create(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    input: &SessionInput,
) -> Result<Session, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let id = insert(&mut tx, team_id, input).await?;
    let session = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Create,
            entity_type: "session",
            entity_id: id.to_string(),
            before: None,
            after: Some(audit_view(&session)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(session)
}

/// Imports sessions all or nothing: one transaction, committed only after
/// every row (and the optional replacement of a date span) succeeded.
#[instrument(skip_all, fields(sessions = sessions.len()))]
pub async fn import(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    replace: Option<DateSpan>,
    sessions: &[SessionInput],
) -> Result<ImportResult, sqlx::Error> {
    let team = team_id.to_string();
    let mut tx = db.begin_write().await?;
    let mut deleted = 0;
    if let Some(span) = replace {
        let from = span.from.to_string();
        let to = span.to.to_string();
        deleted = sqlx::query!(
            "DELETE FROM sessions WHERE team_id = ? AND local_date >= ? AND local_date <= ?",
            team,
            from,
            to
        )
        .execute(&mut *tx)
        .await?
        .rows_affected();
    }
    let mut created = Vec::with_capacity(sessions.len());
    for input in sessions {
        let id = insert(&mut tx, team_id, input).await?;
        created.push(
            fetch_in(&mut tx, id)
                .await?
                .ok_or(sqlx::Error::RowNotFound)?,
        );
    }
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Import,
            entity_type: "session_import",
            entity_id: team,
            before: replace.map(|s| serde_json::json!({ "replaced_span": s, "deleted": deleted })),
            after: Some(serde_json::json!({
                "created": created.iter().map(|s| s.id).collect::<Vec<_>>()
            })),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(ImportResult { deleted, created })
}

#[instrument(skip_all)]
pub async fn update<E: From<sqlx::Error>>(
    db: &Db,
    actor: Actor,
    id: Uuid,
    expected: &Precondition,
    build: impl FnOnce(&Session) -> Result<SessionInput, E>,
) -> Result<Write<Session>, E> {
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
    let date = input.local_date.to_string();
    let start = input.start_time.format("%H:%M").to_string();
    let kind = label_of(&input.kind);
    let segments = to_json(&input.segments);
    let now = now_text();
    sqlx::query!(
        "UPDATE sessions SET local_date = ?, start_time = ?, kind = ?, title = ?, key_session = ?, train_low = ?,
             carbohydrate_loading = ?, notes = ?, segments = ?, version = version + 1, updated_at = ?
         WHERE id = ?",
        date,
        start,
        kind,
        input.title,
        input.key_session,
        input.train_low,
        input.carbohydrate_loading,
        input.notes,
        segments,
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
            team_id: Some(before.team_id),
            action: Action::Update,
            entity_type: "session",
            entity_id: id_text,
            before: Some(audit_view(&before)),
            after: Some(audit_view(&after)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

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
    sqlx::query!("DELETE FROM sessions WHERE id = ?", id_text)
        .execute(&mut *tx)
        .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(before.team_id),
            action: Action::Delete,
            entity_type: "session",
            entity_id: id_text,
            before: Some(audit_view(&before)),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(()))
}

struct ParticipationRow {
    session_id: String,
    athlete_id: String,
    mode: String,
    minutes: Option<f64>,
    portion: Option<String>,
    segments: Option<String>,
    note: Option<String>,
    version: i64,
    updated_at: String,
}

impl ParticipationRow {
    fn into_participation(self) -> Result<Participation, sqlx::Error> {
        Ok(Participation {
            session_id: super::uuid(&self.session_id)?,
            athlete_id: super::uuid(&self.athlete_id)?,
            mode: label(&self.mode)?,
            minutes: self.minutes,
            portion: self.portion.as_deref().map(label).transpose()?,
            segments: self.segments.as_deref().map(from_json).transpose()?,
            note: self.note,
            version: self.version,
            updated_at: parse_instant(&self.updated_at)?,
        })
    }
}

async fn fetch_participation(
    conn: &mut sqlx::SqliteConnection,
    session_id: Uuid,
    athlete_id: Uuid,
) -> Result<Option<Participation>, sqlx::Error> {
    let session = session_id.to_string();
    let athlete = athlete_id.to_string();
    sqlx::query_as!(
        ParticipationRow,
        "SELECT session_id, athlete_id, mode, minutes, portion, segments, note, version, updated_at
         FROM participation WHERE session_id = ? AND athlete_id = ?",
        session,
        athlete
    )
    .fetch_optional(conn)
    .await?
    .map(ParticipationRow::into_participation)
    .transpose()
}

#[instrument(skip_all)]
pub async fn get_participation(
    db: &Db,
    session_id: Uuid,
    athlete_id: Uuid,
) -> Result<Option<Participation>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_participation(&mut conn, session_id, athlete_id).await
}

/// The participation exceptions of one session.
#[instrument(skip_all)]
pub async fn list_participation(
    db: &Db,
    session_id: Uuid,
) -> Result<Vec<Participation>, sqlx::Error> {
    let session = session_id.to_string();
    sqlx::query_as!(
        ParticipationRow,
        "SELECT session_id, athlete_id, mode, minutes, portion, segments, note, version, updated_at
         FROM participation WHERE session_id = ? ORDER BY athlete_id",
        session
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(ParticipationRow::into_participation)
    .collect()
}

/// Every participation exception of a team's sessions in a span (for planning).
#[instrument(skip_all)]
pub async fn participation_in_span(
    db: &Db,
    team_id: Uuid,
    span: (NaiveDate, NaiveDate),
) -> Result<Vec<Participation>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    sqlx::query_as!(
        ParticipationRow,
        "SELECT p.session_id, p.athlete_id, p.mode, p.minutes, p.portion, p.segments, p.note, p.version, p.updated_at
         FROM participation p JOIN sessions s ON s.id = p.session_id
         WHERE s.team_id = ? AND s.local_date >= ? AND s.local_date <= ?",
        team,
        from,
        to
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(ParticipationRow::into_participation)
    .collect()
}

/// Sets an athlete's participation in a session (insert or replace).
#[instrument(skip_all)]
pub async fn put_participation(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    session_id: Uuid,
    athlete_id: Uuid,
    expected: &Precondition,
    input: &ParticipationInput,
) -> Result<Write<Participation>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let before = fetch_participation(&mut tx, session_id, athlete_id).await?;
    // With If-Match, an absent row has no version to match.
    if !expected.allows(before.as_ref().map(|p| p.version)) {
        return Ok(Write::Stale);
    }
    let session = session_id.to_string();
    let athlete = athlete_id.to_string();
    let mode = label_of(&input.mode);
    let portion = input.portion.as_ref().map(label_of);
    let segments = input.segments.as_ref().map(to_json);
    let now = now_text();
    sqlx::query!(
        "INSERT INTO participation (session_id, athlete_id, mode, minutes, portion, segments, note, version, updated_at)
         VALUES (?, ?, ?, ?, ?, ?, ?, 1, ?)
         ON CONFLICT (session_id, athlete_id) DO UPDATE SET mode = excluded.mode, minutes = excluded.minutes,
             portion = excluded.portion, segments = excluded.segments, note = excluded.note,
             version = participation.version + 1, updated_at = excluded.updated_at",
        session,
        athlete,
        mode,
        input.minutes,
        portion,
        segments,
        input.note,
        now
    )
    .execute(&mut *tx)
    .await?;
    let after = fetch_participation(&mut tx, session_id, athlete_id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: if before.is_some() {
                Action::Update
            } else {
                Action::Create
            },
            entity_type: "participation",
            entity_id: format!("{session_id}/{athlete_id}"),
            before: before.map(|b| serde_json::to_value(b).unwrap_or_default()),
            after: Some(serde_json::to_value(&after).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

/// Removes an exception: the athlete takes full part again.
#[instrument(skip_all)]
pub async fn delete_participation(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    session_id: Uuid,
    athlete_id: Uuid,
    expected: &Precondition,
) -> Result<Write<()>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let Some(before) = fetch_participation(&mut tx, session_id, athlete_id).await? else {
        return Ok(Write::NotFound);
    };
    if !expected.allows(Some(before.version)) {
        return Ok(Write::Stale);
    }
    let session = session_id.to_string();
    let athlete = athlete_id.to_string();
    sqlx::query!(
        "DELETE FROM participation WHERE session_id = ? AND athlete_id = ?",
        session,
        athlete
    )
    .execute(&mut *tx)
    .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Delete,
            entity_type: "participation",
            entity_id: format!("{session_id}/{athlete_id}"),
            before: Some(serde_json::to_value(&before).unwrap_or_default()),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(()))
}

/// Every participation exception of one athlete.
#[instrument(skip_all)]
pub async fn participation_of_athlete(
    db: &Db,
    athlete_id: Uuid,
) -> Result<Vec<Participation>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    sqlx::query_as!(
        ParticipationRow,
        "SELECT session_id, athlete_id, mode, minutes, portion, segments, note, version, updated_at
         FROM participation WHERE athlete_id = ? ORDER BY session_id",
        athlete
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(ParticipationRow::into_participation)
    .collect()
}
