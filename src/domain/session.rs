use chrono::{DateTime, NaiveDate, NaiveTime, Utc};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use super::check_text;
use crate::engine::physiology::intensity::validate_intensity;
use crate::engine::profile::{Segment, SessionKind};
use crate::engine::{InvalidInput, Issues};

pub const MAX_SEGMENTS: usize = 40;
pub const MAX_SESSION_MINUTES: f64 = 720.0;

/// A planned session as a client sends it.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SessionInput {
    /// Local date in the team's time zone.
    #[schema(example = "2026-12-08")]
    pub local_date: NaiveDate,
    /// Local start time, `HH:MM`.
    #[serde(with = "super::hhmm")]
    #[schema(value_type = String, example = "10:30")]
    pub start_time: NaiveTime,
    pub kind: SessionKind,
    #[schema(example = "Pitch: possession and transition")]
    #[schema(min_length = 1, max_length = 160)]
    pub title: String,
    /// A session the week is built around (a match, a decisive practice).
    #[serde(default)]
    pub key_session: bool,
    /// Deliberately trained with low carbohydrate availability ("train low").
    #[serde(default)]
    pub train_low: bool,
    /// The dietitian enabled carbohydrate loading before this event.
    #[serde(default)]
    pub carbohydrate_loading: bool,
    #[serde(default)]
    #[schema(max_length = 2000)]
    pub notes: Option<String>,
    /// The session's content, in order: minutes at an intensity each.
    #[schema(min_items = 1, max_items = 40)]
    pub segments: Vec<Segment>,
}

impl SessionInput {
    pub fn validate(&self) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        self.check(&mut issues, "");
        issues.finish()
    }

    /// Adds this session's issues under `prefix` (e.g. `sessions[3].`).
    pub fn check(&self, issues: &mut Issues, prefix: &str) {
        check_text(issues, &format!("{prefix}title"), &self.title, 1, 160);
        if let Some(n) = &self.notes {
            super::check_note(issues, &format!("{prefix}notes"), n, 0, 2000);
        }
        check_date(issues, &format!("{prefix}local_date"), self.local_date);
        if self.carbohydrate_loading && self.kind != SessionKind::Match {
            issues.push(
                format!("{prefix}carbohydrate_loading"),
                "only applies to a match or competition (kind = match)",
            );
        }
        if self.train_low && self.kind == SessionKind::Match {
            issues.push(
                format!("{prefix}train_low"),
                "a match is never planned with low carbohydrate availability",
            );
        }
        check_segments(issues, &format!("{prefix}segments"), &self.segments);
    }

    pub fn normalised(mut self) -> Self {
        self.title = self.title.trim().to_owned();
        self
    }
}

pub use super::check_date;

/// Checks segments for ranges that protect users. The engine checks the
/// athlete-specific consistency (e.g. heart rate above HRmax) when planning.
pub fn check_segments(issues: &mut Issues, field: &str, segments: &[Segment]) {
    if segments.is_empty() || segments.len() > MAX_SEGMENTS {
        issues.push(field, format!("must hold 1 to {MAX_SEGMENTS} segments"));
        return;
    }
    let mut total = 0.0;
    for (i, segment) in segments.iter().enumerate() {
        let at = format!("{field}[{i}]");
        issues.range(
            format!("{at}.minutes"),
            segment.minutes,
            0.5,
            600.0,
            "minutes",
        );
        if segment.minutes.is_finite() {
            total += segment.minutes;
        }
        if let Some(label) = &segment.label {
            check_text(issues, &format!("{at}.label"), label, 0, 80);
        }
        validate_intensity(&segment.intensity, &format!("{at}.intensity"), issues);
    }
    if total > MAX_SESSION_MINUTES {
        issues.push(
            field,
            format!("add up to {total} minutes; at most {MAX_SESSION_MINUTES}"),
        );
    }
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct Session {
    pub id: Uuid,
    pub team_id: Uuid,
    pub local_date: NaiveDate,
    #[serde(with = "super::hhmm")]
    #[schema(value_type = String, example = "10:30")]
    pub start_time: NaiveTime,
    pub kind: SessionKind,
    pub title: String,
    pub key_session: bool,
    pub train_low: bool,
    pub carbohydrate_loading: bool,
    pub notes: Option<String>,
    pub segments: Vec<Segment>,
    /// Sum of the segments' minutes.
    pub total_minutes: f64,
    pub version: i64,
    pub created_at: DateTime<Utc>,
    pub updated_at: DateTime<Utc>,
}

impl Session {
    pub fn input(&self) -> SessionInput {
        SessionInput {
            local_date: self.local_date,
            start_time: self.start_time,
            kind: self.kind,
            title: self.title.clone(),
            key_session: self.key_session,
            train_low: self.train_low,
            carbohydrate_loading: self.carbohydrate_loading,
            notes: self.notes.clone(),
            segments: self.segments.clone(),
        }
    }
}

pub fn total_minutes(segments: &[Segment]) -> f64 {
    segments.iter().map(|s| s.minutes).sum()
}

/// A week (or any span) of sessions imported in one all-or-nothing request.
#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SessionImport {
    /// When given, the team's existing sessions in this date span are
    /// deleted first, so a revised week replaces the old one.
    #[serde(default)]
    pub replace: Option<DateSpan>,
    pub sessions: Vec<SessionInput>,
}

pub const MAX_IMPORT_SESSIONS: usize = 500;

impl SessionImport {
    pub fn validate(&self) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        if self.sessions.is_empty() || self.sessions.len() > MAX_IMPORT_SESSIONS {
            issues.push(
                "sessions",
                format!("must hold 1 to {MAX_IMPORT_SESSIONS} sessions"),
            );
        }
        for (i, session) in self.sessions.iter().enumerate() {
            session.check(&mut issues, &format!("sessions[{i}]."));
        }
        if let Some(span) = &self.replace {
            span.check(&mut issues, "replace");
        }
        issues.finish()
    }
}

#[derive(Debug, Clone, Copy, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct DateSpan {
    pub from: NaiveDate,
    pub to: NaiveDate,
}

impl DateSpan {
    pub fn check(&self, issues: &mut Issues, field: &str) {
        check_date(issues, &format!("{field}.from"), self.from);
        check_date(issues, &format!("{field}.to"), self.to);
        if self.to < self.from {
            issues.push(format!("{field}.to"), "must not be before from");
        } else if (self.to - self.from).num_days() > 366 {
            issues.push(format!("{field}.to"), "a span covers at most 366 days");
        }
    }
}

#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct ImportResult {
    /// Sessions deleted by `replace`.
    pub deleted: u64,
    pub created: Vec<Session>,
}

/// How one athlete departs from the full session.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum ParticipationMode {
    /// Does not take part (injured, rested, away).
    Skipped,
    /// Takes part for fewer minutes (e.g. a substitute's minutes played).
    Shortened,
    /// Does other work instead (e.g. rehab), given as its own segments.
    Replaced,
}

/// Which part of a shortened session the athlete does.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema, Default)]
#[serde(rename_all = "snake_case")]
pub enum Portion {
    /// The first minutes (e.g. a starter taken off).
    FromStart,
    /// The last minutes (e.g. a substitute coming on).
    #[default]
    UntilEnd,
}

#[derive(Debug, Clone, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct ParticipationInput {
    pub mode: ParticipationMode,
    /// Minutes taken part, for `shortened`.
    #[serde(default)]
    #[schema(exclusive_minimum = 0.0, maximum = 720.0)]
    pub minutes: Option<f64>,
    /// Which part of the session, for `shortened` (default `until_end`).
    #[serde(default)]
    pub portion: Option<Portion>,
    /// The work done instead, for `replaced`.
    #[serde(default)]
    pub segments: Option<Vec<Segment>>,
    #[serde(default)]
    #[schema(max_length = 500)]
    pub note: Option<String>,
}

impl ParticipationInput {
    pub fn validate(&self, session_minutes: f64) -> Result<(), InvalidInput> {
        let mut issues = Issues::default();
        match self.mode {
            ParticipationMode::Skipped => {
                if self.minutes.is_some() {
                    issues.push("minutes", "only applies to mode shortened");
                }
                if self.segments.is_some() {
                    issues.push("segments", "only applies to mode replaced");
                }
            }
            ParticipationMode::Shortened => {
                match self.minutes {
                    None => issues.push("minutes", "is required for mode shortened"),
                    Some(m) if !m.is_finite() || m <= 0.0 || m >= session_minutes => issues.push(
                        "minutes",
                        format!(
                            "must be above 0 and below the session's {session_minutes} minutes"
                        ),
                    ),
                    _ => {}
                }
                if self.segments.is_some() {
                    issues.push("segments", "only applies to mode replaced");
                }
            }
            ParticipationMode::Replaced => {
                match &self.segments {
                    None => issues.push("segments", "is required for mode replaced"),
                    Some(segments) => check_segments(&mut issues, "segments", segments),
                }
                if self.minutes.is_some() {
                    issues.push("minutes", "only applies to mode shortened");
                }
            }
        }
        if self.portion.is_some() && self.mode != ParticipationMode::Shortened {
            issues.push("portion", "only applies to mode shortened");
        }
        if let Some(n) = &self.note {
            super::check_note(&mut issues, "note", n, 0, 500);
        }
        issues.finish()
    }
}

/// An athlete's departure from the full session. Athletes without one take
/// full part.
#[derive(Debug, Clone, Serialize, ToSchema)]
pub struct Participation {
    pub session_id: Uuid,
    pub athlete_id: Uuid,
    pub mode: ParticipationMode,
    pub minutes: Option<f64>,
    pub portion: Option<Portion>,
    pub segments: Option<Vec<Segment>>,
    pub note: Option<String>,
    pub version: i64,
    pub updated_at: DateTime<Utc>,
}

impl Participation {
    /// The segments this athlete actually does, given the session's segments.
    pub fn apply(&self, session_segments: &[Segment]) -> Vec<Segment> {
        match self.mode {
            ParticipationMode::Skipped => Vec::new(),
            ParticipationMode::Replaced => self.segments.clone().unwrap_or_default(),
            ParticipationMode::Shortened => {
                let minutes = self.minutes.unwrap_or(0.0);
                match self.portion.unwrap_or_default() {
                    Portion::FromStart => take_minutes(session_segments.iter(), minutes),
                    Portion::UntilEnd => {
                        let mut tail = take_minutes(session_segments.iter().rev(), minutes);
                        tail.reverse();
                        tail
                    }
                }
            }
        }
    }
}

fn take_minutes<'a>(segments: impl Iterator<Item = &'a Segment>, mut left: f64) -> Vec<Segment> {
    let mut out = Vec::new();
    for segment in segments {
        if left <= 0.0 {
            break;
        }
        let minutes = segment.minutes.min(left);
        left -= minutes;
        out.push(Segment {
            minutes,
            ..segment.clone()
        });
    }
    out
}
