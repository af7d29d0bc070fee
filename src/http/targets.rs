//! Fuelling targets: the stateless day and sweat-rate estimates for
//! integrators, and what a dietitian stores to shape plans: pinned targets,
//! sweat-rate tests and the team's plan settings.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use chrono::NaiveDate;
use serde::{Deserialize, Serialize};
use utoipa::{IntoParams, ToSchema};
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::athletes::visible_athlete;
use super::auth::Caller;
use super::extract::{IfMatch, JsonBody, PathIds, QueryParams};
use super::{json, team_today, versioned};
use crate::AppState;
use crate::domain::paging::{Page, PageParams};
use crate::domain::session::check_date;
use crate::engine::Issues;
use crate::engine::day::plan::{DayInput, DayPlan, plan_day};
use crate::engine::day::settings::{DayPins, PlanSettings};
use crate::engine::hydration::{SweatRate, SweatRateInput, sweat_rate};
use crate::error::{ApiError, Result};
use crate::store::Write;
use crate::store::planning::{self, DayPin, SweatTest};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(estimate_day))
        .routes(routes!(estimate_sweat_rate))
        .routes(routes!(list_pins))
        .routes(routes!(get_pin, put_pin, delete_pin))
        .routes(routes!(list_sweat_tests, add_sweat_test))
        .routes(routes!(delete_sweat_test))
        .routes(routes!(get_plan_settings, put_plan_settings))
}

/// Targets for one athlete-day, for an athlete and sessions given in the
/// request (nothing is stored). Session work is given as already computed
/// (e.g. from `POST /v1/estimate/session`).
#[utoipa::path(post, path = "/v1/estimate/day", tag = "engine",
    request_body(content = DayInput, example = json!({
        "profile": {"sex": "male", "age_years": 24, "height_cm": 179, "body_mass_kg": 75,
                    "body_fat_percent": 11, "training_status": "trained"},
        "date": "2026-12-12",
        "sessions": [{"title": "League match", "kind": "match", "start": "2026-12-12T15:00:00",
                      "minutes": 95, "mean_fraction_vo2max": 0.72, "gross_kcal": 1250, "net_kcal": 1130,
                      "carbohydrate_g": 230, "key_session": true}],
        "previous_day_sessions": [{"title": "Activation", "kind": "training", "start": "2026-12-11T10:30:00",
                      "minutes": 45, "mean_fraction_vo2max": 0.5, "gross_kcal": 380, "net_kcal": 325,
                      "carbohydrate_g": 45}]
    })),
    responses((status = 200, description = "The day's targets, eating occasions, explanations, warnings and cautions", body = DayPlan)))]
async fn estimate_day(_caller: Caller, JsonBody(input): JsonBody<DayInput>) -> Result<Response> {
    let plan = plan_day(&input)?;
    Ok(json(StatusCode::OK, &plan))
}

/// Sweat rate from body mass before and after a session (Sawka et al. 2007).
#[utoipa::path(post, path = "/v1/estimate/sweat-rate", tag = "engine",
    request_body(content = SweatRateInput, example = json!({
        "body_mass_before_kg": 75.0, "body_mass_after_kg": 73.8, "fluid_drunk_l": 0.6, "urine_l": 0.1, "duration_hours": 1.5
    })),
    responses((status = 200, description = "Sweat loss, rate and fluid to replace", body = SweatRate)))]
async fn estimate_sweat_rate(
    _caller: Caller,
    JsonBody(input): JsonBody<SweatRateInput>,
) -> Result<Response> {
    Ok(json(StatusCode::OK, &sweat_rate(&input)?))
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct PinListParams {
    /// First date, inclusive (default: 30 days ago in the team's zone).
    from: Option<NaiveDate>,
    /// Last date, inclusive (default: `from` + 90 days).
    to: Option<NaiveDate>,
    /// Items per page, 1 to 200 (default 50).
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    /// The `next_cursor` of the previous page.
    cursor: Option<String>,
}

/// An athlete's pinned targets in a date span.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/pins", tag = "targets",
    params(("athlete_id" = Uuid, Path), PinListParams),
    responses((status = 200, description = "One page of pins by date", body = Page<DayPin>)))]
async fn list_pins(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PinListParams>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    let team = super::visible_team(&state, &caller, athlete.team_id).await?;
    let (from, to) = match (q.from, q.to) {
        (Some(from), to) => (from, to.unwrap_or(from + chrono::Days::new(90))),
        (None, Some(to)) => (to - chrono::Days::new(90), to),
        (None, None) => {
            let from = team_today(&team) - chrono::Days::new(30);
            (from, from + chrono::Days::new(90))
        }
    };
    crate::domain::check_filter_dates(&[("from", Some(from)), ("to", Some(to))])?;
    if to < from {
        return Err(ApiError::field("to", "must not be before from"));
    }
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let pins = planning::pins_for_athlete(&state.db, id, (from, to)).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_sorted(pins, &page, false, |p| p.local_date)?,
    ))
}

/// Targets a dietitian fixes for one athlete and date; the plan keeps them
/// and shows the computed value beside each. Give at least one.
#[derive(Debug, Deserialize, Serialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct PinInput {
    /// Daily carbohydrate, g/kg (0 to 20).
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 20.0)]
    pub carbohydrate_g_per_kg: Option<f64>,
    /// Daily protein, g/kg (0.5 to 4).
    #[serde(default)]
    #[schema(minimum = 0.5, maximum = 4.0)]
    pub protein_g_per_kg: Option<f64>,
    /// Daily energy intake, kcal (500 to 10000).
    #[serde(default)]
    #[schema(minimum = 500.0, maximum = 10000.0)]
    pub energy_kcal: Option<f64>,
    #[serde(default)]
    #[schema(max_length = 500)]
    pub note: Option<String>,
}

impl PinInput {
    fn pins(&self) -> DayPins {
        DayPins {
            carbohydrate_g_per_kg: self.carbohydrate_g_per_kg,
            protein_g_per_kg: self.protein_g_per_kg,
            energy_kcal: self.energy_kcal,
        }
    }
}

/// One date's pins.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/pins/{date}", tag = "targets",
    params(("athlete_id" = Uuid, Path), ("date" = NaiveDate, Path)),
    responses((status = 200, description = "The pins", body = DayPin, headers(("etag" = String)))))]
async fn get_pin(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((id, date)): PathIds<(Uuid, NaiveDate)>,
) -> Result<Response> {
    visible_athlete(&state, &caller, id).await?;
    let pin = planning::get_pin(&state.db, id, date)
        .await?
        .ok_or(ApiError::NotFound("pin"))?;
    Ok(versioned(pin.version, &pin))
}

/// Pin targets for an athlete on a date (replaces that date's pins).
#[utoipa::path(put, path = "/v1/athletes/{athlete_id}/pins/{date}", tag = "targets",
    params(("athlete_id" = Uuid, Path), ("date" = NaiveDate, Path), ("if-match" = Option<String>, Header)),
    request_body(content = PinInput, example = json!({"carbohydrate_g_per_kg": 8.0, "note": "extra fuel before the cup match"})),
    responses((status = 200, description = "Stored", body = DayPin, headers(("etag" = String)))))]
async fn put_pin(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((id, date)): PathIds<(Uuid, NaiveDate)>,
    IfMatch(expected): IfMatch,
    JsonBody(input): JsonBody<PinInput>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let mut issues = Issues::default();
    input.pins().validate("", &mut issues);
    check_date(&mut issues, "date", date);
    if input.carbohydrate_g_per_kg.is_none()
        && input.protein_g_per_kg.is_none()
        && input.energy_kcal.is_none()
    {
        issues.push(
            "",
            "pin at least one of carbohydrate_g_per_kg, protein_g_per_kg, energy_kcal",
        );
    }
    if let Some(note) = &input.note {
        crate::domain::check_note(&mut issues, "note", note, 0, 500);
    }
    for issue in &mut issues.0 {
        issue.field = issue.field.trim_start_matches('.').to_owned();
    }
    issues.finish()?;
    match planning::put_pin(
        &state.db,
        caller.actor(),
        athlete.team_id,
        id,
        date,
        &expected,
        &input.pins(),
        input.note.as_deref(),
    )
    .await?
    {
        Write::Done(pin) => Ok(versioned(pin.version, &pin)),
        Write::NotFound => Err(ApiError::NotFound("pin")),
        Write::Stale => Err(ApiError::PreconditionFailed),
    }
}

/// Remove a date's pins: the plan goes back to computed targets.
#[utoipa::path(delete, path = "/v1/athletes/{athlete_id}/pins/{date}", tag = "targets",
    params(("athlete_id" = Uuid, Path), ("date" = NaiveDate, Path), ("if-match" = Option<String>, Header)),
    responses((status = 204, description = "Removed")))]
async fn delete_pin(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((id, date)): PathIds<(Uuid, NaiveDate)>,
    IfMatch(expected): IfMatch,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    super::deleted(
        planning::delete_pin(
            &state.db,
            caller.actor(),
            athlete.team_id,
            id,
            date,
            &expected,
        )
        .await?,
        "pin",
    )
}

/// A sweat test with its computed result.
#[derive(Debug, Serialize, ToSchema)]
pub struct SweatTestResult {
    #[serde(flatten)]
    pub test: SweatTest,
    /// Estimates (Sawka et al. 2007); `None` if the stored values no longer validate.
    pub result: Option<SweatRate>,
}

fn with_result(test: SweatTest) -> SweatTestResult {
    let result = sweat_rate(&test.input()).ok();
    SweatTestResult { test, result }
}

/// A sweat test: body mass before and after a session (Sawka et al. 2007).
#[derive(Debug, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SweatTestInput {
    pub tested_on: NaiveDate,
    /// Nude body mass before the session, kg.
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_before_kg: f64,
    /// Nude body mass after the session, towel-dried, kg.
    #[schema(minimum = 25.0, maximum = 250.0)]
    pub body_mass_after_kg: f64,
    /// Fluid drunk during the session, litres.
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 10.0)]
    pub fluid_drunk_l: f64,
    /// Urine passed during the session, litres.
    #[serde(default)]
    #[schema(minimum = 0.0, maximum = 5.0)]
    pub urine_l: f64,
    /// Session duration, hours.
    #[schema(minimum = 0.0834, maximum = 12.0)]
    pub duration_hours: f64,
    #[serde(default)]
    #[schema(max_length = 500)]
    pub note: Option<String>,
}

impl SweatTestInput {
    fn measurements(&self) -> SweatRateInput {
        SweatRateInput {
            body_mass_before_kg: self.body_mass_before_kg,
            body_mass_after_kg: self.body_mass_after_kg,
            fluid_drunk_l: self.fluid_drunk_l,
            urine_l: self.urine_l,
            duration_hours: self.duration_hours,
        }
    }
}

/// An athlete's sweat tests, newest first; the latest sets plans' fluid targets.
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/sweat-tests", tag = "targets",
    params(("athlete_id" = Uuid, Path), PageParams),
    responses((status = 200, description = "One page of tests with results, newest first", body = Page<SweatTestResult>)))]
async fn list_sweat_tests(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    QueryParams(page): QueryParams<PageParams>,
) -> Result<Response> {
    visible_athlete(&state, &caller, id).await?;
    let tests: Vec<SweatTestResult> = planning::sweat_tests(&state.db, id)
        .await?
        .into_iter()
        .map(with_result)
        .collect();
    let page = Page::from_sorted(tests, &page, true, |t| (t.test.tested_on, t.test.id))?;
    Ok(json(StatusCode::OK, &page))
}

/// Record a sweat test.
#[utoipa::path(post, path = "/v1/athletes/{athlete_id}/sweat-tests", tag = "targets",
    params(("athlete_id" = Uuid, Path)),
    request_body(content = SweatTestInput, example = json!({
        "tested_on": "2026-11-24", "body_mass_before_kg": 75.0, "body_mass_after_kg": 73.8,
        "fluid_drunk_l": 0.6, "urine_l": 0.1, "duration_hours": 1.5, "note": "pitch session, 14 C"
    })),
    responses((status = 201, description = "Recorded", body = SweatTestResult)))]
async fn add_sweat_test(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    JsonBody(input): JsonBody<SweatTestInput>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let team = super::visible_team(&state, &caller, athlete.team_id).await?;
    let mut issues = Issues::default();
    if input.tested_on > team_today(&team) {
        issues.push("tested_on", "must not be in the future");
    }
    check_date(&mut issues, "tested_on", input.tested_on);
    if let Some(note) = &input.note {
        crate::domain::check_note(&mut issues, "note", note, 0, 500);
    }
    if let Err(e) = sweat_rate(&input.measurements()) {
        issues.0.extend(e.issues);
    }
    issues.finish()?;
    let test = planning::add_sweat_test(
        &state.db,
        caller.actor(),
        athlete.team_id,
        id,
        input.tested_on,
        &input.measurements(),
        input.note.as_deref(),
    )
    .await?;
    Ok(json(StatusCode::CREATED, &with_result(test)))
}

/// Delete a sweat test.
#[utoipa::path(delete, path = "/v1/athletes/{athlete_id}/sweat-tests/{test_id}", tag = "targets",
    params(("athlete_id" = Uuid, Path), ("test_id" = Uuid, Path)),
    responses((status = 204, description = "Deleted")))]
async fn delete_sweat_test(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((id, test_id)): PathIds<(Uuid, Uuid)>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    if planning::delete_sweat_test(&state.db, caller.actor(), athlete.team_id, id, test_id).await? {
        Ok(StatusCode::NO_CONTENT.into_response())
    } else {
        Err(ApiError::NotFound("sweat test"))
    }
}

/// The team's plan settings (thresholds, factors, meal times).
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan-settings", tag = "targets",
    params(("team_id" = Uuid, Path)),
    responses((status = 200, description = "Settings; defaults where none were stored", body = PlanSettings)))]
async fn get_plan_settings(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
) -> Result<Response> {
    super::visible_team(&state, &caller, team_id).await?;
    Ok(json(
        StatusCode::OK,
        &planning::plan_settings(&state.db, team_id).await?,
    ))
}

/// Replace the team's plan settings; omitted fields take their defaults.
#[utoipa::path(put, path = "/v1/teams/{team_id}/plan-settings", tag = "targets",
    params(("team_id" = Uuid, Path)),
    request_body(content = PlanSettings, example = json!({"non_exercise_activity_factor": 1.6,
        "energy_availability": {"adequate_at_or_above": 45, "low_below": 30}})),
    responses((status = 200, description = "Stored", body = PlanSettings)))]
async fn put_plan_settings(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    JsonBody(settings): JsonBody<PlanSettings>,
) -> Result<Response> {
    caller.write(team_id, "team")?;
    super::visible_team(&state, &caller, team_id).await?;
    let mut issues = Issues::default();
    settings.validate("", &mut issues);
    for issue in &mut issues.0 {
        issue.field = issue.field.trim_start_matches('.').to_owned();
    }
    issues.finish()?;
    planning::put_plan_settings(&state.db, caller.actor(), team_id, &settings).await?;
    Ok(json(StatusCode::OK, &settings))
}
