//! Week plans: the squad plan, the compact squad summary, one athlete's
//! plan, what a change did to the plan, and the feeds club systems pull
//! (CSV for kitchens and spreadsheets, iCalendar for athletes' calendars,
//! and a changes feed for integrators).
//!
//! Plans are computed from the stored data on every request. Their ETag is
//! the team's input version (the sequence number of its latest change) and
//! the span, so `If-None-Match` answers 304 without computing anything, and
//! a change to any input is visible in the very next plan.

use std::collections::HashMap;

use axum::extract::State;
use axum::http::{HeaderMap, HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use chrono::{Days, NaiveDate, Weekday};
use serde::{Deserialize, Serialize};
use utoipa::{IntoParams, ToSchema};
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::athletes::visible_athlete;
use super::auth::Caller;
use super::extract::{PathIds, QueryParams};
use super::plan_cache::CachedBody;
use super::{json, team_today, visible_team};
use crate::AppState;
use crate::domain::athlete::Athlete;
use crate::domain::paging::{Page, PageParams};
use crate::domain::team::Team;
use crate::engine::day::energy_availability::EnergyAvailabilityBand;
use crate::engine::day::notes::Severity;
use crate::engine::day::targets::LoadBand;
use crate::engine::week::{WeekPlan, WeekThresholds, WeekWarning};
use crate::error::{ApiError, Result};
use crate::planner::{self, AthleteWeek, LOOK_AHEAD_DAYS, LOOK_BEHIND_DAYS, PlanOptions, TeamData};
use crate::store::{audit, planning, plans};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(team_plan))
        .routes(routes!(team_summary))
        .routes(routes!(team_summary_csv))
        .routes(routes!(team_totals_csv))
        .routes(routes!(plan_changes))
        .routes(routes!(athlete_plan))
        .routes(routes!(changes_feed))
}

/// Longest span one plan request may cover.
pub const MAX_SPAN_DAYS: i64 = 16 * 7;

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct PlanParams {
    /// First local date (default: Monday of the current week in the team's zone).
    from: Option<NaiveDate>,
    /// Last local date, inclusive (default: `from` + 6 days; at most 16 weeks).
    to: Option<NaiveDate>,
    /// An ISO week such as `2026-W50`, instead of `from`/`to`.
    #[param(pattern = r"^\d{4}-W\d{2}$")]
    week: Option<String>,
    /// Muscle and liver glycogen at the start as a fraction of capacity
    /// (0.2 to 1.0); default: normal stores after a rest day.
    #[param(minimum = 0.2, maximum = 1.0)]
    start_glycogen_fraction: Option<f64>,
    /// Include each session's full fuel result: its 5-minute series, segments and estimates (larger response).
    include_session_fuel: Option<bool>,
    /// Include the hourly glycogen series for charts (larger response;
    /// day and session start/end levels are always included).
    include_glycogen_series: Option<bool>,
}

impl PlanParams {
    /// Everything besides the span that changes a plan's body, for its ETag.
    fn variant(&self, kind: &str) -> String {
        format!(
            "{kind}-g{}-f{}-s{}",
            self.start_glycogen_fraction
                .map_or("n".to_owned(), |f| format!("{f}")),
            u8::from(self.include_session_fuel == Some(true)),
            u8::from(self.include_glycogen_series == Some(true)),
        )
    }
}

/// Resolves the span of a plan request in the team's calendar.
fn span_of(q: &PlanParams, team: &Team) -> Result<(NaiveDate, NaiveDate)> {
    let (from, to) = if let Some(week) = &q.week {
        if q.from.is_some() || q.to.is_some() {
            return Err(ApiError::field(
                "week",
                "give either week or from/to, not both",
            ));
        }
        let monday = parse_iso_week(week)
            .ok_or_else(|| ApiError::field("week", "must be an ISO week such as 2026-W50"))?;
        (monday, monday + Days::new(6))
    } else {
        let from = q
            .from
            .unwrap_or_else(|| team_today(team).week(Weekday::Mon).first_day());
        (from, q.to.unwrap_or(from + Days::new(6)))
    };
    let mut issues = crate::engine::Issues::default();
    if let Some(f) = q.start_glycogen_fraction {
        issues.range(
            "start_glycogen_fraction",
            f,
            0.2,
            1.0,
            "(fraction of capacity)",
        );
    }
    crate::domain::session::check_date(&mut issues, "from", from);
    crate::domain::session::check_date(&mut issues, "to", to);
    issues.finish()?;
    if to < from {
        return Err(ApiError::field("to", "must not be before from"));
    }
    if (to - from).num_days() >= MAX_SPAN_DAYS {
        return Err(ApiError::field(
            "to",
            format!("a plan covers at most {MAX_SPAN_DAYS} days"),
        ));
    }
    Ok((from, to))
}

fn parse_iso_week(s: &str) -> Option<NaiveDate> {
    let (year, week) = s.split_once("-W")?;
    NaiveDate::from_isoywd_opt(year.parse().ok()?, week.parse().ok()?, Weekday::Mon)
}

/// The strong ETag of a plan: the team's input version, the span and the
/// build (a new engine may compute differently).
fn plan_etag(version: i64, span: (NaiveDate, NaiveDate), variant: &str) -> String {
    format!(
        "\"plan-{version}-{}-{}-{variant}-{}\"",
        span.0,
        span.1,
        env!("CARGO_PKG_VERSION")
    )
}

fn not_modified(headers: &HeaderMap, etag: &str) -> Result<Option<Response>> {
    let mut tags = Vec::new();
    for value in headers.get_all(header::IF_NONE_MATCH) {
        let value = value.to_str().map_err(|_| {
            ApiError::BadRequest("If-None-Match must be * or a list of entity tags.".into())
        })?;
        for tag in value.split(',').map(str::trim) {
            if tag != "*" && !super::extract::is_entity_tag(tag) {
                return Err(ApiError::BadRequest(
                    "If-None-Match must be * or a list of entity tags.".into(),
                ));
            }
            tags.push(tag.to_owned());
        }
    }
    // Weak comparison (RFC 9110 section 13.1.2).
    let matches = tags
        .iter()
        .any(|tag| tag == "*" || tag.trim_start_matches("W/") == etag);
    Ok(matches.then(|| {
        let mut res = StatusCode::NOT_MODIFIED.into_response();
        res.headers_mut()
            .insert(header::ETAG, HeaderValue::from_str(etag).expect("ascii"));
        res
    }))
}

fn with_etag(mut res: Response, etag: &str) -> Response {
    res.headers_mut()
        .insert(header::ETAG, HeaderValue::from_str(etag).expect("ascii"));
    // Plans may be cached by the client, but must be revalidated each time.
    res.headers_mut().insert(
        header::CACHE_CONTROL,
        HeaderValue::from_static("private, no-cache"),
    );
    res
}

/// The span, input version and ETag of a plan read, and the right to
/// compute it (others asking for the same plan wait for this one).
struct PlanKey {
    span: (NaiveDate, NaiveDate),
    version: i64,
    etag: String,
    flight: super::single_flight::Flight,
}

/// Resolves a plan read before computing anything: answers 304 when the
/// client has it, or from the cache when it was computed before; otherwise
/// returns what the computation needs.
async fn prepare(
    state: &AppState,
    headers: &HeaderMap,
    team: &Team,
    q: &PlanParams,
    variant: &str,
) -> Result<std::result::Result<Response, PlanKey>> {
    let span = span_of(q, team)?;
    let version = audit::team_version_memo(&state.db, team.id).await?;
    let etag = plan_etag(version, span, &q.variant(variant));
    if let Some(res) = not_modified(headers, &etag)? {
        return Ok(Ok(res));
    }
    if let Some(res) = cached(state, headers, &etag) {
        return Ok(Ok(res));
    }
    // Computed by a request that came first? Then it is cached by now.
    let flight = state.plan_flights.enter(&etag).await;
    if let Some(res) = cached(state, headers, &etag) {
        return Ok(Ok(res));
    }
    Ok(Err(PlanKey {
        span,
        version,
        etag,
        flight,
    }))
}

/// A response from the plan cache, if this exact plan was computed before.
fn cached(state: &AppState, headers: &HeaderMap, etag: &str) -> Option<Response> {
    state
        .plan_cache
        .get(etag)
        .map(|body| plan_response(state, headers, body, etag))
}

/// Whether `Accept-Encoding` accepts gzip (RFC 9110 section 12.5.3).
pub fn accepts_gzip(headers: &HeaderMap) -> bool {
    headers
        .get_all(header::ACCEPT_ENCODING)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(','))
        .any(|coding| {
            let mut parts = coding.split(';').map(str::trim);
            let name = parts.next().unwrap_or("").to_ascii_lowercase();
            let q = parts
                .find_map(|p| p.strip_prefix("q=").or_else(|| p.strip_prefix("Q=")))
                .and_then(|q| q.parse::<f32>().ok())
                .unwrap_or(1.0);
            (name == "gzip" || name == "x-gzip" || name == "*") && q > 0.0
        })
}

/// A plan body in the encoding the client accepts; the compressed form is
/// made once, at the first read that accepts it, and kept in the cache.
fn plan_response(state: &AppState, headers: &HeaderMap, body: CachedBody, etag: &str) -> Response {
    let packed = if accepts_gzip(headers) {
        match body.gzip {
            Some(packed) => Some(packed),
            // Compression failing (it cannot, in memory) falls back to plain.
            None => state.plan_cache.gzip_of(etag, &body.plain).ok(),
        }
    } else {
        None
    };
    let gzip = packed.is_some();
    let bytes = packed.unwrap_or(body.plain);
    let mut res = (StatusCode::OK, bytes).into_response();
    let h = res.headers_mut();
    h.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("application/json"),
    );
    h.insert(header::VARY, HeaderValue::from_static("accept-encoding"));
    if gzip {
        h.insert(header::CONTENT_ENCODING, HeaderValue::from_static("gzip"));
    }
    with_etag(res, etag)
}

/// Serialises a plan (sources once; local times placed in the team's zone),
/// keeps it in the cache under its ETag, and responds.
fn store_and_respond<T: Serialize>(
    state: &AppState,
    headers: &HeaderMap,
    etag: &str,
    zone: &chrono_tz::Tz,
    body: &T,
) -> Result<Response> {
    let plain = axum::body::Bytes::from(
        super::to_wire_bytes(body, Some(zone)).map_err(ApiError::internal)?,
    );
    let body = CachedBody::new(plain);
    state.plan_cache.put(etag, body.clone());
    Ok(plan_response(state, headers, body, etag))
}

/// Loads the team's data and computes the plans of `athletes` (all active
/// athletes when `None`) off the async runtime.
async fn compute(
    state: &AppState,
    team: Team,
    q: &PlanParams,
    span: (NaiveDate, NaiveDate),
    only: Option<Uuid>,
    explain_days: bool,
) -> Result<(TeamData, Vec<AthleteWeek>)> {
    // `q` was validated by `span_of` (every caller reads the span first).
    let load_span = (
        span.0 - Days::new(LOOK_BEHIND_DAYS),
        span.1 + Days::new(LOOK_AHEAD_DAYS),
    );
    let started = std::time::Instant::now();
    let settings = planning::plan_settings(&state.db, team.id).await?;
    let pins = planning::pins_for_team(&state.db, team.id, load_span).await?;
    let data = TeamData::load(&state.db, team, load_span).await?;
    let loaded = started.elapsed();
    let options = PlanOptions {
        span,
        settings,
        thresholds: WeekThresholds::default(),
        start_glycogen_fraction: q.start_glycogen_fraction,
        include_session_fuel: q.include_session_fuel.unwrap_or(false),
        explain_days,
    };
    let memo = state.plan_memo.clone();
    let core = state.plan_flights.core().await;
    let result = tokio::task::spawn_blocking(move || {
        let _core = core;
        let athletes: Vec<Athlete> = data
            .athletes
            .iter()
            .filter(|a| only.is_none_or(|id| a.id == id))
            .cloned()
            .collect();
        let planning = std::time::Instant::now();
        let weeks = planner::plan_athletes_with(&data, &pins, &athletes, &options, Some(&memo));
        (data, weeks, planning.elapsed())
    })
    .await
    .map_err(ApiError::internal)?;
    let (data, weeks, planned) = result;
    tracing::debug!(
        load_ms = loaded.as_secs_f64() * 1000.0,
        plan_ms = planned.as_secs_f64() * 1000.0,
        total_ms = started.elapsed().as_secs_f64() * 1000.0,
        athletes = weeks.len(),
        "plans computed"
    );
    Ok((data, weeks))
}

/// One athlete's week in a squad plan.
#[derive(Debug, Serialize, ToSchema)]
pub struct AthletePlan {
    pub athlete_id: Uuid,
    /// The team's IANA time zone: every local date-time in the plan is in
    /// it, and carries its RFC 3339 offset.
    #[schema(example = "Europe/London")]
    pub time_zone: String,
    pub display_name: String,
    pub position_group: Option<String>,
    /// Absent when the athlete cannot be planned; see `problems`.
    pub plan: Option<WeekPlan>,
    pub problems: Vec<String>,
    /// Fluid guidance from the athlete's latest sweat test, if any.
    pub fluid: Option<planner::FluidGuide>,
}

/// The squad plan: per athlete, per day, targets, eating occasions, session
/// fuelling, glycogen and warnings. Every figure is an estimate.
#[derive(Debug, Serialize, ToSchema)]
pub struct TeamPlan {
    pub team_id: Uuid,
    pub team_name: String,
    pub time_zone: String,
    pub from: NaiveDate,
    pub to: NaiveDate,
    /// The inputs' version; pass it to `/plan/changes` after a change.
    pub version: i64,
    pub athletes: Vec<AthletePlan>,
    pub cautions: Vec<String>,
}

async fn athlete_plans(
    state: &AppState,
    data: &TeamData,
    weeks: Vec<AthleteWeek>,
    include_glycogen_series: bool,
) -> Result<Vec<AthletePlan>> {
    let sweat = planning::latest_sweat_tests(&state.db, data.team.id).await?;
    Ok(weeks
        .into_iter()
        .map(|w| {
            let fluid = match (&w.plan, sweat.get(&w.athlete.id)) {
                (Ok(plan), Some(test)) => planner::fluid_guide(test, plan),
                _ => None,
            };
            let (plan, problems) = match w.plan {
                Ok(plan) => {
                    // Copied only here, where the response changes it.
                    let mut plan = std::sync::Arc::unwrap_or_clone(plan);
                    if !include_glycogen_series {
                        plan.glycogen_series.clear();
                    }
                    (Some(plan), Vec::new())
                }
                Err(problems) => (None, problems),
            };
            AthletePlan {
                athlete_id: w.athlete.id,
                time_zone: data.team.time_zone.clone(),
                display_name: w.athlete.display_name,
                position_group: w.athlete.position_group,
                plan,
                problems,
                fluid,
            }
        })
        .collect())
}

/// The squad plan for a span (a week by default).
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan", tag = "plans",
    params(("team_id" = Uuid, Path), PlanParams, ("if-none-match" = Option<String>, Header)),
    responses(
        (status = 200, description = "The squad plan (estimates)", body = TeamPlan, headers(("etag" = String))),
        (status = 304, description = "Unchanged since the ETag you sent")))]
async fn team_plan(
    State(state): State<AppState>,
    caller: Caller,
    headers: HeaderMap,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PlanParams>,
) -> Result<Response> {
    let team = visible_team(&state, &caller, team_id).await?;
    let PlanKey {
        span,
        version,
        etag,
        flight: _flight,
    } = match prepare(&state, &headers, &team, &q, "plan").await? {
        Ok(res) => return Ok(res),
        Err(key) => key,
    };
    let (data, weeks) = compute(&state, team, &q, span, None, true).await?;
    save_snapshot(&state, team_id, version, span, &weeks).await;
    let athletes = athlete_plans(
        &state,
        &data,
        weeks,
        q.include_glycogen_series == Some(true),
    )
    .await?;
    let zone = data.team.tz();
    let body = TeamPlan {
        team_id,
        team_name: data.team.name.clone(),
        time_zone: data.team.time_zone.clone(),
        from: span.0,
        to: span.1,
        version,
        athletes,
        cautions: planner::general_cautions(),
    };
    store_and_respond(&state, &headers, &etag, &zone, &body)
}

/// One row of the squad summary: an athlete's day at a glance.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SummaryRow {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub date: NaiveDate,
    pub load_band: LoadBand,
    pub carbohydrate_g_per_kg: f64,
    pub carbohydrate_g: f64,
    /// The day's carbohydrate is a dietitian's pin.
    pub carbohydrate_pinned: bool,
    pub protein_g: f64,
    pub fat_g: f64,
    pub energy_kcal: f64,
    /// kcal per kg fat-free mass per day (estimate).
    pub energy_availability: f64,
    pub energy_availability_band: EnergyAvailabilityBand,
    /// Minutes of the athlete's own work that day.
    pub training_minutes: f64,
    pub sessions: usize,
    /// Estimated muscle glycogen as a fraction of capacity at the start and end of the day.
    pub muscle_glycogen_start: f64,
    pub muscle_glycogen_end: f64,
    /// The lowest estimated muscle glycogen fraction at the start of any session that day.
    pub lowest_session_start_glycogen: Option<f64>,
    /// Codes of the day's warnings and safety flags (day plan and week
    /// checks); notices are in the full plan only.
    pub warnings: Vec<String>,
}

fn round(x: f64, places: i32) -> f64 {
    let f = 10f64.powi(places);
    (x * f).round() / f
}

fn label<T: Serialize>(value: &T) -> String {
    crate::domain::label_of(value)
}

fn summary_rows(weeks: &[AthleteWeek]) -> Vec<SummaryRow> {
    let mut rows = Vec::new();
    for week in weeks {
        let Ok(plan) = &week.plan else { continue };
        for day in &plan.days {
            let p = &day.plan;
            let mut warnings: Vec<String> = p
                .warnings
                .iter()
                .filter(|w| w.severity != Severity::Notice)
                .map(|w| label(&w.code))
                .collect();
            warnings.extend(
                plan.warnings
                    .iter()
                    .filter(|w| w.date == day.date && w.severity != Severity::Notice)
                    .map(|w| label(&w.code)),
            );
            warnings.sort();
            warnings.dedup();
            rows.push(SummaryRow {
                athlete_id: week.athlete.id,
                display_name: week.athlete.display_name.clone(),
                date: day.date,
                load_band: p.load.band,
                carbohydrate_g_per_kg: round(p.carbohydrate.g_per_kg, 2),
                carbohydrate_g: round(p.carbohydrate.g, 1),
                carbohydrate_pinned: p.carbohydrate.pinned,
                protein_g: round(p.protein.g, 1),
                fat_g: round(p.fat.g, 1),
                energy_kcal: round(p.energy.kcal, 0),
                energy_availability: round(p.energy_availability.kcal_per_kg_fat_free_mass, 1),
                energy_availability_band: p.energy_availability.band,
                training_minutes: round(
                    day.sessions.iter().map(|s| s.fuel_summary.minutes).sum(),
                    1,
                ),
                sessions: day.sessions.len(),
                muscle_glycogen_start: round(day.glycogen_at_start.muscle_fraction, 3),
                muscle_glycogen_end: round(day.glycogen_at_end.muscle_fraction, 3),
                lowest_session_start_glycogen: day
                    .sessions
                    .iter()
                    .map(|s| round(s.glycogen_at_start.muscle_fraction, 3))
                    .reduce(f64::min),
                warnings,
            });
        }
    }
    rows
}

/// What a snapshot keeps of an athlete-day: the summary row and the times
/// of its eating occasions, so `/plan/changes` can show moved meals too.
#[derive(Debug, Serialize, Deserialize)]
struct SnapshotRow {
    #[serde(flatten)]
    row: SummaryRow,
    #[serde(default)]
    eating_occasions: Vec<OccasionTime>,
}

/// An eating occasion's local time (`HH:MM`) and kind.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
struct OccasionTime {
    time: String,
    kind: String,
}

fn snapshot_rows(weeks: &[AthleteWeek]) -> Vec<SnapshotRow> {
    let mut occasions: HashMap<(Uuid, NaiveDate), Vec<OccasionTime>> = HashMap::new();
    for week in weeks {
        let Ok(plan) = &week.plan else { continue };
        for day in &plan.days {
            occasions.insert(
                (week.athlete.id, day.date),
                day.plan
                    .eating_occasions
                    .iter()
                    .map(|o| OccasionTime {
                        time: o.time.format("%H:%M").to_string(),
                        kind: label(&o.kind),
                    })
                    .collect(),
            );
        }
    }
    summary_rows(weeks)
        .into_iter()
        .map(|row| SnapshotRow {
            eating_occasions: occasions
                .remove(&(row.athlete_id, row.date))
                .unwrap_or_default(),
            row,
        })
        .collect()
}

async fn save_snapshot(
    state: &AppState,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
    weeks: &[AthleteWeek],
) {
    let _ = snapshot_saver(state, team_id, version, span, weeks).await;
}

/// Stores the plan's "what changed" snapshot in a task of its own, so the
/// database work runs while the caller writes its response; await the
/// handle before answering, so a snapshot exists once the plan is seen.
fn snapshot_saver(
    state: &AppState,
    team_id: Uuid,
    version: i64,
    span: (NaiveDate, NaiveDate),
    weeks: &[AthleteWeek],
) -> tokio::task::JoinHandle<()> {
    let rows = serde_json::to_string(&snapshot_rows(weeks)).unwrap_or_default();
    let db = state.db.clone();
    // A snapshot is a convenience for "what changed"; failing to store one
    // (read-only disk, busy writer) must not fail the plan itself.
    tokio::spawn(async move {
        match plans::has_snapshot(&db, team_id, version, span).await {
            Ok(true) => {}
            Ok(false) => {
                if let Err(e) = plans::save_snapshot(&db, team_id, version, span, &rows).await {
                    tracing::warn!(error = %e, "could not store a plan snapshot");
                }
            }
            Err(e) => tracing::warn!(error = %e, "could not read plan snapshots"),
        }
    })
}

/// The compact squad summary for overview screens.
#[derive(Debug, Serialize, ToSchema)]
pub struct TeamSummary {
    pub team_id: Uuid,
    pub from: NaiveDate,
    pub to: NaiveDate,
    /// The inputs' version; pass it to `/plan/changes` after a change.
    pub version: i64,
    /// One row per athlete and day.
    pub rows: Vec<SummaryRow>,
    /// The squad's catering totals per day (also `/plan/totals.csv`).
    pub day_totals: Vec<DayTotal>,
    /// Athletes without a plan and why.
    pub unplanned: Vec<Unplanned>,
    /// Every week-level warning, with its cause and fix.
    pub warnings: Vec<WeekWarning>,
    /// Warnings about an athlete rather than a day (under 18, a health
    /// condition, a capped goal rate, estimated fat-free mass, energy
    /// availability reduced by a planned deficit), once per athlete with the
    /// dates they apply to.
    pub athlete_warnings: Vec<SummaryAthleteWarning>,
    pub cautions: Vec<String>,
}

/// One athlete-level warning in the squad summary.
#[derive(Debug, Serialize, ToSchema)]
pub struct SummaryAthleteWarning {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub code: crate::engine::day::notes::WarningCode,
    pub severity: Severity,
    pub message: String,
    /// Dates in the span it applies to.
    pub dates: Vec<NaiveDate>,
}

fn athlete_warnings(weeks: &[AthleteWeek]) -> Vec<SummaryAthleteWarning> {
    weeks
        .iter()
        .filter_map(|w| w.plan.as_ref().ok().map(|p| (w, p)))
        .flat_map(|(w, p)| {
            p.athlete_warnings
                .iter()
                .map(|warning| SummaryAthleteWarning {
                    athlete_id: w.athlete.id,
                    display_name: w.athlete.display_name.clone(),
                    code: warning.code,
                    severity: warning.severity,
                    message: warning.message.clone(),
                    dates: warning.dates.clone(),
                })
        })
        .collect()
}

#[derive(Debug, Serialize, ToSchema)]
pub struct Unplanned {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub problems: Vec<String>,
}

fn unplanned(weeks: &[AthleteWeek]) -> Vec<Unplanned> {
    weeks
        .iter()
        .filter_map(|w| {
            w.plan.as_ref().err().map(|problems| Unplanned {
                athlete_id: w.athlete.id,
                display_name: w.athlete.display_name.clone(),
                problems: problems.clone(),
            })
        })
        .collect()
}

/// The squad summary: one row per athlete per day.
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan/summary", tag = "plans",
    params(("team_id" = Uuid, Path), PlanParams, ("if-none-match" = Option<String>, Header)),
    responses(
        (status = 200, description = "The squad summary (estimates)", body = TeamSummary, headers(("etag" = String))),
        (status = 304, description = "Unchanged since the ETag you sent")))]
async fn team_summary(
    State(state): State<AppState>,
    caller: Caller,
    headers: HeaderMap,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PlanParams>,
) -> Result<Response> {
    let team = visible_team(&state, &caller, team_id).await?;
    let PlanKey {
        span,
        version,
        etag,
        flight: _flight,
    } = match prepare(&state, &headers, &team, &q, "summary").await? {
        Ok(res) => return Ok(res),
        Err(key) => key,
    };
    let zone = team.tz();
    let (_, weeks) = compute(&state, team, &q, span, None, false).await?;
    let started = std::time::Instant::now();
    let saving = snapshot_saver(&state, team_id, version, span, &weeks);
    let rows = summary_rows(&weeks);
    let body = TeamSummary {
        team_id,
        from: span.0,
        to: span.1,
        version,
        day_totals: day_totals(&rows),
        rows,
        unplanned: unplanned(&weeks),
        warnings: weeks
            .iter()
            .filter_map(|w| w.plan.as_ref().ok())
            .flat_map(|p| p.warnings.iter().cloned())
            .collect(),
        athlete_warnings: athlete_warnings(&weeks),
        cautions: planner::general_cautions(),
    };
    let response = store_and_respond(&state, &headers, &etag, &zone, &body);
    let written = started.elapsed();
    let _ = saving.await;
    tracing::debug!(
        body_ms = written.as_secs_f64() * 1000.0,
        with_snapshot_ms = started.elapsed().as_secs_f64() * 1000.0,
        "summary written"
    );
    response
}

/// The summary's columns, in order: exactly the fields of [`SummaryRow`]
/// (a test checks they match the JSON).
pub const SUMMARY_CSV_COLUMNS: [&str; 18] = [
    "athlete_id",
    "display_name",
    "date",
    "load_band",
    "carbohydrate_g_per_kg",
    "carbohydrate_g",
    "carbohydrate_pinned",
    "protein_g",
    "fat_g",
    "energy_kcal",
    "energy_availability",
    "energy_availability_band",
    "training_minutes",
    "sessions",
    "muscle_glycogen_start",
    "muscle_glycogen_end",
    "lowest_session_start_glycogen",
    "warnings",
];

/// The squad totals' columns: exactly the fields of [`DayTotal`].
pub const TOTALS_CSV_COLUMNS: [&str; 6] = [
    "date",
    "athletes",
    "carbohydrate_g",
    "protein_g",
    "fat_g",
    "energy_kcal",
];

/// The squad's catering totals for one day (sum of the athletes' day targets).
#[derive(Debug, Clone, PartialEq, Serialize, ToSchema)]
pub struct DayTotal {
    pub date: NaiveDate,
    /// Athletes planned that day.
    pub athletes: usize,
    pub carbohydrate_g: f64,
    pub protein_g: f64,
    pub fat_g: f64,
    pub energy_kcal: f64,
}

fn day_totals(rows: &[SummaryRow]) -> Vec<DayTotal> {
    let mut totals: std::collections::BTreeMap<NaiveDate, DayTotal> = Default::default();
    for r in rows {
        let t = totals.entry(r.date).or_insert_with(|| DayTotal {
            date: r.date,
            athletes: 0,
            carbohydrate_g: 0.0,
            protein_g: 0.0,
            fat_g: 0.0,
            energy_kcal: 0.0,
        });
        t.athletes += 1;
        t.carbohydrate_g += r.carbohydrate_g;
        t.protein_g += r.protein_g;
        t.fat_g += r.fat_g;
        t.energy_kcal += r.energy_kcal;
    }
    totals
        .into_values()
        .map(|mut t| {
            t.carbohydrate_g = round(t.carbohydrate_g, 1);
            t.protein_g = round(t.protein_g, 1);
            t.fat_g = round(t.fat_g, 1);
            t.energy_kcal = round(t.energy_kcal, 0);
            t
        })
        .collect()
}

/// Writes records as RFC 4180 CSV (CRLF, header row) whose columns are the
/// records' JSON fields, so a spreadsheet and a JSON client read the same
/// names and values. Text cells are quoted and neutralised against formula
/// injection; numbers are written as in the JSON, never as `-0`.
fn records_csv<T: Serialize>(
    columns: &[&str],
    records: &[T],
) -> std::result::Result<Vec<u8>, csv::Error> {
    let mut out = csv::WriterBuilder::new()
        .terminator(csv::Terminator::CRLF)
        .quote_style(csv::QuoteStyle::NonNumeric)
        .from_writer(Vec::new());
    out.write_record(columns)?;
    for record in records {
        let value =
            serde_json::to_value(record).map_err(|e| csv::Error::from(std::io::Error::other(e)))?;
        out.write_record(columns.iter().map(|c| csv_cell(&value[*c])))?;
    }
    out.into_inner().map_err(|e| e.into_error().into())
}

/// One CSV cell from a JSON value: lists are joined with spaces.
pub fn csv_cell(value: &serde_json::Value) -> String {
    use serde_json::Value;
    match value {
        Value::Null => String::new(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => match (n.as_i64(), n.as_f64()) {
            (Some(i), _) => i.to_string(),
            (None, Some(f)) => {
                let rounded = (f * 1000.0).round() / 1000.0;
                // `+ 0.0` turns -0 into 0.
                (if rounded == 0.0 { 0.0 } else { rounded }).to_string()
            }
            _ => n.to_string(),
        },
        Value::String(s) => neutralise(s),
        Value::Array(items) => neutralise(
            &items
                .iter()
                .map(|v| match v {
                    Value::String(s) => s.clone(),
                    other => csv_cell(other),
                })
                .collect::<Vec<_>>()
                .join(" "),
        ),
        Value::Object(_) => neutralise(&value.to_string()),
    }
}

/// OWASP's CSV-injection guidance: a cell that starts with `=`, `+`, `-`,
/// `@`, tab or carriage return (or their full-width forms, which some
/// spreadsheets also read as formulas) is prefixed with a single quote, so
/// a spreadsheet shows it as text instead of evaluating it. Quoting and
/// doubling of `"` is done by the CSV writer.
pub fn neutralise(text: &str) -> String {
    match text.chars().next() {
        Some('=' | '+' | '-' | '@' | '\t' | '\r' | '\n' | '＝' | '＋' | '－' | '＠') => {
            format!("'{text}")
        }
        _ => text.to_owned(),
    }
}

/// Renders the summary as RFC 4180 CSV: one row per athlete and day, by
/// date then name. Squad totals are a separate sheet (`/plan/totals.csv`).
pub fn summary_csv(rows: &[SummaryRow]) -> std::result::Result<Vec<u8>, csv::Error> {
    let mut sorted: Vec<&SummaryRow> = rows.iter().collect();
    sorted.sort_by(|a, b| (a.date, &a.display_name).cmp(&(b.date, &b.display_name)));
    records_csv(&SUMMARY_CSV_COLUMNS, &sorted)
}

fn csv_response(bytes: Vec<u8>, filename: &str, etag: &str) -> Response {
    let mut res = (StatusCode::OK, bytes).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("text/csv; charset=utf-8; header=present"),
    );
    let disposition = format!("attachment; filename=\"{filename}\"");
    if let Ok(v) = HeaderValue::from_str(&disposition) {
        res.headers_mut().insert(header::CONTENT_DISPOSITION, v);
    }
    with_etag(res, etag)
}

/// The squad summary as CSV (RFC 4180) for spreadsheets and kitchens: one
/// row per athlete and day, columns named as the JSON summary's fields.
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan/summary.csv", tag = "plans",
    params(("team_id" = Uuid, Path), PlanParams, ("if-none-match" = Option<String>, Header)),
    responses(
        (status = 200, description = "CSV, one row per athlete and day; columns are the fields of SummaryRow. Text cells starting with = + - @ tab or CR are prefixed with a single quote (OWASP CSV injection guidance).", content_type = "text/csv", body = String, headers(("etag" = String))),
        (status = 304, description = "Unchanged since the ETag you sent")))]
async fn team_summary_csv(
    State(state): State<AppState>,
    caller: Caller,
    headers: HeaderMap,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PlanParams>,
) -> Result<Response> {
    let team = visible_team(&state, &caller, team_id).await?;
    let span = span_of(&q, &team)?;
    let version = audit::team_version(&state.db.read, team_id).await?;
    let etag = plan_etag(version, span, &q.variant("csv"));
    if let Some(res) = not_modified(&headers, &etag)? {
        return Ok(res);
    }
    let (_, weeks) = compute(&state, team, &q, span, None, false).await?;
    let bytes = summary_csv(&summary_rows(&weeks)).map_err(ApiError::internal)?;
    Ok(csv_response(
        bytes,
        &format!("plan-{}-{}.csv", span.0, span.1),
        &etag,
    ))
}

/// The squad's catering totals per day as CSV (RFC 4180), columns named as
/// the JSON summary's `day_totals` fields.
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan/totals.csv", tag = "plans",
    params(("team_id" = Uuid, Path), PlanParams, ("if-none-match" = Option<String>, Header)),
    responses(
        (status = 200, description = "CSV, one row per day; columns are the fields of DayTotal", content_type = "text/csv", body = String, headers(("etag" = String))),
        (status = 304, description = "Unchanged since the ETag you sent")))]
async fn team_totals_csv(
    State(state): State<AppState>,
    caller: Caller,
    headers: HeaderMap,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PlanParams>,
) -> Result<Response> {
    let team = visible_team(&state, &caller, team_id).await?;
    let span = span_of(&q, &team)?;
    let version = audit::team_version(&state.db.read, team_id).await?;
    let etag = plan_etag(version, span, &q.variant("totals-csv"));
    if let Some(res) = not_modified(&headers, &etag)? {
        return Ok(res);
    }
    let (_, weeks) = compute(&state, team, &q, span, None, false).await?;
    let bytes = records_csv(&TOTALS_CSV_COLUMNS, &day_totals(&summary_rows(&weeks)))
        .map_err(ApiError::internal)?;
    Ok(csv_response(
        bytes,
        &format!("totals-{}-{}.csv", span.0, span.1),
        &etag,
    ))
}

#[cfg(test)]
mod csv_tests {
    use super::*;

    fn keys<T: Serialize>(value: &T) -> Vec<String> {
        let mut keys: Vec<String> = serde_json::to_value(value)
            .unwrap()
            .as_object()
            .unwrap()
            .keys()
            .cloned()
            .collect();
        keys.sort();
        keys
    }

    fn sorted(columns: &[&str]) -> Vec<String> {
        let mut c: Vec<String> = columns.iter().map(|s| s.to_string()).collect();
        c.sort();
        c
    }

    #[test]
    fn csv_columns_are_exactly_the_json_fields() {
        let row = SummaryRow {
            athlete_id: Uuid::nil(),
            display_name: "A".into(),
            date: NaiveDate::from_ymd_opt(2026, 12, 7).unwrap(),
            load_band: LoadBand::Light,
            carbohydrate_g_per_kg: 3.0,
            carbohydrate_g: 200.0,
            carbohydrate_pinned: false,
            protein_g: 100.0,
            fat_g: 60.0,
            energy_kcal: 2000.0,
            energy_availability: 45.0,
            energy_availability_band: EnergyAvailabilityBand::Adequate,
            training_minutes: 0.0,
            sessions: 0,
            muscle_glycogen_start: 1.0,
            muscle_glycogen_end: 1.0,
            lowest_session_start_glycogen: None,
            warnings: vec![],
        };
        assert_eq!(keys(&row), sorted(&SUMMARY_CSV_COLUMNS));
        assert_eq!(keys(&day_totals(&[row])[0]), sorted(&TOTALS_CSV_COLUMNS));
    }

    #[test]
    fn negative_zero_is_written_as_zero_and_formulas_are_neutralised() {
        assert_eq!(csv_cell(&serde_json::json!(-0.0)), "0");
        assert_eq!(csv_cell(&serde_json::json!(-0.0001)), "0");
        assert_eq!(csv_cell(&serde_json::json!(-1.5)), "-1.5");
        assert_eq!(csv_cell(&serde_json::json!("=1+2")), "'=1+2");
        assert_eq!(csv_cell(&serde_json::json!("Ada")), "Ada");
    }
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct ChangesParams {
    /// The `version` of a summary you read before the change.
    #[param(minimum = 0)]
    since_version: i64,
    from: Option<NaiveDate>,
    to: Option<NaiveDate>,
    #[param(pattern = r"^\d{4}-W\d{2}$")]
    week: Option<String>,
}

/// One field of an athlete-day that a change moved.
#[derive(Debug, Serialize, ToSchema)]
pub struct FieldChange {
    pub field: String,
    #[schema(value_type = Object)]
    pub before: serde_json::Value,
    #[schema(value_type = Object)]
    pub after: serde_json::Value,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct DayChange {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub date: NaiveDate,
    /// `changed`, `added` (no row before) or `removed` (no row now).
    pub kind: String,
    pub fields: Vec<FieldChange>,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct PlanChanges {
    pub from_version: i64,
    pub to_version: i64,
    pub from: NaiveDate,
    pub to: NaiveDate,
    /// The inputs that changed between the two versions.
    pub input_changes: Vec<audit::Change>,
    /// Athlete-days whose plan changed, by athlete and date.
    pub days: Vec<DayChange>,
}

fn diff_rows(before: &[SnapshotRow], after: &[SnapshotRow]) -> Vec<DayChange> {
    let key = |r: &SnapshotRow| (r.row.athlete_id, r.row.date);
    let old: HashMap<_, _> = before.iter().map(|r| (key(r), r)).collect();
    let new: HashMap<_, _> = after.iter().map(|r| (key(r), r)).collect();
    let mut out = Vec::new();
    for r in after {
        match old.get(&key(r)) {
            None => out.push(DayChange {
                athlete_id: r.row.athlete_id,
                display_name: r.row.display_name.clone(),
                date: r.row.date,
                kind: "added".into(),
                fields: Vec::new(),
            }),
            Some(o) => {
                let (a, b) = (
                    serde_json::to_value(o).unwrap_or_default(),
                    serde_json::to_value(r).unwrap_or_default(),
                );
                let fields: Vec<FieldChange> = b
                    .as_object()
                    .into_iter()
                    .flatten()
                    .filter(|(k, v)| a.get(k.as_str()) != Some(v) && k.as_str() != "display_name")
                    .map(|(k, v)| FieldChange {
                        field: k.clone(),
                        before: a.get(k.as_str()).cloned().unwrap_or_default(),
                        after: v.clone(),
                    })
                    .collect();
                if !fields.is_empty() {
                    out.push(DayChange {
                        athlete_id: r.row.athlete_id,
                        display_name: r.row.display_name.clone(),
                        date: r.row.date,
                        kind: "changed".into(),
                        fields,
                    });
                }
            }
        }
    }
    for r in before {
        if !new.contains_key(&key(r)) {
            out.push(DayChange {
                athlete_id: r.row.athlete_id,
                display_name: r.row.display_name.clone(),
                date: r.row.date,
                kind: "removed".into(),
                fields: Vec::new(),
            });
        }
    }
    out.sort_by(|x, y| (&x.display_name, x.date).cmp(&(&y.display_name, y.date)));
    out
}

/// What changed in the squad plan since a version you read (e.g. after a
/// coach moved a session): per athlete and day, each target that moved.
#[utoipa::path(get, path = "/v1/teams/{team_id}/plan/changes", tag = "plans",
    params(("team_id" = Uuid, Path), ChangesParams),
    responses((status = 200, description = "Differences between the two versions' plans", body = PlanChanges)))]
async fn plan_changes(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(c): QueryParams<ChangesParams>,
) -> Result<Response> {
    let team = visible_team(&state, &caller, team_id).await?;
    let q = PlanParams {
        from: c.from,
        to: c.to,
        week: c.week,
        start_glycogen_fraction: None,
        include_session_fuel: None,
        include_glycogen_series: None,
    };
    let span = span_of(&q, &team)?;
    let version = audit::team_version(&state.db.read, team_id).await?;
    if c.since_version > version || c.since_version < 0 {
        return Err(ApiError::field(
            "since_version",
            "is not a version of this team",
        ));
    }
    let before_json = plans::snapshot(&state.db, team_id, c.since_version, span)
        .await?
        .ok_or_else(|| {
            ApiError::field(
                "since_version",
                "no plan of that version and span was computed (read the summary for the same span first; recent versions are kept)",
            )
        })?;
    let before: Vec<SnapshotRow> =
        serde_json::from_str(&before_json).map_err(ApiError::internal)?;
    let (_, weeks) = compute(&state, team, &q, span, None, false).await?;
    save_snapshot(&state, team_id, version, span, &weeks).await;
    let after = snapshot_rows(&weeks);
    let input_changes = audit::changes(&state.db.read, team_id, c.since_version, 500).await?;
    Ok(json(
        StatusCode::OK,
        &PlanChanges {
            from_version: c.since_version,
            to_version: version,
            from: span.0,
            to: span.1,
            input_changes,
            days: diff_rows(&before, &after),
        },
    ))
}

/// One athlete's plan for a span (a week by default).
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/plan", tag = "plans",
    params(("athlete_id" = Uuid, Path), PlanParams, ("if-none-match" = Option<String>, Header)),
    responses(
        (status = 200, description = "The athlete's plan (estimates)", body = AthletePlan, headers(("etag" = String))),
        (status = 304, description = "Unchanged since the ETag you sent")))]
async fn athlete_plan(
    State(state): State<AppState>,
    caller: Caller,
    headers: HeaderMap,
    PathIds(athlete_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<PlanParams>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, athlete_id).await?;
    let team = visible_team(&state, &caller, athlete.team_id).await?;
    let variant = format!("athlete-{athlete_id}");
    let PlanKey {
        span,
        etag,
        flight: _flight,
        ..
    } = match prepare(&state, &headers, &team, &q, &variant).await? {
        Ok(res) => return Ok(res),
        Err(key) => key,
    };
    let zone = team.tz();
    let (data, weeks) = compute(&state, team, &q, span, Some(athlete_id), true).await?;
    let Some(plan) = athlete_plans(
        &state,
        &data,
        weeks,
        q.include_glycogen_series == Some(true),
    )
    .await?
    .into_iter()
    .next() else {
        return Err(ApiError::Conflict(
            "This athlete is archived: archived athletes are not planned. Set status to active to plan them.".into(),
        ));
    };
    store_and_respond(&state, &headers, &etag, &zone, &plan)
}

#[derive(Debug, Deserialize, IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct ChangesFeedParams {
    /// The last `seq` you processed (0 for everything). To poll later, keep
    /// the `seq` of the last change you processed and pass it here.
    #[param(minimum = 0)]
    since: Option<i64>,
    /// Items per page, 1 to 200 (default 50).
    #[param(minimum = 1, maximum = 200)]
    limit: Option<u32>,
    /// The `next_cursor` of the previous page.
    cursor: Option<String>,
}

/// A cheap changes feed of the team's inputs (cursor `since`).
#[utoipa::path(get, path = "/v1/teams/{team_id}/changes", tag = "plans",
    params(("team_id" = Uuid, Path), ChangesFeedParams),
    responses((status = 200, description = "One page of changes after `since`, oldest first", body = Page<audit::Change>)))]
async fn changes_feed(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(team_id): PathIds<Uuid>,
    QueryParams(q): QueryParams<ChangesFeedParams>,
) -> Result<Response> {
    visible_team(&state, &caller, team_id).await?;
    let since = q.since.unwrap_or(0);
    if since < 0 {
        return Err(ApiError::field("since", "must be 0 or more"));
    }
    let page = PageParams {
        limit: q.limit,
        cursor: q.cursor,
    };
    let limit = page.limit()?;
    let cursor: Option<i64> = page.after()?;
    let after = since.max(cursor.unwrap_or(0));
    let changes = audit::changes(&state.db.read, team_id, after, limit + 1).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_overfetch(changes, limit, |c| c.seq),
    ))
}
