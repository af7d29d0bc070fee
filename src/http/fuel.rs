//! Energy and fuel use of sessions: the activity catalogue, a stateless
//! estimate for integrators, and the fuel of a stored session for every
//! participating athlete.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use chrono::NaiveDate;
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::auth::Caller;
use super::extract::{JsonBody, PathIds};
use super::json;
use super::sessions::visible_session;
use crate::AppState;
use crate::domain::session::{ParticipationMode, check_segments};
use crate::engine::Issues;
use crate::engine::glycogen::stores::GlycogenState;
use crate::engine::physiology::catalogue::{ACTIVITIES, Activity};
use crate::engine::physiology::session::{SessionFuel, simulate_session};
use crate::engine::profile::{AthleteProfile, Segment};
use crate::error::{ApiError, Result};
use crate::planner::{self, TeamData};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_activities))
        .routes(routes!(estimate_session))
        .routes(routes!(session_fuel))
}

/// The activity catalogue: keys usable as `{"form": "activity", "activity": KEY}`.
#[utoipa::path(get, path = "/v1/activities", tag = "engine",
    params(crate::domain::paging::PageParams),
    responses((status = 200, description = "One page of catalogue activities (in catalogue order) with their Compendium code and METs", body = crate::domain::paging::Page<Activity>)))]
async fn list_activities(
    _caller: Caller,
    super::extract::QueryParams(page): super::extract::QueryParams<
        crate::domain::paging::PageParams,
    >,
) -> Result<Response> {
    // Paged by position in the catalogue, which is fixed in a build.
    let indexed: Vec<(usize, &Activity)> = ACTIVITIES.iter().enumerate().collect();
    let page = crate::domain::paging::Page::from_sorted(indexed, &page, false, |(i, _)| *i)?;
    let page = crate::domain::paging::Page {
        items: page.items.into_iter().map(|(_, a)| a).collect::<Vec<_>>(),
        next_cursor: page.next_cursor,
    };
    Ok(json(StatusCode::OK, &page))
}

/// A session to estimate for an athlete the caller describes.
#[derive(Debug, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SessionEstimateRequest {
    pub athlete: AthleteProfile,
    pub segments: Vec<Segment>,
    /// Glycogen at the start; normal full stores when absent.
    #[serde(default)]
    pub start_glycogen: Option<GlycogenState>,
}

/// Estimated energy and fuel use of one session.
#[derive(Debug, Serialize, ToSchema)]
pub struct SessionEstimate {
    pub fuel: SessionFuel,
    /// Read these before acting on the numbers.
    pub cautions: Vec<String>,
}

/// Estimate one session's energy and fuel use for an athlete given in the
/// request (nothing is stored).
#[utoipa::path(post, path = "/v1/estimate/session", tag = "engine",
    request_body(content = SessionEstimateRequest, example = json!({
        "athlete": {
            "sex": "male", "age_years": 24, "height_cm": 179, "body_mass_kg": 75,
            "body_fat_percent": 11, "training_status": "trained",
            "vo2max": {"method": "yo_yo_ir1", "distance_m": 2200}, "hr_max": 195, "hr_rest": 50
        },
        "segments": [
            {"label": "warm-up", "minutes": 20, "intensity": {"form": "fraction_vo2max", "fraction": 0.5}},
            {"label": "first half", "minutes": 45, "intensity": {"form": "activity", "activity": "football_match"}},
            {"label": "half-time", "minutes": 15, "intensity": {"form": "mets", "mets": 1.5}},
            {"label": "second half", "minutes": 45, "intensity": {"form": "heart_rate", "bpm": 168}}
        ]
    })),
    responses((status = 200, description = "The estimate", body = SessionEstimate)))]
async fn estimate_session(
    _caller: Caller,
    JsonBody(req): JsonBody<SessionEstimateRequest>,
) -> Result<Response> {
    let mut issues = Issues::default();
    check_segments(&mut issues, "segments", &req.segments);
    issues.finish()?;
    let fuel = simulate_session(&req.athlete, &req.segments, req.start_glycogen)
        .map_err(prefix_athlete)?;
    Ok(json(
        StatusCode::OK,
        &SessionEstimate {
            fuel,
            cautions: planner::general_cautions(),
        },
    ))
}

/// The engine names profile fields `profile.x`; this request calls it `athlete`.
fn prefix_athlete(mut e: crate::engine::InvalidInput) -> ApiError {
    for issue in &mut e.issues {
        if let Some(rest) = issue.field.strip_prefix("profile.") {
            issue.field = format!("athlete.{rest}");
        }
    }
    e.into()
}

/// How an athlete takes part in a stored session.
#[derive(Debug, Serialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum TakesPart {
    Full,
    Shortened,
    Replaced,
    Skipped,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct AthleteSessionFuel {
    pub athlete_id: Uuid,
    pub display_name: String,
    pub takes_part: TakesPart,
    /// Absent when the athlete skips the session or cannot be computed.
    pub fuel: Option<SessionFuel>,
    /// Why this athlete has no result, or what was assumed.
    pub notes: Vec<String>,
}

#[derive(Debug, Serialize, ToSchema)]
pub struct StoredSessionFuel {
    pub session_id: Uuid,
    pub title: String,
    pub local_date: NaiveDate,
    /// Each active athlete of the team, by name. Estimates, with normal
    /// glycogen stores at the start (the week plan tracks glycogen).
    pub athletes: Vec<AthleteSessionFuel>,
    pub cautions: Vec<String>,
}

/// Energy and fuel use of a stored session for every athlete of the team,
/// following each athlete's participation.
#[utoipa::path(get, path = "/v1/sessions/{session_id}/fuel", tag = "engine",
    params(("session_id" = Uuid, Path)),
    responses((status = 200, description = "Per-athlete estimates", body = StoredSessionFuel)))]
async fn session_fuel(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let session = visible_session(&state, &caller, id).await?;
    let team = super::visible_team(&state, &caller, session.team_id).await?;
    let data = TeamData::load(&state.db, team, (session.local_date, session.local_date)).await?;
    let mut athletes = Vec::with_capacity(data.athletes.len());
    for athlete in &data.athletes {
        let exception = data.participation.get(&(session.id, athlete.id));
        let takes_part = match exception.map(|p| p.mode) {
            None => TakesPart::Full,
            Some(ParticipationMode::Shortened) => TakesPart::Shortened,
            Some(ParticipationMode::Replaced) => TakesPart::Replaced,
            Some(ParticipationMode::Skipped) => TakesPart::Skipped,
        };
        let mut notes = Vec::new();
        let fuel = match planner::segments_for(&session, exception) {
            None => None,
            Some(segments) => {
                let readings = data
                    .body_mass
                    .get(&athlete.id)
                    .map(Vec::as_slice)
                    .unwrap_or(&[]);
                match planner::profile_on(athlete, readings, session.local_date) {
                    Err(why) => {
                        notes.push(why);
                        None
                    }
                    Ok((profile, note)) => {
                        notes.extend(note);
                        match simulate_session(&profile, &segments, None) {
                            Ok(fuel) => Some(fuel),
                            Err(e) => {
                                notes.extend(
                                    e.issues
                                        .into_iter()
                                        .map(|i| format!("{}: {}", i.field, i.reason)),
                                );
                                None
                            }
                        }
                    }
                }
            }
        };
        athletes.push(AthleteSessionFuel {
            athlete_id: athlete.id,
            display_name: athlete.display_name.clone(),
            takes_part,
            fuel,
            notes,
        });
    }
    Ok(json(
        StatusCode::OK,
        &StoredSessionFuel {
            session_id: session.id,
            title: session.title,
            local_date: session.local_date,
            athletes,
            cautions: planner::general_cautions(),
        },
    ))
}
