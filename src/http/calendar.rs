//! Calendar feeds (RFC 5545) of an athlete's eating occasions and session
//! fuelling. Calendar apps cannot send bearer tokens, so each feed is reached
//! through a secret, revocable URL; only the hash of the secret is stored.
//! Times are written in UTC, converted from the team's zone, so every
//! calendar shows the right local time on both sides of a clock change.

use axum::extract::State;
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use chrono::{Days, NaiveDateTime, TimeZone, Utc};
use serde::Serialize;
use utoipa::ToSchema;
use utoipa_axum::{router::OpenApiRouter, routes};
use uuid::Uuid;

use super::athletes::visible_athlete;
use super::auth::Caller;
use super::extract::{PathIds, QueryParams};
use super::{json, team_today};
use crate::AppState;
use crate::domain::label_of;
use crate::engine::week::{WeekPlan, WeekThresholds};
use crate::error::{ApiError, Result};
use crate::planner::{self, LOOK_AHEAD_DAYS, LOOK_BEHIND_DAYS, PlanOptions, TeamData};
use crate::store::planning::{self, CalendarFeed};
use crate::store::{athletes, teams};

pub fn router() -> OpenApiRouter<AppState> {
    OpenApiRouter::new()
        .routes(routes!(list_feeds, create_feed))
        .routes(routes!(revoke_feed))
        .routes(routes!(calendar))
}

/// Days of plan a feed carries before and after today.
pub const FEED_DAYS_BEFORE: u64 = 7;
pub const FEED_DAYS_AFTER: u64 = 27;

#[derive(Debug, Serialize, ToSchema)]
pub struct CreatedFeed {
    #[serde(flatten)]
    pub feed: CalendarFeed,
    /// Path of the feed, relative to this service; give it to the athlete's
    /// calendar app. Shown once: only its hash is stored.
    pub path: String,
}

/// An athlete's calendar-feed links (never their secrets).
#[utoipa::path(get, path = "/v1/athletes/{athlete_id}/calendar-feeds", tag = "plans",
    params(("athlete_id" = Uuid, Path)),
    responses((status = 200, description = "Feed links", body = Vec<CalendarFeed>)))]
async fn list_feeds(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    Ok(json(
        StatusCode::OK,
        &planning::list_feeds(&state.db, id).await?,
    ))
}

/// Create a secret calendar-feed link for an athlete.
#[utoipa::path(post, path = "/v1/athletes/{athlete_id}/calendar-feeds", tag = "plans",
    params(("athlete_id" = Uuid, Path)),
    responses((status = 201, description = "Created; the path holds the secret and is shown once", body = CreatedFeed)))]
async fn create_feed(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let (feed, secret) =
        planning::create_feed(&state.db, caller.actor(), athlete.team_id, id).await?;
    Ok(json(
        StatusCode::CREATED,
        &CreatedFeed {
            feed,
            path: format!("/v1/calendar/{secret}"),
        },
    ))
}

/// Revoke a calendar-feed link; it stops working at once.
#[utoipa::path(delete, path = "/v1/athletes/{athlete_id}/calendar-feeds/{feed_id}", tag = "plans",
    params(("athlete_id" = Uuid, Path), ("feed_id" = Uuid, Path)),
    responses((status = 204, description = "Revoked")))]
async fn revoke_feed(
    State(state): State<AppState>,
    caller: Caller,
    PathIds((id, feed_id)): PathIds<(Uuid, Uuid)>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    if planning::revoke_feed(&state.db, caller.actor(), athlete.team_id, id, feed_id).await? {
        Ok(StatusCode::NO_CONTENT.into_response())
    } else {
        Err(ApiError::NotFound("calendar feed"))
    }
}

/// The athlete's eating occasions and session fuelling as an iCalendar feed
/// (no token: the secret in the path is the credential).
#[utoipa::path(get, path = "/v1/calendar/{secret}", tag = "plans", security(()),
    params(("secret" = String, Path, description = "The secret from creating the feed"), CalendarParams),
    responses(
        (status = 200, description = "iCalendar (RFC 5545)", content_type = "text/calendar", body = String),
        (status = 404, description = "Unknown or revoked feed", content_type = "application/problem+json", body = crate::error::Problem)))]
async fn calendar(
    State(state): State<AppState>,
    PathIds(secret): PathIds<String>,
    QueryParams(q): QueryParams<CalendarParams>,
) -> Result<Response> {
    let not_found = || ApiError::NotFound("calendar feed");
    if secret.len() != 48 || !secret.bytes().all(|b| b.is_ascii_hexdigit()) {
        return Err(not_found());
    }
    let athlete_id = planning::feed_athlete(&state.db, &secret)
        .await?
        .ok_or_else(not_found)?;
    let athlete = athletes::get(&state.db, athlete_id)
        .await?
        .ok_or_else(not_found)?;
    let team = teams::get(&state.db, athlete.team_id)
        .await?
        .ok_or_else(not_found)?;
    let tz = team.tz();
    let today = team_today(&team);
    let from = q.from.unwrap_or(today - Days::new(FEED_DAYS_BEFORE));
    let to =
        q.to.unwrap_or(from + Days::new(FEED_DAYS_BEFORE + FEED_DAYS_AFTER));
    if to < from || (to - from).num_days() >= super::plan::MAX_SPAN_DAYS {
        return Err(ApiError::field(
            "to",
            "must be on or after from, at most 16 weeks later",
        ));
    }
    let span = (from, to);
    let load_span = (
        span.0 - Days::new(LOOK_BEHIND_DAYS),
        span.1 + Days::new(LOOK_AHEAD_DAYS),
    );
    let settings = planning::plan_settings(&state.db, team.id).await?;
    let pins = planning::pins_for_team(&state.db, team.id, load_span).await?;
    let data = TeamData::load(&state.db, team, load_span).await?;
    let options = PlanOptions {
        span,
        settings,
        thresholds: WeekThresholds::default(),
        start_glycogen_fraction: None,
        include_session_fuel: false,
    };
    let body = tokio::task::spawn_blocking(move || {
        let weeks = planner::plan_athletes(&data, &pins, std::slice::from_ref(&athlete), &options);
        let plan = weeks.into_iter().next().and_then(|w| w.plan.ok());
        render_calendar(&athlete.display_name, athlete.id, plan.as_ref(), &tz)
    })
    .await
    .map_err(ApiError::internal)?;
    let mut res = (StatusCode::OK, body).into_response();
    res.headers_mut().insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static("text/calendar; charset=utf-8"),
    );
    Ok(res)
}

#[derive(Debug, serde::Deserialize, utoipa::IntoParams)]
#[serde(deny_unknown_fields)]
#[into_params(parameter_in = Query)]
pub struct CalendarParams {
    /// First date (default: 7 days ago in the team's zone).
    from: Option<chrono::NaiveDate>,
    /// Last date (default: `from` + 34 days).
    to: Option<chrono::NaiveDate>,
}

/// Escapes TEXT values (RFC 5545 section 3.3.11).
fn escape(text: &str) -> String {
    text.replace('\\', "\\\\")
        .replace(';', "\\;")
        .replace(',', "\\,")
        .replace('\n', "\\n")
}

/// Folds a content line at 75 octets (RFC 5545 section 3.1), never inside a character.
fn fold(line: &str, out: &mut String) {
    let mut width = 0;
    for ch in line.chars() {
        let len = ch.len_utf8();
        if width + len > 75 {
            out.push_str("\r\n ");
            width = 1;
        }
        out.push(ch);
        width += len;
    }
    out.push_str("\r\n");
}

fn utc_stamp(local: NaiveDateTime, tz: &chrono_tz::Tz) -> String {
    // A local time inside a spring-forward gap does not exist: use the
    // instant one hour later, which is what clocks show.
    let instant = tz
        .from_local_datetime(&local)
        .earliest()
        .or_else(|| {
            tz.from_local_datetime(&(local + chrono::TimeDelta::hours(1)))
                .earliest()
        })
        .map(|t| t.with_timezone(&Utc))
        .unwrap_or_else(|| Utc.from_utc_datetime(&local));
    instant.format("%Y%m%dT%H%M%SZ").to_string()
}

struct Event {
    uid: String,
    start: NaiveDateTime,
    end: NaiveDateTime,
    summary: String,
    description: String,
}

pub fn render_calendar(
    name: &str,
    athlete_id: Uuid,
    plan: Option<&WeekPlan>,
    tz: &chrono_tz::Tz,
) -> String {
    let mut events = Vec::new();
    if let Some(plan) = plan {
        for day in &plan.days {
            for (i, occasion) in day.plan.eating_occasions.iter().enumerate() {
                let kind = label_of(&occasion.kind).replace('_', " ");
                events.push(Event {
                    uid: format!("{athlete_id}-{}-meal-{i}@glycoweek", day.date),
                    start: occasion.time,
                    end: occasion.time + chrono::TimeDelta::minutes(20),
                    summary: format!(
                        "{}: {:.0} g carbohydrate, {:.0} g protein",
                        capitalise(&kind),
                        occasion.carbohydrate_g,
                        occasion.protein_g
                    ),
                    description: format!(
                        "{}\nAbout {:.0} kcal, {:.0} g fat. Estimate: check with your dietitian.",
                        occasion.note, occasion.energy_kcal, occasion.fat_g
                    ),
                });
            }
            for fuelling in &day.plan.sessions {
                let id = fuelling
                    .session
                    .session_id
                    .map(|s| s.to_string())
                    .unwrap_or_else(|| fuelling.start.to_string());
                events.push(Event {
                    uid: format!("{athlete_id}-{id}-session@glycoweek"),
                    start: fuelling.start,
                    end: fuelling.end,
                    summary: format!("{}: fuelling plan", fuelling.session.title),
                    description: format!(
                        "Before: {}\nDuring: {}\nAfter: {}\nEstimates for healthy adult athletes; defer to your dietitian or physician.",
                        fuelling.before.note, fuelling.during.note, fuelling.after.note
                    ),
                });
            }
        }
    }
    let stamp = Utc::now().format("%Y%m%dT%H%M%SZ").to_string();
    let mut out = String::new();
    for line in [
        "BEGIN:VCALENDAR".to_owned(),
        "VERSION:2.0".to_owned(),
        "PRODID:-//glycoweek//fuel plan//EN".to_owned(),
        "CALSCALE:GREGORIAN".to_owned(),
        "METHOD:PUBLISH".to_owned(),
        format!("X-WR-CALNAME:{}", escape(&format!("Fuel plan: {name}"))),
    ] {
        fold(&line, &mut out);
    }
    for e in events {
        for line in [
            "BEGIN:VEVENT".to_owned(),
            format!("UID:{}", e.uid),
            format!("DTSTAMP:{stamp}"),
            format!("DTSTART:{}", utc_stamp(e.start, tz)),
            format!(
                "DTEND:{}",
                utc_stamp(e.end.max(e.start + chrono::TimeDelta::minutes(5)), tz)
            ),
            format!("SUMMARY:{}", escape(&e.summary)),
            format!("DESCRIPTION:{}", escape(&e.description)),
            "TRANSP:TRANSPARENT".to_owned(),
            "END:VEVENT".to_owned(),
        ] {
            fold(&line, &mut out);
        }
    }
    fold("END:VCALENDAR", &mut out);
    out
}

fn capitalise(s: &str) -> String {
    let mut chars = s.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}
