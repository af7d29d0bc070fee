//! Athletes of a team and their body-mass readings.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use chrono::NaiveDate;
use serde::Deserialize;
use utoipa::{IntoParams, ToSchema};
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::auth::Caller;
use super::extract::{IfMatch, JsonBody, MergePatch, PathIds, QueryParams};
use super::{apply_merge_patch, deleted, json, team_today, versioned, written};
use crate::AppState;
use crate::domain::athlete::{Athlete, AthleteInput, AthleteStatus, BodyMass, BodyMassInput};
use crate::domain::paging::{Page, PageParams};
use crate::error::{ApiError, Result};
use crate::store::athletes::{self, StatusFilter};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_athletes, create_athlete))
        .routes(routes!(get_athlete, update_athlete, delete_athlete))
        .routes(routes!(list_body_mass, add_body_mass))
        .routes(routes!(get_body_mass, delete_body_mass))
        .routes(routes!(export_athlete))
}

/// Which athletes a list returns.
#[derive(Debug, Clone, Copy, Deserialize, ToSchema, Default)]
#[serde(rename_all = "snake_case")]
pub enum StatusQuery {
    #[default]
    Active,
    Archived,
    All,
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct AthleteListParams {
    /// `active` (default), `archived` or `all`.
    #[param(inline)]
    status: Option<StatusQuery>,
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    cursor: Option<String>,
}

/// Load an athlete the caller may see, or 404.
pub async fn visible_athlete(state: &AppState, caller: &Caller, id: Uuid) -> Result<Athlete> {
    let athlete = athletes::get(&state.db, id)
        .await?
        .ok_or(ApiError::NotFound("athlete"))?;
    caller.read(athlete.team_id, "athlete")?;
    Ok(athlete)
}

/// List a team's athletes by name.
#[utoipa::path(get, path = "/v1/teams/{team_id}/athletes", tag = "athletes",
    params(("team_id" = Uuid, Path), AthleteListParams),
    responses((status = 200, description = "One page of athletes", body = Page<Athlete>)))]
async fn list_athletes(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<AthleteListParams>,
) -> Result<Response> {
    caller.read(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let after: Option<(String, Uuid)> = page.after()?;
    let status = match q.status.unwrap_or_default() {
        StatusQuery::Active => StatusFilter::Only(AthleteStatus::Active),
        StatusQuery::Archived => StatusFilter::Only(AthleteStatus::Archived),
        StatusQuery::All => StatusFilter::All,
    };
    let items = athletes::list(&state.db, team_id, status, after, limit).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(items, limit, |a| (a.display_name.clone(), a.id)),
    ))
}

/// Add an athlete to a team, with a first body-mass reading.
#[utoipa::path(post, path = "/v1/teams/{team_id}/athletes", tag = "athletes",
    params(("team_id" = Uuid, Path)),
    request_body(content = AthleteInput, example = json!({
        "display_name": "Oren Oakhurst", "sex": "male", "date_of_birth": "2001-04-17", "height_cm": 178,
        "training_status": "highly_trained", "position_group": "midfield",
        "vo2max": {"method": "yo_yo_ir1", "distance_m": 2280}, "hr_max": 196, "hr_rest": 48,
        "body_fat_percent": 10.5, "initial_body_mass": {"body_mass_kg": 74.5, "measured_on": "2026-11-30"}
    })),
    responses((status = 201, description = "Created", body = Athlete, headers(("etag" = String), ("location" = String)))))]
async fn create_athlete(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    JsonBody(input): JsonBody<AthleteInput>,
) -> Result<Response> {
    caller.write(team_id, "team")?;
    let team = super::visible_team(&state, &caller, team_id).await?;
    let today = team_today(&team);
    let input = input.normalised();
    input.validate(today, true)?;
    let athlete = athletes::create(&state.db, caller.actor(), team_id, &input, today).await?;
    Ok(super::created(
        &format!("/v1/athletes/{}", athlete.id),
        athlete.version,
        &athlete,
    ))
}

/// Read an athlete.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}", tag = "athletes",
    params(("athlete_id" = Uuid, Path)),
    responses((status = 200, description = "The athlete", body = Athlete, headers(("etag" = String)))))]
async fn get_athlete(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    Ok(versioned(athlete.version, &athlete))
}

/// Change an athlete (JSON merge patch); archive with `{"status": "archived"}`.
#[utoipa::path(patch, path = "/v1/athletes/{athlete_id}", tag = "athletes",
    params(("athlete_id" = Uuid, Path), ("if-match" = Option<String>, Header, description = "ETag last read; 412 if it changed since")),
    request_body(content = Object, content_type = "application/merge-patch+json", description = "Fields of AthleteInput to change",
        example = json!({"goal": "reduce", "goal_rate_kg_per_week": 0.4})),
    responses((status = 200, description = "The changed athlete", body = Athlete, headers(("etag" = String)))))]
async fn update_athlete(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
    MergePatch(patch): MergePatch,
) -> Result<Response> {
    let current = visible_athlete(&state, &caller, id).await?;
    caller.write(current.team_id, "athlete")?;
    let team = super::visible_team(&state, &caller, current.team_id).await?;
    let today = team_today(&team);
    let outcome = athletes::update(&state.db, caller.actor(), id, &expected, |current| {
        let input: AthleteInput = apply_merge_patch(&current.input(), &patch)?;
        let input = input.normalised();
        input.validate(today, false)?;
        if let (Some(ffm), Some(latest)) = (input.fat_free_mass_kg, &current.latest_body_mass)
            && ffm >= latest.body_mass_kg
        {
            return Err(ApiError::field(
                "fat_free_mass_kg",
                "must be lower than the latest body mass",
            ));
        }
        Ok(input)
    })
    .await?;
    written(outcome, "athlete")
}

/// Erase an athlete and everything stored about them. To keep history, archive instead.
#[utoipa::path(delete, path = "/v1/athletes/{athlete_id}", tag = "athletes",
    params(("athlete_id" = Uuid, Path), ("if-match" = Option<String>, Header)),
    responses((status = 204, description = "Erased")))]
async fn delete_athlete(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    IfMatch(expected): IfMatch,
) -> Result<Response> {
    let current = visible_athlete(&state, &caller, id).await?;
    caller.write(current.team_id, "athlete")?;
    deleted(
        athletes::delete(&state.db, caller.actor(), id, &expected).await?,
        "athlete",
    )
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct BodyMassListParams {
    /// First date, inclusive.
    from: Option<NaiveDate>,
    /// Last date, inclusive.
    to: Option<NaiveDate>,
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    cursor: Option<String>,
}

/// An athlete's body-mass readings, newest first.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/body-mass", tag = "athletes",
    params(("athlete_id" = Uuid, Path), BodyMassListParams),
    responses((status = 200, description = "One page of readings", body = Page<BodyMass>)))]
async fn list_body_mass(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    QueryParams(q): QueryParams<BodyMassListParams>,
) -> Result<Response> {
    visible_athlete(&state, &caller, id).await?;
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let after: Option<(NaiveDate, Uuid)> = page.after()?;
    crate::domain::check_filter_dates(&[("from", q.from), ("to", q.to)])?;
    if let (Some(from), Some(to)) = (q.from, q.to)
        && to < from
    {
        return Err(ApiError::field("to", "must not be before from"));
    }
    let items = athletes::list_body_mass(&state.db, id, q.from, q.to, after, limit).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(items, limit, |m| (m.measured_on, m.id)),
    ))
}

/// Record a body-mass reading (one per athlete and date).
#[utoipa::path(post, path = "/v1/athletes/{athlete_id}/body-mass", tag = "athletes",
    params(("athlete_id" = Uuid, Path)), request_body = BodyMassInput,
    responses((status = 201, description = "Recorded", body = BodyMass, headers(("location" = String)))))]
async fn add_body_mass(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    JsonBody(input): JsonBody<BodyMassInput>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let team = super::visible_team(&state, &caller, athlete.team_id).await?;
    input.validate(team_today(&team))?;
    if let Some(ffm) = athlete.fat_free_mass_kg
        && ffm >= input.body_mass_kg
    {
        return Err(ApiError::field(
            "body_mass_kg",
            "must be above the athlete's fat-free mass",
        ));
    }
    let mass = athletes::add_body_mass(&state.db, caller.actor(), &athlete, &input).await?;
    Ok(super::created(
        &format!("/v1/athletes/{id}/body-mass/{}", mass.id),
        1,
        &mass,
    ))
}

async fn visible_reading(
    state: &AppState,
    caller: &Caller,
    athlete_id: Uuid,
    reading_id: Uuid,
) -> Result<(Uuid, BodyMass)> {
    let athlete = visible_athlete(state, caller, athlete_id).await?;
    let mass = athletes::get_body_mass(&state.db, reading_id)
        .await?
        .filter(|m| m.athlete_id == athlete_id)
        .ok_or(ApiError::NotFound("body-mass reading"))?;
    Ok((athlete.team_id, mass))
}

/// Read one body-mass reading.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/body-mass/{reading_id}", tag = "athletes",
    params(("athlete_id" = Uuid, Path), ("reading_id" = Uuid, Path)),
    responses((status = 200, description = "The reading", body = BodyMass)))]
async fn get_body_mass(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((athlete_id, reading_id)): PathIds<(Uuid, Uuid)>,
) -> Result<Response> {
    let (_, mass) = visible_reading(&state, &caller, athlete_id, reading_id).await?;
    Ok(versioned(1, &mass))
}

/// Delete a body-mass reading (e.g. a typing mistake).
#[utoipa::path(delete, path = "/v1/athletes/{athlete_id}/body-mass/{reading_id}", tag = "athletes",
    params(("athlete_id" = Uuid, Path), ("reading_id" = Uuid, Path)),
    responses((status = 204, description = "Deleted")))]
async fn delete_body_mass(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((athlete_id, reading_id)): PathIds<(Uuid, Uuid)>,
) -> Result<Response> {
    let (team_id, mass) = visible_reading(&state, &caller, athlete_id, reading_id).await?;
    caller.write(team_id, "athlete")?;
    athletes::delete_body_mass(&state.db, caller.actor(), team_id, &mass).await?;
    Ok(StatusCode::NO_CONTENT.into_response())
}

/// Everything stored about one athlete (a data-protection export).
#[derive(Debug, serde::Serialize, ToSchema)]
pub struct AthleteExport {
    pub exported_at: chrono::DateTime<chrono::Utc>,
    pub athlete: Athlete,
    pub body_mass: Vec<BodyMass>,
    pub participation: Vec<crate::domain::session::Participation>,
    pub pins: Vec<crate::store::planning::DayPin>,
    pub sweat_tests: Vec<crate::store::planning::SweatTest>,
    pub calendar_feeds: Vec<crate::store::planning::CalendarFeed>,
    /// Changes recorded about the athlete, with their values.
    pub audit: Vec<crate::store::audit::AuditEntry>,
}

/// Export everything stored about an athlete (body data is health data:
/// planners only). Erase with `DELETE /v1/athletes/{athlete_id}`.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/export", tag = "athletes",
    params(("athlete_id" = Uuid, Path)),
    responses((status = 200, description = "Every stored record about the athlete", body = AthleteExport)))]
async fn export_athlete(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let records = athletes::records(&state.db, id).await?;
    let wide = (
        NaiveDate::from_ymd_opt(1900, 1, 1).expect("valid"),
        NaiveDate::from_ymd_opt(9999, 12, 31).expect("valid"),
    );
    let export = AthleteExport {
        exported_at: chrono::Utc::now(),
        pins: crate::store::planning::pins_for_athlete(&state.db, id, wide).await?,
        sweat_tests: crate::store::planning::sweat_tests(&state.db, id).await?,
        calendar_feeds: crate::store::planning::list_feeds(&state.db, id).await?,
        athlete,
        body_mass: records.body_mass,
        participation: records.participation,
        audit: records.audit,
    };
    let mut res = json(StatusCode::OK, &export);
    if let Ok(v) =
        axum::http::HeaderValue::from_str(&format!("attachment; filename=\"athlete-{id}.json\""))
    {
        res.headers_mut()
            .insert(axum::http::header::CONTENT_DISPOSITION, v);
    }
    Ok(res)
}
