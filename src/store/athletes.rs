//! Athletes and their dated body-mass readings.

use chrono::NaiveDate;
use tracing::instrument;
use uuid::Uuid;

use super::audit::{self, Action, Actor, Entry};
use super::{Db, Precondition, Write, from_json, label, now_text, parse_instant, to_json};
use crate::domain::athlete::{
    Athlete, AthleteInput, AthleteStatus, BodyMass, BodyMassInput, LatestBodyMass,
};
use crate::domain::label_of;

struct AthleteRow {
    id: String,
    team_id: String,
    display_name: String,
    sex: String,
    date_of_birth: String,
    height_cm: f64,
    body_fat_percent: Option<f64>,
    fat_free_mass_kg: Option<f64>,
    vo2max: Option<String>,
    hr_max: Option<f64>,
    hr_rest: Option<f64>,
    training_status: String,
    position_group: Option<String>,
    goal: String,
    goal_rate_kg_per_week: Option<f64>,
    dietary_notes: Option<String>,
    care_flags: String,
    status: String,
    version: i64,
    created_at: String,
    updated_at: String,
    latest_mass_kg: Option<f64>,
    latest_mass_on: Option<String>,
}

impl AthleteRow {
    fn into_athlete(self) -> Result<Athlete, sqlx::Error> {
        let latest_body_mass = match (self.latest_mass_kg, self.latest_mass_on) {
            (Some(kg), Some(on)) => Some(LatestBodyMass {
                body_mass_kg: kg,
                measured_on: super::date(&on)?,
            }),
            _ => None,
        };
        Ok(Athlete {
            id: super::uuid(&self.id)?,
            team_id: super::uuid(&self.team_id)?,
            display_name: self.display_name,
            sex: label(&self.sex)?,
            date_of_birth: super::date(&self.date_of_birth)?,
            height_cm: self.height_cm,
            body_fat_percent: self.body_fat_percent,
            fat_free_mass_kg: self.fat_free_mass_kg,
            vo2max: self.vo2max.as_deref().map(from_json).transpose()?,
            hr_max: self.hr_max,
            hr_rest: self.hr_rest,
            training_status: label(&self.training_status)?,
            position_group: self.position_group,
            goal: label(&self.goal)?,
            goal_rate_kg_per_week: self.goal_rate_kg_per_week,
            dietary_notes: self.dietary_notes,
            health_flags: from_json(&self.care_flags)?,
            status: label(&self.status)?,
            latest_body_mass,
            version: self.version,
            created_at: parse_instant(&self.created_at)?,
            updated_at: parse_instant(&self.updated_at)?,
        })
    }
}

/// Column values of an athlete as stored.
struct Columns {
    sex: String,
    date_of_birth: String,
    vo2max: Option<String>,
    training_status: String,
    goal: String,
    care_flags: String,
    status: String,
}

impl Columns {
    fn of(input: &AthleteInput) -> Self {
        Self {
            sex: label_of(&input.sex),
            date_of_birth: input.date_of_birth.to_string(),
            vo2max: input.vo2max.as_ref().map(to_json),
            training_status: label_of(&input.training_status),
            goal: label_of(&input.goal),
            care_flags: to_json(&input.health_flags),
            status: label_of(&input.status),
        }
    }
}

fn audit_view(a: &Athlete) -> serde_json::Value {
    serde_json::to_value(a).unwrap_or_default()
}

async fn fetch_in(
    conn: &mut sqlx::SqliteConnection,
    id: Uuid,
) -> Result<Option<Athlete>, sqlx::Error> {
    let id = id.to_string();
    sqlx::query_as!(
        AthleteRow,
        r#"SELECT a.id, a.team_id, a.display_name, a.sex, a.date_of_birth, a.height_cm, a.body_fat_percent,
                  a.fat_free_mass_kg, a.vo2max, a.hr_max, a.hr_rest, a.training_status, a.position_group, a.goal,
                  a.goal_rate_kg_per_week, a.dietary_notes, a.care_flags, a.status, a.version, a.created_at, a.updated_at,
                  m.body_mass_kg as "latest_mass_kg?", m.measured_on as "latest_mass_on?"
           FROM athletes a
           LEFT JOIN body_mass_measurements m ON m.id = (
               SELECT id FROM body_mass_measurements WHERE athlete_id = a.id ORDER BY measured_on DESC LIMIT 1)
           WHERE a.id = ?"#,
        id
    )
    .fetch_optional(conn)
    .await?
    .map(AthleteRow::into_athlete)
    .transpose()
}

#[instrument(skip_all)]
pub async fn get(db: &Db, id: Uuid) -> Result<Option<Athlete>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_in(&mut conn, id).await
}

/// Filter for athlete lists.
#[derive(Debug, Clone, Copy)]
pub enum StatusFilter {
    Only(AthleteStatus),
    All,
}

/// A team's athletes by display name, then id, after the `(name, id)` key.
#[instrument(skip_all)]
pub async fn list(
    db: &Db,
    team_id: Uuid,
    status: StatusFilter,
    after: Option<(String, Uuid)>,
    limit: u32,
) -> Result<Vec<Athlete>, sqlx::Error> {
    let team = team_id.to_string();
    let status = match status {
        StatusFilter::Only(s) => Some(label_of(&s)),
        StatusFilter::All => None,
    };
    let (after_name, after_id) = after.map(|(n, i)| (n, i.to_string())).unwrap_or_default();
    let limit = i64::from(limit) + 1;
    sqlx::query_as!(
        AthleteRow,
        r#"SELECT a.id, a.team_id, a.display_name, a.sex, a.date_of_birth, a.height_cm, a.body_fat_percent,
                  a.fat_free_mass_kg, a.vo2max, a.hr_max, a.hr_rest, a.training_status, a.position_group, a.goal,
                  a.goal_rate_kg_per_week, a.dietary_notes, a.care_flags, a.status, a.version, a.created_at, a.updated_at,
                  m.body_mass_kg as "latest_mass_kg?", m.measured_on as "latest_mass_on?"
           FROM athletes a
           LEFT JOIN body_mass_measurements m ON m.id = (
               SELECT id FROM body_mass_measurements WHERE athlete_id = a.id ORDER BY measured_on DESC LIMIT 1)
           WHERE a.team_id = ? AND (? IS NULL OR a.status = ?)
             AND (a.display_name > ? OR (a.display_name = ? AND a.id > ?))
           ORDER BY a.display_name, a.id LIMIT ?"#,
        team,
        status,
        status,
        after_name,
        after_name,
        after_id,
        limit
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(AthleteRow::into_athlete)
    .collect()
}

#[instrument(skip_all)]
pub async fn create(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    input: &AthleteInput,
    first_mass_on: NaiveDate,
) -> Result<Athlete, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let team = team_id.to_string();
    let now = now_text();
    let c = Columns::of(input);
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT INTO athletes (id, team_id, display_name, sex, date_of_birth, height_cm, body_fat_percent,
             fat_free_mass_kg, vo2max, hr_max, hr_rest, training_status, position_group, goal, goal_rate_kg_per_week,
             dietary_notes, care_flags, status, version, created_at, updated_at)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 1, ?, ?)",
        id_text,
        team,
        input.display_name,
        c.sex,
        c.date_of_birth,
        input.height_cm,
        input.body_fat_percent,
        input.fat_free_mass_kg,
        c.vo2max,
        input.hr_max,
        input.hr_rest,
        c.training_status,
        input.position_group,
        c.goal,
        input.goal_rate_kg_per_week,
        input.dietary_notes,
        c.care_flags,
        c.status,
        now,
        now
    )
    .execute(&mut *tx)
    .await?;
    if let Some(first) = &input.initial_body_mass {
        insert_mass(
            &mut tx,
            id,
            &BodyMassInput {
                measured_on: first.measured_on.unwrap_or(first_mass_on),
                body_mass_kg: first.body_mass_kg,
                note: Some("initial reading".into()),
            },
        )
        .await?;
    }
    let athlete = fetch_in(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Create,
            entity_type: "athlete",
            entity_id: id_text,
            before: None,
            after: Some(audit_view(&athlete)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(athlete)
}

#[instrument(skip_all)]
pub async fn update<E: From<sqlx::Error>>(
    db: &Db,
    actor: Actor,
    id: Uuid,
    expected: &Precondition,
    build: impl FnOnce(&Athlete) -> Result<AthleteInput, E>,
) -> Result<Write<Athlete>, E> {
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
    let c = Columns::of(input);
    sqlx::query!(
        "UPDATE athletes SET display_name = ?, sex = ?, date_of_birth = ?, height_cm = ?, body_fat_percent = ?,
             fat_free_mass_kg = ?, vo2max = ?, hr_max = ?, hr_rest = ?, training_status = ?, position_group = ?,
             goal = ?, goal_rate_kg_per_week = ?, dietary_notes = ?, care_flags = ?, status = ?,
             version = version + 1, updated_at = ?
         WHERE id = ?",
        input.display_name,
        c.sex,
        c.date_of_birth,
        input.height_cm,
        input.body_fat_percent,
        input.fat_free_mass_kg,
        c.vo2max,
        input.hr_max,
        input.hr_rest,
        c.training_status,
        input.position_group,
        c.goal,
        input.goal_rate_kg_per_week,
        input.dietary_notes,
        c.care_flags,
        c.status,
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
            entity_type: "athlete",
            entity_id: id_text,
            before: Some(audit_view(&before)),
            after: Some(audit_view(&after)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

/// Erases an athlete and everything stored about them. The audit trail keeps
/// that it happened, not the values.
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
    sqlx::query!("DELETE FROM athletes WHERE id = ?", id_text)
        .execute(&mut *tx)
        .await?;
    // Erasure reaches the trail too: entries about this athlete keep that a
    // change happened, but lose the values (names, body data, health flags).
    sqlx::query!(
        "UPDATE audit_log SET before_json = NULL, after_json = NULL
         WHERE entity_id = ?1 OR entity_id LIKE ?1 || '/%' OR entity_id LIKE '%/' || ?1
            OR json_extract(before_json, '$.athlete_id') = ?1 OR json_extract(after_json, '$.athlete_id') = ?1",
        id_text
    )
    .execute(&mut *tx)
    .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(before.team_id),
            action: Action::Delete,
            entity_type: "athlete",
            entity_id: id_text,
            before: None,
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(()))
}

struct MassRow {
    id: String,
    athlete_id: String,
    measured_on: String,
    body_mass_kg: f64,
    note: Option<String>,
    created_at: String,
}

impl MassRow {
    fn into_mass(self) -> Result<BodyMass, sqlx::Error> {
        Ok(BodyMass {
            id: super::uuid(&self.id)?,
            athlete_id: super::uuid(&self.athlete_id)?,
            measured_on: super::date(&self.measured_on)?,
            body_mass_kg: self.body_mass_kg,
            note: self.note,
            created_at: parse_instant(&self.created_at)?,
        })
    }
}

async fn insert_mass(
    tx: &mut super::Tx,
    athlete_id: Uuid,
    input: &BodyMassInput,
) -> Result<Uuid, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let athlete = athlete_id.to_string();
    let on = input.measured_on.to_string();
    let now = now_text();
    sqlx::query!(
        "INSERT INTO body_mass_measurements (id, athlete_id, measured_on, body_mass_kg, note, created_at)
         VALUES (?, ?, ?, ?, ?, ?)",
        id_text,
        athlete,
        on,
        input.body_mass_kg,
        input.note,
        now
    )
    .execute(&mut **tx)
    .await?;
    Ok(id)
}

async fn fetch_mass(
    conn: &mut sqlx::SqliteConnection,
    id: Uuid,
) -> Result<Option<BodyMass>, sqlx::Error> {
    let id = id.to_string();
    sqlx::query_as!(
        MassRow,
        "SELECT id, athlete_id, measured_on, body_mass_kg, note, created_at FROM body_mass_measurements WHERE id = ?",
        id
    )
    .fetch_optional(conn)
    .await?
    .map(MassRow::into_mass)
    .transpose()
}

#[instrument(skip_all)]
pub async fn add_body_mass(
    db: &Db,
    actor: Actor,
    athlete: &Athlete,
    input: &BodyMassInput,
) -> Result<BodyMass, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let id = insert_mass(&mut tx, athlete.id, input).await?;
    let mass = fetch_mass(&mut tx, id)
        .await?
        .ok_or(sqlx::Error::RowNotFound)?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(athlete.team_id),
            action: Action::Create,
            entity_type: "body_mass",
            entity_id: id.to_string(),
            before: None,
            after: Some(serde_json::to_value(&mass).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(mass)
}

#[instrument(skip_all)]
pub async fn get_body_mass(db: &Db, id: Uuid) -> Result<Option<BodyMass>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_mass(&mut conn, id).await
}

/// Readings of one athlete in a date span, newest first, after `after` (date, id).
#[instrument(skip_all)]
pub async fn list_body_mass(
    db: &Db,
    athlete_id: Uuid,
    from: Option<NaiveDate>,
    to: Option<NaiveDate>,
    after: Option<(NaiveDate, Uuid)>,
    limit: u32,
) -> Result<Vec<BodyMass>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    let from = from
        .map(|d| d.to_string())
        .unwrap_or_else(|| "0000-00-00".into());
    let to = to
        .map(|d| d.to_string())
        .unwrap_or_else(|| "9999-99-99".into());
    let (after_on, after_id) = after
        .map(|(d, i)| (d.to_string(), i.to_string()))
        .unwrap_or_else(|| ("9999-99-99".into(), String::new()));
    let limit = i64::from(limit) + 1;
    sqlx::query_as!(
        MassRow,
        "SELECT id, athlete_id, measured_on, body_mass_kg, note, created_at FROM body_mass_measurements
         WHERE athlete_id = ? AND measured_on >= ? AND measured_on <= ?
           AND (measured_on < ? OR (measured_on = ? AND id < ?))
         ORDER BY measured_on DESC, id DESC LIMIT ?",
        athlete,
        from,
        to,
        after_on,
        after_on,
        after_id,
        limit
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(MassRow::into_mass)
    .collect()
}

#[instrument(skip_all)]
pub async fn delete_body_mass(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    mass: &BodyMass,
) -> Result<(), sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let id = mass.id.to_string();
    sqlx::query!("DELETE FROM body_mass_measurements WHERE id = ?", id)
        .execute(&mut *tx)
        .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Delete,
            entity_type: "body_mass",
            entity_id: id,
            before: Some(serde_json::to_value(mass).unwrap_or_default()),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// All readings of a team's athletes up to `to`, for planning: (athlete, date, kg).
#[instrument(skip_all)]
pub async fn team_body_mass_up_to(
    db: &Db,
    team_id: Uuid,
    to: NaiveDate,
) -> Result<Vec<(Uuid, NaiveDate, f64)>, sqlx::Error> {
    let team = team_id.to_string();
    let to = to.to_string();
    let rows = sqlx::query!(
        "SELECT m.athlete_id, m.measured_on, m.body_mass_kg FROM body_mass_measurements m
         JOIN athletes a ON a.id = m.athlete_id
         WHERE a.team_id = ? AND m.measured_on <= ? ORDER BY m.athlete_id, m.measured_on",
        team,
        to
    )
    .fetch_all(&db.read)
    .await?;
    rows.into_iter()
        .map(|r| {
            Ok((
                super::uuid(&r.athlete_id)?,
                super::date(&r.measured_on)?,
                r.body_mass_kg,
            ))
        })
        .collect()
}

/// Everything stored about one athlete besides the athlete row, for a data
/// export: body-mass readings, participation exceptions and audit entries.
pub struct AthleteRecords {
    pub body_mass: Vec<BodyMass>,
    pub participation: Vec<crate::domain::session::Participation>,
    pub audit: Vec<super::audit::AuditEntry>,
}

#[instrument(skip_all)]
pub async fn records(db: &Db, athlete_id: Uuid) -> Result<AthleteRecords, sqlx::Error> {
    let id = athlete_id.to_string();
    let body_mass = sqlx::query_as!(
        MassRow,
        "SELECT id, athlete_id, measured_on, body_mass_kg, note, created_at FROM body_mass_measurements
         WHERE athlete_id = ? ORDER BY measured_on",
        id
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(MassRow::into_mass)
    .collect::<Result<_, _>>()?;
    let participation = super::sessions::participation_of_athlete(db, athlete_id).await?;
    let audit = super::audit::about(&db.read, &id).await?;
    Ok(AthleteRecords {
        body_mass,
        participation,
        audit,
    })
}
