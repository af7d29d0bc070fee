//! Reusing simulated days across plans: a change to one session, pin or
//! body-mass reading reaches the days that read it and, through the glycogen
//! carried from day to day, the days after; the days before it are the same
//! as in the last plan and need not be simulated again.
//!
//! Each simulated day has a key: a SHA-256 digest of everything the day's
//! planning and simulation read (see [`DayKeys::key`]): the athlete's profile,
//! settings, health flags and options, the date, the glycogen state carried in
//! at midnight (every bit of it), yesterday's sessions as they were simulated,
//! the sessions of yesterday, today and the next two days, today's pins and
//! the body mass of those four days. A [`DayOutcome`] stored under that key
//! is exactly what computing the day again would give (the engine is
//! deterministic), so [`super::plan_week_reusing`] applies it instead. The
//! key holds the carried state rather than the days before: a day whose
//! state comes out the same (stores refilled to the brim, say) lets the
//! days after it be reused too.
//!
//! Outcomes name sessions by their place among the day's sessions, not by
//! their index in the input, so adding a session on Friday does not
//! disturb Monday's outcome.

use std::sync::Arc;

use chrono::Datelike;
use sha2::{Digest, Sha256};

use super::simulate::{ActiveSession, Timeline};
use super::*;

/// A store of simulated days, shared across plans (e.g.
/// [`crate::plan_memo::PlanMemo`]). Implementations decide what to keep.
pub trait DayReuse: Sync {
    /// The outcome stored under `key`, if any.
    fn day(&self, key: &DayKey) -> Option<Arc<DayOutcome>>;
    /// Offers an outcome to keep (weigh it with [`DayOutcome::estimated_bytes`]).
    fn keep_day(&self, key: DayKey, outcome: Arc<DayOutcome>);
    /// A session forecast from normal stores, stored under `key`.
    fn forecast(&self, key: &DayKey) -> Option<SessionWork>;
    /// Offers a forecast to keep.
    fn keep_forecast(&self, key: DayKey, work: SessionWork);
}

/// SHA-256 of what a day (or a forecast) reads.
pub type DayKey = [u8; 32];

/// What one simulated day leaves behind: the state carried to the next day,
/// the day as the plan shows it, and its sessions as simulated. Sessions
/// are named by their place in the day's start order.
#[derive(Debug, Clone)]
pub struct DayOutcome {
    pub(super) timeline: StoredTimeline,
    pub(super) start_assumption: Option<StartAssumption>,
    /// The day as shown (days inside the span), without its sessions.
    pub(super) day: Option<WeekDay>,
    pub(super) series: Vec<GlycogenPoint>,
    /// The shown day's warnings about the athlete rather than the day,
    /// taken out of its plan (the week lists them once for the span).
    pub(super) athlete_level: Vec<crate::engine::day::notes::Warning>,
    /// Sessions started today: place, level at the start, simulation.
    pub(super) starts: Vec<(usize, GlycogenLevel, Arc<SessionFuel>)>,
    /// Sessions ended today: yesterday's (`true`) or today's, place, level.
    pub(super) ends: Vec<(bool, usize, GlycogenLevel)>,
}

/// [`Timeline`] with the running session named by its place among the
/// day's sessions.
#[derive(Debug, Clone)]
pub(super) struct StoredTimeline {
    timeline: Timeline,
    active_place: Option<usize>,
}

impl StoredTimeline {
    /// `today`: the indices of the day's sessions, in start order.
    pub(super) fn of(timeline: &Timeline, today: &[usize]) -> Self {
        Self {
            active_place: timeline
                .active
                .and_then(|active| today.iter().position(|&i| i == active.index)),
            timeline: timeline.clone(),
        }
    }

    pub(super) fn restore(&self, today: &[usize]) -> Timeline {
        let mut timeline = self.timeline.clone();
        timeline.active = match (timeline.active, self.active_place) {
            (Some(active), Some(place)) => Some(ActiveSession {
                index: today[place],
                ..active
            }),
            _ => None,
        };
        timeline
    }
}

impl DayOutcome {
    /// The day as the plan shows it (days inside the span).
    pub fn shown_day(&self) -> Option<&WeekDay> {
        self.day.as_ref()
    }

    /// A rough size in memory: `day_bytes` for the day as shown (e.g. the
    /// serialised size of a sampled day), plus the series and sessions.
    pub fn estimated_bytes(&self, day_bytes: usize) -> usize {
        let sessions: usize = self
            .starts
            .iter()
            .map(|(_, _, fuel)| {
                std::mem::size_of::<SessionFuel>()
                    + fuel.time_series.len() * 40
                    + fuel.segments.len() * 120
                    + fuel.estimates.len() * 120
                    + fuel.warnings.len() * 200
            })
            .sum();
        512 + self.day.as_ref().map_or(0, |_| day_bytes)
            + self.series.len() * std::mem::size_of::<GlycogenPoint>()
            + sessions
    }
}

/// Builds the keys of one plan's days, and of the plan's whole input: the
/// parts every day shares are hashed once.
pub struct DayKeys {
    /// Profile, settings, health flags, options, span start, model.
    shared: DayKey,
    /// The profile alone (what a forecast reads besides the session).
    profile: DayKey,
    /// Each input session, hashed.
    sessions: Vec<DayKey>,
}

/// Hashes `value` in the tagged binary form of [`super::digest`]
/// (prefix-free, so distinct values give distinct bytes).
fn put_value<T: Serialize + ?Sized>(hasher: &mut Sha256, value: &T) {
    let mut bytes = Vec::with_capacity(512);
    super::digest::write(&mut bytes, value);
    hasher.update(&bytes);
}

fn sha_value<T: Serialize + ?Sized>(value: &T) -> DayKey {
    let mut h = Sha256::new();
    put_value(&mut h, value);
    h.finalize().into()
}

fn put_time(hasher: &mut Sha256, time: NaiveDateTime) {
    let utc = time.and_utc();
    hasher.update(utc.timestamp().to_le_bytes());
    hasher.update(utc.timestamp_subsec_nanos().to_le_bytes());
}

fn put_f64(hasher: &mut Sha256, value: f64) {
    hasher.update(value.to_bits().to_le_bytes());
}

impl DayKeys {
    pub fn new(input: &WeekInput, model: &GlycogenModel) -> Self {
        let mut shared = Sha256::new();
        shared.update(b"glycoweek day v1\0");
        put_value(&mut shared, &input.athlete_id);
        put_value(&mut shared, &input.profile);
        put_value(&mut shared, &input.settings);
        put_value(&mut shared, &input.health_flags);
        put_value(&mut shared, &input.start_glycogen);
        put_value(&mut shared, &input.thresholds);
        put_value(&mut shared, model);
        put_value(
            &mut shared,
            &(
                input.from,
                input.first_simulated_day(),
                input.include_session_fuel,
                input.explain_days,
            ),
        );
        Self {
            shared: shared.finalize().into(),
            profile: sha_value(&input.profile),
            sessions: input.sessions.iter().map(sha_value).collect(),
        }
    }

    /// The key of `date` for a planner about to simulate it from `timeline`.
    pub(super) fn key(
        &self,
        planner: &Planner<'_>,
        date: NaiveDate,
        timeline: &Timeline,
    ) -> DayKey {
        let mut h = Sha256::new();
        h.update(self.shared);
        h.update(date.num_days_from_ce().to_le_bytes());
        // The state carried in at midnight, every bit of it.
        put_f64(&mut h, timeline.stores.muscle_g);
        put_f64(&mut h, timeline.stores.liver_g);
        put_f64(&mut h, timeline.stores.gut_g);
        match timeline.last_session_end {
            Some(end) => {
                h.update([1]);
                put_time(&mut h, end);
            }
            None => h.update([0]),
        }
        let yesterday = planner.sessions_on(date - TimeDelta::days(1));
        match timeline.active {
            Some(active) => {
                h.update([1]);
                let place = yesterday.iter().position(|&i| i == active.index);
                h.update(place.map_or(u64::MAX, |k| k as u64).to_le_bytes());
                put_time(&mut h, active.end);
                put_f64(&mut h, active.draw.muscle_g_per_hour);
                put_f64(&mut h, active.draw.liver_g_per_hour);
                put_f64(&mut h, active.draw.working_share);
            }
            None => h.update([0]),
        }
        h.update((timeline.pending_intake.len() as u64).to_le_bytes());
        for (time, grams) in &timeline.pending_intake {
            put_time(&mut h, *time);
            put_f64(&mut h, *grams);
        }
        match timeline.slowed_until {
            Some((until, slowing)) => {
                h.update([1]);
                put_time(&mut h, until);
                put_f64(&mut h, slowing);
            }
            None => h.update([0]),
        }
        // Yesterday's sessions as simulated (the day planner reads them).
        for &index in &yesterday {
            put_value(&mut h, &planner.simulated_work[index]);
        }
        // The sessions of yesterday, today and the next two days, in order,
        // and the body mass of each of those days.
        for offset in -1..=2 {
            let day = date + TimeDelta::days(offset);
            let indices = planner.sessions_on(day);
            h.update((indices.len() as u64).to_le_bytes());
            for index in indices {
                h.update(self.sessions[index]);
            }
            put_f64(&mut h, planner.mass_on(day));
        }
        put_value(&mut h, &planner.pins.get(&date));
        h.finalize().into()
    }

    /// A digest of the whole input (with the model): equal digests, equal plans.
    pub fn input_key(&self, input: &WeekInput) -> DayKey {
        let mut h = Sha256::new();
        h.update(b"glycoweek plan v1\0");
        h.update(self.shared);
        put_value(&mut h, &(input.to, input.carry_from));
        put_value(&mut h, &input.body_mass_by_date);
        put_value(&mut h, &input.pins);
        h.update((self.sessions.len() as u64).to_le_bytes());
        for session in &self.sessions {
            h.update(session);
        }
        h.finalize().into()
    }

    /// The key of session `index` forecast from normal stores at `mass_kg`.
    pub(super) fn forecast_key(&self, index: usize, mass_kg: f64) -> DayKey {
        let mut h = Sha256::new();
        h.update(b"glycoweek forecast v1\0");
        h.update(self.profile);
        put_f64(&mut h, mass_kg);
        h.update(self.sessions[index]);
        h.finalize().into()
    }
}
