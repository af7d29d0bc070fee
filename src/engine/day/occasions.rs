//! The day's targets as a timeline of eating occasions in local time.
//!
//! How the timeline is built:
//! 1. Session occasions first: the pre-session meal, carbohydrate during the
//!    session, and after it either hourly speedy-refuelling feeds or one
//!    recovery occasion (see [`crate::engine::day::session_fuelling`]).
//! 2. Meals (breakfast, lunch, dinner, evening snack) at the configured
//!    times. A meal that would fall less than 2 h before a session or during
//!    it moves to the nearer side: 2 h before the start, or the session's
//!    end (common practice: a main meal needs about 2 h to settle). A meal
//!    inside a session's 1-4 h pre-session window becomes the pre-session
//!    meal; a meal within the first hour after a session becomes its
//!    recovery occasion. The evening snack is dropped when another occasion
//!    lies within an hour of it or it falls after bedtime.
//! 3. Train low: occasions between the previous session (or waking) and a
//!    train-low session get no carbohydrate; it moves to the later meals.
//! 4. Carbohydrate: session occasions get their planned grams (the
//!    pre-session amount from its final time: 1 g/kg per hour before, 1-4);
//!    the rest of the day's carbohydrate is shared by the meals (weights:
//!    main meals 3, recovery occasion 2, evening snack 1; common practice).
//!    If session fuelling alone exceeds the day's carbohydrate it is scaled
//!    down to fit and the planner warns. Protein is split evenly over the
//!    protein occasions (meals, recovery, first refuelling feed); fat goes to
//!    meals, less before sessions, none during them.
//! 5. Grams are rounded to 0.1 g by largest remainder, so the occasions add up
//!    exactly to the day's targets.

use crate::engine::decimal::Dec;
use chrono::{NaiveDate, NaiveDateTime, NaiveTime};
use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use crate::engine::Issues;
use crate::engine::day::notes::{Severity, Warning, WarningCode};
use crate::engine::day::session_fuelling::{
    AfterGuidance, MAX_OCCASION_CARBOHYDRATE_G_PER_KG, SessionFuelling, pre_session_g_per_kg,
};
use crate::engine::day::session_work::{SessionRef, SessionWork, add_hours, hours_between, sorted};
use crate::engine::day::targets::{KCAL_PER_G_CARBOHYDRATE, KCAL_PER_G_FAT, KCAL_PER_G_PROTEIN};

/// What an eating occasion is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum OccasionKind {
    Breakfast,
    PreSession,
    DuringSession,
    Recovery,
    Lunch,
    Dinner,
    EveningSnack,
}

/// One eating occasion with its share of the day's targets.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EatingOccasion {
    /// Local time.
    pub time: NaiveDateTime,
    /// What the occasion is for.
    pub kind: OccasionKind,
    /// The meal this occasion also stands for, when a meal was merged into a session occasion.
    pub also_serves_as: Option<OccasionKind>,
    /// The session this occasion belongs to, if any.
    pub session: Option<SessionRef>,
    /// Carbohydrate, g.
    pub carbohydrate_g: f64,
    /// Protein, g.
    pub protein_g: f64,
    /// Fat, g.
    pub fat_g: f64,
    /// Energy from the three, kcal (Atwater factors 4/4/9).
    pub energy_kcal: f64,
    /// True when carbohydrate was withheld before a train-low session.
    pub carbohydrate_withheld_for_train_low: bool,
    /// What to eat it for, and any move or merge.
    pub note: String,
}

/// The athlete's day: waking, meals and bedtime, in local time.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct MealTimes {
    /// Default 07:00:00.
    #[serde(default = "default_wake")]
    pub wake: NaiveTime,
    /// Default 07:30:00.
    #[serde(default = "default_breakfast")]
    pub breakfast: NaiveTime,
    /// Default 12:30:00.
    #[serde(default = "default_lunch")]
    pub lunch: NaiveTime,
    /// Default 19:00:00.
    #[serde(default = "default_dinner")]
    pub dinner: NaiveTime,
    /// Default 21:30:00.
    #[serde(default = "default_evening_snack")]
    pub evening_snack: NaiveTime,
    /// Default 23:00:00.
    #[serde(default = "default_sleep")]
    pub sleep: NaiveTime,
}

fn hm(hour: u32, minute: u32) -> NaiveTime {
    NaiveTime::from_hms_opt(hour, minute, 0).expect("valid constant time")
}
fn default_wake() -> NaiveTime {
    hm(7, 0)
}
fn default_breakfast() -> NaiveTime {
    hm(7, 30)
}
fn default_lunch() -> NaiveTime {
    hm(12, 30)
}
fn default_dinner() -> NaiveTime {
    hm(19, 0)
}
fn default_evening_snack() -> NaiveTime {
    hm(21, 30)
}
fn default_sleep() -> NaiveTime {
    hm(23, 0)
}

impl Default for MealTimes {
    fn default() -> Self {
        Self {
            wake: default_wake(),
            breakfast: default_breakfast(),
            lunch: default_lunch(),
            dinner: default_dinner(),
            evening_snack: default_evening_snack(),
            sleep: default_sleep(),
        }
    }
}

impl MealTimes {
    pub(crate) fn validate(&self, field: &str, issues: &mut Issues) {
        let order = [
            ("wake", self.wake),
            ("breakfast", self.breakfast),
            ("lunch", self.lunch),
            ("dinner", self.dinner),
            ("evening_snack", self.evening_snack),
            ("sleep", self.sleep),
        ];
        for pair in order.windows(2) {
            let strictly = pair[1].0 != "sleep";
            if pair[1].1 < pair[0].1 || (strictly && pair[1].1 == pair[0].1) {
                issues.push(
                    format!("{field}.{}", pair[1].0),
                    format!("must be after {} (times within one day)", pair[0].0),
                );
            }
        }
    }
}

/// The day's totals that the occasions must add up to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DayTotals {
    /// Carbohydrate, g.
    pub carbohydrate_g: f64,
    /// Protein, g.
    pub protein_g: f64,
    /// Fat, g.
    pub fat_g: f64,
}

#[derive(Debug, Clone)]
struct Draft {
    time: NaiveDateTime,
    kind: OccasionKind,
    also: Option<OccasionKind>,
    session: Option<SessionRef>,
    /// Index of the session in the sorted list, for session occasions.
    session_index: Option<usize>,
    /// Planned session-linked carbohydrate, g; `None` for meals (flexible).
    fixed_carbohydrate: Option<f64>,
    carbohydrate_weight: f64,
    protein: bool,
    fat_weight: f64,
    withheld: bool,
    /// For a pre-session occasion: the session start, to size it from its final time.
    pre_session_start: Option<NaiveDateTime>,
    pre_window: Option<(NaiveDateTime, NaiveDateTime)>,
    /// For an early-session snack: its fixed size, g/kg.
    snack_g_per_kg: Option<f64>,
    note: String,
}

impl Draft {
    fn meal(kind: OccasionKind, time: NaiveDateTime) -> Self {
        let (weight, fat) = match kind {
            OccasionKind::EveningSnack => (1.0, 0.5),
            _ => (3.0, 1.0),
        };
        Self {
            time,
            kind,
            also: None,
            session: None,
            session_index: None,
            fixed_carbohydrate: None,
            carbohydrate_weight: weight,
            protein: true,
            fat_weight: fat,
            withheld: false,
            pre_session_start: None,
            pre_window: None,
            snack_g_per_kg: None,
            note: String::new(),
        }
    }

    fn merge_meal(&mut self, meal: &Draft) {
        // A speedy-refuelling feed keeps its hourly time; anything else moves
        // to the meal's time.
        if !(self.kind == OccasionKind::Recovery && self.fixed_carbohydrate.is_some()) {
            self.time = meal.time;
        }
        self.also = Some(meal.kind);
        self.protein = true;
        if self.fixed_carbohydrate.is_none() {
            self.carbohydrate_weight = self.carbohydrate_weight.max(meal.carbohydrate_weight);
        }
        // Less fat right before a session for gastric comfort (common practice).
        self.fat_weight = if self.kind == OccasionKind::PreSession {
            0.5
        } else {
            meal.fat_weight
        };
        push_note(
            &mut self.note,
            &format!("Also serves as {}.", label(meal.kind)),
        );
        if !meal.note.is_empty() {
            push_note(&mut self.note, &meal.note);
        }
    }
}

fn push_note(note: &mut String, text: &str) {
    if !note.is_empty() {
        note.push(' ');
    }
    note.push_str(text);
}

fn label(kind: OccasionKind) -> &'static str {
    match kind {
        OccasionKind::Breakfast => "breakfast",
        OccasionKind::PreSession => "pre-session meal",
        OccasionKind::DuringSession => "during the session",
        OccasionKind::Recovery => "recovery",
        OccasionKind::Lunch => "lunch",
        OccasionKind::Dinner => "dinner",
        OccasionKind::EveningSnack => "evening snack",
    }
}

/// The timeline and what it means for each session's pre-session meal.
#[derive(Debug, Clone, PartialEq)]
pub struct OccasionPlan {
    /// The timeline in time order.
    pub occasions: Vec<EatingOccasion>,
    /// Warnings raised while building it.
    pub warnings: Vec<Warning>,
    /// For each session in start order: the final pre-session occasion's
    /// time and carbohydrate (g), if it has one of its own.
    pub pre_session: Vec<Option<(NaiveDateTime, f64)>>,
}

/// Builds the timeline. `fuelling` must come from the same `sessions`.
pub fn plan_eating_occasions(
    date: NaiveDate,
    sessions: &[SessionWork],
    fuelling: &[SessionFuelling],
    totals: DayTotals,
    body_mass_kg: f64,
    times: &MealTimes,
) -> OccasionPlan {
    let sessions = sorted(sessions);
    let wake = date.and_time(times.wake);
    let sleep = date.and_time(times.sleep);
    let mut warnings = Vec::new();
    let mut drafts = session_drafts(&sessions, fuelling);

    let meals = [
        (OccasionKind::Breakfast, times.breakfast),
        (OccasionKind::Lunch, times.lunch),
        (OccasionKind::Dinner, times.dinner),
        (OccasionKind::EveningSnack, times.evening_snack),
    ];
    for (kind, time) in meals {
        let planned = date.and_time(time);
        let mut meal = Draft::meal(kind, planned);
        meal.time = clear_of_sessions(planned, &sessions, wake);
        if meal.time != planned {
            meal.note = format!(
                "Moved from {} to stay clear of the 2 h before and the time of a session.",
                planned.format("%H:%M")
            );
        }
        if merge_into_session_occasion(&mut drafts, &meal) {
            continue;
        }
        if kind == OccasionKind::EveningSnack {
            let crowded = drafts.iter().any(|d| {
                d.kind != OccasionKind::DuringSession
                    && hours_between(d.time, meal.time).abs() < 1.0
            });
            if crowded || meal.time > sleep {
                continue;
            }
        }
        drafts.push(meal);
    }

    apply_train_low(&mut drafts, &sessions, wake);
    for draft in &mut drafts {
        if let (Some(start), false) = (draft.pre_session_start, draft.withheld) {
            let g_per_kg = match draft.snack_g_per_kg {
                Some(snack) => snack,
                None => pre_session_g_per_kg(hours_between(draft.time, start))
                    .min(MAX_OCCASION_CARBOHYDRATE_G_PER_KG),
            };
            draft.fixed_carbohydrate = Some(g_per_kg * body_mass_kg);
            push_note(
                &mut draft.note,
                &format!(
                    "Pre-session: {g_per_kg:.1} g/kg, {:.1} h before the start.",
                    Dec(hours_between(draft.time, start)),
                    g_per_kg = Dec(g_per_kg)
                ),
            );
        }
    }
    drafts.sort_by_key(|d| (d.time, d.kind == OccasionKind::DuringSession));
    merge_close_occasions(&mut drafts);

    let carbohydrate = share_carbohydrate(
        &drafts,
        totals.carbohydrate_g,
        MAX_OCCASION_CARBOHYDRATE_G_PER_KG * body_mass_kg,
        &mut warnings,
    );
    let protein_weights: Vec<f64> = drafts
        .iter()
        .map(|d| if d.protein { 1.0 } else { 0.0 })
        .collect();
    let fat_weights: Vec<f64> = drafts.iter().map(|d| d.fat_weight).collect();
    let carbohydrate = split_tenths(totals.carbohydrate_g, &carbohydrate);
    let protein = split_tenths(totals.protein_g, &protein_weights);
    let fat = split_tenths(totals.fat_g, &fat_weights);

    let mut pre_session = vec![None; sessions.len()];
    for (i, draft) in drafts.iter().enumerate() {
        if let (OccasionKind::PreSession, Some(index), false) =
            (draft.kind, draft.session_index, draft.withheld)
        {
            pre_session[index] = Some((draft.time, carbohydrate[i]));
        }
    }
    let occasions = drafts
        .into_iter()
        .enumerate()
        .map(|(i, d)| EatingOccasion {
            time: d.time,
            kind: d.kind,
            also_serves_as: d.also,
            session: d.session,
            carbohydrate_g: carbohydrate[i],
            protein_g: protein[i],
            fat_g: fat[i],
            energy_kcal: carbohydrate[i] * KCAL_PER_G_CARBOHYDRATE
                + protein[i] * KCAL_PER_G_PROTEIN
                + fat[i] * KCAL_PER_G_FAT,
            carbohydrate_withheld_for_train_low: d.withheld,
            note: d.note,
        })
        .collect();
    OccasionPlan {
        occasions,
        warnings,
        pre_session,
    }
}

fn session_drafts(sessions: &[&SessionWork], fuelling: &[SessionFuelling]) -> Vec<Draft> {
    let mut drafts = Vec::new();
    for (index, (session, plan)) in sessions.iter().zip(fuelling).enumerate() {
        let reference = plan.session.clone();
        let base = |kind, time| Draft {
            time,
            kind,
            also: None,
            session: Some(reference.clone()),
            session_index: Some(index),
            fixed_carbohydrate: Some(0.0),
            carbohydrate_weight: 0.0,
            protein: false,
            fat_weight: 0.0,
            withheld: false,
            pre_session_start: None,
            pre_window: None,
            snack_g_per_kg: None,
            note: String::new(),
        };
        if let Some(time) = plan.before.suggested_time {
            let mut pre = base(OccasionKind::PreSession, time);
            pre.pre_session_start = Some(session.start);
            pre.pre_window = plan.before.window_start.zip(plan.before.window_end);
            if plan.before.snack {
                pre.snack_g_per_kg = Some(plan.before.suggested_g_per_kg);
                pre.pre_window = None;
            }
            pre.fat_weight = 0.25;
            pre.note = format!("Before '{}'.", session.title);
            drafts.push(pre);
        }
        if session.minutes >= 45.0 && plan.during.planned_g > 0.0 {
            let mut during = base(OccasionKind::DuringSession, session.start);
            during.fixed_carbohydrate = Some(plan.during.planned_g);
            during.note = plan.during.note.clone();
            drafts.push(during);
        }
        match plan.after.guidance {
            AfterGuidance::SpeedyRefuelling => {
                let feeds = plan.after.feed_times.len();
                for (k, &time) in plan.after.feed_times.iter().enumerate() {
                    let mut feed = base(OccasionKind::Recovery, time);
                    feed.fixed_carbohydrate = Some(plan.after.g_per_feed);
                    feed.protein = k == 0;
                    feed.fat_weight = if k == 0 { 0.25 } else { 0.0 };
                    feed.note = format!(
                        "Speedy refuelling after '{}', feed {} of {feeds} (1.0 g/kg).",
                        session.title,
                        k + 1
                    );
                    drafts.push(feed);
                }
            }
            AfterGuidance::RecoveryMeal => {
                let mut recovery = base(OccasionKind::Recovery, session.end());
                recovery.fixed_carbohydrate = None;
                recovery.carbohydrate_weight = 2.0;
                recovery.protein = true;
                recovery.fat_weight = 0.5;
                recovery.note = format!(
                    "Recovery after '{}': about 0.3 g/kg protein with carbohydrate.",
                    session.title
                );
                drafts.push(recovery);
            }
        }
    }
    // After a short gap the previous session's refuelling feeds fall in the
    // next pre-session window: they double as pre-session fuel.
    let feeds: Vec<(NaiveDateTime, Option<usize>)> = drafts
        .iter()
        .filter(|d| d.kind == OccasionKind::Recovery && d.fixed_carbohydrate.is_some())
        .map(|d| (d.time, d.session_index))
        .collect();
    let mut served = Vec::new();
    drafts.retain(|d| {
        let Some((start, end)) = d.pre_window else {
            return true;
        };
        let overlapping = feeds
            .iter()
            .any(|&(time, index)| index != d.session_index && start <= time && time <= end);
        if overlapping {
            served.push((start, end, d.session.clone()));
        }
        !overlapping
    });
    for (start, end, session) in served {
        let title = session.map(|s| s.title).unwrap_or_default();
        for feed in drafts.iter_mut().filter(|d| {
            d.kind == OccasionKind::Recovery
                && d.fixed_carbohydrate.is_some()
                && start <= d.time
                && d.time <= end
        }) {
            push_note(
                &mut feed.note,
                &format!("Also pre-session fuel for '{title}'."),
            );
        }
    }
    drafts
}

/// Occasions closer than this are one occasion (common practice: nobody eats
/// twice in 20 minutes).
const MIN_MINUTES_BETWEEN_OCCASIONS: i64 = 20;

/// Merges occasions (other than carbohydrate during a session) that fall
/// within [`MIN_MINUTES_BETWEEN_OCCASIONS`] of each other into the earlier
/// one; a meal merges into a session occasion and keeps the session's amount.
fn merge_close_occasions(drafts: &mut Vec<Draft>) {
    let mut i = 0;
    while i + 1 < drafts.len() {
        let (a, b) = (&drafts[i], &drafts[i + 1]);
        let close = (b.time - a.time).num_minutes() < MIN_MINUTES_BETWEEN_OCCASIONS;
        let eating = |d: &Draft| d.kind != OccasionKind::DuringSession;
        if !(close && eating(a) && eating(b)) || a.withheld != b.withheld {
            i += 1;
            continue;
        }
        let later = drafts.remove(i + 1);
        let earlier = &mut drafts[i];
        let is_meal = |d: &Draft| d.session.is_none();
        if is_meal(&later) {
            let time = earlier.time;
            earlier.merge_meal(&later);
            earlier.time = time;
        } else if is_meal(earlier) {
            let meal = earlier.clone();
            let time = meal.time;
            *earlier = later;
            earlier.merge_meal(&meal);
            earlier.time = time;
        } else {
            earlier.fixed_carbohydrate =
                match (earlier.fixed_carbohydrate, later.fixed_carbohydrate) {
                    (Some(x), Some(y)) => Some(x + y),
                    (x, y) => x.or(y),
                };
            earlier.protein |= later.protein;
            earlier.fat_weight = earlier.fat_weight.max(later.fat_weight);
            push_note(&mut earlier.note, &later.note);
        }
    }
}

/// Moves a meal out of the 2 h before a session and the session itself, to
/// the nearer side that is after waking and not inside another session.
fn clear_of_sessions(
    planned: NaiveDateTime,
    sessions: &[&SessionWork],
    wake: NaiveDateTime,
) -> NaiveDateTime {
    let mut time = planned;
    // Each pass can only move the meal later past one more session.
    for _ in 0..=sessions.len() {
        let Some((i, session)) = sessions
            .iter()
            .enumerate()
            .find(|(_, s)| add_hours(s.start, -2.0) < time && time < s.end())
        else {
            break;
        };
        let earlier = add_hours(session.start, -2.0);
        let earlier_ok = earlier >= wake && (i == 0 || earlier >= sessions[i - 1].end());
        let later = session.end();
        time = if earlier_ok && hours_between(earlier, time) <= hours_between(time, later) {
            earlier
        } else {
            later
        };
    }
    time
}

/// Merges a meal into a pre-session occasion whose window holds it, or into
/// a recovery occasion that starts up to an hour before it.
fn merge_into_session_occasion(drafts: &mut [Draft], meal: &Draft) -> bool {
    if let Some(pre) = drafts.iter_mut().find(|d| {
        d.also.is_none()
            && d.pre_window
                .is_some_and(|(start, end)| start <= meal.time && meal.time <= end)
    }) {
        pre.merge_meal(meal);
        return true;
    }
    // The nearest speedy-refuelling feed within 45 min, else a recovery
    // occasion that starts up to an hour before the meal.
    let nearest_feed = drafts
        .iter()
        .enumerate()
        .filter(|(_, d)| {
            d.kind == OccasionKind::Recovery
                && d.also.is_none()
                && d.fixed_carbohydrate.is_some()
                && hours_between(d.time, meal.time).abs() <= 0.75
        })
        .min_by(|(_, a), (_, b)| {
            hours_between(a.time, meal.time)
                .abs()
                .total_cmp(&hours_between(b.time, meal.time).abs())
        })
        .map(|(i, _)| i);
    let target = nearest_feed.or_else(|| {
        drafts.iter().position(|d| {
            d.kind == OccasionKind::Recovery && d.also.is_none() && {
                let after = hours_between(d.time, meal.time);
                (0.0..1.0).contains(&after)
            }
        })
    });
    if let Some(i) = target {
        drafts[i].merge_meal(meal);
        return true;
    }
    false
}

fn apply_train_low(drafts: &mut [Draft], sessions: &[&SessionWork], wake: NaiveDateTime) {
    for (i, session) in sessions.iter().enumerate() {
        if !session.train_low {
            continue;
        }
        let from = if i == 0 {
            wake.min(session.start)
        } else {
            sessions[i - 1].end()
        };
        for draft in drafts.iter_mut() {
            let before = draft.time >= from && draft.time < session.start;
            let during_this =
                draft.kind == OccasionKind::DuringSession && draft.session_index == Some(i);
            if before || during_this {
                draft.withheld = true;
                draft.fixed_carbohydrate = Some(0.0);
                draft.carbohydrate_weight = 0.0;
                draft.pre_session_start = None;
                push_note(
                    &mut draft.note,
                    &format!(
                        "Carbohydrate withheld for the train-low session '{}'; it moves to later occasions.",
                        session.title
                    ),
                );
            }
        }
    }
}

mod share;
use share::{share_carbohydrate, split_tenths};

#[cfg(test)]
mod tests;
