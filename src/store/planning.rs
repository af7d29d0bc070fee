//! What the planner stores beside the week: dietitian pins per athlete and
//! date, sweat-rate tests, a team's plan settings, and calendar-feed links.

use std::collections::HashMap;

use chrono::{DateTime, NaiveDate, Utc};
use rand::RngCore;
use serde::{Deserialize, Serialize};
use tracing::instrument;
use utoipa::ToSchema;
use uuid::Uuid;

use super::audit::{self, Action, Actor, Entry};
use super::{Db, Precondition, Write, from_json, now_text, parse_instant, to_json};
use crate::engine::day::settings::{DayPins, PlanSettings};
use crate::engine::hydration::SweatRateInput;

/// A dietitian's pinned targets for an athlete on a date.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct DayPin {
    pub athlete_id: Uuid,
    pub local_date: NaiveDate,
    /// Daily carbohydrate, g/kg.
    pub carbohydrate_g_per_kg: Option<f64>,
    /// Daily protein, g/kg.
    pub protein_g_per_kg: Option<f64>,
    /// Daily energy intake, kcal.
    pub energy_kcal: Option<f64>,
    pub note: Option<String>,
    pub version: i64,
    pub updated_at: DateTime<Utc>,
}

impl DayPin {
    pub fn pins(&self) -> DayPins {
        DayPins {
            carbohydrate_g_per_kg: self.carbohydrate_g_per_kg,
            protein_g_per_kg: self.protein_g_per_kg,
            energy_kcal: self.energy_kcal,
        }
    }
}

struct PinRow {
    athlete_id: String,
    local_date: String,
    carbohydrate_g_per_kg: Option<f64>,
    protein_g_per_kg: Option<f64>,
    energy_kcal: Option<f64>,
    note: Option<String>,
    version: i64,
    updated_at: String,
}

impl PinRow {
    fn into_pin(self) -> Result<DayPin, sqlx::Error> {
        Ok(DayPin {
            athlete_id: super::uuid(&self.athlete_id)?,
            local_date: super::date(&self.local_date)?,
            carbohydrate_g_per_kg: self.carbohydrate_g_per_kg,
            protein_g_per_kg: self.protein_g_per_kg,
            energy_kcal: self.energy_kcal,
            note: self.note,
            version: self.version,
            updated_at: parse_instant(&self.updated_at)?,
        })
    }
}

async fn fetch_pin(
    conn: &mut sqlx::SqliteConnection,
    athlete_id: Uuid,
    date: NaiveDate,
) -> Result<Option<DayPin>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    let date = date.to_string();
    sqlx::query_as!(
        PinRow,
        "SELECT athlete_id, local_date, carbohydrate_g_per_kg, protein_g_per_kg, energy_kcal, note, version, updated_at
         FROM day_pins WHERE athlete_id = ? AND local_date = ?",
        athlete,
        date
    )
    .fetch_optional(conn)
    .await?
    .map(PinRow::into_pin)
    .transpose()
}

/// Pins of one athlete in a span, by date.
#[instrument(skip_all)]
pub async fn pins_for_athlete(
    db: &Db,
    athlete_id: Uuid,
    span: (NaiveDate, NaiveDate),
) -> Result<Vec<DayPin>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    sqlx::query_as!(
        PinRow,
        "SELECT athlete_id, local_date, carbohydrate_g_per_kg, protein_g_per_kg, energy_kcal, note, version, updated_at
         FROM day_pins WHERE athlete_id = ? AND local_date >= ? AND local_date <= ? ORDER BY local_date",
        athlete,
        from,
        to
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(PinRow::into_pin)
    .collect()
}

/// Pins of a team's athletes in a span, keyed by (athlete, date).
#[instrument(skip_all)]
pub async fn pins_for_team(
    db: &Db,
    team_id: Uuid,
    span: (NaiveDate, NaiveDate),
) -> Result<HashMap<(Uuid, NaiveDate), DayPins>, sqlx::Error> {
    let team = team_id.to_string();
    let from = span.0.to_string();
    let to = span.1.to_string();
    sqlx::query_as!(
        PinRow,
        "SELECT p.athlete_id, p.local_date, p.carbohydrate_g_per_kg, p.protein_g_per_kg, p.energy_kcal, p.note,
                p.version, p.updated_at
         FROM day_pins p JOIN athletes a ON a.id = p.athlete_id
         WHERE a.team_id = ? AND p.local_date >= ? AND p.local_date <= ?",
        team,
        from,
        to
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(|row| row.into_pin().map(|p| ((p.athlete_id, p.local_date), p.pins())))
    .collect()
}

#[instrument(skip_all)]
pub async fn get_pin(
    db: &Db,
    athlete_id: Uuid,
    date: NaiveDate,
) -> Result<Option<DayPin>, sqlx::Error> {
    let mut conn = db.read.acquire().await?;
    fetch_pin(&mut conn, athlete_id, date).await
}

#[instrument(skip_all)]
#[allow(clippy::too_many_arguments)]
pub async fn put_pin(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
    date: NaiveDate,
    expected: &Precondition,
    pins: &DayPins,
    note: Option<&str>,
) -> Result<Write<DayPin>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let before = fetch_pin(&mut tx, athlete_id, date).await?;
    if !expected.allows(before.as_ref().map(|p| p.version)) {
        return Ok(Write::Stale);
    }
    let athlete = athlete_id.to_string();
    let on = date.to_string();
    let now = now_text();
    sqlx::query!(
        "INSERT INTO day_pins (athlete_id, local_date, carbohydrate_g_per_kg, protein_g_per_kg, energy_kcal, note, version, updated_at)
         VALUES (?, ?, ?, ?, ?, ?, 1, ?)
         ON CONFLICT (athlete_id, local_date) DO UPDATE SET carbohydrate_g_per_kg = excluded.carbohydrate_g_per_kg,
             protein_g_per_kg = excluded.protein_g_per_kg, energy_kcal = excluded.energy_kcal, note = excluded.note,
             version = day_pins.version + 1, updated_at = excluded.updated_at",
        athlete,
        on,
        pins.carbohydrate_g_per_kg,
        pins.protein_g_per_kg,
        pins.energy_kcal,
        note,
        now
    )
    .execute(&mut *tx)
    .await?;
    let after = fetch_pin(&mut tx, athlete_id, date)
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
            entity_type: "day_pin",
            entity_id: format!("{athlete_id}/{date}"),
            before: before.map(|b| serde_json::to_value(b).unwrap_or_default()),
            after: Some(serde_json::to_value(&after).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(after))
}

#[instrument(skip_all)]
pub async fn delete_pin(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
    date: NaiveDate,
    expected: &Precondition,
) -> Result<Write<()>, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let Some(before) = fetch_pin(&mut tx, athlete_id, date).await? else {
        return Ok(Write::NotFound);
    };
    if !expected.allows(Some(before.version)) {
        return Ok(Write::Stale);
    }
    let athlete = athlete_id.to_string();
    let on = date.to_string();
    sqlx::query!(
        "DELETE FROM day_pins WHERE athlete_id = ? AND local_date = ?",
        athlete,
        on
    )
    .execute(&mut *tx)
    .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Delete,
            entity_type: "day_pin",
            entity_id: format!("{athlete_id}/{date}"),
            before: Some(serde_json::to_value(&before).unwrap_or_default()),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(Write::Done(()))
}

/// A stored sweat-rate test.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct SweatTest {
    pub id: Uuid,
    pub athlete_id: Uuid,
    pub tested_on: NaiveDate,
    pub body_mass_before_kg: f64,
    pub body_mass_after_kg: f64,
    pub fluid_drunk_l: f64,
    pub urine_l: f64,
    pub duration_hours: f64,
    pub note: Option<String>,
    pub created_at: DateTime<Utc>,
}

impl SweatTest {
    /// The measurements, as the sweat-rate calculator takes them.
    pub fn input(&self) -> SweatRateInput {
        SweatRateInput {
            body_mass_before_kg: self.body_mass_before_kg,
            body_mass_after_kg: self.body_mass_after_kg,
            fluid_drunk_l: self.fluid_drunk_l,
            urine_l: self.urine_l,
            duration_hours: self.duration_hours,
        }
    }
}

struct SweatRow {
    id: String,
    athlete_id: String,
    tested_on: String,
    body_mass_before_kg: f64,
    body_mass_after_kg: f64,
    fluid_drunk_l: f64,
    urine_l: f64,
    duration_hours: f64,
    note: Option<String>,
    created_at: String,
}

impl SweatRow {
    fn into_test(self) -> Result<SweatTest, sqlx::Error> {
        Ok(SweatTest {
            id: super::uuid(&self.id)?,
            athlete_id: super::uuid(&self.athlete_id)?,
            tested_on: super::date(&self.tested_on)?,
            body_mass_before_kg: self.body_mass_before_kg,
            body_mass_after_kg: self.body_mass_after_kg,
            fluid_drunk_l: self.fluid_drunk_l,
            urine_l: self.urine_l,
            duration_hours: self.duration_hours,
            note: self.note,
            created_at: parse_instant(&self.created_at)?,
        })
    }
}

#[instrument(skip_all)]
pub async fn add_sweat_test(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
    tested_on: NaiveDate,
    input: &SweatRateInput,
    note: Option<&str>,
) -> Result<SweatTest, sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let athlete = athlete_id.to_string();
    let on = tested_on.to_string();
    let now = now_text();
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT INTO sweat_tests (id, athlete_id, tested_on, body_mass_before_kg, body_mass_after_kg, fluid_drunk_l,
             urine_l, duration_hours, note, created_at)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
        id_text,
        athlete,
        on,
        input.body_mass_before_kg,
        input.body_mass_after_kg,
        input.fluid_drunk_l,
        input.urine_l,
        input.duration_hours,
        note,
        now
    )
    .execute(&mut *tx)
    .await?;
    let test = sqlx::query_as!(
        SweatRow,
        "SELECT id, athlete_id, tested_on, body_mass_before_kg, body_mass_after_kg, fluid_drunk_l, urine_l,
                duration_hours, note, created_at FROM sweat_tests WHERE id = ?",
        id_text
    )
    .fetch_one(&mut *tx)
    .await?
    .into_test()?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Create,
            entity_type: "sweat_test",
            entity_id: id_text,
            before: None,
            after: Some(serde_json::to_value(&test).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(test)
}

/// An athlete's sweat tests, newest first.
#[instrument(skip_all)]
pub async fn sweat_tests(db: &Db, athlete_id: Uuid) -> Result<Vec<SweatTest>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    sqlx::query_as!(
        SweatRow,
        "SELECT id, athlete_id, tested_on, body_mass_before_kg, body_mass_after_kg, fluid_drunk_l, urine_l,
                duration_hours, note, created_at FROM sweat_tests WHERE athlete_id = ?
         ORDER BY tested_on DESC, id DESC LIMIT 200",
        athlete
    )
    .fetch_all(&db.read)
    .await?
    .into_iter()
    .map(SweatRow::into_test)
    .collect()
}

/// The latest sweat test of each athlete of a team.
#[instrument(skip_all)]
pub async fn latest_sweat_tests(
    db: &Db,
    team_id: Uuid,
) -> Result<HashMap<Uuid, SweatTest>, sqlx::Error> {
    let team = team_id.to_string();
    let rows = sqlx::query_as!(
        SweatRow,
        "SELECT t.id, t.athlete_id, t.tested_on, t.body_mass_before_kg, t.body_mass_after_kg, t.fluid_drunk_l,
                t.urine_l, t.duration_hours, t.note, t.created_at
         FROM sweat_tests t JOIN athletes a ON a.id = t.athlete_id
         WHERE a.team_id = ? ORDER BY t.tested_on, t.id",
        team
    )
    .fetch_all(&db.read)
    .await?;
    let mut latest = HashMap::new();
    for row in rows {
        let test = row.into_test()?;
        latest.insert(test.athlete_id, test);
    }
    Ok(latest)
}

#[instrument(skip_all)]
pub async fn delete_sweat_test(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
    id: Uuid,
) -> Result<bool, sqlx::Error> {
    let mut tx = db.begin_write().await?;
    let id_text = id.to_string();
    let athlete = athlete_id.to_string();
    let n = sqlx::query!(
        "DELETE FROM sweat_tests WHERE id = ? AND athlete_id = ?",
        id_text,
        athlete
    )
    .execute(&mut *tx)
    .await?
    .rows_affected();
    if n == 0 {
        return Ok(false);
    }
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Delete,
            entity_type: "sweat_test",
            entity_id: id_text,
            before: None,
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(true)
}

/// The team's plan settings (documented defaults when none are stored).
#[instrument(skip_all)]
pub async fn plan_settings(db: &Db, team_id: Uuid) -> Result<PlanSettings, sqlx::Error> {
    let team = team_id.to_string();
    let stored = sqlx::query_scalar!("SELECT plan_settings FROM teams WHERE id = ?", team)
        .fetch_optional(&db.read)
        .await?
        .flatten();
    match stored {
        Some(json) => from_json(&json),
        None => Ok(PlanSettings::default()),
    }
}

#[instrument(skip_all)]
pub async fn put_plan_settings(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    settings: &PlanSettings,
) -> Result<(), sqlx::Error> {
    let team = team_id.to_string();
    let json = to_json(settings);
    let now = now_text();
    let mut tx = db.begin_write().await?;
    let before = sqlx::query_scalar!("SELECT plan_settings FROM teams WHERE id = ?", team)
        .fetch_one(&mut *tx)
        .await?;
    sqlx::query!(
        "UPDATE teams SET plan_settings = ?, version = version + 1, updated_at = ? WHERE id = ?",
        json,
        now,
        team
    )
    .execute(&mut *tx)
    .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Update,
            entity_type: "plan_settings",
            entity_id: team.clone(),
            before: before.as_deref().map(from_json).transpose()?,
            after: Some(serde_json::to_value(settings).unwrap_or_default()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(())
}

/// A calendar-feed link; the secret is shown once, when created.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
pub struct CalendarFeed {
    pub id: Uuid,
    pub athlete_id: Uuid,
    pub created_at: DateTime<Utc>,
    pub revoked_at: Option<DateTime<Utc>>,
}

pub fn new_feed_secret() -> String {
    let mut bytes = [0u8; 24];
    rand::rng().fill_bytes(&mut bytes);
    hex::encode(bytes)
}

#[instrument(skip_all)]
pub async fn create_feed(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
) -> Result<(CalendarFeed, String), sqlx::Error> {
    let id = Uuid::now_v7();
    let id_text = id.to_string();
    let athlete = athlete_id.to_string();
    let secret = new_feed_secret();
    let hash = super::tokens::hash_secret(&secret);
    let now = now_text();
    let mut tx = db.begin_write().await?;
    sqlx::query!(
        "INSERT INTO calendar_feeds (id, athlete_id, secret_hash, created_at) VALUES (?, ?, ?, ?)",
        id_text,
        athlete,
        hash,
        now
    )
    .execute(&mut *tx)
    .await?;
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Create,
            entity_type: "calendar_feed",
            entity_id: id_text,
            before: None,
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok((
        CalendarFeed {
            id,
            athlete_id,
            created_at: parse_instant(&now)?,
            revoked_at: None,
        },
        secret,
    ))
}

/// The athlete behind a live feed secret.
#[instrument(skip_all)]
pub async fn feed_athlete(db: &Db, secret: &str) -> Result<Option<Uuid>, sqlx::Error> {
    let hash = super::tokens::hash_secret(secret);
    let row = sqlx::query_scalar!(
        "SELECT athlete_id FROM calendar_feeds WHERE secret_hash = ? AND revoked_at IS NULL",
        hash
    )
    .fetch_optional(&db.read)
    .await?;
    row.as_deref().map(super::uuid).transpose()
}

#[instrument(skip_all)]
pub async fn list_feeds(db: &Db, athlete_id: Uuid) -> Result<Vec<CalendarFeed>, sqlx::Error> {
    let athlete = athlete_id.to_string();
    let rows = sqlx::query!(
        "SELECT id, athlete_id, created_at, revoked_at FROM calendar_feeds WHERE athlete_id = ? ORDER BY id",
        athlete
    )
    .fetch_all(&db.read)
    .await?;
    rows.into_iter()
        .map(|r| {
            Ok(CalendarFeed {
                id: super::uuid(&r.id)?,
                athlete_id: super::uuid(&r.athlete_id)?,
                created_at: parse_instant(&r.created_at)?,
                revoked_at: r.revoked_at.as_deref().map(parse_instant).transpose()?,
            })
        })
        .collect()
}

#[instrument(skip_all)]
pub async fn revoke_feed(
    db: &Db,
    actor: Actor,
    team_id: Uuid,
    athlete_id: Uuid,
    id: Uuid,
) -> Result<bool, sqlx::Error> {
    let id_text = id.to_string();
    let athlete = athlete_id.to_string();
    let now = now_text();
    let mut tx = db.begin_write().await?;
    let n = sqlx::query!(
        "UPDATE calendar_feeds SET revoked_at = COALESCE(revoked_at, ?) WHERE id = ? AND athlete_id = ?",
        now,
        id_text,
        athlete
    )
    .execute(&mut *tx)
    .await?
    .rows_affected();
    if n == 0 {
        return Ok(false);
    }
    audit::record(
        &mut tx,
        actor,
        Entry {
            team_id: Some(team_id),
            action: Action::Revoke,
            entity_type: "calendar_feed",
            entity_id: id_text,
            before: None,
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(true)
}
