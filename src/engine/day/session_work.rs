//! The work of one session for one athlete, as the session energy
//! simulation already computed it (minutes, mean intensity, kcal, grams of
//! carbohydrate oxidised). The daily planner only reads these numbers; it
//! never re-simulates a session, so it does not depend on how they were made.
//!
//! Also here: how a competition is prepared for ([`EventPreparation`]) and a
//! small reference type ([`SessionRef`]) that explanations and warnings use to
//! name the sessions that drove a target.

use chrono::{NaiveDate, NaiveDateTime, TimeDelta};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;
use uuid::Uuid;

use crate::engine::Issues;
use crate::engine::profile::SessionKind;

/// How the days before a competition are fuelled.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum EventPreparation {
    /// Matches get team-sport match practice; other sessions get none.
    #[default]
    Automatic,
    /// 6-8 g/kg on the day before and the day of the match.
    TeamSportMatch,
    /// Competition under 90 minutes: general fuelling up, 7-12 g/kg in the 24 h before.
    FuellingUp,
    /// Event over 90 minutes with loading enabled by the dietitian: 10-12 g/kg
    /// per 24 h for the 36-48 h before.
    CarbohydrateLoading,
    /// No competition preparation.
    None,
}

/// One session's work for one athlete, already computed by the session model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct SessionWork {
    /// Id of the planned session, when it is stored; echoed in warnings.
    #[serde(default)]
    pub session_id: Option<Uuid>,
    /// Short name used in explanations, e.g. "Tuesday pitch session".
    pub title: String,
    /// What kind of session (training, match, ...).
    pub kind: SessionKind,
    /// Local start time, without a time zone (e.g. `2026-03-14T15:00:00`).
    pub start: NaiveDateTime,
    /// This athlete's minutes of work in the session (over 0, at most 600).
    pub minutes: f64,
    /// Length of the session on the clock, minutes, when it is longer than
    /// this athlete's minutes (e.g. a substitute's 25 min in a 105 min match).
    /// Meals and recovery are timed from it; load and fuel use `minutes`.
    #[serde(default)]
    pub clock_minutes: Option<f64>,
    /// Mean intensity over those minutes, as a fraction of VO2max (0.1 to 1.2).
    pub mean_fraction_vo2max: f64,
    /// Gross energy expenditure of the session, kcal.
    pub gross_kcal: f64,
    /// Energy above resting expenditure, kcal (at most the gross value).
    pub net_kcal: f64,
    /// Carbohydrate oxidised during the session, grams.
    pub carbohydrate_g: f64,
    /// A session the coaches mark as important for performance.
    #[serde(default)]
    pub key_session: bool,
    /// Deliberately trained with low carbohydrate availability ("train low").
    #[serde(default)]
    pub train_low: bool,
    /// How the days before this session are fuelled if it is a competition.
    #[serde(default)]
    pub event_preparation: EventPreparation,
}

/// The competition rule a session calls for, once `automatic` is resolved.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum ResolvedPreparation {
    TeamSportMatch,
    FuellingUp,
    CarbohydrateLoading,
    None,
}

impl SessionWork {
    /// Local end time on the clock.
    pub fn end(&self) -> NaiveDateTime {
        let minutes = self.clock_minutes.unwrap_or(self.minutes).max(self.minutes);
        self.start + TimeDelta::seconds((minutes * 60.0).round() as i64)
    }

    /// Sessions whose quality rests on muscle glycogen (pitch work, matches,
    /// other conditioning), unlike gym, recovery and travel (common practice).
    pub fn needs_glycogen(&self) -> bool {
        matches!(
            self.kind,
            SessionKind::Training | SessionKind::Match | SessionKind::Other
        )
    }

    /// Key sessions and matches are what the day before prepares for.
    pub fn is_key(&self) -> bool {
        self.key_session || self.kind == SessionKind::Match
    }

    pub(crate) fn preparation(&self) -> ResolvedPreparation {
        match self.event_preparation {
            EventPreparation::Automatic if self.kind == SessionKind::Match => {
                ResolvedPreparation::TeamSportMatch
            }
            EventPreparation::Automatic | EventPreparation::None => ResolvedPreparation::None,
            EventPreparation::TeamSportMatch => ResolvedPreparation::TeamSportMatch,
            EventPreparation::FuellingUp => ResolvedPreparation::FuellingUp,
            // Loading only pays off for events over 90 minutes (Thomas et al. 2016);
            // a shorter event falls back to fuelling up and the planner warns.
            EventPreparation::CarbohydrateLoading if self.minutes > 90.0 => {
                ResolvedPreparation::CarbohydrateLoading
            }
            EventPreparation::CarbohydrateLoading => ResolvedPreparation::FuellingUp,
        }
    }

    pub(crate) fn reference(&self, day: RelativeDay) -> SessionRef {
        SessionRef {
            session_id: self.session_id,
            title: self.title.clone(),
            day,
        }
    }
}

/// Which day a referenced session belongs to, relative to the planned day.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum RelativeDay {
    PreviousDay,
    SameDay,
    NextDay,
    DayAfterNext,
}

/// Names a session in an explanation or warning.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SessionRef {
    /// Id of the session, when it was given.
    pub session_id: Option<Uuid>,
    /// Title of the session.
    pub title: String,
    /// Day of the session relative to the planned day.
    pub day: RelativeDay,
}

/// Hours from `from` to `to` (negative when `to` is earlier).
pub(crate) fn hours_between(from: NaiveDateTime, to: NaiveDateTime) -> f64 {
    (to - from).num_seconds() as f64 / 3600.0
}

pub(crate) fn add_hours(at: NaiveDateTime, hours: f64) -> NaiveDateTime {
    at + TimeDelta::seconds((hours * 3600.0).round() as i64)
}

/// Validates one list of sessions that must all start on `date`, and checks
/// that they do not overlap (an athlete cannot be in two sessions at once).
pub(crate) fn validate_sessions(
    sessions: &[SessionWork],
    field: &str,
    date: NaiveDate,
    issues: &mut Issues,
) {
    for (i, session) in sessions.iter().enumerate() {
        if session.title.trim().is_empty() || session.title.len() > 200 {
            issues.push(format!("{field}[{i}].title"), "must be 1 to 200 characters");
        }
        issues.range_with(
            || format!("{field}[{i}].minutes"),
            session.minutes,
            0.0,
            600.0,
            "minutes",
        );
        if session.minutes == 0.0 {
            issues.push(format!("{field}[{i}].minutes"), "must be over 0 minutes");
        }
        if let Some(clock) = session.clock_minutes {
            issues.range_with(
                || format!("{field}[{i}].clock_minutes"),
                clock,
                0.0,
                720.0,
                "minutes",
            );
            if clock < session.minutes {
                issues.push(
                    format!("{field}[{i}].clock_minutes"),
                    "must not be below minutes",
                );
            }
        }
        issues.range_with(
            || format!("{field}[{i}].mean_fraction_vo2max"),
            session.mean_fraction_vo2max,
            0.1,
            1.2,
            "(fraction of VO2max)",
        );
        issues.range_with(
            || format!("{field}[{i}].gross_kcal"),
            session.gross_kcal,
            0.0,
            10_000.0,
            "kcal",
        );
        issues.range_with(
            || format!("{field}[{i}].net_kcal"),
            session.net_kcal,
            0.0,
            10_000.0,
            "kcal",
        );
        if session.net_kcal > session.gross_kcal {
            issues.push(
                format!("{field}[{i}].net_kcal"),
                "must not exceed gross_kcal",
            );
        }
        issues.range_with(
            || format!("{field}[{i}].carbohydrate_g"),
            session.carbohydrate_g,
            0.0,
            2_000.0,
            "g",
        );
        if session.start.date() != date {
            issues.push(format!("{field}[{i}].start"), format!("must be on {date}"));
        }
    }
    let mut order: Vec<usize> = (0..sessions.len()).collect();
    order.sort_by_key(|&i| sessions[i].start);
    for pair in order.windows(2) {
        let (a, b) = (&sessions[pair[0]], &sessions[pair[1]]);
        let finite = a.minutes.is_finite() && a.clock_minutes.is_none_or(f64::is_finite);
        if finite && b.start < a.end() {
            issues.push(
                format!("{field}[{}].start", pair[1]),
                format!("overlaps {field}[{}]", pair[0]),
            );
        }
    }
}

/// Sum that returns +0.0 for an empty list (`Iterator::sum` gives -0.0).
pub(crate) fn total(values: impl Iterator<Item = f64>) -> f64 {
    values.fold(0.0, |sum, value| sum + value)
}

/// Sessions sorted by start time (input order is not trusted).
pub(crate) fn sorted(sessions: &[SessionWork]) -> Vec<&SessionWork> {
    let mut list: Vec<&SessionWork> = sessions.iter().collect();
    list.sort_by_key(|s| s.start);
    list
}
