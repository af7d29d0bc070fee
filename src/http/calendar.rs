//! Calendar feeds (RFC 5545) of an athlete's eating occasions and session
//! fuelling. Calendar apps cannot send bearer tokens, so each feed is reached
//! through a secret, revocable URL; only the hash of the secret is stored.
//! Times are written in the team's zone (`TZID`), with a VTIMEZONE that
//! describes that zone's offsets and clock changes over the feed's span, so
//! calendars show the planned local time on both sides of a clock change.

use axum::extract::State;
use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};
use chrono::{Datelike, Days, NaiveDate, NaiveDateTime, TimeZone, Utc};
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
use crate::domain::paging::{Page, PageParams};
use crate::engine::day::notes::Severity;
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
    params(("athlete_id" = Uuid, Path), PageParams),
    responses((status = 200, description = "One page of feed links, by id", body = Page<CalendarFeed>)))]
async fn list_feeds(
    State(state): State<AppState>,
    caller: Caller,
    PathIds(id): PathIds<Uuid>,
    QueryParams(page): QueryParams<PageParams>,
) -> Result<Response> {
    let athlete = visible_athlete(&state, &caller, id).await?;
    caller.write(athlete.team_id, "athlete")?;
    let feeds = planning::list_feeds(&state.db, id).await?;
    Ok(json(
        StatusCode::OK,
        &Page::from_sorted(feeds, &page, false, |f| f.id)?,
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
        explain_days: false,
    };
    let body = tokio::task::spawn_blocking(move || {
        let weeks = planner::plan_athletes(&data, &pins, std::slice::from_ref(&athlete), &options);
        let plan = weeks.into_iter().next().and_then(|w| w.plan.ok());
        render_calendar(&athlete.display_name, athlete.id, plan.as_deref(), &tz)
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

/// Escapes TEXT values (RFC 5545 section 3.3.11): backslash, semicolon and
/// comma are escaped; every line break (CRLF, CR or LF) becomes `\n`; other
/// control characters, which TEXT may not hold, are dropped. A stored name
/// can therefore never break the line structure of the feed.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' => out.push_str("\\\\"),
            ';' => out.push_str("\\;"),
            ',' => out.push_str("\\,"),
            '\r' => {
                if chars.peek() == Some(&'\n') {
                    chars.next();
                }
                out.push_str("\\n");
            }
            '\n' => out.push_str("\\n"),
            '\t' => out.push('\t'),
            c if c.is_control() => {}
            c => out.push(c),
        }
    }
    out
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

/// A local date-time in the feed's zone (`DTSTART;TZID=...:` form).
fn local_stamp(local: NaiveDateTime) -> String {
    local.format("%Y%m%dT%H%M%S").to_string()
}

/// `+0100`, `-0330`, or with seconds when the offset has them (RFC 5545 UTC-OFFSET).
fn utc_offset(seconds: i32) -> String {
    let sign = if seconds < 0 { '-' } else { '+' };
    let s = seconds.unsigned_abs();
    let (h, m, sec) = (s / 3600, (s % 3600) / 60, s % 60);
    if sec == 0 {
        format!("{sign}{h:02}{m:02}")
    } else {
        format!("{sign}{h:02}{m:02}{sec:02}")
    }
}

/// The zone's offset, whether it is daylight time, and its abbreviation at an instant.
fn zone_at(tz: &chrono_tz::Tz, instant: chrono::DateTime<Utc>) -> (i32, bool, String) {
    use chrono::Offset;
    use chrono_tz::OffsetComponents;
    let offset = tz.offset_from_utc_datetime(&instant.naive_utc());
    let total = offset.fix().local_minus_utc();
    let dst = !offset.dst_offset().is_zero();
    (total, dst, offset.to_string())
}

/// A VTIMEZONE (RFC 5545 section 3.6.5) for `tz` that is exact over
/// `from`..`to`: one sub-component for the offset in force at the start, and
/// one per transition inside the span, each with its own DTSTART. Built
/// from the zone database bundled with this build (chrono-tz).
pub fn vtimezone(tz: &chrono_tz::Tz, from: NaiveDate, to: NaiveDate) -> Vec<String> {
    let start = Utc.from_utc_datetime(
        &(from - Days::new(1))
            .and_hms_opt(0, 0, 0)
            .expect("midnight"),
    );
    let end = Utc.from_utc_datetime(&(to + Days::new(2)).and_hms_opt(0, 0, 0).expect("midnight"));
    let mut lines = vec!["BEGIN:VTIMEZONE".to_owned(), format!("TZID:{}", tz.name())];
    let component =
        |lines: &mut Vec<String>, onset: NaiveDateTime, before: i32, after: (i32, bool, String)| {
            let kind = if after.1 { "DAYLIGHT" } else { "STANDARD" };
            lines.push(format!("BEGIN:{kind}"));
            lines.push(format!("DTSTART:{}", local_stamp(onset)));
            lines.push(format!("TZOFFSETFROM:{}", utc_offset(before)));
            lines.push(format!("TZOFFSETTO:{}", utc_offset(after.0)));
            lines.push(format!("TZNAME:{}", escape(&after.2)));
            lines.push(format!("END:{kind}"));
        };
    let first = zone_at(tz, start);
    let onset = start.naive_utc() + chrono::TimeDelta::seconds(i64::from(first.0));
    let mut current = first.clone();
    component(&mut lines, onset, first.0, first);
    let step = chrono::TimeDelta::hours(1);
    let mut t = start;
    while t < end {
        let next = t + step;
        let there = zone_at(tz, next);
        if there.0 != current.0 || there.1 != current.1 {
            // Find the transition to the second.
            let (mut lo, mut hi) = (t, next);
            while hi - lo > chrono::TimeDelta::seconds(1) {
                let mid = lo + (hi - lo) / 2;
                if zone_at(tz, mid).0 == current.0 && zone_at(tz, mid).1 == current.1 {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            let after = zone_at(tz, hi);
            // The onset is the local time just before the change, in the old offset.
            let onset = hi.naive_utc() + chrono::TimeDelta::seconds(i64::from(current.0));
            component(&mut lines, onset, current.0, after.clone());
            current = after;
        }
        t = next;
    }
    lines.push("END:VTIMEZONE".to_owned());
    lines
}

struct Event {
    uid: String,
    start: NaiveDateTime,
    end: NaiveDateTime,
    summary: String,
    description: String,
}

/// Joins the non-empty parts of a description, one per line.
fn lines_of(parts: &[&str]) -> String {
    parts
        .iter()
        .map(|p| p.trim())
        .filter(|p| !p.is_empty())
        .collect::<Vec<_>>()
        .join("\n")
}

/// The athlete's calendar in the team's zone. Events show targets, so
/// each carries the day's safety cautions (under 18, declared medical
/// conditions, low energy availability...) exactly as the JSON plan does.
/// Only weeks (Monday to Sunday) with at least one session are included.
pub fn render_calendar(
    name: &str,
    athlete_id: Uuid,
    plan: Option<&WeekPlan>,
    tz: &chrono_tz::Tz,
) -> String {
    let mut events = Vec::new();
    let mut span: Option<(NaiveDate, NaiveDate)> = None;
    if let Some(plan) = plan {
        let weeks_with_sessions: std::collections::HashSet<chrono::IsoWeek> = plan
            .days
            .iter()
            .filter(|d| !d.plan.sessions.is_empty())
            .map(|d| d.date.iso_week())
            .collect();
        for day in plan
            .days
            .iter()
            .filter(|d| weeks_with_sessions.contains(&d.date.iso_week()))
        {
            span = Some(match span {
                None => (day.date, day.date),
                Some((a, b)) => (a.min(day.date), b.max(day.date)),
            });
            // Athlete-level safety warnings (under 18, a medical condition)
            // are given once per span in the plan; every event repeats them.
            let cautions: Vec<&str> = plan
                .athlete_warnings
                .iter()
                .filter(|w| w.severity == Severity::Safety && w.dates.contains(&day.date))
                .map(|w| w.message.as_str())
                .chain(
                    day.plan
                        .warnings
                        .iter()
                        .filter(|w| w.severity == Severity::Safety)
                        .map(|w| w.message.as_str()),
                )
                .collect();
            let caution_text = if cautions.is_empty() {
                String::new()
            } else {
                format!(
                    "Caution: {} Check these targets with a registered dietitian and a physician.",
                    cautions.join(" ")
                )
            };
            for (i, occasion) in day.plan.eating_occasions.iter().enumerate() {
                let kind = label_of(&occasion.kind).replace('_', " ");
                let amounts = format!(
                    "About {:.0} kcal, {:.0} g fat. Estimate: check with your dietitian.",
                    occasion.energy_kcal, occasion.fat_g
                );
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
                    description: lines_of(&[&occasion.note, &amounts, &caution_text]),
                });
            }
            for fuelling in &day.plan.sessions {
                let id = fuelling
                    .session
                    .session_id
                    .map(|s| s.to_string())
                    .unwrap_or_else(|| fuelling.start.to_string());
                let before = format!("Before: {}", fuelling.before.note);
                let during = format!("During: {}", fuelling.during.note);
                let after = format!("After: {}", fuelling.after.note);
                events.push(Event {
                    uid: format!("{athlete_id}-{id}-session@glycoweek"),
                    start: fuelling.start,
                    end: fuelling.end,
                    summary: format!("{}: fuelling plan", fuelling.session.title),
                    description: lines_of(&[
                        &before,
                        &during,
                        &after,
                        "Estimates for healthy adult athletes; defer to your dietitian or physician.",
                        &caution_text,
                    ]),
                });
            }
        }
    }
    let stamp = Utc::now().format("%Y%m%dT%H%M%SZ").to_string();
    let zone = tz.name();
    let mut lines = vec![
        "BEGIN:VCALENDAR".to_owned(),
        "VERSION:2.0".to_owned(),
        "PRODID:-//glycoweek//fuel plan//EN".to_owned(),
        "CALSCALE:GREGORIAN".to_owned(),
        "METHOD:PUBLISH".to_owned(),
        format!("X-WR-CALNAME:{}", escape(&format!("Fuel plan: {name}"))),
        format!("X-WR-TIMEZONE:{zone}"),
    ];
    if let Some((from, to)) = span {
        lines.extend(vtimezone(tz, from, to));
    }
    for e in events {
        let end = e.end.max(e.start + chrono::TimeDelta::minutes(5));
        lines.extend([
            "BEGIN:VEVENT".to_owned(),
            format!("UID:{}", e.uid),
            format!("DTSTAMP:{stamp}"),
            format!("DTSTART;TZID={zone}:{}", local_stamp(e.start)),
            format!("DTEND;TZID={zone}:{}", local_stamp(end)),
            format!("SUMMARY:{}", escape(&e.summary)),
            format!("DESCRIPTION:{}", escape(&e.description)),
            "TRANSP:TRANSPARENT".to_owned(),
            "END:VEVENT".to_owned(),
        ]);
    }
    lines.push("END:VCALENDAR".to_owned());
    let mut out = String::new();
    for line in lines {
        fold(&line, &mut out);
    }
    out
}

fn capitalise(s: &str) -> String {
    let mut chars = s.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_escaping_leaves_no_raw_line_break_or_control_character() {
        assert_eq!(escape("a;b,c\\d"), "a\\;b\\,c\\\\d");
        assert_eq!(
            escape("one\rtwo\r\nthree\nfour\u{7}"),
            "one\\ntwo\\nthree\\nfour"
        );
    }

    #[test]
    fn a_zone_with_a_clock_change_gets_one_component_per_offset_in_force() {
        let tz: chrono_tz::Tz = "Europe/London".parse().unwrap();
        let lines = vtimezone(
            &tz,
            NaiveDate::from_ymd_opt(2026, 10, 19).unwrap(),
            NaiveDate::from_ymd_opt(2026, 11, 1).unwrap(),
        );
        let text = lines.join("\n");
        // UK clocks go back on the last Sunday of October (25 Oct 2026) at 02:00 BST.
        assert!(text.contains("BEGIN:STANDARD\nDTSTART:20261025T020000\nTZOFFSETFROM:+0100\nTZOFFSETTO:+0000\nTZNAME:GMT"), "{text}");
        assert!(text.contains("BEGIN:DAYLIGHT\nDTSTART:20261018T010000\nTZOFFSETFROM:+0100\nTZOFFSETTO:+0100\nTZNAME:BST"), "{text}");
    }
}
