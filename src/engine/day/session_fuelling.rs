//! Fuelling around each session: before, during and after (Thomas, Erdman &
//! Burke 2016).
//!
//! - Before: 1-4 g/kg eaten 1-4 h before sessions over 60 min [confirmed].
//!   The suggested time is 3 h before (inside the window, after waking and
//!   after the previous session), and the suggested amount pairs the hours
//!   with the grams: 1 g/kg per hour before, within 1-4 (common practice).
//! - During, by duration [partly confirmed]: under 45 min none; 45-75 min
//!   mouth rinse or small amounts; 75 min-2.5 h 30-60 g/h; over 2.5 h up to
//!   90 g/h with multiple transportable carbohydrates. The planned rate is
//!   the middle of the range (common practice; gut tolerance is individual).
//! - After: speedy refuelling 1.0-1.2 g/kg/h for up to 4 h when the next
//!   session starts within 8 h [confirmed], as hourly feeds of 1.0 g/kg
//!   (none in the last hour before the next session, none after bedtime
//!   except the first); otherwise a normal recovery meal with about 0.3 g/kg
//!   protein [from memory].
//! - Train-low sessions get no carbohydrate before or during.

use crate::engine::decimal::Dec;
use chrono::NaiveDateTime;
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::day::notes::{Severity, Warning, WarningCode};
use crate::engine::day::session_work::{
    RelativeDay, SessionRef, SessionWork, add_hours, hours_between, sorted,
};
use crate::engine::day::targets::GramsPerKgRange;
use crate::engine::sources::THOMAS_2016;

/// Pre-session carbohydrate, 1-4 g/kg (Thomas et al. 2016) [confirmed].
pub const PRE_SESSION_RANGE: GramsPerKgRange = GramsPerKgRange::new(1.0, 4.0);
/// Speedy refuelling rate, 1.0-1.2 g/kg/h (Thomas et al. 2016) [confirmed].
pub const SPEEDY_REFUELLING_RANGE: GramsPerKgRange = GramsPerKgRange::new(1.0, 1.2);
/// Speedy refuelling applies when sessions are under 8 h apart [confirmed].
pub const SPEEDY_REFUELLING_GAP_HOURS: f64 = 8.0;
/// Speedy refuelling lasts up to the first 4 h [confirmed].
pub const SPEEDY_REFUELLING_MAX_HOURS: f64 = 4.0;
/// Protein after sessions and per meal, about 0.3 g/kg [from memory].
pub const PROTEIN_PER_OCCASION_G_PER_KG: f64 = 0.3;

/// Suggested pre-session carbohydrate for a meal eaten `hours_before` the
/// start: 1 g/kg per hour, within 1-4 g/kg (common practice pairing of the
/// statement's 1-4 g/kg with 1-4 h). The planner then holds one occasion to
/// [`MAX_OCCASION_CARBOHYDRATE_G_PER_KG`].
pub fn pre_session_g_per_kg(hours_before: f64) -> f64 {
    hours_before.clamp(PRE_SESSION_RANGE.min, PRE_SESSION_RANGE.max)
}

/// What the statement's duration rows call for during a session.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum DuringGuidance {
    /// Under 45 min: none needed.
    NoneNeeded,
    /// 45-75 min: small amounts or a carbohydrate mouth rinse.
    MouthRinseOrSmallAmounts,
    /// 75 min to 2.5 h: 30-60 g/h.
    ThirtyToSixtyGramsPerHour,
    /// Over 2.5 h: up to 90 g/h from multiple transportable carbohydrates.
    UpToNinetyGramsPerHourMultipleTransportable,
    /// Train-low session: carbohydrate withheld on purpose.
    WithheldForTrainLow,
}

/// Carbohydrate per hour during a session by its duration, with the planned rate.
pub fn during_by_duration(minutes: f64) -> (DuringGuidance, f64, f64, f64) {
    // The planned rate runs continuously through the rows (common practice:
    // no jump in grams for one more minute): 0 g/h at 45 min, 30 at 75, 60 at
    // 150 and 90 from 180, each inside its row's published range.
    let planned = planned_rate_g_per_hour(minutes);
    if minutes < 45.0 {
        (DuringGuidance::NoneNeeded, 0.0, 0.0, 0.0)
    } else if minutes <= 75.0 {
        // "Small amounts" has no number in the statement: up to 30 g/h.
        (DuringGuidance::MouthRinseOrSmallAmounts, 0.0, 30.0, planned)
    } else if minutes <= 150.0 {
        (
            DuringGuidance::ThirtyToSixtyGramsPerHour,
            30.0,
            60.0,
            planned,
        )
    } else {
        // The lower edge continues the 30-60 g/h row's top.
        (
            DuringGuidance::UpToNinetyGramsPerHourMultipleTransportable,
            60.0,
            90.0,
            planned,
        )
    }
}

/// Planned carbohydrate during a session of `minutes`, g/h (see above).
fn planned_rate_g_per_hour(minutes: f64) -> f64 {
    const POINTS: [(f64, f64); 4] = [(45.0, 0.0), (75.0, 30.0), (150.0, 60.0), (180.0, 90.0)];
    if minutes <= POINTS[0].0 {
        return 0.0;
    }
    for pair in POINTS.windows(2) {
        let ((m0, r0), (m1, r1)) = (pair[0], pair[1]);
        if minutes <= m1 {
            return r0 + (r1 - r0) * (minutes - m0) / (m1 - m0);
        }
    }
    POINTS[3].1
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum AfterGuidance {
    /// Next session within 8 h: 1.0-1.2 g/kg/h for up to 4 h.
    SpeedyRefuelling,
    /// A normal meal with about 0.3 g/kg protein.
    RecoveryMeal,
}

/// Carbohydrate before a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct BeforeSession {
    /// True for sessions over 60 min (the statement's pre-event row).
    pub applies: bool,
    /// Carbohydrate withheld because the session is a train-low session.
    pub withheld_for_train_low: bool,
    /// 1-4 g/kg when the row applies.
    pub range_g_per_kg: Option<GramsPerKgRange>,
    /// Earliest local time for the pre-session meal (4 h before, after waking and the previous session).
    pub window_start: Option<NaiveDateTime>,
    /// Latest local time for the pre-session meal (1 h before).
    pub window_end: Option<NaiveDateTime>,
    /// Suggested local time.
    pub suggested_time: Option<NaiveDateTime>,
    /// Suggested carbohydrate at that time, g/kg.
    pub suggested_g_per_kg: f64,
    /// Suggested carbohydrate, g.
    pub suggested_g: f64,
    /// True when the suggestion is a small snack shortly before an early
    /// session (no 1-4 h window after waking), not a pre-session meal.
    pub snack: bool,
    /// Plain-language advice with the numbers.
    pub note: String,
}

impl SessionFuelling {
    /// Carbohydrate this plan puts before, during and after the session, g.
    pub fn carbohydrate_g(&self) -> f64 {
        let before = if self.before.suggested_time.is_some() {
            self.before.suggested_g
        } else {
            0.0
        };
        let after = match self.after.guidance {
            AfterGuidance::SpeedyRefuelling => {
                self.after.g_per_feed * self.after.feed_times.len() as f64
            }
            AfterGuidance::RecoveryMeal => 0.0,
        };
        before + self.during.planned_g + after
    }
}

/// Largest carbohydrate in one eating occasion, g/kg (common practice: a
/// large meal carries about 1-2 g/kg; more is split over a meal and a snack).
pub const MAX_OCCASION_CARBOHYDRATE_G_PER_KG: f64 = 2.0;
/// A small, easily digested snack 30-60 min before an early session, g/kg
/// (common practice): 0.5 before sessions over 60 min, 0.3 before shorter ones.
pub const EARLY_SNACK_G_PER_KG: f64 = 0.5;
pub const EARLY_SNACK_SHORT_G_PER_KG: f64 = 0.3;
/// A session starting within this many hours of waking is "early": there is
/// no time for a pre-session meal (common practice).
pub const EARLY_SESSION_HOURS_AFTER_WAKING: f64 = 2.0;

/// Carbohydrate during a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DuringSession {
    /// The statement's row for this duration.
    pub guidance: DuringGuidance,
    /// Low end of the row's rate, g/h.
    pub g_per_hour_min: f64,
    /// High end of the row's rate, g/h.
    pub g_per_hour_max: f64,
    /// Planned rate, g/h.
    pub planned_g_per_hour: f64,
    /// Planned total during the session, g.
    pub planned_g: f64,
    /// Plain-language advice with the numbers.
    pub note: String,
}

/// Refuelling after a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct AfterSession {
    /// Speedy refuelling or a normal recovery meal.
    pub guidance: AfterGuidance,
    /// Hours from this session's end to the next session's start, if any within the next day.
    pub hours_until_next_session: Option<f64>,
    /// 1.0-1.2 g/kg/h for speedy refuelling.
    pub range_g_per_kg_per_hour: Option<GramsPerKgRange>,
    /// Local times of the hourly speedy-refuelling feeds (empty for a recovery meal).
    pub feed_times: Vec<NaiveDateTime>,
    /// Carbohydrate per feed, g (1.0 g/kg).
    pub g_per_feed: f64,
    /// Planned speedy-refuelling carbohydrate, g (0 for a recovery meal, whose carbohydrate comes from the day's meals).
    pub planned_carbohydrate_g: f64,
    /// Protein after the session, g (about 0.3 g/kg).
    pub protein_g: f64,
    /// Plain-language advice with the numbers.
    pub note: String,
}

/// Fuelling plan for one session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SessionFuelling {
    /// The session.
    pub session: SessionRef,
    /// Local start time.
    pub start: NaiveDateTime,
    /// Local end time on the clock.
    pub end: NaiveDateTime,
    /// This athlete's minutes of work.
    pub minutes: f64,
    /// True for a deliberately low-carbohydrate session.
    pub train_low: bool,
    /// Carbohydrate before the session.
    pub before: BeforeSession,
    /// Carbohydrate during the session.
    pub during: DuringSession,
    /// Refuelling after the session.
    pub after: AfterSession,
    /// Where the numbers come from.
    pub source: String,
}

/// The day's clock: the athlete's waking and sleeping times on the planned date.
#[derive(Debug, Clone, Copy)]
pub struct DayClock {
    /// Local waking time.
    pub wake: NaiveDateTime,
    /// Local bedtime.
    pub sleep: NaiveDateTime,
}

/// Fuelling around each of today's sessions (sorted by start time).
pub fn plan_session_fuelling(
    today: &[SessionWork],
    previous_day: &[SessionWork],
    next_day: &[SessionWork],
    body_mass_kg: f64,
    clock: DayClock,
) -> (Vec<SessionFuelling>, Vec<Warning>) {
    let today = sorted(today);
    let mut warnings = Vec::new();
    // Speedy refuelling serves a next session that needs glycogen: gym,
    // recovery and travel do not call for it (common practice).
    let next_day_first = sorted(next_day)
        .into_iter()
        .find(|s| s.needs_glycogen())
        .map(|s| s.start);
    if let (Some(last), Some(first)) = (
        sorted(previous_day).last().filter(|s| s.needs_glycogen()),
        today.iter().find(|s| s.needs_glycogen()),
    ) {
        let gap = hours_between(last.end(), first.start);
        if gap < SPEEDY_REFUELLING_GAP_HOURS {
            warnings.push(
                Warning::new(
                    WarningCode::ShortGapBetweenSessions,
                    Severity::Warning,
                    format!(
                        "Only {gap:.1} h between yesterday's '{}' and '{}': speedy refuelling after yesterday's session runs into this morning.",
                        last.title, first.title, gap = Dec(gap)
                    ),
                )
                .for_session(first.session_id),
            );
        }
    }

    let mut plans = Vec::with_capacity(today.len());
    for (i, session) in today.iter().enumerate() {
        let end = session.end();
        let previous_end = if i > 0 {
            Some(today[i - 1].end())
        } else {
            None
        };
        // Only a session that drew on glycogen needs refilling for the next.
        let next_start = if session.needs_glycogen() {
            today[i + 1..]
                .iter()
                .find(|s| s.needs_glycogen())
                .map(|s| s.start)
                .or(next_day_first)
        } else {
            None
        };
        let before = before_session(session, previous_end, body_mass_kg, clock, &mut warnings);

        let (guidance, min, max, planned_rate) = if session.train_low {
            (DuringGuidance::WithheldForTrainLow, 0.0, 0.0, 0.0)
        } else {
            during_by_duration(session.minutes)
        };
        let during = DuringSession {
            guidance,
            g_per_hour_min: min,
            g_per_hour_max: max,
            planned_g_per_hour: planned_rate,
            planned_g: planned_rate * session.minutes / 60.0,
            note: match guidance {
                DuringGuidance::NoneNeeded => "Under 45 min: no carbohydrate needed; water to thirst.".into(),
                DuringGuidance::MouthRinseOrSmallAmounts => "45-75 min: a carbohydrate mouth rinse or small amounts; nothing planned in the day's totals.".into(),
                DuringGuidance::ThirtyToSixtyGramsPerHour => format!("1-2.5 h: 30-60 g/h; planned {planned_rate:.0} g/h.", planned_rate = Dec(planned_rate)),
                DuringGuidance::UpToNinetyGramsPerHourMultipleTransportable => format!("Over 2.5 h: up to 90 g/h from multiple transportable carbohydrates (glucose and fructose); planned {planned_rate:.0} g/h, only with a practised gut.", planned_rate = Dec(planned_rate)),
                DuringGuidance::WithheldForTrainLow => "Train-low session: no carbohydrate during, by design.".into(),
            },
        };

        let after = after_session(session, next_start, body_mass_kg, clock, &mut warnings);
        plans.push(SessionFuelling {
            session: session.reference(RelativeDay::SameDay),
            start: session.start,
            end,
            minutes: session.minutes,
            train_low: session.train_low,
            before,
            during,
            after,
            source: format!("{THOMAS_2016}; planned amounts inside the ranges are common practice"),
        });
    }
    (plans, warnings)
}

fn before_session(
    session: &SessionWork,
    previous_end: Option<NaiveDateTime>,
    body_mass_kg: f64,
    clock: DayClock,
    warnings: &mut Vec<Warning>,
) -> BeforeSession {
    let applies = session.minutes > 60.0;
    let mut before = BeforeSession {
        applies,
        withheld_for_train_low: false,
        range_g_per_kg: applies.then_some(PRE_SESSION_RANGE),
        window_start: None,
        window_end: None,
        suggested_time: None,
        suggested_g_per_kg: 0.0,
        suggested_g: 0.0,
        snack: false,
        note: "60 min or shorter: no pre-session target; the day's meals cover it.".into(),
    };
    if session.train_low {
        before.withheld_for_train_low = true;
        before.note = "Train-low session: carbohydrate withheld before it, by design.".into();
        return before;
    }
    // An early session (soon after waking, no earlier session that day):
    // a small snack instead of a meal.
    let first_of_day = previous_end.is_none_or(|end| end.date() < session.start.date());
    if first_of_day
        && session.start >= clock.wake
        && hours_between(clock.wake, session.start) < EARLY_SESSION_HOURS_AFTER_WAKING
    {
        let g_per_kg = if applies {
            EARLY_SNACK_G_PER_KG
        } else {
            EARLY_SNACK_SHORT_G_PER_KG
        };
        let time = add_hours(session.start, -0.75).max(clock.wake);
        before.suggested_time = Some(time);
        before.window_start = Some(clock.wake);
        before.window_end = Some(session.start);
        before.suggested_g_per_kg = g_per_kg;
        before.suggested_g = g_per_kg * body_mass_kg;
        before.snack = true;
        before.note = format!(
            "Early session ({:.1} h after waking): no time for a pre-session meal; a small, easily digested carbohydrate snack of {g_per_kg:.1} g/kg at {} (common practice), and the day's first meal after it.",
            Dec(hours_between(clock.wake, session.start)),
            time.format("%H:%M"),
            g_per_kg = Dec(g_per_kg)
        );
        return before;
    }
    if !applies {
        return before;
    }
    let mut earliest = add_hours(session.start, -4.0).max(clock.wake);
    if let Some(previous_end) = previous_end {
        earliest = earliest.max(previous_end);
    }
    let latest = add_hours(session.start, -1.0);
    if latest < earliest {
        warnings.push(
            Warning::new(
                WarningCode::PreSessionWindowTooShort,
                Severity::Warning,
                format!(
                    "No room 1-4 h before '{}' for a pre-session meal (after waking and the previous session); a small, familiar carbohydrate snack if tolerated.",
                    session.title
                ),
            )
            .for_session(session.session_id),
        );
        before.note = "No 1-4 h window before this session: no pre-session meal planned.".into();
        return before;
    }
    let suggested = add_hours(session.start, -3.0).clamp(earliest, latest);
    let g_per_kg = pre_session_g_per_kg(hours_between(suggested, session.start))
        .min(MAX_OCCASION_CARBOHYDRATE_G_PER_KG);
    before.window_start = Some(earliest);
    before.window_end = Some(latest);
    before.suggested_time = Some(suggested);
    before.suggested_g_per_kg = g_per_kg;
    before.suggested_g = g_per_kg * body_mass_kg;
    before.note = format!(
        "Over 60 min: 1-4 g/kg 1-4 h before; suggested {g_per_kg:.1} g/kg at {}.",
        suggested.format("%H:%M"),
        g_per_kg = Dec(g_per_kg)
    );
    before
}

fn after_session(
    session: &SessionWork,
    next_start: Option<NaiveDateTime>,
    body_mass_kg: f64,
    clock: DayClock,
    warnings: &mut Vec<Warning>,
) -> AfterSession {
    let end = session.end();
    let gap = next_start.map(|next| hours_between(end, next));
    let protein_g = PROTEIN_PER_OCCASION_G_PER_KG * body_mass_kg;
    let Some(gap) = gap.filter(|&g| g < SPEEDY_REFUELLING_GAP_HOURS) else {
        return AfterSession {
            guidance: AfterGuidance::RecoveryMeal,
            hours_until_next_session: gap,
            range_g_per_kg_per_hour: None,
            feed_times: Vec::new(),
            g_per_feed: 0.0,
            planned_carbohydrate_g: 0.0,
            protein_g,
            note:
                "Next session 8 h or more away: a normal recovery meal with about 0.3 g/kg protein."
                    .into(),
        };
    };
    let next = next_start.expect("gap exists only with a next session");
    let last_feed_at = add_hours(next, -1.0);
    let feed_times: Vec<NaiveDateTime> = (0..SPEEDY_REFUELLING_MAX_HOURS as i64)
        .map(|k| add_hours(end, k as f64))
        .filter(|&t| hours_between(end, t) < gap.min(SPEEDY_REFUELLING_MAX_HOURS))
        .filter(|&t| t <= last_feed_at)
        .enumerate()
        .filter(|&(k, t)| k == 0 || t <= clock.sleep)
        .map(|(_, t)| t)
        .collect();
    let g_per_feed = SPEEDY_REFUELLING_RANGE.min * body_mass_kg;
    if gap < SPEEDY_REFUELLING_MAX_HOURS {
        warnings.push(
            Warning::new(
                WarningCode::ShortGapBetweenSessions,
                Severity::Warning,
                format!(
                    "Only {gap:.1} h between '{}' and the next session: the 4 h of speedy refuelling and the next pre-session meal (1-4 h before) collide; {} hourly feed(s) planned, which double as pre-session fuel.",
                    session.title,
                    feed_times.len(), gap = Dec(gap)
                ),
            )
            .for_session(session.session_id),
        );
    }
    AfterSession {
        guidance: AfterGuidance::SpeedyRefuelling,
        hours_until_next_session: Some(gap),
        range_g_per_kg_per_hour: Some(SPEEDY_REFUELLING_RANGE),
        planned_carbohydrate_g: g_per_feed * feed_times.len() as f64,
        note: format!(
            "Next session in {gap:.1} h (under 8 h): speedy refuelling 1.0-1.2 g/kg/h for up to 4 h, planned as {} hourly feed(s) of 1.0 g/kg from the end of the session.",
            feed_times.len(),
            gap = Dec(gap)
        ),
        feed_times,
        g_per_feed,
        protein_g,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::profile::SessionKind;
    use chrono::NaiveDate;

    fn at(hour: u32, minute: u32) -> NaiveDateTime {
        NaiveDate::from_ymd_opt(2026, 3, 10)
            .unwrap()
            .and_hms_opt(hour, minute, 0)
            .unwrap()
    }

    fn clock() -> DayClock {
        DayClock {
            wake: at(7, 0),
            sleep: at(23, 0),
        }
    }

    fn session(start: NaiveDateTime, minutes: f64) -> SessionWork {
        SessionWork {
            session_id: None,
            title: "session".into(),
            kind: SessionKind::Training,
            start,
            minutes,
            clock_minutes: None,
            mean_fraction_vo2max: 0.65,
            gross_kcal: 10.0 * minutes,
            net_kcal: 9.0 * minutes,
            carbohydrate_g: 2.0 * minutes,
            key_session: false,
            train_low: false,
            event_preparation: Default::default(),
        }
    }

    #[test]
    fn during_amounts_follow_the_duration_rows() {
        // Thomas, Erdman & Burke (2016), during-exercise rows:
        // under 45 min none; 45-75 min mouth rinse or small amounts;
        // 1-2.5 h 30-60 g/h; over 2.5-3 h up to 90 g/h.
        assert_eq!(during_by_duration(40.0).0, DuringGuidance::NoneNeeded);
        assert_eq!(
            during_by_duration(60.0).0,
            DuringGuidance::MouthRinseOrSmallAmounts
        );
        let (g, min, max, planned) = during_by_duration(120.0);
        assert_eq!(g, DuringGuidance::ThirtyToSixtyGramsPerHour);
        assert_eq!((min, max), (30.0, 60.0));
        assert!((min..=max).contains(&planned));
        let (g, _, max, planned) = during_by_duration(200.0);
        assert_eq!(
            g,
            DuringGuidance::UpToNinetyGramsPerHourMultipleTransportable
        );
        assert_eq!(max, 90.0);
        assert!(planned <= 90.0);
    }

    #[test]
    fn pre_session_is_one_to_four_g_per_kg_one_to_four_hours_before_long_sessions() {
        // Thomas, Erdman & Burke (2016): 1-4 g/kg 1-4 h before exercise over 60 min.
        let (plans, _) =
            plan_session_fuelling(&[session(at(15, 0), 90.0)], &[], &[], 70.0, clock());
        let before = &plans[0].before;
        assert!(before.applies);
        let time = before.suggested_time.unwrap();
        let hours = hours_between(time, at(15, 0));
        assert!((1.0..=4.0).contains(&hours));
        assert!((1.0..=4.0).contains(&before.suggested_g_per_kg));
        assert!(before.window_start.unwrap() >= at(11, 0));
        assert_eq!(before.window_end.unwrap(), at(14, 0));
        // A 60-min session is outside the row.
        let (plans, _) =
            plan_session_fuelling(&[session(at(15, 0), 60.0)], &[], &[], 70.0, clock());
        assert!(!plans[0].before.applies);
        assert_eq!(plans[0].before.suggested_g, 0.0);
    }

    #[test]
    fn gap_under_eight_hours_triggers_speedy_refuelling() {
        // Thomas, Erdman & Burke (2016): under 8 h between sessions,
        // 1.0-1.2 g/kg/h for the first 4 h.
        let sessions = [session(at(9, 0), 90.0), session(at(16, 0), 90.0)];
        let (plans, warnings) = plan_session_fuelling(&sessions, &[], &[], 70.0, clock());
        let after = &plans[0].after;
        assert_eq!(after.guidance, AfterGuidance::SpeedyRefuelling);
        let rate = after.range_g_per_kg_per_hour.unwrap();
        assert_eq!((rate.min, rate.max), (1.0, 1.2));
        assert_eq!(after.feed_times.len(), 4);
        assert!((after.g_per_feed / 70.0 - 1.0).abs() < 1e-9);
        assert!(warnings.is_empty(), "{warnings:?}");
        // 8 h or more: a normal recovery meal with about 0.3 g/kg protein (from memory).
        assert_eq!(plans[1].after.guidance, AfterGuidance::RecoveryMeal);
        assert!((plans[1].after.protein_g - 21.0).abs() < 1e-9);
        let sessions = [session(at(8, 0), 60.0), session(at(17, 0), 60.0)];
        let (plans, _) = plan_session_fuelling(&sessions, &[], &[], 70.0, clock());
        assert_eq!(plans[0].after.guidance, AfterGuidance::RecoveryMeal);
    }

    #[test]
    fn short_gap_is_flagged() {
        // Next session 3 h after the first ends: 4 h refuelling cannot fit.
        let sessions = [session(at(9, 0), 90.0), session(at(13, 30), 90.0)];
        let (plans, warnings) = plan_session_fuelling(&sessions, &[], &[], 70.0, clock());
        assert!(
            warnings
                .iter()
                .any(|w| w.code == WarningCode::ShortGapBetweenSessions)
        );
        // Feeds stop 1 h before the next start: 10:30, 11:30, 12:30.
        assert_eq!(plans[0].after.feed_times.len(), 3);
        // The second session's pre-meal window starts when the first ends.
        assert_eq!(plans[1].before.window_start.unwrap(), at(10, 30));
    }
}
